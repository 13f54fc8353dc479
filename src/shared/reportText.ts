// Text helpers over a FitReport shared by the CLI, the host and the engine's messages (no Node, no DOM, no vscode).
import type { FitReport, JsonPath, Problem } from '../engine/report';

/** Readable form of a JSON path, `models[0].params.K`; '' for the empty path. */
export function pathText(p: JsonPath): string {
  let s = '';
  for (const k of p) s += typeof k === 'number' ? `[${k}]` : s === '' ? k : `.${k}`;
  return s;
}

/** A problem with the model it belongs to: its index (-1 for the spec and data) and, for a model's own, its name. */
export interface ReportProblem {
  problem: Problem;
  modelIndex: number;
  model?: string;
}

/** Every problem of a report: the spec/data ones (placed by their path when it points into models[i]), then each model's. */
export function allProblems(r: FitReport): ReportProblem[] {
  return [
    ...r.problems.map(problem => ({ problem, modelIndex: modelIndexOf(problem) })),
    ...r.models.flatMap((m, i) => m.problems.map(problem => ({ problem, modelIndex: i, model: m.name }))),
  ];
}

function modelIndexOf(p: Problem): number {
  return p.path[0] === 'models' && typeof p.path[1] === 'number' ? p.path[1] : -1;
}
