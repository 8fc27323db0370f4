import { Command, Option, InvalidArgumentError } from 'commander';
import {
  cameraProfileFromResult,
  characterizeCamera,
  type CameraOptions,
  type CameraResult,
  type FrameKind,
  FRAME_KINDS,
} from '@subgauge/core';
import { writeFileAtomic } from '@subgauge/core/node';
import { type CliIo, EXIT_OK, EXIT_SOME_FAILED } from '../context.js';
import type { Run } from '../main.js';
import { loadFrames, type LoadFailure } from '../io/load.js';
import { parsePositiveNumber, parseRegion, type RegionOption } from '../options.js';
import { toJson } from '../render/json.js';
import { Progress } from '../render/progress.js';
import { skippedNote } from '../io/scan.js';
import { renderCameraSummary, renderFailures } from '../render/camera.js';
import { type CommonOptions, emitJson, htmlOption, outputOptions, readOptions } from './common.js';

interface CameraCliOptions extends CommonOptions {
  kind: string[];
  region?: RegionOption;
  fitWindow?: [number, number];
  adcMax?: number;
  scale?: number;
  save?: string;
}

/** `--kind bias=GLOB`: frame kind by file glob, for mislabelled sets (repeatable). */
export function parseKindOverride(text: string, previous: string[] = []): string[] {
  const m = /^([a-z-]+)=(.+)$/.exec(text.trim());
  if (!m || !FRAME_KINDS.includes(m[1] as FrameKind)) {
    throw new InvalidArgumentError(`expected KIND=GLOB with KIND one of ${FRAME_KINDS.join(', ')}, e.g. bias='cal/b*.fits'`);
  }
  return [...previous, text.trim()];
}

function kindOverrides(list: readonly string[]): CameraOptions['kindOverrides'] {
  const out: Partial<Record<FrameKind, string[]>> = {};
  for (const item of list) {
    const i = item.indexOf('=');
    const kind = item.slice(0, i) as FrameKind;
    (out[kind] ??= []).push(item.slice(i + 1));
  }
  return out;
}

function parseFitWindow(text: string): [number, number] {
  const m = /^\s*(\d+(?:\.\d+)?)\s*[,-]\s*(\d+(?:\.\d+)?)\s*$/.exec(text);
  const lo = m ? Number(m[1]) : NaN;
  const hi = m ? Number(m[2]) : NaN;
  if (!(lo >= 0 && hi > lo && hi <= 100)) throw new InvalidArgumentError('expected LOW,HIGH in percent of saturation, e.g. 10,70');
  return [lo / 100, hi / 100];
}

export async function runCamera(paths: readonly string[], opts: CameraCliOptions, io: CliIo): Promise<{ result: CameraResult | undefined; failures: LoadFailure[] }> {
  const progress = new Progress(io, opts.progress && !opts.quiet && !opts.json, 'reading');
  const { frames, failures, skipped } = await loadFrames(paths, opts, (d, t) => progress.update(d, t));
  progress.stop();
  const note = skippedNote({ skipped });
  if (note !== undefined && !opts.quiet) io.stderr(`note: ${note}\n`);
  const options: CameraOptions = {};
  if (opts.kind.length) options.kindOverrides = kindOverrides(opts.kind);
  if (opts.region) options.region = { x: opts.region.x, y: opts.region.y, width: opts.region.width, height: opts.region.height };
  if (opts.fitWindow) options.fitWindow = { lowerFraction: opts.fitWindow[0], upperFraction: opts.fitWindow[1] };
  if (opts.adcMax !== undefined) options.adcMaxAdu = opts.adcMax;
  if (opts.scale !== undefined) options.dataScaleAduPerUnit = opts.scale;
  const result = characterizeCamera(
    frames.map((f) => ({ file: f.file, header: f.header, image: f.image })),
    options,
  );
  return { result, failures };
}

export function cameraCommand(io: CliIo, setRun: (run: Run) => void): Command {
  const cmd = new Command('camera')
    .summary('characterize a camera by photon transfer from bias, flat and dark frames')
    .description(
      'Measure gain (e-/ADU), read noise, offset, full well, linearity, PRNU/DSNU, dark current and hot pixels from bias pairs, flat pairs at several levels and dark pairs (the photon-transfer method), per colour channel for Bayer sensors. Frames are sorted by their frame-type keyword (IMAGETYP and the usual variants) and paired in time order.',
    )
    .argument('<paths...>', 'FITS files or folders with bias, flat (and dark) frames')
    .addOption(new Option('--kind <kind=glob>', 'set the frame kind of matching files (repeatable), e.g. --kind bias="cal/zero*"').argParser(parseKindOverride).default([]))
    .option('--region <x,y,w,h>', 'measure inside this rectangle only (exclude overscan)', parseRegion)
    .addOption(new Option('--fit-window <low,high>', 'photon-transfer fit range in percent of saturation').argParser(parseFitWindow))
    .addOption(new Option('--adc-max <adu>', 'the ADC maximum in file ADU (default: detected)').argParser(parsePositiveNumber))
    .addOption(new Option('--scale <adu-per-unit>', 'file units to ADU, for scaled or normalised data (else such data are refused)').argParser(parsePositiveNumber))
    .option('--save <profile.json>', 'write the camera profile that `sky` and `audit` read');
  for (const o of [...outputOptions(), htmlOption(), ...readOptions()]) cmd.addOption(o);
  cmd.option('--no-progress', 'no progress bar on stderr').option('--quiet', 'print only results and errors');
  cmd.addHelpText(
    'after',
    `
What to shoot: 2 or more bias frames; flat pairs (two frames each, same exposure and light) at 8 or more levels
from about 5 % to past saturation; optionally dark pairs at 3 or more exposures (and a second temperature for the
doubling temperature). Values describe the frames given: re-measure after changing gain, offset, binning,
temperature or firmware.

Examples:
  subgauge camera calib/ --save kestrel-gain100.json
  subgauge camera calib/ --kind flat="calib/panel_*.fits" --json > camera.json`,
  );
  cmd.action((paths: string[], opts: CameraCliOptions) => {
    setRun(async () => {
      const { result, failures } = await runCamera(paths, opts, io);
      if (!result) return EXIT_SOME_FAILED;
      if (opts.save) {
        await writeFileAtomic(opts.save, new TextEncoder().encode(toJson(cameraProfileFromResult(result))));
      }
      const doc = { ...result, unreadable: failures };
      if (opts.html) {
        const { writeHtmlReport } = await import('./reportFiles.js'); // the HTML renderer loads only when asked for
        const written = await writeHtmlReport(opts.html, [result], { title: 'Camera characterization', generatedAt: new Date().toISOString() });
        if (!opts.quiet) io.stderr(`report: ${written}\n`);
      }
      if (!(await emitJson(io, opts, doc))) {
        io.stdout(renderCameraSummary(result, io));
        if (failures.length) io.stdout(renderFailures(failures, io));
        if (opts.save) io.stdout(`\nprofile written to ${opts.save}\n`);
      }
      return failures.length ? EXIT_SOME_FAILED : EXIT_OK;
    });
  });
  return cmd;
}
