// `curvewright merge <file...>`: the `check --json` lines of several shards (or runs) as one: every report in the
// order of its spec path, one summary, one exit code — as if one `check` had run over all the specs.
import { promises as fsp } from 'fs';
import { serializeReport } from '../engine/run';
import { isErrorReport, type CheckReason, type CheckVerdict, type RunResult } from '../engine/report';
import { githubAnnotations } from './annotate';
import { UsageError, type Parsed } from './args';
import type { Io } from './io';

interface Entry {
  result: RunResult & { check: CheckVerdict };
  from: string;
}

function isVerdict(v: unknown): v is CheckVerdict {
  const c = v as CheckVerdict | undefined;
  return !!c && typeof c === 'object' && typeof c.ok === 'boolean' && typeof c.spec === 'string' && Array.isArray(c.reasons) && Array.isArray(c.warnings);
}

/** Reads the check lines of one file; a line that is not one is a UsageError naming file:line. */
async function readLines(file: string): Promise<Entry[]> {
  let text: string;
  try {
    text = await fsp.readFile(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UsageError(`cannot read ${file}: ${code === 'ENOENT' ? 'no such file' : (e as Error).message} — give the files \`curvewright check --json\` wrote`);
  }
  const out: Entry[] = [];
  const lines = text.split(/\r?\n/);
  lines.forEach((line, k) => {
    if (!line.trim()) return;
    let v: unknown;
    try {
      v = JSON.parse(line);
    } catch {
      throw new UsageError(`${file}:${k + 1} is not JSON — merge reads the lines \`curvewright check --json\` prints (stdout only; the summary goes to stderr)`);
    }
    const r = v as RunResult & { check?: unknown };
    if (!r || typeof r !== 'object' || r.version !== 1 || !isVerdict(r.check))
      throw new UsageError(`${file}:${k + 1} is not a line of \`curvewright check --json\` output (it has no "check" verdict) — run check with --json and merge what it printed`);
    out.push({ result: r as Entry['result'], from: `${file}:${k + 1}` });
  });
  return out;
}

function reasonLine(r: CheckReason): string {
  const at = r.line !== undefined ? `${r.file}:${r.line}${r.column !== undefined ? `:${r.column}` : ''}` : r.file;
  return `    ${at}: ${r.message}`;
}

export async function mergeCommand(parsed: Parsed, io: Io): Promise<number> {
  if (!parsed.positionals.length) throw new UsageError("'merge' needs the files `check --json` wrote, e.g. `curvewright merge check-1.jsonl check-2.jsonl`");
  const format = parsed.options.format === undefined ? 'text' : String(parsed.options.format);
  if (format !== 'text' && format !== 'github') throw new UsageError(`option '--format' is 'text' (default) or 'github' (workflow annotations), got '${format}'`);
  const json = parsed.options.json === true;
  const say = json ? io.err : io.out;
  const entries: Entry[] = [];
  const seen = new Map<string, string>();
  for (const file of parsed.positionals) {
    for (const e of await readLines(file)) {
      const before = seen.get(e.result.check.spec);
      if (before) throw new UsageError(`spec ${e.result.check.spec} is in both ${before} and ${e.from} — the shards overlap; run every shard with the same spec list and a different K of --shard K/N`);
      seen.set(e.result.check.spec, e.from);
      entries.push(e);
    }
  }
  entries.sort((a, b) => (a.result.check.spec < b.result.check.spec ? -1 : a.result.check.spec > b.result.check.spec ? 1 : 0));
  let code = 0;
  let passed = 0, failed = 0, bad = 0;
  for (const { result } of entries) {
    const v = result.check;
    if (isErrorReport(result)) {
      bad++;
      code = Math.max(code, 2);
    } else if (v.ok) passed++;
    else {
      failed++;
      code = Math.max(code, 1);
    }
    const lines = [`${v.ok ? 'PASS' : 'FAIL'} ${v.spec}${isErrorReport(result) ? ' (could not run)' : ''}`, ...v.reasons.map(reasonLine)];
    if (v.warnings.length) lines.push(`    (${v.warnings.length} warning${v.warnings.length === 1 ? '' : 's'}${v.strict ? '' : ' not counted'})`);
    say(lines.join('\n'));
    if (format === 'github') {
      const notes = githubAnnotations([...v.reasons, ...v.warnings]);
      if (notes.length) say(notes.join('\n'));
    }
    if (json) io.out(serializeReport(result));
  }
  const files = parsed.positionals.length;
  say(`merge: ${passed} passed, ${failed} failed${bad ? `, ${bad} could not run` : ''} (${entries.length} spec${entries.length === 1 ? '' : 's'} from ${files} file${files === 1 ? '' : 's'})`);
  return code;
}
