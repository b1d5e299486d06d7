// The cachewright command: dispatches to its commands (one table below). Whatever happens inside, a user sees a
// message and an exit code, never a stack trace.
import { LINT_USAGE, runLint } from './lint';
import { INSPECT_USAGE, runInspect } from './inspect';
import { runSize, SIZE_USAGE } from './size';
import { CURVE_USAGE, runCurve } from './curve';
import { COMPARE_USAGE, runCompare } from './compare';
import { EXIT_USAGE, processIO, type CommandIO } from './io';

declare const CACHEWRIGHT_VERSION: string | undefined;
const VERSION = typeof CACHEWRIGHT_VERSION === 'string' ? CACHEWRIGHT_VERSION : '0.2.0';

/** Every command: how to run it, its one-line summary for the main help, and its own help text. */
interface Command {
  synopsis: string;
  summary: string;
  usage: string;
  run: (argv: readonly string[], io: CommandIO) => number | Promise<number>;
}

const COMMANDS: Record<string, Command> = {
  lint: { synopsis: 'lint [PATH...]', summary: 'check the qcow2 cache settings of VM definition files', usage: LINT_USAGE, run: (argv, io) => runLint(argv, io, VERSION) },
  size: { synopsis: 'size --size SIZE', summary: 'the cache sizing numbers of one disk', usage: SIZE_USAGE, run: runSize },
  inspect: { synopsis: 'inspect IMAGE...', summary: 'read qcow2 images and their backing chains (read-only)', usage: INSPECT_USAGE, run: (argv, io) => runInspect([...argv], io) },
  compare: { synopsis: 'compare BASE HEAD', summary: 'what a change does to findings and cache memory (or --git REF [HEAD])', usage: COMPARE_USAGE, run: (argv, io) => runCompare(argv, io, VERSION) },
  curve: { synopsis: 'curve TRACE...', summary: 'measured L2 cache hit ratio at every cache size, from I/O traces', usage: CURVE_USAGE, run: runCurve },
};

const synopsisWidth = Math.max(...Object.values(COMMANDS).map((c) => c.synopsis.length)) + 2;

export const MAIN_USAGE = `usage: cachewright <command> [options]

commands:
${Object.values(COMMANDS).map((c) => `  ${c.synopsis.padEnd(synopsisWidth)} ${c.summary}`).join('\n')}

-h, --help before or after a command shows its options; --version prints the version.
`;

const HELP = new Set(['-h', '--help']);

/** The arguments before a lone `--`: only those can ask for help or the version. */
function optionPart(argv: readonly string[]): readonly string[] {
  const end = argv.indexOf('--');
  return end === -1 ? argv : argv.slice(0, end);
}

export async function runCommand(argv: readonly string[], io: CommandIO): Promise<number> {
  const options = optionPart(argv);
  const name = options.find((arg) => !arg.startsWith('-'));
  const command = name === undefined ? undefined : COMMANDS[name];
  if (options.includes('--version')) {
    io.stdout(`${VERSION}\n`);
    return 0;
  }
  if (options.some((arg) => HELP.has(arg)) || name === 'help') {
    io.stdout(command ? command.usage : MAIN_USAGE);
    return 0;
  }
  if (name === undefined) {
    const stray = options[0];
    if (stray !== undefined) io.stderr(`cachewright: unknown option ${stray}\n\n`);
    (stray === undefined ? io.stdout : io.stderr)(MAIN_USAGE);
    return EXIT_USAGE;
  }
  if (!command) {
    io.stderr(`cachewright: unknown command "${name}"\n\n${MAIN_USAGE}`);
    return EXIT_USAGE;
  }
  if (argv[0] !== name) {
    io.stderr(`cachewright: options go after the command: cachewright ${name} ${argv.filter((a) => a !== name).join(' ')}\n`);
    return EXIT_USAGE;
  }
  return command.run(argv.slice(1), io);
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
