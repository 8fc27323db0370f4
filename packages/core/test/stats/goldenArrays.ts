// Test-only: rebuild the arrays of fixtures/reference/stats/goldens.json from their specs, exactly as
// scripts/reference/stats_goldens.py `generate` does (same generator, same arithmetic, same order of draws).
import type { Pixels } from '../../src/fits/types.js';
import { XorShift32 } from './prng.js';

export interface GoldenSpec {
  name: string;
  type: 'uint8' | 'int16' | 'uint16' | 'int32' | 'uint32' | 'float32' | 'float64';
  n: number;
  seed: number;
  mean: number;
  sigma: number;
  nan: number;
  blank: number;
  blankValue: number | null;
  outlier: number;
  step: number;
  run: number;
  runMax: number;
}

const RANGE: Record<string, [number, number]> = {
  uint8: [0, 255],
  int16: [-32768, 32767],
  uint16: [0, 65535],
  int32: [-2147483648, 2147483647],
  uint32: [0, 4294967295],
};

const CTOR = {
  uint8: Uint8Array,
  int16: Int16Array,
  uint16: Uint16Array,
  int32: Int32Array,
  uint32: Uint32Array,
  float32: Float32Array,
  float64: Float64Array,
} as const;

export function generateGolden(spec: GoldenSpec): Pixels {
  const rng = new XorShift32(spec.seed);
  const { type, mean, sigma, step, n } = spec;
  const range = RANGE[type];
  const quantize = (x: number): number => {
    if (type === 'float64') return x;
    if (type === 'float32') return Math.floor(x * 256 + 0.5) / 256;
    const [lo, hi] = range as [number, number];
    return Math.min(hi, Math.max(lo, Math.floor(x + 0.5)));
  };
  const out = new Float64Array(n);
  let k = 0;
  while (k < n) {
    const r = rng.below(1000);
    if (r < spec.nan) out[k++] = Number.NaN;
    else if (r < spec.nan + spec.blank) out[k++] = spec.blankValue as number;
    else if (r < spec.nan + spec.blank + spec.outlier) {
      if (range !== undefined && rng.below(4) === 0) out[k++] = range[1];
      else {
        const sign = rng.below(2) === 0 ? 1 : -1;
        out[k++] = quantize(mean + sign * step * (1 + rng.below(60)));
      }
    } else if (r < spec.nan + spec.blank + spec.outlier + spec.run) {
      const length = 1 + rng.below(spec.runMax);
      const v = quantize(mean);
      const m = Math.min(length, n - k);
      for (let i = 0; i < m; i++) out[k++] = v;
    } else out[k++] = quantize(mean + sigma * rng.normal());
  }
  const Ctor = CTOR[type];
  const typed = new Ctor(n);
  for (let i = 0; i < n; i++) typed[i] = out[i] as number;
  return typed;
}
