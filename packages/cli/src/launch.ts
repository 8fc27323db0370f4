// How the process is started: one V8 setting that depends on whether the worker pool will fill the cores.
import os from 'node:os';

/** Commands that measure frames in the worker pool. */
const POOL_COMMANDS = new Set(['audit', 'demo']);

/** The V8 flag a pool run is restarted with (and the environment variable that turns the restart off). */
export const POOL_V8_FLAG = '--single-threaded';
export const NO_RESTART_ENV = 'SUBGAUGE_NO_RESTART';

/**
 * glibc malloc settings for a pool run (glibc manual, "Memory Allocation Tunables"; ignored by other C
 * libraries): buffers up to 32 MiB come from the arenas and freed memory is not handed back to the kernel.
 * Each worker's per-frame buffers are then reused instead of being unmapped and faulted in again, and no
 * thread's unmapping interrupts the others (a page-table change in one thread flushes the TLB of every core
 * running the same process).
 */
export const POOL_MALLOC_TUNABLES = 'glibc.malloc.mmap_threshold=33554432:glibc.malloc.trim_threshold=4294967296';

/** The environment of the restarted process: `env` with {@link POOL_MALLOC_TUNABLES} added to GLIBC_TUNABLES. */
export function poolEnvironment(env: NodeJS.ProcessEnv): NodeJS.ProcessEnv {
  const current = env.GLIBC_TUNABLES;
  return { ...env, GLIBC_TUNABLES: current ? `${current}:${POOL_MALLOC_TUNABLES}` : POOL_MALLOC_TUNABLES };
}

/** The --jobs value in argv (`--jobs 2` or `--jobs=2`): undefined when absent, NaN when not a positive integer. */
function jobsOf(args: readonly string[]): number | undefined {
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!;
    const value = a === '--jobs' ? (args[i + 1] ?? '') : a.startsWith('--jobs=') ? a.slice(7) : undefined;
    if (value !== undefined) return /^[1-9][0-9]*$/.test(value) ? Number(value) : NaN;
  }
  return undefined;
}

/**
 * The worker threads this invocation's pool will run: the --jobs value (default the core count) of an audit or
 * demo run, when it is two or more; undefined for other commands, help, one-thread runs and --jobs values the
 * option parser will refuse (the error then comes from one process).
 */
export function poolThreads(argv: readonly string[]): number | undefined {
  const args = argv.slice(2);
  const command = args.find((a) => !a.startsWith('-'));
  if (command === undefined || !POOL_COMMANDS.has(command) || args.includes('--help') || args.includes('-h')) return undefined;
  const jobs = jobsOf(args) ?? Math.max(1, os.availableParallelism?.() ?? os.cpus().length);
  return jobs >= 2 ? jobs : undefined; // NaN >= 2 is false
}

/**
 * Whether this invocation should run in a process started with {@link POOL_V8_FLAG}. When two or more worker
 * threads measure frames, they fill the cores, and V8's own helper threads (background compiling and garbage
 * collection) only compete with them; each worker then does better to compile and collect in its own thread
 * (bench/RESULTS.md, P5). A single-threaded run keeps the helpers: they use the core it leaves idle.
 */
export function wantsPoolRestart(argv: readonly string[], execArgv: readonly string[], env: NodeJS.ProcessEnv): boolean {
  if (execArgv.includes(POOL_V8_FLAG) || env[NO_RESTART_ENV] === '1') return false;
  return poolThreads(argv) !== undefined;
}
