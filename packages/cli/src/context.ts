import pc from 'picocolors';

/** Where a command writes: stdout for results, stderr for progress and problems. Swappable in tests. */
export interface CliIo {
  stdout: (text: string) => void;
  stderr: (text: string) => void;
  /** stderr is a terminal (progress bars only then). */
  stderrIsTTY: boolean;
  /** colour on stdout. */
  color: boolean;
  /** current working directory (for resolving relative paths in output). */
  cwd: string;
}

export function processIo(): CliIo {
  return {
    stdout: (t) => void process.stdout.write(t),
    stderr: (t) => void process.stderr.write(t),
    stderrIsTTY: Boolean(process.stderr.isTTY),
    color: Boolean(process.stdout.isTTY) && !('NO_COLOR' in process.env),
    cwd: process.cwd(),
  };
}

/** Colour helpers that respect `io.color`. */
export function palette(io: CliIo) {
  const c = pc.createColors(io.color);
  return {
    bad: c.red,
    warn: c.yellow,
    good: c.green,
    dim: c.dim,
    bold: c.bold,
    head: c.bold,
  };
}

/** Exit codes (DESIGN section 2). */
export const EXIT_OK = 0;
export const EXIT_SOME_FAILED = 1;
export const EXIT_USAGE = 2;
