// A one-line progress count on stderr for long runs, redrawn in place and erased at the end, so it
// never mixes with the report on stdout or lingers in a terminal. Only when stderr is a terminal:
// CI logs and pipes get no carriage-return noise.
import type { CommandIO } from './io';

/** Below this many files a run is over before a progress line would help. */
export const PROGRESS_MIN_FILES = 50;
const REDRAW_MS = 100;

export interface Progress {
  tick(done: number): void;
  done(): void;
}

const SILENT: Progress = { tick: () => undefined, done: () => undefined };

export function startProgress(io: CommandIO, total: number, verb: string, now: () => number = Date.now): Progress {
  if (!io.stderrIsTTY || total <= PROGRESS_MIN_FILES) return SILENT;
  let last = -Infinity;
  let drawn = false;
  return {
    tick(done: number) {
      const t = now();
      if (t - last < REDRAW_MS && done < total) return;
      last = t;
      drawn = true;
      io.stderr(`\r${verb} ${done}/${total} files\u001b[K`);
    },
    done() {
      if (drawn) io.stderr('\r\u001b[K');
    },
  };
}
