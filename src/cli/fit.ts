// `curvewright fit <spec...> [--json] [--jobs N]`: run, write each results file, print a summary or JSON lines.
import * as path from 'path';
import { serializeReport, writeResults, OutputError } from '../engine/run';
import { isErrorReport, type RunResult } from '../engine/report';
import { positiveInt, UsageError, type Parsed } from './args';
import { expandSpecs } from './expand';
import { errorText, naturalCompare, summaryText } from './format';
import { shown, type Io } from './io';
import { defaultJobs, runAll } from './pool';

export function specsOf(parsed: Parsed, io: Io, command: string): { specs: string[]; jobs: number } {
  // the human summary comes in natural order of the names (chick2 before chick10); --json keeps the order given
  const given = expandSpecs(parsed.positionals, io.cwd);
  const specs = parsed.options.json === true ? given : given.slice().sort(naturalCompare);
  if (!specs.length) throw new UsageError(`'${command}' needs at least one spec file, e.g. \`curvewright ${command} examples/*.fitspec.json\``);
  const jobs = parsed.options.jobs !== undefined ? positiveInt(String(parsed.options.jobs), 'jobs') : defaultJobs();
  return { specs, jobs };
}

/** Calls each(index, result) in the order given, as soon as every earlier spec has finished. */
export async function inOrder(
  specs: string[],
  jobs: number,
  io: Io,
  each: (index: number, result: RunResult) => Promise<void>,
): Promise<void> {
  const ready = new Map<number, RunResult>();
  let next = 0;
  let chain = Promise.resolve();
  const absolute = specs.map(s => path.resolve(io.cwd, s));
  await runAll(absolute, { jobs, workspaceRoot: io.cwd }, (i, r) => {
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
  const { specs, jobs } = specsOf(parsed, io, 'fit');
  const json = parsed.options.json === true;
  let code = 0;
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
      written = await writeResults(result, path.resolve(io.cwd, specs[i]), { workspaceRoot: io.cwd });
    } catch (e) {
      code = 2;
      io.err(`${name}: error: ${e instanceof OutputError ? e.message : (e as Error).message}`);
    }
    if (json) io.out(serializeReport(result));
    else io.out(summaryText(result, name, written ? shown(written, io.cwd) : null, parsed.options.verbose === true) + '\n');
  });
  return code;
}
