import type { PixelView } from './view.js';

/** The spacing of the codes present in a frame. */
export interface QuantizationStep {
  /** Greatest common divisor of the gaps between the distinct values present (ADU); null when undetermined. */
  stepAdu: number | null;
  distinctValues: number;
  /** Every finite pixel holds an integer. */
  integerValued: boolean;
  /** The smallest code present (the step pattern is `offsetCode + k·step`). */
  minimumCode: number;
}

function gcd(a: number, b: number): number {
  while (b) { const t = a % b; a = b; b = t; }
  return a;
}

/**
 * Quantization step of integer data: the gcd of the differences between sorted distinct values (REFERENCE
 * B.10: a 12-bit ADC shifted to 16 bits gives 16). Uses a presence map over [min, max], so no sort and no
 * per-pixel allocation; ranges wider than `maxRange` codes are not examined (stepAdu null).
 * @returns stepAdu null for non-integer data, constant frames, or too wide a range.
 */
export function detectQuantizationStep(view: PixelView, maxRange = 1 << 24): QuantizationStep {
  const d = view.data;
  let min = Infinity, max = -Infinity, nonInt = 0;
  for (let y = 0; y < view.height; y++) {
    let i = view.offset + y * view.strideY;
    for (let x = 0; x < view.width; x++) {
      const v = d[i]!;
      i += view.strideX;
      if (v - v !== 0) continue;
      if (v % 1 !== 0) nonInt++;
      if (v < min) min = v;
      if (v > max) max = v;
    }
  }
  if (!(max >= min)) return { stepAdu: null, distinctValues: 0, integerValued: false, minimumCode: NaN };
  if (nonInt > 0) return { stepAdu: null, distinctValues: NaN, integerValued: false, minimumCode: min };
  const range = max - min;
  if (range > maxRange) return { stepAdu: null, distinctValues: NaN, integerValued: true, minimumCode: min };
  const present = new Uint8Array(range + 1);
  for (let y = 0; y < view.height; y++) {
    let i = view.offset + y * view.strideY;
    for (let x = 0; x < view.width; x++) {
      const v = d[i]!;
      i += view.strideX;
      if (v - v === 0) present[v - min] = 1;
    }
  }
  let step = 0, last = -1, distinct = 0;
  for (let k = 0; k <= range; k++) {
    if (present[k] === 0) continue;
    distinct++;
    if (last >= 0) step = gcd(step, k - last);
    last = k;
  }
  return { stepAdu: step > 0 ? step : null, distinctValues: distinct, integerValued: true, minimumCode: min };
}

/** Combine steps of several frames: the gcd of the known ones (null if none is known). */
export function combineQuantizationSteps(steps: readonly (number | null)[]): number | null {
  let g = 0;
  for (const s of steps) if (s !== null && s > 0) g = gcd(g, s);
  return g > 0 ? g : null;
}
