import { readFile } from 'node:fs/promises';
import { Command, Option } from 'commander';
import {
  auditSession,
  CoreError,
  frameObservationValues,
  InvalidInputError,
  observationOf,
  parseAuditLimits,
  type AuditLimits,
  type AuditResult,
  type CalibrationFrameInfo,
  type FrameMetrics,
  type UnreadableFrame,
} from '@subgauge/core';
import { writeFileAtomic } from '@subgauge/core/node';
import { type CliIo, EXIT_OK, EXIT_SOME_FAILED } from '../context.js';
import type { Run } from '../main.js';
import { failureOf, loadFrameHeader } from '../io/load.js';
import { type FramePool, defaultJobs, openFramePool } from '../io/pool.js';
import { scanPaths, skippedNote } from '../io/scan.js';
import { parsePositiveInt } from '../options.js';
import { Progress } from '../render/progress.js';
import { auditCsv, renderAuditText } from '../render/audit.js';
import type { FrameTask, Thumbnail } from '../workers/frameTask.js';
import { type CommonOptions, emitJson, htmlOption, outputOptions, readOptions } from './common.js';
import type { ReportBackgroundMap, ReportThumbnail } from '../render/html/index.js';

export interface AuditCliOptions extends CommonOptions {
  limits?: string;
  failOn?: 'review' | 'reject';
  thumbnails?: boolean;
}

export interface AuditRun {
  result: AuditResult;
  /** Downsampled frames of review and reject verdicts (for the report), by file. */
  thumbnails: Map<string, Thumbnail>;
  /** The background mesh of the frame with the steepest gradient (for the report's map). */
  backgroundMap: ReportBackgroundMap | undefined;
}

/** Thumbnails (PNG, faint-sky stretch) of the review and reject frames and the background map, for the HTML report. */
export async function auditReportExtras(run: AuditRun): Promise<{ thumbnails: ReportThumbnail[]; backgroundMap?: ReportBackgroundMap }> {
  const { thumbnailPng } = await import('../render/html/thumbnail.js');
  const thumbnails: ReportThumbnail[] = [];
  for (const f of run.result.frames) {
    const t = run.thumbnails.get(f.file);
    if (!t || f.verdict === 'keep') continue;
    const m = f.metrics;
    thumbnails.push({
      file: f.file,
      png: thumbnailPng(t.values, t.width, t.height, { maxSize: 256 }),
      ...(m ? { frameWidth: m.width, frameHeight: m.height } : {}),
    });
  }
  return { thumbnails, ...(run.backgroundMap ? { backgroundMap: run.backgroundMap } : {}) };
}

async function readLimits(file: string | undefined): Promise<AuditLimits | undefined> {
  if (!file) return undefined;
  let json: unknown;
  try {
    json = JSON.parse(await readFile(file, 'utf8'));
  } catch (err) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `cannot read the limits file: ${(err as Error).message}`, { file });
  }
  try {
    return parseAuditLimits(json);
  } catch (err) {
    if (err instanceof CoreError) throw new InvalidInputError(err.code, err.message, { ...err.where, file });
    throw err;
  }
}

/** Scan, sort by header kind, measure lights in the worker pool, audit the session. */
export async function runAudit(paths: readonly string[], opts: AuditCliOptions, io: CliIo): Promise<AuditRun> {
  // The pool's threads start up while the folder is scanned and the headers read (or earlier: bin.ts).
  const pool = openFramePool(opts.jobs ?? defaultJobs());
  try {
    return await auditWith(pool, paths, opts, io);
  } finally {
    await pool.destroy();
  }
}

async function auditWith(pool: FramePool, paths: readonly string[], opts: AuditCliOptions, io: CliIo): Promise<AuditRun> {
  const limits = await readLimits(opts.limits);
  const scan = await scanPaths(paths);
  const { files, missing } = scan;
  const note = skippedNote(scan);
  if (note !== undefined && !opts.quiet) io.stderr(`note: ${note}\n`);
  const unreadable: UnreadableFrame[] = missing.map((m) => ({ file: m.path, code: m.code, message: m.message, where: { file: m.path } }));
  const lightFiles: string[] = [];
  const calibration: CalibrationFrameInfo[] = [];
  const lightOrder = new Map<string, number>();
  const read = { maxPixels: opts.maxPixels, ...(opts.strict ? { strict: true } : {}), ...(opts.hdu !== undefined ? { hdu: opts.hdu } : {}) };
  for (const file of files) {
    try {
      const h = await loadFrameHeader(file, read);
      const obs = observationOf(h.header);
      if (obs.frameKind === 'light' || obs.frameKind === 'unknown') {
        lightOrder.set(file, lightOrder.size);
        lightFiles.push(file);
      } else {
        calibration.push({ file, kind: obs.frameKind, ...frameObservationValues(obs, h.width, h.height) });
      }
    } catch (err) {
      const f = failureOf(file, err);
      lightOrder.set(file, lightOrder.size);
      unreadable.push(f);
    }
  }
  const tasks: FrameTask[] = [
    ...lightFiles.map((file): FrameTask => ({ file, kind: 'light', ...read, ...(opts.thumbnails ? { thumbnailSize: 320 } : {}) })),
    ...calibration.filter((c) => c.kind === 'bias').map((c): FrameTask => ({ file: c.file, kind: 'calibration-median', ...read })),
  ];
  const progress = new Progress(io, opts.progress && !opts.quiet && !opts.json, 'measuring');
  const results = await pool.run(tasks, (d, t) => progress.update(d, t));
  progress.stop();
  const calibrationByFile = new Map(calibration.map((c) => [c.file, c]));
  const measured = new Map<string, FrameMetrics | UnreadableFrame>();
  const thumbnails = new Map<string, Thumbnail>();
  let backgroundMap: ReportBackgroundMap | undefined;
  let steepest = -Infinity;
  for (const u of unreadable) measured.set(u.file, u);
  for (const r of results) {
    if (!r.ok) {
      measured.set(r.failure.file, { file: r.failure.file, code: r.failure.code, message: r.failure.message, where: r.failure.where });
      continue;
    }
    if (r.metrics) {
      measured.set(r.file, r.metrics);
      if (r.thumbnail) thumbnails.set(r.file, r.thumbnail);
      const g = r.metrics.gradientPercent ?? -Infinity;
      if (r.mesh && g > steepest) {
        steepest = g;
        backgroundMap = { file: r.file, columns: r.mesh.columns, rows: r.mesh.rows, levelAdu: r.mesh.levelAdu, width: r.metrics.width, height: r.metrics.height };
      }
    } else if (r.medianAdu !== undefined) {
      const c = calibrationByFile.get(r.file);
      if (c) c.medianAdu = r.medianAdu;
    }
  }
  // Lights and unreadable files in the order they were found (deterministic whatever the pool did).
  const lights = [...measured.values()].sort((a, b) => (lightOrder.get(a.file) ?? 1e9) - (lightOrder.get(b.file) ?? 1e9));
  const result = auditSession({ lights, calibration, ...(limits ? { limits } : {}) });
  for (const f of result.frames) if (f.verdict === 'keep') thumbnails.delete(f.file);
  return { result, thumbnails, backgroundMap };
}

export function auditCommand(io: CliIo, setRun: (run: Run) => void): Command {
  const cmd = new Command('audit')
    .summary('audit a session folder: per-frame verdicts with reasons, consistency, calibration, stack forecast')
    .description(
      'Measure every light frame (background, noise, gradient, stars, FWHM, elongation, trails, saturation), compare each with the rest of the session per filter, and give a verdict (keep, review, reject) with reasons; check exposure, gain, offset, binning, size and temperature consistency; match bias, dark, flat and flat-dark frames to each group of lights; and forecast what the stack gains from the frames kept.',
    )
    .argument('<paths...>', 'session folder(s) or files: lights and, optionally, calibration frames')
    .option('--limits <file.json>', 'thresholds to change (a partial limits object; see the JSON output `limits` for names)')
    .addOption(new Option('--fail-on <verdict>', 'exit 1 when any frame gets this verdict or worse').choices(['review', 'reject']))
    .option('--csv <file>', 'also write one row per frame as CSV');
  for (const o of [...outputOptions(), htmlOption(), ...readOptions()]) cmd.addOption(o);
  cmd
    .addOption(new Option('--jobs <n>', 'worker threads (default: number of cores)').argParser(parsePositiveInt))
    .option('--no-progress', 'no progress bar on stderr')
    .option('--quiet', 'print only results and errors');
  cmd.addHelpText(
    'after',
    `
Verdicts: keep; review (look before stacking: trails, soft focus, bright sky, settings that differ); reject (cloud,
other binning or size, unreadable). Trails are marked review because stacking with outlier rejection removes them.

Examples:
  subgauge audit /data/2031-10-04 --fail-on reject
  subgauge audit night/ --json --out audit.json --csv audit.csv`,
  );
  cmd.action((paths: string[], opts: AuditCliOptions) => {
    setRun(async () => {
      const run = await runAudit(paths, { ...opts, thumbnails: Boolean(opts.html) }, io);
      const { result } = run;
      if (opts.html) {
        const { writeHtmlReport } = await import('./reportFiles.js'); // the HTML renderer loads only when asked for
        const written = await writeHtmlReport(opts.html, [result], { title: 'Session audit', generatedAt: new Date().toISOString(), ...(await auditReportExtras(run)) });
        if (!opts.quiet) io.stderr(`report: ${written}\n`);
      }
      if (opts.csv) await writeFileAtomic(opts.csv, new TextEncoder().encode(auditCsv(result)));
      if (!(await emitJson(io, opts, result))) io.stdout(renderAuditText(result, io));
      const unreadable = result.frames.some((f) => f.reasons.includes('unreadable'));
      const failOn =
        (opts.failOn === 'reject' && result.counts.reject > 0) || (opts.failOn === 'review' && result.counts.reject + result.counts.review > 0);
      return unreadable || failOn ? EXIT_SOME_FAILED : EXIT_OK;
    });
  });
  return cmd;
}
