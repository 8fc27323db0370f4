import { existsSync } from 'node:fs';
import os from 'node:os';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import { runFrameTask, type FrameTask, type FrameTaskResult } from '../workers/frameTask.js';

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
