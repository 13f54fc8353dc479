// Why a solver stopped, in one table: whether the stop counts as converged, and what the user can do when it does not
// (the sentence of a no-convergence problem, and the clause of `curvewright check`'s reason for model i). A leaf: it
// imports nothing, and any engine layer (the solvers, the analysis) and the CLI may import it. The Termination union
// of the report (src/engine/report.ts, schema/fitreport.schema.json) is derived from it.

/** One row of the TERMINATIONS table. */
export interface TerminationInfo {
  /** the solver met a convergence test: the estimates are a least-squares solution */
  readonly converged: boolean;
  /** for the no-convergence problem: what to try (one sentence) */
  readonly advice?: string;
  /** for `check`'s one-line reason about models[i]: what to do (a clause) */
  readonly fix?: (i: number) => string;
}

export const TERMINATIONS = {
  'relative-reduction': { converged: true },
  'step-size': { converged: true },
  gradient: { converged: true },
  exact: { converged: true },
  'iteration-limit': {
    converged: false,
    advice: 'Raise solver.maxIterations, or give start values closer to the solution.',
    fix: (i: number) => `give start values in models[${i}].params or raise models[${i}].solver.maxIterations`,
  },
  singular: {
    converged: false,
    advice: 'The parameters cannot all be determined from these data: fix one, simplify the formula, or add data that vary more.',
    fix: () => 'its parameters cannot all be determined from these data (see the problem below)',
  },
  'non-finite': {
    converged: false,
    advice: 'Give start values and bounds (min/max) that keep the formula finite over the data.',
    fix: (i: number) => 'the formula gave non-finite values — check its domain (log, sqrt, division) and add bounds in models[' + i + '].params',
  },
  cancelled: {
    converged: false,
    advice: 'The run was cancelled; run it again.',
    fix: () => 'the run was cancelled',
  },
  'time-limit': {
    converged: false,
    advice: 'Raise solver.seconds, or give start values closer to the solution.',
    fix: (i: number) => `give start values in models[${i}].params or raise models[${i}].solver.seconds`,
  },
} as const satisfies Record<string, TerminationInfo>;

/** Why the solver stopped: a key of TERMINATIONS. */
export type Termination = keyof typeof TERMINATIONS;

/** Every termination, in table order (the order of the report schema's enum). */
export const TERMINATION_CODES = Object.keys(TERMINATIONS) as Termination[];

/** The terminations that count as converged. */
export const CONVERGED: readonly Termination[] = TERMINATION_CODES.filter((t) => TERMINATIONS[t].converged);

/** The no-convergence problem's advice for a termination (any string: a report read back may carry a newer one). */
export function terminationAdvice(t: string): string {
  const row: TerminationInfo | undefined = Object.prototype.hasOwnProperty.call(TERMINATIONS, t) ? TERMINATIONS[t as Termination] : undefined;
  return row?.advice ?? 'Try other start values or bounds.';
}

/** `check`'s clause for models[i] that did not converge with termination t. */
export function terminationFix(t: string, i: number): string {
  const row: TerminationInfo | undefined = Object.prototype.hasOwnProperty.call(TERMINATIONS, t) ? TERMINATIONS[t as Termination] : undefined;
  return row?.fix?.(i) ?? `give start values or bounds in models[${i}].params, or remove the model`;
}
