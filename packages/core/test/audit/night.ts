// Test-only simulated nights for the session audit: per-frame metrics of a made-up camera (the "Kestrel"
// preset's numbers are not needed here) on an invented target, with seeded scatter of a clean night
// (one sigma: star count 5 %, FWHM 3 %, background 2 %) and helpers to inject defects.
import { Rng } from '@subgauge/core';
import type { CalibrationFrameInfo, FrameMetrics } from '@subgauge/core';

export const WIDTH = 4144;
export const HEIGHT = 2822;
export const PEDESTAL_ADU = 500;
export const NIGHT_START_MS = Date.UTC(2031, 8, 14, 20, 30, 0);

export interface NightOptions {
  frames: number;
  filter?: string;
  exposureSeconds?: number;
  /** File name prefix. */
  prefix?: string;
  /** Start of the first frame (epoch ms). */
  startMs?: number;
  gainSetting?: number;
  offsetSetting?: number;
  setTemperatureCelsius?: number;
}

/** A clean night: metrics scattered by normal noise of the stated sizes. */
export function cleanNight(seed: number, opts: NightOptions): FrameMetrics[] {
  const rng = new Rng(seed);
  const exposure = opts.exposureSeconds ?? 300;
  const setT = opts.setTemperatureCelsius ?? -10;
  const prefix = opts.prefix ?? `${opts.filter ?? 'L'}_`;
  const start = opts.startMs ?? NIGHT_START_MS;
  const frames: FrameMetrics[] = [];
  let t = start;
  for (let i = 0; i < opts.frames; i++) {
    const background = (PEDESTAL_ADU + 1200) * (1 + 0.02 * rng.normal());
    const sky = background - PEDESTAL_ADU;
    frames.push({
      file: `${prefix}${String(i + 1).padStart(3, '0')}.fits`,
      startTimeMs: t,
      exposureSeconds: exposure,
      filter: opts.filter ?? 'L',
      sensorTemperatureCelsius: setT + 0.1 * rng.normal(),
      setTemperatureCelsius: setT,
      gainSetting: opts.gainSetting ?? 100,
      offsetSetting: opts.offsetSetting ?? 50,
      binningX: 1,
      binningY: 1,
      width: WIDTH,
      height: HEIGHT,
      object: 'Invented Nebula 7',
      backgroundAdu: background,
      noiseAdu: Math.sqrt(sky * 1.6 + 4) * (1 + 0.01 * rng.normal()),
      pedestalAdu: PEDESTAL_ADU,
      gradientPercent: 3 + 0.3 * rng.normal(),
      starCount: Math.round(850 * (1 + 0.05 * rng.normal())),
      fwhmPixels: 3.2 * (1 + 0.03 * rng.normal()),
      elongation: 1.08 + 0.02 * Math.abs(rng.normal()),
      elongationAngleDegrees: 180 * rng.uniform() - 90,
      saturatedStarFraction: 0.02 * (1 + 0.2 * rng.normal()),
      saturatedPixelFraction: 2e-5 * (1 + 0.2 * rng.normal()),
      trails: [],
      starSignalAdu: 20000 * (1 + 0.03 * rng.normal()),
      counts: { backgroundPixels: WIDTH * HEIGHT, shapeStars: 300, signalStars: 50 },
    });
    t += (exposure + 6 + 2 * rng.uniform()) * 1000;
  }
  return frames;
}

/** Calibration frames that match a clean night of the given filters (exposure 300 s, -10 deg C). */
export function matchingCalibration(filters: readonly string[] = ['L'], exposureSeconds = 300): CalibrationFrameInfo[] {
  const base = { gainSetting: 100, offsetSetting: 50, binningX: 1, binningY: 1, width: WIDTH, height: HEIGHT };
  const out: CalibrationFrameInfo[] = [];
  for (let i = 0; i < 5; i++) {
    out.push({ ...base, file: `bias_${i}.fits`, kind: 'bias', exposureSeconds: 0, sensorTemperatureCelsius: -10, medianAdu: PEDESTAL_ADU });
    out.push({ ...base, file: `dark_${i}.fits`, kind: 'dark', exposureSeconds, sensorTemperatureCelsius: -10.1 });
  }
  for (const f of filters) {
    for (let i = 0; i < 3; i++) {
      out.push({ ...base, file: `flat_${f}_${i}.fits`, kind: 'flat', filter: f, exposureSeconds: 2, sensorTemperatureCelsius: -10 });
      out.push({ ...base, file: `flatdark_${f}_${i}.fits`, kind: 'flat-dark', exposureSeconds: 2, sensorTemperatureCelsius: -10 });
    }
  }
  return out;
}

/** Scale a frame's sky (background above the pedestal) and its noise as sky-limited noise would scale. */
export function scaleSky(f: FrameMetrics, factor: number): void {
  const sky = f.backgroundAdu - PEDESTAL_ADU;
  f.backgroundAdu = PEDESTAL_ADU + sky * factor;
  f.noiseAdu *= Math.sqrt(factor);
}
