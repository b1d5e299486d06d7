// The cachewright command: dispatches to lint, size and inspect. Whatever happens inside, a user sees a
// message and an exit code, never a stack trace.
import { runLint } from './lint';
import { runInspect } from './inspect';
import { runSize } from './size';
import { runCurve } from './curve';
import { EXIT_USAGE, processIO, type CommandIO } from './io';

declare const CACHEWRIGHT_VERSION: string | undefined;
const VERSION = typeof CACHEWRIGHT_VERSION === 'string' ? CACHEWRIGHT_VERSION : '0.2.0';

export const MAIN_USAGE = `usage: cachewright <command> [options]

commands:
  lint [PATH...]     check the qcow2 cache settings of VM definition files
  size --size SIZE   the cache sizing numbers of one disk
  inspect IMAGE...   read qcow2 images and their backing chains (read-only)
  curve TRACE...     measured L2 cache hit ratio at every cache size, from I/O traces

Run "cachewright <command> --help" for a command's options.
`;

export async function runCommand(argv: readonly string[], io: CommandIO): Promise<number> {
  const [command, ...rest] = argv;
  switch (command) {
    case 'lint':
      return runLint(rest, io, VERSION);
    case 'size':
      return runSize(rest, io);
    case 'inspect':
      return runInspect(rest, io);
    case 'curve':
      return runCurve(rest, io);
    case '--version':
    case '-v':
      io.stdout(`${VERSION}\n`);
      return 0;
    case undefined:
    case '--help':
    case '-h':
    case 'help':
      io.stdout(MAIN_USAGE);
      return command === undefined ? EXIT_USAGE : 0;
    default:
      io.stderr(`cachewright: unknown command "${command}"\n\n${MAIN_USAGE}`);
      return EXIT_USAGE;
  }
}

if (require.main === module) {
  const io = processIO();
  runCommand(process.argv.slice(2), io).then(
    (code) => {
      process.exitCode = code;
    },
    (error: unknown) => {
      const message = error instanceof Error ? error.message : String(error);
      io.stderr(`cachewright: internal error: ${message}\n`);
      if (process.env.CACHEWRIGHT_DEBUG && error instanceof Error && error.stack) io.stderr(`${error.stack}\n`);
      process.exitCode = EXIT_USAGE;
    },
  );
}
