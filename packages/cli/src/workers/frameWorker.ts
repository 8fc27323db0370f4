// Worker-thread entry for piscina: one file a task.
import { runFrameTask, type FrameTask } from './frameTask.js';

export default function frameWorker(task: FrameTask) {
  return runFrameTask(task);
}
