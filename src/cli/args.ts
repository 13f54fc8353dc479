// Command-line arguments: a command, positional arguments and options, with options allowed before or after the
// positionals ("--" ends options). Every mistake is a UsageError whose message names the option and the fix.

export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

export interface OptionDef {
  /** long name without dashes, e.g. "jobs" */
  name: string;
  /** one-letter alias without the dash, e.g. "o" */
  short?: string;
  /** takes a value (--jobs 4, --jobs=4, -o file) */
  value?: boolean;
  /** shown in --help */
  help: string;
  /** value placeholder in --help */
  meta?: string;
}

export interface Parsed {
  positionals: string[];
  options: Record<string, string | boolean>;
}

/** Edit distance (Levenshtein), for "did you mean" hints. */
export function editDistance(a: string, b: string): number {
  const d = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = d[0];
    d[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = d[j];
      d[j] = Math.min(d[j] + 1, d[j - 1] + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = tmp;
    }
  }
  return d[b.length];
}

export function closest(word: string, candidates: readonly string[]): string | undefined {
  let best: string | undefined;
  let bestD = Infinity;
  for (const c of candidates) {
    const dist = editDistance(word, c);
    if (dist < bestD) { bestD = dist; best = c; }
  }
  return best !== undefined && bestD <= Math.max(1, Math.floor(best.length / 3)) ? best : undefined;
}

/** Parses argv (after the command) against the command's options. `command` is used in messages. */
export function parseArgs(argv: string[], defs: OptionDef[], command: string): Parsed {
  const positionals: string[] = [];
  const options: Record<string, string | boolean> = {};
  const byLong = new Map(defs.map(d => [d.name, d]));
  const byShort = new Map(defs.filter(d => d.short).map(d => [d.short!, d]));
  const hint = `run \`curvewright ${command} --help\` for the options`;
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (arg === '--') {
      positionals.push(...argv.slice(i + 1));
      break;
    }
    if (arg.startsWith('-') && arg !== '-') {
      const long = arg.startsWith('--');
      const body = arg.slice(long ? 2 : 1);
      const eq = body.indexOf('=');
      const key = eq >= 0 ? body.slice(0, eq) : body;
      const def = long ? byLong.get(key) : byShort.get(key);
      if (!def) {
        const names = defs.map(d => d.name);
        const guess = closest(key, long ? names : [...names, ...defs.filter(d => d.short).map(d => d.short!)]);
        const shown = guess ? ` — did you mean '--${byShort.get(guess)?.name ?? guess}'?` : '';
        throw new UsageError(`unknown option '${arg}' for '${command}'${shown} (${hint})`);
      }
      if (def.value) {
        let v: string | undefined;
        if (eq >= 0) v = body.slice(eq + 1);
        else if (i + 1 < argv.length) v = argv[++i];
        if (v === undefined || v === '') throw new UsageError(`option '--${def.name}' needs a value${def.meta ? ` (${def.meta})` : ''} (${hint})`);
        options[def.name] = v;
      } else {
        if (eq >= 0) throw new UsageError(`option '--${def.name}' takes no value (${hint})`);
        options[def.name] = true;
      }
      continue;
    }
    positionals.push(arg);
  }
  return { positionals, options };
}

/** A positive integer option value, or a UsageError. */
export function positiveInt(value: string, option: string): number {
  if (!/^\d+$/.test(value) || Number(value) < 1) throw new UsageError(`option '--${option}' needs a whole number ≥ 1, got '${value}'`);
  return Number(value);
}
