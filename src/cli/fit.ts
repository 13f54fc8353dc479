// `curvewright fit <spec...> [--json] [--jobs N]`: run, write each results file, print a summary or JSON lines.
import * as fs from 'fs';
import * as path from 'path';
import { reportForFile, serializeReport, specFiles, writeResults, OutputError } from '../engine/run';
import { isErrorReport, type RunResult } from '../engine/report';
import { positiveInt, UsageError, type Parsed } from './args';
import { expandSpecs } from './expand';
import { errorText, naturalCompare, summaryText } from './format';
import { shown, type Io } from './io';
import { defaultJobs, runAll } from './pool';

export interface Boundary {
  /** absolute workspace root */
  root: string;
  trustPaths: boolean;
}

/** The workspace boundary of a command: --root DIR (an existing folder) or the current folder; --trust-paths. */
export function boundaryOf(parsed: Parsed, io: Io): Boundary {
  const given = parsed.options.root;
  if (given === true) throw new UsageError('--root needs a folder, e.g. --root .');
  const root = typeof given === 'string' ? path.resolve(io.cwd, given) : io.cwd;
  let isDir = false;
  try {
    isDir = fs.statSync(root).isDirectory();
  } catch {
    /* reported below */
  }
  if (!isDir) throw new UsageError(`--root ${String(given)} is not an existing folder — give the folder the specs live in, e.g. --root .`);
  return { root, trustPaths: parsed.options['trust-paths'] === true };
}

export function specsOf(parsed: Parsed, io: Io, command: string): { specs: string[]; jobs: number; boundary: Boundary } {
  // the human summary comes in natural order of the names (chick2 before chick10); --json keeps the order given
  const given = expandSpecs(parsed.positionals, io.cwd);
  const specs = parsed.options.json === true ? given : given.slice().sort(naturalCompare);
  if (!specs.length) throw new UsageError(`'${command}' needs at least one spec file, e.g. \`curvewright ${command} examples/*.fitspec.json\``);
  const jobs = parsed.options.jobs !== undefined ? positiveInt(String(parsed.options.jobs), 'jobs') : defaultJobs();
  return { specs, jobs, boundary: boundaryOf(parsed, io) };
}

/** Every input of every spec in the run (spec files and their data files), for the output checks. */
export async function runInputs(specsAbs: string[]): Promise<string[]> {
  const out: string[] = [...specsAbs];
  for (const s of specsAbs) {
    try {
      const { data, readings } = await specFiles(s);
      if (data) out.push(data);
      out.push(...readings);
    } catch {
      /* an unreadable spec is reported by its run */
    }
  }
  return out;
}

/** Calls each(index, result) in the order given, as soon as every earlier spec has finished. */
export async function inOrder(
  specs: string[],
  jobs: number,
  io: Io,
  each: (index: number, result: RunResult) => Promise<void>,
  boundary: Boundary = { root: io.cwd, trustPaths: false },
): Promise<void> {
  const ready = new Map<number, RunResult>();
  let next = 0;
  let chain = Promise.resolve();
  const absolute = specs.map(s => path.resolve(io.cwd, s));
  await runAll(absolute, { jobs, workspaceRoot: boundary.root, trustPaths: boundary.trustPaths }, (i, r) => {
    ready.set(i, r);
    chain = chain.then(async () => {
      while (ready.has(next)) {
        const result = ready.get(next)!;
        ready.delete(next);
        await each(next++, result);
      }
    });
  });
  await chain;
}

export async function fitCommand(parsed: Parsed, io: Io): Promise<number> {
  const { specs, jobs, boundary } = specsOf(parsed, io, 'fit');
  const json = parsed.options.json === true;
  let code = 0;
  const inputs = await runInputs(specs.map(s => path.resolve(io.cwd, s)));
  const claimed = new Set<string>();
  await inOrder(specs, jobs, io, async (i, result) => {
    const name = shown(specs[i], io.cwd);
    if (isErrorReport(result)) {
      code = 2;
      if (json) io.out(serializeReport(result));
      io.err(errorText(result, name));
      return;
    }
    let written: string | null = null;
    try {
      written = await writeResults(result, path.resolve(io.cwd, specs[i]), { workspaceRoot: boundary.root, trustPaths: boundary.trustPaths, inputs, claimed });
    } catch (e) {
      code = 2;
      io.err(`${name}: error: ${e instanceof OutputError ? e.message : (e as Error).message}`);
    }
    if (json) io.out(serializeReport(reportForFile(result)));
    else io.out(summaryText(result, name, written ? shown(written, io.cwd) : null, parsed.options.verbose === true) + '\n');
  }, boundary);
  return code;
}
