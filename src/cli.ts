// Entry of the headless command line (bundled to dist/cli.js, started by bin/curvewright.js). In a worker thread
// started by the CLI itself it runs specs instead (src/cli/pool.ts). Every failure ends in a message and an exit
// code, never a stack trace: 2 for bad arguments, 3 for a bug (with a hint to report it).
import { UsageError } from './cli/args';
import { ioReason, processIo } from './cli/io';

const USER_IO = new Set(['EACCES', 'EPERM', 'EROFS', 'ENOSPC', 'ENOTDIR', 'EISDIR', 'ENOENT', 'EEXIST', 'EBUSY']);
import { main } from './cli/main';
import { InternalError, isCliWorker, startCliWorker } from './cli/pool';

function internal(e: unknown): void {
  const detail = e instanceof InternalError ? e.detail : e instanceof Error ? e.stack : undefined;
  const message = e instanceof Error ? e.message : String(e);
  processIo.err(
    `curvewright: internal error: ${message}\n` +
      '  This is a bug in Curvewright, not a problem with your files. Please report it with the command you ran\n' +
      '  (and, if you can, the spec and data). Set CURVEWRIGHT_DEBUG=1 to print the details.\n',
  );
  if (process.env.CURVEWRIGHT_DEBUG && detail) processIo.err(detail);
  process.exitCode = 3;
}

if (isCliWorker()) {
  startCliWorker();
} else {
  process.stdout.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0); // reader went away (e.g. `| head`)
  });
  const fatal = (e: unknown) => {
    internal(e);
    process.exit(3);
  };
  process.on('uncaughtException', fatal);
  process.on('unhandledRejection', fatal);
  main(process.argv.slice(2), processIo).then(
    code => {
      process.exitCode = code;
    },
    e => {
      const io = e as NodeJS.ErrnoException;
      if (e instanceof UsageError) {
        processIo.err(`curvewright: ${e.message}`);
        process.exitCode = 2;
      } else if (io && typeof io.code === 'string' && USER_IO.has(io.code)) {
        // a user's I/O mistake (folder, permission, full disk), not a bug: exit 2 with the path and the fix
        processIo.err(`curvewright: cannot write or read ${io.path ?? 'a file'}: ${ioReason(e)} — check the path, its permissions and the free space`);
        process.exitCode = 2;
      } else internal(e);
    },
  );
}
