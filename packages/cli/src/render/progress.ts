import cliProgress from 'cli-progress';
import type { CliIo } from '../context.js';

/** A progress bar on stderr, shown only when stderr is a terminal and progress is wanted. */
export class Progress {
  private bar: cliProgress.SingleBar | undefined;
  private started = false;
  constructor(
    private readonly io: CliIo,
    enabled: boolean,
    private readonly label: string,
  ) {
    if (enabled && io.stderrIsTTY) {
      this.bar = new cliProgress.SingleBar(
        { format: `${label} [{bar}] {value}/{total} {duration_formatted}`, stream: process.stderr, hideCursor: true, clearOnComplete: true },
        cliProgress.Presets.shades_classic,
      );
    }
  }
  update(done: number, total: number): void {
    if (!this.bar) return;
    if (!this.started) {
      this.bar.start(total, 0);
      this.started = true;
    }
    this.bar.setTotal(total);
    this.bar.update(done);
  }
  stop(): void {
    if (this.bar && this.started) this.bar.stop();
  }
}
