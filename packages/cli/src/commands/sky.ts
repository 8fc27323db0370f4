import { readFile } from 'node:fs/promises';
import { Command, Option } from 'commander';
import {
  CoreError,
  InvalidInputError,
  evaluateSub,
  observationOf,
  pairStatistics,
  parseCameraProfile,
  pixelViewOf,
  skyBackground,
  summarizeSky,
  median as medianOf,
  frameView,
  type SkyCamera,
  type SkyFilterSummary,
  type SkyRateRule,
  type SkySubRecord,
} from '@subgauge/core';
import { type CliIo, EXIT_OK, EXIT_SOME_FAILED, EXIT_USAGE, palette } from '../context.js';
import type { Run } from '../main.js';
import { failureOf, loadFrame, type LoadedFrame, type LoadFailure } from '../io/load.js';
import { scanPaths, skippedNote } from '../io/scan.js';
import { parseDurationSeconds, parseNumber, parsePositiveNumber } from '../options.js';
import { Progress } from '../render/progress.js';
import { renderFailures } from '../render/camera.js';
import { renderSkyText, skyCsv } from '../render/sky.js';
import { writeFileAtomic } from '@subgauge/core/node';
import { type CommonOptions, emitJson, htmlOption, outputOptions, readOptions } from './common.js';

export interface SkyCliOptions extends CommonOptions {
  camera?: string;
  gain?: number;
  readNoise?: number;
  offset?: number;
  maxPenalty: number;
  total?: number;
  rule: SkyRateRule;
}

export interface SkyDocument {
  schema: 'subgauge.sky/1';
  camera: SkyCamera;
  maxPenaltyPercent: number;
  rule: SkyRateRule;
  totalSeconds?: number;
  subs: SkySubRecord[];
  filters: SkyFilterSummary[];
  warnings: string[];
  unreadable: LoadFailure[];
}

/** Where the camera numbers come from, in the order of trust (issue: profile, options, bias frames, header claim). */
async function resolveCamera(opts: SkyCliOptions, biases: LoadedFrame[], lights: LoadedFrame[], warnings: string[]): Promise<SkyCamera> {
  if (opts.camera) {
    let json: unknown;
    try {
      json = JSON.parse(await readFile(opts.camera, 'utf8'));
    } catch (err) {
      throw new InvalidInputError('INPUT_BAD_PARAMETER', `cannot read the camera profile: ${(err as Error).message}`, { file: opts.camera });
    }
    let p;
    try {
      p = parseCameraProfile(json);
    } catch (err) {
      if (err instanceof CoreError) throw new InvalidInputError(err.code, err.message, { ...err.where, file: opts.camera });
      throw err;
    }
    const cam: SkyCamera = { gainElectronsPerAdu: p.gainElectronsPerAdu, readNoiseElectrons: p.readNoiseElectrons, offsetAdu: p.offsetAdu, source: 'profile' };
    if (p.darkCurrentElectronsPerSecond !== null) cam.darkCurrentElectronsPerSecond = p.darkCurrentElectronsPerSecond;
    if (p.referenceTemperatureCelsius !== undefined) cam.referenceTemperatureCelsius = p.referenceTemperatureCelsius;
    if (p.darkDoublingCelsius !== undefined) cam.darkDoublingCelsius = p.darkDoublingCelsius;
    return cam;
  }
  const given = [opts.gain, opts.readNoise, opts.offset].filter((v) => v !== undefined).length;
  if (given === 3) return { gainElectronsPerAdu: opts.gain!, readNoiseElectrons: opts.readNoise!, offsetAdu: opts.offset!, source: 'options' };
  if (given > 0) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', 'give --gain (e-/ADU), --read-noise (e-) and --offset (ADU) together, or a --camera profile');
  }
  // Last resort: bias frames beside the lights give offset and read noise; the gain is the header's unverified claim.
  const claimed = lights.map((l) => observationOf(l.header).claimedGainElectronsPerAdu).find((g) => g !== undefined && g > 0);
  if (biases.length >= 2 && claimed !== undefined) {
    const a = biases[0]!;
    const b = biases[1]!;
    const pair = pairStatistics(pixelViewOf(a.image), pixelViewOf(b.image));
    const diffVar = pair.clipped?.differenceVariance ?? pair.differenceVariance;
    const readNoiseAdu = Math.sqrt(diffVar / 2);
    const offsetAdu = medianOf(frameView(a.image));
    warnings.push(
      `gain ${claimed} e-/ADU is the EGAIN header claim, not a measurement: measure it with \`subgauge camera\` and pass --camera`,
      `offset ${offsetAdu} ADU and read noise ${(readNoiseAdu * claimed).toFixed(2)} e- come from the bias pair ${a.file}, ${b.file}`,
    );
    return { gainElectronsPerAdu: claimed, readNoiseElectrons: readNoiseAdu * claimed, offsetAdu, source: 'header-claim' };
  }
  throw new InvalidInputError(
    'INPUT_BAD_PARAMETER',
    'no camera numbers: pass --camera profile.json (from `subgauge camera --save`), or --gain (e-/ADU), --read-noise (e-) and --offset (ADU)' +
      (biases.length < 2 ? '' : '; the bias frames found give offset and read noise, but the lights carry no EGAIN to use as gain'),
  );
}

export async function runSky(paths: readonly string[], opts: SkyCliOptions, io: CliIo): Promise<SkyDocument> {
  const scan = await scanPaths(paths);
  const { files, missing } = scan;
  const unreadable: LoadFailure[] = missing.map((m) => ({ file: m.path, code: m.code, message: m.message, where: { file: m.path } }));
  const lights: LoadedFrame[] = [];
  const biases: LoadedFrame[] = [];
  const warnings: string[] = [];
  const note = skippedNote(scan);
  if (note !== undefined) warnings.push(note);
  const progress = new Progress(io, opts.progress && !opts.quiet && !opts.json, 'reading');
  let done = 0;
  let skippedOther = 0;
  for (const file of files) {
    try {
      const f = await loadFrame(file, opts);
      const kind = observationOf(f.header).frameKind;
      if (kind === 'light' || kind === 'unknown') lights.push(f);
      else if (kind === 'bias') biases.push(f);
      else skippedOther++;
    } catch (err) {
      unreadable.push(failureOf(file, err));
    }
    progress.update(++done, files.length);
  }
  progress.stop();
  if (skippedOther) warnings.push(`${skippedOther} dark/flat frame(s) skipped: only light frames are checked`);
  const camera = await resolveCamera(opts, biases, lights, warnings);
  const subs: SkySubRecord[] = [];
  for (const f of lights) {
    const obs = observationOf(f.header);
    if (obs.exposureSeconds === undefined || !(obs.exposureSeconds > 0)) {
      unreadable.push({ file: f.file, code: 'INPUT_BAD_PARAMETER', message: 'no positive EXPTIME/EXPOSURE in the header', where: { file: f.file, keyword: 'EXPTIME' } });
      continue;
    }
    const bg = skyBackground(f.image, f.header, { offsetAdu: camera.offsetAdu });
    const base = {
      file: f.file,
      exposureSeconds: obs.exposureSeconds,
      ...(obs.filter !== undefined ? { filter: obs.filter } : {}),
      ...(obs.startTimeMs !== undefined ? { startTimeMs: obs.startTimeMs } : {}),
      ...(obs.sensorTemperatureCelsius !== undefined ? { sensorTemperatureCelsius: obs.sensorTemperatureCelsius } : {}),
    };
    if (bg.channels) {
      for (const c of bg.channels) subs.push(evaluateSub({ ...base, channel: c.channel, backgroundAdu: c.level.backgroundAdu, backgroundUncertaintyAdu: c.level.backgroundUncertaintyAdu }, camera, opts.maxPenalty));
    } else {
      subs.push(evaluateSub({ ...base, backgroundAdu: bg.backgroundAdu, backgroundUncertaintyAdu: bg.backgroundUncertaintyAdu }, camera, opts.maxPenalty));
    }
  }
  const filters = summarizeSky(subs, camera, {
    maxPenaltyPercent: opts.maxPenalty,
    rule: opts.rule,
    ...(opts.total !== undefined ? { totalSeconds: opts.total } : {}),
  });
  return {
    schema: 'subgauge.sky/1',
    camera,
    maxPenaltyPercent: opts.maxPenalty,
    rule: opts.rule,
    ...(opts.total !== undefined ? { totalSeconds: opts.total } : {}),
    subs,
    filters,
    warnings,
    unreadable,
  };
}

export function skyCommand(io: CliIo, setRun: (run: Run) => void): Command {
  const cmd = new Command('sky')
    .summary('check whether light subs are sky-limited and advise the shortest sub length')
    .description(
      'For every light sub: the star-free sky background in ADU and electrons, the sky rate, how much read noise adds to the noise (the read-noise penalty, sqrt(1 + RN^2/(sky + dark)) - 1), and whether that stays under --max-penalty; per filter (and per colour channel, the darkest deciding): the shortest sub that meets the limit.',
    )
    .argument('<paths...>', 'light frames or folders (bias frames among them are used when no camera is given)')
    .option('--camera <profile.json>', 'camera profile written by `subgauge camera --save`')
    .addOption(new Option('--gain <e-/ADU>', 'gain in electrons per ADU (with --read-noise and --offset)').argParser(parsePositiveNumber))
    .addOption(new Option('--read-noise <e->', 'read noise in electrons').argParser(parsePositiveNumber))
    .addOption(new Option('--offset <ADU>', 'bias level (offset) in ADU').argParser(parseNumber))
    .addOption(new Option('--max-penalty <percent>', 'largest acceptable noise increase from read noise').argParser(parsePositiveNumber).default(5))
    .addOption(new Option('--total <duration>', 'total integration (e.g. 4h, 90m) for the table of relative SNR against sub length').argParser(parseDurationSeconds))
    .addOption(
      new Option('--rule <rule>', 'which sky rate the advice uses: the median of the darker half of the subs, the median of all, or the darkest')
        .choices(['darker-half', 'median', 'darkest'])
        .default('darker-half'),
    )
    .option('--csv <file>', 'also write one row per sub (and channel) as CSV');
  for (const o of [...outputOptions(), htmlOption(), ...readOptions()]) cmd.addOption(o);
  cmd.option('--no-progress', 'no progress bar on stderr').option('--quiet', 'print only results and errors');
  cmd.addHelpText(
    'after',
    `
Sky-limited means the sky's own shot noise dominates: the read noise then adds at most --max-penalty percent.
The advice is the shortest sub; longer subs are limited by saturated stars, tracking and satellites, not noise.

Examples:
  subgauge sky night/lights --camera kestrel-gain100.json --total 4h
  subgauge sky night/lights --gain 0.33 --read-noise 3.1 --offset 2000 --json`,
  );
  cmd.action((paths: string[], opts: SkyCliOptions) => {
    setRun(async () => {
      let doc: SkyDocument;
      try {
        doc = await runSky(paths, opts, io);
      } catch (err) {
        if (err instanceof InvalidInputError && err.code === 'INPUT_BAD_PARAMETER' && !err.where.file) {
          io.stderr(`subgauge sky: ${err.message}\n`);
          return EXIT_USAGE;
        }
        throw err;
      }
      if (opts.csv) await writeFileAtomic(opts.csv, new TextEncoder().encode(skyCsv(doc.subs)));
      if (opts.html) {
        const { writeHtmlReport } = await import('./reportFiles.js'); // the HTML renderer loads only when asked for
        const written = await writeHtmlReport(opts.html, [doc], { title: 'Sky-limited check', generatedAt: new Date().toISOString() });
        if (!opts.quiet) io.stderr(`report: ${written}\n`);
      }
      if (!(await emitJson(io, opts, doc))) {
        io.stdout(renderSkyText(doc, io));
        if (doc.unreadable.length) io.stdout(renderFailures(doc.unreadable, io));
      }
      for (const w of doc.warnings) io.stderr(palette(io).warn(`warning: ${w}`) + '\n');
      return doc.unreadable.length ? EXIT_SOME_FAILED : EXIT_OK;
    });
  });
  return cmd;
}
