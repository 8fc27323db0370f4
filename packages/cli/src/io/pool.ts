import { existsSync } from 'node:fs';
import os from 'node:os';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
// Only a type here: the frame code loads in the threads that run it (in this one only for an in-process run), so
// a pool's threads need not wait for this thread to load it before they start.
import type { FrameTask, FrameTaskResult } from '../workers/frameTask.js';

/** Default worker count: the machine's cores (DESIGN section 2, `--jobs`). */
export function defaultJobs(): number {
  return Math.max(1, os.availableParallelism?.() ?? os.cpus().length);
}

/**
 * Where frame tasks run: `jobs` worker threads, or this thread when jobs is 1 or the compiled worker is not there
 * (as under the test runner). Made before the folder is scanned, so the threads start up while it is.
 */
export class FramePool {
  private readonly pool: Piscina | undefined;

  constructor(readonly jobs: number) {
    const workerFile = fileURLToPath(new URL('../workers/frameWorker.js', import.meta.url));
    // One task at a time per worker: frameTask reuses its thread's last pixel buffer for the next frame.
    this.pool = jobs > 1 && existsSync(workerFile) ? new Piscina({ filename: workerFile, minThreads: jobs, maxThreads: jobs, concurrentTasksPerWorker: 1, idleTimeout: 1000 }) : undefined;
  }

  /** Run the tasks, keeping results in input order whatever order they finish in. */
  async run(tasks: readonly FrameTask[], onDone?: (done: number, total: number) => void): Promise<FrameTaskResult[]> {
    const results: FrameTaskResult[] = new Array(tasks.length);
    let done = 0;
    const pool = this.pool;
    if (pool === undefined || tasks.length <= 1) {
      const { runFrameTask } = await import('../workers/frameTask.js');
      for (let i = 0; i < tasks.length; i++) {
        results[i] = await runFrameTask(tasks[i]!);
        onDone?.(++done, tasks.length);
      }
      return results;
    }
    await Promise.all(
      tasks.map(async (t, i) => {
        results[i] = (await pool.run(t)) as FrameTaskResult;
        onDone?.(++done, tasks.length);
      }),
    );
    return results;
  }

  async destroy(): Promise<void> {
    await this.pool?.destroy();
  }
}

// A pool started before the command modules load (bin.ts), waiting for the command that will use it.
let early: FramePool | undefined;

/**
 * Start the worker threads of a pool run now, while the rest of the program is still loading: the threads boot
 * and load their modules on the other core instead of after the command has parsed its options.
 */
export function startPoolEarly(jobs: number): FramePool {
  early ??= new FramePool(jobs);
  return early;
}

/** A pool of `jobs` workers: the one started early if it has that many, else a new one. The caller destroys it. */
export function openFramePool(jobs: number): FramePool {
  const pool = early;
  early = undefined;
  if (pool !== undefined && pool.jobs === jobs) return pool;
  void pool?.destroy();
  return new FramePool(jobs);
}

/** Destroy an early pool no command took (a usage error, or a run that ended before measuring). */
export async function discardEarlyPool(): Promise<void> {
  const pool = early;
  early = undefined;
  await pool?.destroy();
}
