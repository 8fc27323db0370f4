import { mkdtemp } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { Command, Option } from 'commander';
import { SESSION_PRESETS } from '@subgauge/core';
import { type CliIo, EXIT_OK, EXIT_SOME_FAILED, palette } from '../context.js';
import type { Run } from '../main.js';
import { parseNonNegativeInt } from '../options.js';
import { Progress } from '../render/progress.js';
import { inspectFiles } from './inspect.js';
import { writeSimulatedSession } from './simulate.js';
import { DEFAULT_MAX_PIXELS } from './common.js';

interface DemoOptions {
  preset: string;
  seed: number;
  dir?: string;
  progress: boolean;
}

export function demoCommand(io: CliIo, setRun: (run: Run) => void): Command {
  const presets = Object.keys(SESSION_PRESETS);
  const cmd = new Command('demo')
    .summary('simulate a night, measure it, and say where the results are')
    .description(
      'Simulate a night with an invented camera (bias, dark and flat pairs and lights with injected defects, known truth) in a temporary folder, measure it, and say where everything was written.',
    )
    .addOption(new Option('--preset <name>', 'camera and session preset').choices(presets).default(presets[0]))
    .addOption(new Option('--seed <n>', 'random seed').argParser(parseNonNegativeInt).default(1))
    .option('--dir <folder>', 'write the session here instead of a new temporary folder')
    .option('--no-progress', 'no progress bar on stderr');
  cmd.action((opts: DemoOptions) => {
    setRun(async () => {
      const p = palette(io);
      const dir = opts.dir ?? (await mkdtemp(path.join(os.tmpdir(), 'subgauge-demo-')));
      const session = path.join(dir, 'session');
      io.stdout(p.head(`subgauge demo: preset ${opts.preset}, seed ${opts.seed}`) + '\n');
      const progress = new Progress(io, opts.progress, 'simulating');
      const sim = await writeSimulatedSession(session, { preset: opts.preset, seed: opts.seed }, (d, t) => progress.update(d, t));
      progress.stop();
      const counts = Object.entries(sim.counts)
        .map(([k, n]) => `${n} ${k}`)
        .join(', ');
      io.stdout(`1. simulated ${sim.files} frames (${counts})\n   in ${session}\n   truth: ${sim.truthFile}\n`);

      const records = await inspectFiles([session], { maxPixels: DEFAULT_MAX_PIXELS, progress: false });
      const bad = records.filter((r) => !r.ok);
      const valid = records.filter((r) => r.ok && r.hdus?.every((h) => h.checksum === 'valid')).length;
      io.stdout(`2. inspected ${records.length} files: ${valid} with valid CHECKSUM/DATASUM, ${bad.length} unreadable\n`);

      io.stdout(`\nEverything is in ${dir}\n`);
      return bad.length ? EXIT_SOME_FAILED : EXIT_OK;
    });
  });
  return cmd;
}
