/**
 * Shared set-up of the tests on nights from the independent generator `scripts/reference/independent_night.py`
 * (Debian python3 with numpy 1.24 and astropy 5.2.1; no code shared with the library or its simulator).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { runPython } from '../helpers/outside.js';

/** Truth of one light frame of the night, as truth.json writes it. */
export interface NightFrameTruth {
  file: string;
  defects: string[];
  expectedReasons: string[];
  exposureSeconds: number;
  skyRateElectronsPerSecond: number;
  darkRateElectronsPerSecond: number;
  skyElectrons: number;
  darkElectrons: number;
  fwhmPixels: number;
  elongation: number;
  elongationAngleDegrees: number | null;
  starFluxFactor: number;
  sensorTemperatureCelsius: number;
  setTemperatureCelsius: number;
  binning: number;
  width: number;
  height: number;
  trail: { x: number; y: number; angleDegrees: number; peakElectrons: number; fwhmPixels: number } | null;
}

/** Truth of one extra sky frame (crowded/, edge/, faint/). */
export interface SkyFrameTruth {
  file: string;
  exposureSeconds: number;
  skyRateElectronsPerSecond: number;
  darkRateElectronsPerSecond: number;
  gradientPercent: number;
  gradientAngleDegrees: number;
  stars: number;
  width: number;
  height: number;
  starRateElectronsPerSecond?: number;
}

export interface NightTruth {
  seed: number;
  camera: { name: string; gainElectronsPerAdu: number; readNoiseElectrons: number; offsetAdu: number; darkCurrentElectronsPerSecond: number };
  frames: NightFrameTruth[];
  biases: string[];
  crowded: SkyFrameTruth[];
  edge: SkyFrameTruth[];
  faint: SkyFrameTruth[];
}

/** Write the night of `seed` into `dir` and read its truth (throws when python3 fails). */
export function generateNight(dir: string, seed: number): NightTruth {
  runPython('scripts/reference/independent_night.py', ['--out', dir, '--seed', String(seed)], { timeoutMs: 60_000 });
  return JSON.parse(readFileSync(join(dir, 'truth.json'), 'utf8')) as NightTruth;
}

/**
 * A limits file for a night with bias frames only: darks and flats are not asked for, so the biases serve as
 * the pedestal and no frame gets `no-calibration` for what the generator does not write.
 */
export function biasOnlyLimits(dir: string): string {
  const path = join(dir, 'limits.json');
  writeFileSync(path, JSON.stringify({ calibration: { requireDarks: false, requireFlats: false } }));
  return path;
}

/** The record whose file ends with the truth's relative path. */
export function recordOf<T extends { file: string }>(records: readonly T[], relativePath: string): T | undefined {
  return records.find((r) => r.file.replace(/\\/g, '/').endsWith(`/${relativePath}`));
}
