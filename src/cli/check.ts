// `curvewright check <spec...> [--strict] [--update]`: run each spec and verify it the way CI should — every model
// converged, no error-level problem, every expect met, the committed results file up to date (warnings with --strict).
import { promises as fsp } from 'fs';
import * as path from 'path';
import { runSpecFile, serializeReport, specFiles, writeResults, OutputError } from '../engine/run';
import { isErrorReport, type FitReport, type RunResult } from '../engine/report';
import type { Parsed } from './args';
import { errorText, expectText, problemLine, allProblems } from './format';
import { inOrder, specsOf } from './fit';
import { shown, writeAtomic, type Io } from './io';
import { updateExpectText } from './update';

export interface Verdict {
  failures: string[];
  warnings: string[];
}

/** Why a results file is stale (or missing), or null when its hashes match the current run. */
export async function staleness(report: FitReport, outputAbs: string, outShown: string, specShown: string): Promise<string | null> {
  let text: string;
  try {
    text = await fsp.readFile(outputAbs, 'utf8');
  } catch {
    return `results file ${outShown} does not exist — run \`curvewright fit ${specShown}\` and commit it`;
  }
  let meta: { specHash?: unknown; dataHash?: unknown } | undefined;
  try {
    meta = (JSON.parse(text) as { meta?: typeof meta }).meta;
  } catch {
    return `results file ${outShown} is not valid JSON — run \`curvewright fit ${specShown}\` to rewrite it`;
  }
  const what: string[] = [];
  if (!meta || meta.specHash !== report.meta.specHash) what.push('the spec');
  if (!meta || meta.dataHash !== report.meta.dataHash) what.push('the data');
  if (!what.length) return null;
  return `results file ${outShown} is stale: ${what.join(' and ')} changed since it was written — run \`curvewright fit ${specShown}\` and commit the results (or \`curvewright check --update\`)`;
}

export function verdictOf(report: FitReport, specShown: string, strict: boolean): Verdict {
  const failures: string[] = [];
  const warnings: string[] = [];
  report.models.forEach((m, i) => {
    if (m.status === 'converged') return;
    const advice: Record<string, string> = {
      singular: 'its parameters cannot all be determined from these data (see the problem below)',
      'non-finite': 'the formula gave non-finite values — check its domain (log, sqrt, division) and add bounds in models[' + i + '].params',
      'iteration-limit': `give start values in models[${i}].params or raise models[${i}].solver.maxIterations`,
      'time-limit': `give start values in models[${i}].params or raise models[${i}].solver.seconds`,
      cancelled: 'the run was cancelled',
    };
    failures.push(`model '${m.name}' did not converge (${m.termination}) — ${advice[m.termination] ?? `give start values or bounds in models[${i}].params, or remove the model`}`);
  });
  for (const { problem, model } of allProblems(report)) {
    const named = model !== undefined && !problem.message.startsWith(`${model}:`) && !problem.message.startsWith(`${model} `);
    const line = `${named ? `model '${model}': ` : ''}${problemLine(problem, specShown)}`;
    if (problem.severity === 'error') failures.push(line);
    else if (problem.severity === 'warning') (strict ? failures : warnings).push(line);
  }
  for (const e of report.expect) if (!e.ok) failures.push(`expect not met: ${expectText(e)}`);
  return { failures, warnings };
}

export async function checkCommand(parsed: Parsed, io: Io): Promise<number> {
  const { specs, jobs } = specsOf(parsed, io, 'check');
  const strict = parsed.options.strict === true;
  const update = parsed.options.update === true;
  const json = parsed.options.json === true;
  let code = 0;
  let passed = 0, failed = 0, bad = 0;
  await inOrder(specs, jobs, io, async (i, first) => {
    const specShown = shown(specs[i], io.cwd);
    const specAbs = path.resolve(io.cwd, specs[i]);
    let result: RunResult = first;
    if (isErrorReport(result)) {
      bad++;
      code = Math.max(code, 2);
      if (json) io.out(serializeReport(result));
      io.err(`FAIL ${specShown}\n${indent(errorText(result, specShown))}`);
      return;
    }
    const notes: string[] = [];
    const failures: string[] = [];
    if (update) {
      const text = await fsp.readFile(specAbs, 'utf8');
      const upd = updateExpectText(text, result.expect);
      if (upd.changed.length) {
        await writeAtomic(specAbs, upd.text);
        for (const c of upd.changed) notes.push(`updated expect ${c.model}.${c.param}: ${c.from} → ${c.to}`);
        result = await runSpecFile(specAbs, { workspaceRoot: io.cwd });
        if (isErrorReport(result)) {
          bad++;
          code = Math.max(code, 2);
          io.err(`FAIL ${specShown}\n${indent(errorText(result, specShown))}`);
          return;
        }
      }
      try {
        const written = await writeResults(result, specAbs, { workspaceRoot: io.cwd });
        if (written) notes.push(`wrote ${shown(written, io.cwd)}`);
      } catch (e) {
        failures.push(e instanceof OutputError ? e.message : String((e as Error).message));
      }
    } else {
      const { output } = await specFiles(specAbs);
      if (output) {
        const stale = await staleness(result, output, shown(output, io.cwd), specShown);
        if (stale) failures.push(stale);
      }
    }
    const verdict = verdictOf(result, specShown, strict);
    failures.push(...verdict.failures);
    if (json) io.out(serializeReport(result));
    const ok = failures.length === 0;
    if (ok) passed++;
    else failed++;
    if (!ok) code = Math.max(code, 1);
    const r = result;
    const summary = `${r.models.length} model${r.models.length === 1 ? '' : 's'}, ${r.expect.length ? `${r.expect.filter(e => e.ok).length}/${r.expect.length} expectations met` : 'no expectations'}${verdict.warnings.length ? `, ${verdict.warnings.length} warning${verdict.warnings.length === 1 ? '' : 's'}` : ''}`;
    const lines = [`${ok ? 'PASS' : 'FAIL'} ${specShown} (${summary})`, ...failures.map(f => indent(f)), ...notes.map(n => indent(n))];
    if (!ok && !strict && verdict.warnings.length) lines.push(indent(`(${verdict.warnings.length} warning${verdict.warnings.length === 1 ? '' : 's'} not counted; --strict fails on them)`));
    (json ? io.err : io.out)(lines.join('\n'));
  });
  const total = `check: ${passed} passed, ${failed} failed${bad ? `, ${bad} could not run` : ''}`;
  (json ? io.err : io.out)(total);
  return code;
}

function indent(s: string): string {
  return s.split('\n').map(l => `    ${l}`).join('\n');
}
