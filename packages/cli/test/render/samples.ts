/**
 * Test-only: realistic result documents for the report, built from a seeded simulated session (`simulateSession`)
 * measured with the core functions: `characterizeCamera` on the bias/dark/flat pairs, `backgroundMesh` +
 * `evaluateSub`/`summarizeSky` on the lights, and `auditSession` on per-frame metrics. Star metrics (FWHM,
 * elongation, star count) and trail positions come from the simulation truth, since this helper tests the report,
 * not the star and trail detectors.
 */
import {
  auditSession,
  backgroundMesh,
  type BackgroundMesh,
  type CalibrationFrameInfo,
  type CameraFrame,
  type CameraResult,
  characterizeCamera,
  encodeFits,
  evaluateSub,
  type FrameMetrics,
  frameObservationValues,
  frameView,
  observationOf,
  parseFits,
  type SimulatedFrame,
  simulateSession,
  type SkyCamera,
  summarizeSky,
  type TrailMetric,
} from '@subgauge/core';
import { thumbnailPng } from '../../src/render/html/thumbnail.js';
import type { ReportBackgroundMap, ReportThumbnail } from '../../src/render/html/audit.js';

export interface SampleSession {
  camera: CameraResult;
  sky: { schema: 'subgauge.sky/1'; camera: SkyCamera; subs: ReturnType<typeof evaluateSub>[]; filters: ReturnType<typeof summarizeSky>; maxPenaltyPercent: number; totalSeconds: number };
  audit: ReturnType<typeof auditSession>;
  thumbnails: ReportThumbnail[];
  backgroundMap: ReportBackgroundMap;
}

function decoded(f: SimulatedFrame): CameraFrame & { pixels: Uint16Array; width: number; height: number } {
  const r = f.render();
  const fits = parseFits(encodeFits([{ pixels: r.pixels, width: r.width, height: r.height, cards: r.cards }]));
  const hdu = fits.hdus[0]!;
  return { file: f.file, header: hdu.header, image: hdu.image!, pixels: r.pixels, width: r.width, height: r.height };
}

/** Where a straight trail through (x, y) at `angle` crosses the frame edges (Liang-Barsky clipping of a long segment). */
function trailSegment(x: number, y: number, angleDegrees: number, width: number, height: number): TrailMetric | null {
  const dx = Math.cos((angleDegrees * Math.PI) / 180);
  const dy = Math.sin((angleDegrees * Math.PI) / 180);
  let t0 = -1e9;
  let t1 = 1e9;
  for (const [p, q] of [
    [-dx, x],
    [dx, width - 1 - x],
    [-dy, y],
    [dy, height - 1 - y],
  ] as const) {
    if (p === 0) {
      if (q < 0) return null;
      continue;
    }
    const t = q / p;
    if (p < 0) t0 = Math.max(t0, t);
    else t1 = Math.min(t1, t);
  }
  if (t0 > t1) return null;
  return { angleDegrees, lengthPixels: t1 - t0, x0: x + t0 * dx, y0: y + t0 * dy, x1: x + t1 * dx, y1: y + t1 * dy };
}

/** A small seeded session measured end to end (about a second for 128 × 96 frames). */
export function sampleSession(opts: { preset?: string; seed?: number; width?: number; height?: number } = {}): SampleSession {
  const session = simulateSession({ preset: opts.preset ?? 'kestrel-m14', seed: opts.seed ?? 2, width: opts.width ?? 128, height: opts.height ?? 96 });
  const calibrationFrames = session.frames.filter((f) => f.kind !== 'light');
  const calibration = calibrationFrames.map(decoded);
  const camera = characterizeCamera(calibration);

  const skyCamera: SkyCamera = {
    gainElectronsPerAdu: camera.gainElectronsPerAdu,
    readNoiseElectrons: camera.readNoiseElectrons,
    offsetAdu: camera.offsetAdu,
    ...(camera.darkCurrentElectronsPerSecond !== null ? { darkCurrentElectronsPerSecond: camera.darkCurrentElectronsPerSecond } : {}),
    source: 'bias-frames',
  };
  const lights: FrameMetrics[] = [];
  const subs: ReturnType<typeof evaluateSub>[] = [];
  const meshes = new Map<string, BackgroundMesh>();
  const pixelsOf = new Map<string, { pixels: Uint16Array; width: number; height: number }>();
  for (const f of session.frames.filter((s) => s.kind === 'light')) {
    const d = decoded(f);
    const mesh = backgroundMesh(frameView(d.image), { boxSize: 16, offsetAdu: camera.offsetAdu });
    meshes.set(f.file, mesh);
    pixelsOf.set(f.file, d);
    const values = frameObservationValues(observationOf(d.header), d.width, d.height);
    const t = f.truth;
    const trails = t.defects.flatMap((def) => (def.kind === 'trail' ? [trailSegment(def.x / t.binning, def.y / t.binning, def.angleDegrees, d.width, d.height)] : [])).filter((s): s is TrailMetric => s !== null);
    const psf = t.psf!;
    lights.push({
      file: f.file,
      ...values,
      backgroundAdu: mesh.medianLevelAdu,
      noiseAdu: mesh.medianNoiseAdu,
      gradientPercent: mesh.meshRangePercent,
      starCount: Math.round(60 * (t.starFluxFactor ?? 1)),
      fwhmPixels: psf.fwhmPixels * Math.sqrt(psf.elongation),
      elongation: psf.elongation,
      trails,
    });
    subs.push(
      evaluateSub(
        {
          file: f.file,
          exposureSeconds: values.exposureSeconds ?? t.exposureSeconds,
          backgroundAdu: mesh.medianLevelAdu,
          ...(values.filter !== undefined ? { filter: values.filter } : {}),
          ...(values.startTimeMs !== undefined ? { startTimeMs: values.startTimeMs } : {}),
          ...(values.sensorTemperatureCelsius !== undefined ? { sensorTemperatureCelsius: values.sensorTemperatureCelsius } : {}),
        },
        skyCamera,
        5,
      ),
    );
  }
  const totalSeconds = 3 * 3600;
  const filters = summarizeSky(subs, skyCamera, { maxPenaltyPercent: 5, totalSeconds });
  const calibrationInfo: CalibrationFrameInfo[] = calibration.map((c, i) => {
    const kind = calibrationFrames[i]!.kind as CalibrationFrameInfo['kind'];
    return { file: c.file, kind, ...frameObservationValues(observationOf(c.header), c.image.width, c.image.height) };
  });
  const audit = auditSession({ lights, calibration: calibrationInfo });
  const flagged = audit.frames.filter((f) => f.verdict !== 'keep');
  const thumbnails: ReportThumbnail[] = flagged.map((f) => {
    const p = pixelsOf.get(f.file)!;
    return { file: f.file, png: thumbnailPng(p.pixels, p.width, p.height, { maxSize: 128 }) };
  });
  const chosen = [...meshes.entries()].sort((a, b) => b[1].meshRangePercent - a[1].meshRangePercent)[0]!;
  const backgroundMap: ReportBackgroundMap = { file: chosen[0], columns: chosen[1].columns, rows: chosen[1].rows, levelAdu: chosen[1].levelAdu, width: chosen[1].width, height: chosen[1].height };
  return {
    camera,
    sky: { schema: 'subgauge.sky/1', camera: skyCamera, subs, filters, maxPenaltyPercent: 5, totalSeconds },
    audit,
    thumbnails,
    backgroundMap,
  };
}
