// Dispatch of `curvewright <command>`: help, version, argument errors (exit 2) and the commands.
import { ENGINE_VERSION } from '../engine/report';
import { closest, parseArgs, UsageError } from './args';
import { checkCommand } from './check';
import { diffCommand } from './diff';
import { fitCommand } from './fit';
import { mergeCommand } from './merge';
import { COMMANDS, commandHelp, programHelp } from './help';
import type { Io } from './io';
import { newCommand } from './new';
import { reportCommand } from './report';

const RUN: Record<string, (p: ReturnType<typeof parseArgs>, io: Io) => Promise<number>> = {
  fit: fitCommand,
  check: checkCommand,
  report: reportCommand,
  new: newCommand,
  merge: mergeCommand,
  diff: diffCommand,
};

/** Runs the command line; resolves with the exit code. Throws only for internal errors (bugs). */
export async function main(argv: string[], io: Io): Promise<number> {
  const names = COMMANDS.map(c => c.name);
  const at = argv.findIndex(a => names.includes(a));
  if (at < 0) {
    if (argv.includes('--version') || argv.includes('-v')) {
      io.out(ENGINE_VERSION);
      return 0;
    }
    if (argv.length === 0 || argv.includes('--help') || argv.includes('-h') || argv[0] === 'help') {
      const topic = argv[0] === 'help' ? COMMANDS.find(c => c.name === argv[1]) : undefined;
      io.out(topic ? commandHelp(topic) : programHelp(ENGINE_VERSION));
      return argv.length === 0 ? 2 : 0;
    }
    const first = argv.find(a => !a.startsWith('-')) ?? argv[0];
    const guess = closest(first, names);
    throw new UsageError(
      `unknown command '${first}'${guess ? ` — did you mean '${guess}'?` : ''} (commands: ${names.join(', ')}; run \`curvewright --help\`)`,
    );
  }
  const cmd = COMMANDS.find(c => c.name === argv[at])!;
  const rest = [...argv.slice(0, at), ...argv.slice(at + 1)];
  const parsed = parseArgs(rest, cmd.options, cmd.name);
  if (parsed.options.help) {
    io.out(commandHelp(cmd));
    return 0;
  }
  return RUN[cmd.name](parsed, io);
}
