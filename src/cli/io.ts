// Where a command writes. Commands take this instead of process streams so tests can run them in
// process and read what a user would see.
export interface CommandIO {
  stdout(text: string): void;
  stderr(text: string): void;
  /** The working directory paths are resolved against. */
  cwd: string;
  /** Whether stderr is a terminal (progress lines only go there). */
  stderrIsTTY: boolean;
}

/** `cachewright lint | head` closes the pipe early: that ends the command quietly, not with a stack trace. */
function endQuietlyOnClosedPipe(stream: NodeJS.WriteStream): void {
  stream.on('error', (error: NodeJS.ErrnoException) => {
    if (error.code === 'EPIPE') process.exit(process.exitCode ?? 0);
    throw error;
  });
}

export const processIO = (): CommandIO => {
  endQuietlyOnClosedPipe(process.stdout);
  return processStreams();
};

const processStreams = (): CommandIO => ({
  stdout: (text) => process.stdout.write(text),
  stderr: (text) => process.stderr.write(text),
  cwd: process.cwd(),
  stderrIsTTY: Boolean(process.stderr.isTTY),
});

export const EXIT_OK = 0;
export const EXIT_FINDINGS = 1;
export const EXIT_USAGE = 2;
