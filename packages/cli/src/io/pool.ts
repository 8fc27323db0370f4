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
 * Run tasks with `jobs` worker threads (in this thread when jobs is 1, or when the compiled worker is not
 * there, as under the test runner), keeping results in input order whatever order they finish in.
 */
export async function runTasks(tasks: readonly FrameTask[], jobs: number, onDone?: (done: number, total: number) => void): Promise<FrameTaskResult[]> {
  const results: FrameTaskResult[] = new Array(tasks.length);
  let done = 0;
  const workerFile = fileURLToPath(new URL('../workers/frameWorker.js', import.meta.url));
  if (jobs <= 1 || tasks.length <= 1 || !existsSync(workerFile)) {
    for (let i = 0; i < tasks.length; i++) {
      results[i] = await runFrameTask(tasks[i]!);
      onDone?.(++done, tasks.length);
    }
    return results;
  }
  // One task at a time per worker: frameTask reuses its thread's last pixel buffer for the next frame.
  const pool = new Piscina({ filename: workerFile, minThreads: jobs, maxThreads: jobs, concurrentTasksPerWorker: 1, idleTimeout: 1000 });
  try {
    await Promise.all(
      tasks.map(async (t, i) => {
        results[i] = (await pool.run(t)) as FrameTaskResult;
        onDone?.(++done, tasks.length);
      }),
    );
  } finally {
    await pool.destroy();
  }
  return results;
}
