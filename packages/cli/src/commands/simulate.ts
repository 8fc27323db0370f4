import { mkdir } from 'node:fs/promises';
import path from 'node:path';
import { Command, Option } from 'commander';
import { encodeFits, SESSION_PRESETS, simulateSession, type SessionOptions } from '@subgauge/core';
import { writeFileAtomic } from '@subgauge/core/node';
import { type CliIo, EXIT_OK } from '../context.js';
import type { Run } from '../main.js';
import { parseNonNegativeInt, parsePositiveInt } from '../options.js';
import { toJson } from '../render/json.js';
import { Progress } from '../render/progress.js';

export interface SimulateOptions {
  preset: string;
  seed: number;
  width?: number;
  height?: number;
  clean?: boolean;
  progress: boolean;
  quiet?: boolean;
}

export interface SimulateSummary {
  dir: string;
  preset: string;
  seed: number;
  files: number;
  counts: Record<string, number>;
  truthFile: string;
}

/** Write a simulated session into `dir` (FITS files in kind folders plus truth.json). */
export async function writeSimulatedSession(
  dir: string,
  opts: Pick<SimulateOptions, 'preset' | 'seed' | 'width' | 'height' | 'clean'>,
  onProgress?: (done: number, total: number) => void,
): Promise<SimulateSummary> {
  const sessionOpts: SessionOptions = { preset: opts.preset, seed: opts.seed };
  if (opts.width !== undefined) sessionOpts.width = opts.width;
  if (opts.height !== undefined) sessionOpts.height = opts.height;
  if (opts.clean) sessionOpts.noDefects = true;
  const session = simulateSession(sessionOpts);
  let done = 0;
  for (const frame of session.frames) {
    const { pixels, width, height, cards } = frame.render();
    const target = path.join(dir, frame.file);
    await mkdir(path.dirname(target), { recursive: true });
    await writeFileAtomic(target, encodeFits([{ pixels, width, height, cards }]));
    onProgress?.(++done, session.frames.length);
  }
  const truthFile = path.join(dir, 'truth.json');
  await writeFileAtomic(truthFile, new TextEncoder().encode(toJson(session.truth)));
  const counts: Record<string, number> = {};
  for (const f of session.frames) counts[f.kind] = (counts[f.kind] ?? 0) + 1;
  return { dir, preset: opts.preset, seed: opts.seed, files: session.frames.length, counts, truthFile };
}

export function simulateCommand(io: CliIo, setRun: (run: Run) => void): Command {
  const presets = Object.keys(SESSION_PRESETS);
  const cmd = new Command('simulate')
    .summary('write a synthetic session with known truth for an invented camera')
    .description(
      'Write a synthetic session for a made-up camera into <dir>: bias pairs, dark pairs at several exposures, flat pairs from 5 % to past full well, and light frames with some injected defects, plus truth.json with every true parameter. Useful to learn the tool and to test it against known answers.',
    )
    .argument('<dir>', 'output folder (created if missing)')
    .addOption(new Option('--preset <name>', 'camera and session preset').choices(presets).default(presets[0]))
    .addOption(new Option('--seed <n>', 'random seed (same seed, same files)').argParser(parseNonNegativeInt).default(1))
    .addOption(new Option('--width <px>', 'sensor width in pixels').argParser(parsePositiveInt))
    .addOption(new Option('--height <px>', 'sensor height in pixels').argParser(parsePositiveInt))
    .option('--clean', 'no injected defects')
    .option('--no-progress', 'no progress bar on stderr')
    .option('--quiet', 'print nothing but errors');
  cmd.addHelpText(
    'after',
    `
Presets: ${presets.join(', ')} (invented cameras: a monochrome 14-bit and a colour 12-bit sensor).
Example:
  subgauge simulate /tmp/night --preset ${presets[1] ?? presets[0]} --seed 7`,
  );
  cmd.action((dir: string, opts: SimulateOptions) => {
    setRun(async () => {
      const progress = new Progress(io, opts.progress && !opts.quiet, 'simulating');
      const summary = await writeSimulatedSession(dir, opts, (d, t) => progress.update(d, t));
      progress.stop();
      if (!opts.quiet) {
        const counts = Object.entries(summary.counts)
          .map(([k, n]) => `${n} ${k}`)
          .join(', ');
        io.stdout(`wrote ${summary.files} frames (${counts}) to ${dir}\ntruth: ${summary.truthFile}\n`);
      }
      return EXIT_OK;
    });
  });
  return cmd;
}
