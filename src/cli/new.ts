// `curvewright new <csv> [--x COL] [--y COL] [-o SPEC]`: a starter spec with candidate models for the data's shape.
import * as fs from 'fs';
import * as path from 'path';
import { suggestSpec, starterSpecText } from '../engine/starter';
import { oneLine } from '../shared/terminalText';
import { closest, UsageError, type Parsed } from './args';
import { shown, writeAtomic, type Io } from './io';

export async function newCommand(parsed: Parsed, io: Io): Promise<number> {
  if (parsed.positionals.length !== 1)
    throw new UsageError(`'new' needs exactly one data file (.csv, .tsv or .txt), e.g. \`curvewright new data/plate.csv\` (got ${parsed.positionals.length})`);
  const csvGiven = parsed.positionals[0];
  const csv = path.resolve(io.cwd, csvGiven);
  const want = {
    x: typeof parsed.options.x === 'string' ? parsed.options.x : undefined,
    y: typeof parsed.options.y === 'string' ? parsed.options.y : undefined,
  };
  let suggestion;
  // the spec does not exist yet: a missing data file is the argument's fault, not a spec key's
  if (!fs.existsSync(csv)) {
    io.err(`curvewright: the data file ${oneLine(csvGiven)} was not found (looked in ${oneLine(path.relative(io.cwd, path.dirname(csv)) || '.')}) — check the path; it is relative to the current folder`);
    return 2;
  }
  try {
    suggestion = await suggestSpec(csv, want);
  } catch (e) {
    if (e instanceof UsageError) throw e;
    io.err(`curvewright: ${(e as Error).message}`);
    return 2;
  }
  for (const key of ['x', 'y'] as const) {
    const col = want[key];
    if (col !== undefined && !suggestion.columns.includes(col)) {
      const guess = closest(col, suggestion.columns);
      throw new UsageError(
        `--${key} '${col}' is not a column of ${csvGiven}${guess ? ` — did you mean '${guess}'?` : ''} (its columns: ${suggestion.columns.join(', ')})`,
      );
    }
  }
  if (suggestion.x === suggestion.y) throw new UsageError(`x and y are the same column '${suggestion.x}' — choose another with --x or --y`);
  const specGiven = typeof parsed.options.output === 'string'
    ? parsed.options.output
    : path.join(path.dirname(csvGiven), path.basename(csvGiven).replace(/\.[^.]*$/, '') + '.fitspec.json');
  const specAbs = path.resolve(io.cwd, specGiven);
  if (!specAbs.endsWith('.json')) throw new UsageError(`-o ${specGiven}: a spec file name ends in .fitspec.json`);
  if (fs.existsSync(specAbs)) throw new UsageError(`${shown(specAbs, io.cwd)} already exists — choose another name with -o, or delete it first`);
  const models = suggestion.candidates.filter(c => c.recommended).map(c => c.model);
  const text = starterSpecText({ csvPath: csv, specPath: specAbs, x: suggestion.x, y: suggestion.y, models, ...(suggestion.decimal ? { decimal: suggestion.decimal } : {}), ...(suggestion.groupBy ? { groupBy: suggestion.groupBy } : {}) });
  await writeAtomic(specAbs, text);
  io.out(
    `wrote ${shown(specAbs, io.cwd)}: x = ${suggestion.x}, y = ${suggestion.y}${suggestion.groupBy ? `, groupBy = ${suggestion.groupBy} (one curve per value)` : ''}, models: ${models.map(m => m.name).join(', ')}\n` +
      `  next: curvewright fit ${shown(specAbs, io.cwd)}`,
  );
  return 0;
}
