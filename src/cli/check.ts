// `curvewright check <spec...> [--strict] [--update]`: run each spec and verify it the way CI should — every model
// converged, no error-level problem, every expect met, the committed results file up to date (warnings with --strict).
import { promises as fsp } from 'fs';
import * as path from 'path';
import { runSpecFile, serializeReport, specFiles, writeResults, OutputError } from '../engine/run';
import { sidecarMismatch } from '../engine/pointsFile';
import { terminationFix } from '../engine/terminations';
import { isErrorReport, type CheckVerdict, type ErrorReport, type FitReport, type RunResult } from '../engine/report';
import { findingSeverity, githubAnnotations, placeFindings, type Finding } from './annotate';
import { UsageError, type Parsed } from './args';
import { errorText, expectText, problemLine, allProblems } from './format';
import { oneLine } from '../shared/terminalText';
import { inOrder, specsOf } from './fit';
import { ioReason, shown, writeAtomic, type Io } from './io';
import { parseShard, shardSpecs } from './shard';
import { updateExpectText } from './update';

export interface Verdict {
  failures: string[];
  warnings: string[];
  /** the same failures and warnings for machines (check --json, --format github), not yet placed in a file */
  findings: Finding[];
}

/** Why a results file is stale (or missing), or null when its hashes match the current run. */
export async function staleness(report: FitReport, outputAbs: string, outShown: string, specShown: string): Promise<string | null> {
  let text: string;
  try {
    text = await fsp.readFile(outputAbs, 'utf8');
  } catch {
    return `results file ${outShown} does not exist — run \`curvewright fit ${specShown}\` and commit it`;
  }
  let meta: { specHash?: unknown; dataHash?: unknown; readingsHash?: unknown } | undefined;
  try {
    meta = (JSON.parse(text) as { meta?: typeof meta }).meta;
  } catch {
    return `results file ${outShown} is not valid JSON — run \`curvewright fit ${specShown}\` to rewrite it`;
  }
  const what: string[] = [];
  if (!meta || meta.specHash !== report.meta.specHash) what.push('the spec');
  if (!meta || meta.dataHash !== report.meta.dataHash) what.push('the data');
  if (meta && meta.readingsHash !== report.meta.readingsHash) what.push('the unknowns or controls file');
  if (!what.length) return sidecarStaleness(text, outputAbs, outShown, specShown);
  return `results file ${outShown} is stale: ${what.join(' and ')} changed since it was written — run \`curvewright fit ${specShown}\` and commit the results (or \`curvewright check --update\`)`;
}

/** A points file (outputPoints "sidecar") of another run is stale too; a missing one (e.g. git-ignored) is not. */
async function sidecarStaleness(text: string, outputAbs: string, outShown: string, specShown: string): Promise<string | null> {
  const saved = JSON.parse(text) as FitReport;
  if (typeof saved.pointsFile !== 'string') return null;
  let side: unknown;
  try {
    side = JSON.parse(await fsp.readFile(path.join(path.dirname(outputAbs), saved.pointsFile), 'utf8'));
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return null;
    side = null;
  }
  const why = sidecarMismatch(saved, side);
  return why ? `the points file ${saved.pointsFile} beside ${outShown} is stale: ${why} — run \`curvewright fit ${specShown}\` and commit both files` : null;
}

export function verdictOf(report: FitReport, specShown: string, strict: boolean): Verdict {
  const failures: string[] = [];
  const warnings: string[] = [];
  const findings: Finding[] = [];
  report.models.forEach((m, i) => {
    if (m.status === 'converged') return;
    failures.push(`model '${m.name}' did not converge (${m.termination}) — ${terminationFix(m.termination, i)}`);
    findings.push({ code: 'not-converged', severity: 'error', message: failures[failures.length - 1], path: ['models', i] });
  });
  for (const { problem, model } of allProblems(report)) {
    const named = model !== undefined && !problem.message.startsWith(`${model}:`) && !problem.message.startsWith(`${model} `);
    const line = `${named ? `model '${model}': ` : ''}${problemLine(problem, specShown)}`;
    if (problem.severity === 'error') failures.push(line);
    else if (problem.severity === 'warning') (strict ? failures : warnings).push(line);
    const severity = findingSeverity(problem.severity, strict);
    if (severity) findings.push({ code: problem.code, severity, message: `${named ? `model '${model}': ` : ''}${problem.message}`, path: problem.path, location: problem.location });
  }
  for (const e of report.expect) {
    if (e.ok) continue;
    failures.push(`expect not met: ${expectText(e)}`);
    findings.push({ code: 'expect-not-met', severity: 'error', message: failures[failures.length - 1], path: ['expect', e.model, e.param] });
  }
  return { failures, warnings, findings };
}

export async function checkCommand(parsed: Parsed, io: Io): Promise<number> {
  const { specs: given, jobs, boundary } = specsOf(parsed, io, 'check');
  const bound = { workspaceRoot: boundary.root, trustPaths: boundary.trustPaths };
  const strict = parsed.options.strict === true;
  const update = parsed.options.update === true;
  const json = parsed.options.json === true;
  const format = parsed.options.format === undefined ? 'text' : String(parsed.options.format);
  if (format !== 'text' && format !== 'github') throw new UsageError(`option '--format' is 'text' (default) or 'github' (workflow annotations), got '${format}'`);
  const shard = parsed.options.shard !== undefined ? parseShard(String(parsed.options.shard)) : undefined;
  const specs = shard ? shardSpecs(given, io.cwd, shard) : given;
  const shardText = shard ? `${shard.index}/${shard.count}` : undefined;
  const say = json ? io.err : io.out;
  if (!specs.length) {
    say(`check: shard ${shardText} has no spec (${given.length} spec${given.length === 1 ? '' : 's'} in all, split over ${shard!.count} shards)`);
    return 0;
  }
  let code = 0;
  let passed = 0, failed = 0, bad = 0;
  const verdictBlock = async (specAbs: string, specShown: string, findings: Finding[], ok: boolean): Promise<CheckVerdict> => {
    const text = await fsp.readFile(specAbs, 'utf8').catch(() => null);
    const placed = placeFindings(findings, specShown, text);
    const v: CheckVerdict = { ok, spec: specShown, strict, reasons: placed.filter(r => r.severity === 'error'), warnings: placed.filter(r => r.severity === 'warning') };
    if (shardText) v.shard = shardText;
    const notes = format === 'github' ? githubAnnotations([...v.reasons, ...v.warnings]) : [];
    if (notes.length) say(notes.join('\n'));
    return v;
  };
  const couldNotRun = async (result: ErrorReport, specAbs: string, specShown: string): Promise<void> => {
    bad++;
    code = Math.max(code, 2);
    io.err(`FAIL ${specShown}\n${indent(errorText(result, specShown))}`);
    const problems = (result.error.problems ?? []).filter(p => p.severity === 'error');
    const findings: Finding[] = problems.length
      ? problems.map(p => ({ code: p.code, severity: 'error', message: p.message, path: p.path, location: p.location }))
      : [{ code: 'spec-error', severity: 'error', message: result.error.message, path: result.error.path, location: result.error.location }];
    const check = await verdictBlock(specAbs, specShown, findings, false);
    if (json) io.out(serializeReport({ ...result, check }));
  };
  await inOrder(specs, jobs, io, async (i, first) => {
    const specShown = shown(specs[i], io.cwd);
    const specAbs = path.resolve(io.cwd, specs[i]);
    let result: RunResult = first;
    if (isErrorReport(result)) return couldNotRun(result, specAbs, specShown);
    const notes: string[] = [];
    const failures: string[] = [];
    const findings: Finding[] = [];
    if (update) {
      const text = await fsp.readFile(specAbs, 'utf8');
      const upd = updateExpectText(text, result.expect);
      // transactional: the new spec text is fitted in memory, the results file written first; the spec is written
      // only when that succeeded, and the old results are put back when the spec cannot be written (both or neither)
      const newText = upd.changed.length ? upd.text : undefined;
      if (newText !== undefined) {
        result = await runSpecFile(specAbs, { ...bound, specText: newText });
        if (isErrorReport(result)) return couldNotRun(result, specAbs, specShown);
      }
      const { output } = await specFiles(specAbs, newText);
      const before = output ? await fsp.readFile(output, 'utf8').catch(() => null) : null;
      try {
        const written = await writeResults(result, specAbs, { ...bound, ...(newText !== undefined ? { specText: newText } : {}) });
        if (newText !== undefined) {
          try {
            await writeAtomic(specAbs, newText);
          } catch (e) {
            if (written) await (before === null ? fsp.unlink(written) : writeAtomic(written, before)).catch(() => undefined);
            throw new OutputError(`cannot rewrite the spec ${specShown}: ${ioReason(e)} — nothing was changed (the results file was restored)`);
          }
          for (const c of upd.changed) notes.push(`updated expect ${c.model}.${c.param}: ${c.from} → ${c.to}`);
        }
        if (written) notes.push(`wrote ${shown(written, io.cwd)}`);
      } catch (e) {
        failures.push(e instanceof OutputError ? e.message : String((e as Error).message));
        findings.push({ code: 'output-failed', severity: 'error', message: failures[failures.length - 1], path: ['output'] });
        code = Math.max(code, 2);
      }
    } else {
      const { output } = await specFiles(specAbs);
      if (output) {
        const stale = await staleness(result, output, shown(output, io.cwd), specShown);
        if (stale) {
          failures.push(stale);
          findings.push({ code: 'stale-results', severity: 'error', message: stale, path: ['output'] });
        }
      }
    }
    const verdict = verdictOf(result, specShown, strict);
    failures.push(...verdict.failures);
    findings.push(...verdict.findings);
    const ok = failures.length === 0;
    if (ok) passed++;
    else failed++;
    if (!ok) code = Math.max(code, 1);
    const r = result;
    const summary = `${r.models.length} model${r.models.length === 1 ? '' : 's'}, ${r.expect.length ? `${r.expect.filter(e => e.ok).length}/${r.expect.length} expectations met` : 'no expectations'}${verdict.warnings.length ? `, ${verdict.warnings.length} warning${verdict.warnings.length === 1 ? '' : 's'}` : ''}`;
    const lines = [`${ok ? 'PASS' : 'FAIL'} ${specShown} (${summary})`, ...failures.map(f => indent(oneLine(f))), ...notes.map(n => indent(oneLine(n)))];
    if (!ok && !strict && verdict.warnings.length) lines.push(indent(`(${verdict.warnings.length} warning${verdict.warnings.length === 1 ? '' : 's'} not counted; --strict fails on them)`));
    say(lines.join('\n'));
    const check = await verdictBlock(specAbs, specShown, findings, ok);
    if (json) io.out(serializeReport({ ...result, check }));
  }, boundary);
  const total = `check${shardText ? ` (shard ${shardText})` : ''}: ${passed} passed, ${failed} failed${bad ? `, ${bad} could not run` : ''}`;
  say(total);
  return code;
}

function indent(s: string): string {
  return s.split('\n').map(l => `    ${l}`).join('\n');
}
