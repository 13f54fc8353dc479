// The commands, their options and their --help texts (one table, so help and parsing cannot drift apart).
import type { OptionDef } from './args';

export interface CommandDef {
  name: string;
  usage: string;
  summary: string;
  details: string[];
  options: OptionDef[];
}

const HELP: OptionDef = { name: 'help', short: 'h', help: 'show this help' };
// the workspace boundary (src/engine/paths.ts): specs read and write only inside the root unless --trust-paths
const ROOT: OptionDef = { name: 'root', value: true, meta: 'DIR', help: 'workspace root: data files and outputs must resolve (after links) inside it (default: the current folder)' };
const TRUST: OptionDef = { name: 'trust-paths', help: 'allow data files and outputs outside the root (only for specs you trust); hidden folders, non-.json outputs and inputs stay refused' };

export const EXIT_CODES = [
  '0  everything ran (fit) / every check passed (check)',
  '1  a check failed (check: non-converged model, error-level problem, unmet expect, stale results file)',
  '2  bad input: a spec, a data file or the command-line arguments',
  '3  internal error (a bug in Curvewright — please report it)',
  'With several specs the highest code wins.',
];

export const COMMANDS: CommandDef[] = [
  {
    name: 'fit',
    usage: 'curvewright fit <spec...> [--json] [--verbose] [--jobs N]',
    summary: 'fit every model of each spec, write its results file, print a summary',
    details: [
      'Each spec\'s "output" results file is written atomically (a temporary file, then rename), one writer at a time (a lock file beside it).',
      'A spec with "unknowns" also writes its read-outs to unknowns.output (a .csv file), atomically (docs/calibration.md).',
      'A <spec> may be a file, a folder (its *.fitspec.json files) or a pattern like examples/*.fitspec.json.',
      'Exits 0 when every spec ran, even if a model failed to converge (the summary says so); 2 for bad input.',
    ],
    options: [
      { name: 'json', help: 'print one FitReport per line (JSON), in the order the specs were given, instead of the summary (which lists specs in natural order: chick2 before chick10)' },
      { name: 'verbose', help: 'list the info notes in the summary too (by default only their count is shown)' },
      { name: 'jobs', short: 'j', value: true, meta: 'N', help: 'run up to N specs at once on worker threads (default: number of CPUs); with fewer specs than N, the groups of a spec (data.groupBy) are fitted on them, byte-identically' },
      ROOT,
      TRUST,
      HELP,
    ],
  },
  {
    name: 'check',
    usage: 'curvewright check <spec...> [--strict] [--update] [--json] [--format github] [--shard K/N] [--jobs N]',
    summary: 'fit and fail (exit 1) when a model does not converge, an error is found, an expect is not met, or results are stale',
    details: [
      'A results file is stale when its meta.specHash, meta.dataHash or meta.readingsHash differ from the current spec, data and unknowns/controls files.',
      'check does not write results files, except with --update.',
      'With --json each line carries "check": { ok, spec (path from here), reasons, warnings } — each reason with file, line and column.',
      '--shard K/N: the specs (repeats dropped) sorted by their path from here; spec i (from 0) is in shard (i mod N) + 1.',
    ],
    options: [
      { name: 'strict', help: 'fail on warnings too' },
      { name: 'update', help: 'set every expect value in the spec to the current estimate (comments and layout kept) and rewrite the results file' },
      { name: 'json', help: 'print one FitReport per line (JSON) with its "check" verdict; the summary goes to stderr' },
      { name: 'format', value: true, meta: 'github', help: 'also print a GitHub Actions annotation (::error file=…,line=…,col=…::…) per failure and warning' },
      { name: 'shard', value: true, meta: 'K/N', help: 'check only the K-th of N shards of the specs (for a CI matrix; combine with `curvewright merge`)' },
      { name: 'jobs', short: 'j', value: true, meta: 'N', help: 'run up to N specs at once on worker threads (default: number of CPUs); with fewer specs than N, the groups of a spec (data.groupBy) are fitted on them, byte-identically' },
      ROOT,
      TRUST,
      HELP,
    ],
  },
  {
    name: 'diff',
    usage: 'curvewright diff <old.json> <new.json>',
    summary: 'say in words what changed between two results files (parameters in SE, models, best, problems)',
    details: [
      'e.g. "K moved from 1.856 ± 0.012 to 1.861 ± 0.011 (0.4 SE)": the shift over the old standard error.',
      'Exits 0 when nothing changed, 1 when something did, 2 when a file is not a results file.',
      'Against the committed version: git show HEAD:results/x.fitresult.json > old.json, then diff old.json results/x.fitresult.json.',
    ],
    options: [HELP],
  },
  {
    name: 'merge',
    usage: 'curvewright merge <file...> [--json] [--format github]',
    summary: 'combine the `check --json` output of several shards into one verdict (and one report stream)',
    details: [
      'Each file holds the lines `check --json` printed. Specs come out sorted by path; a spec in two files is an error.',
      'Exits as one check over all the specs would: 0 all passed, 1 a check failed, 2 a spec could not run or a file is not check output.',
    ],
    options: [
      { name: 'json', help: 'print every report (with its verdict) as one JSON line each; the summary goes to stderr' },
      { name: 'format', value: true, meta: 'github', help: 'also print a GitHub Actions annotation per failure and warning' },
      HELP,
    ],
  },
  {
    name: 'report',
    usage: 'curvewright report <spec...> -o report.html',
    summary: 'fit the specs and write one self-contained HTML report (plots, tables, problems)',
    details: [
      'The page needs no network and no server: open it in any browser or attach it to a review.',
      'Above 20,000 points per model the page embeds a decimated set (extremes of y and residual per x interval) and says so.',
    ],
    options: [
      { name: 'output', short: 'o', value: true, meta: 'FILE', help: 'HTML file to write (default: report.html)' },
      { name: 'jobs', short: 'j', value: true, meta: 'N', help: 'run up to N specs at once on worker threads (default: number of CPUs); with fewer specs than N, the groups of a spec (data.groupBy) are fitted on them, byte-identically' },
      ROOT,
      TRUST,
      HELP,
    ],
  },
  {
    name: 'new',
    usage: 'curvewright new <csv> [--x COLUMN] [--y COLUMN] [-o SPEC]',
    summary: 'write a starter fit spec for a CSV file, with candidate models chosen from the shape of the data',
    details: [
      'x defaults to the first numeric column that rises or falls steadily, y to the next numeric column.',
      'A long-format file (an id column of text or whole numbers, few distinct values, x repeated across them) gets data.groupBy on that column: one curve per id.',
      'The spec is written next to the CSV file as <name>.fitspec.json unless -o is given; an existing file is never overwritten.',
    ],
    options: [
      { name: 'x', value: true, meta: 'COLUMN', help: 'column to use as x' },
      { name: 'y', value: true, meta: 'COLUMN', help: 'column to use as y' },
      { name: 'output', short: 'o', value: true, meta: 'SPEC', help: 'spec file to write' },
      HELP,
    ],
  },
];

function optionLines(options: OptionDef[]): string[] {
  const rows = options.map(o => [`${o.short ? `-${o.short}, ` : '    '}--${o.name}${o.value ? ` ${o.meta ?? 'VALUE'}` : ''}`, o.help]);
  const w = Math.max(...rows.map(r => r[0].length));
  return rows.map(([a, b]) => `  ${a.padEnd(w)}  ${b}`);
}

export function commandHelp(cmd: CommandDef): string {
  return [
    `Usage: ${cmd.usage}`,
    '',
    `${cmd.summary[0].toUpperCase()}${cmd.summary.slice(1)}.`,
    ...cmd.details.map(d => `  ${d}`),
    '',
    'Options:',
    ...optionLines(cmd.options),
    '',
    'Exit codes:',
    ...EXIT_CODES.map(l => `  ${l}`),
    '',
  ].join('\n');
}

export function programHelp(version: string): string {
  const w = Math.max(...COMMANDS.map(c => c.name.length));
  return [
    `${version} — fit linear, polynomial and nonlinear models to CSV data described by *.fitspec.json files.`,
    '',
    'Usage: curvewright <command> [options]',
    '',
    'Commands:',
    ...COMMANDS.map(c => `  ${c.name.padEnd(w)}  ${c.summary}`),
    '',
    'Options:',
    '  -h, --help     show help (also `curvewright <command> --help`)',
    '  -v, --version  print the version',
    '',
    'Examples:',
    '  curvewright fit examples/*.fitspec.json',
    '  curvewright check examples/ --strict',
    '  curvewright check fits/ --shard 2/4 --json > check-2.jsonl   (then: curvewright merge check-*.jsonl)',
    '  curvewright report examples/*.fitspec.json -o report.html',
    '  curvewright new data/plate-7.csv --x conc --y absorbance',
    '  curvewright diff old.fitresult.json results/plate-7.fitresult.json',
    '',
    'Exit codes:',
    ...EXIT_CODES.map(l => `  ${l}`),
    '',
  ].join('\n');
}
