import type { FrameView } from '../image/view.js';
import type { SampleOptions, StatsInput } from './input.js';
import { toView } from './input.js';
import { sampleView } from './sample.js';

/** What the stored codes say about the camera's digitisation (REFERENCE B.10, F.2, F.3, F.6). */
export interface DataFacts {
  validCount: number;
  minimumAdu: number;
  maximumAdu: number;
  /** Distinct values present (integer data only). */
  distinctValues: number | undefined;
  /**
   * Smallest step between codes: the gcd of the differences of the sorted distinct values (16 for a 12-bit
   * ADC left-shifted to 16 bits). Undefined for fewer than two distinct values or non-integer data.
   */
  quantizationStepAdu: number | undefined;
  /** step / sqrt(12) (uniform rounding, REFERENCE B.10). */
  quantizationNoiseAdu: number | undefined;
  /** Bits of the container minus log2(step): 12 for 12-bit data stored in uint16 as multiples of 16. */
  effectiveBitDepth: number | undefined;
  /** Saturation code: the container maximum when present, else the top code when a pile-up sits there. */
  saturationAdu: number | undefined;
  saturatedCount: number;
  saturatedFraction: number;
  /** Pixels at the minimum code (a clipped offset piles them up there; should be ~0 in a bias). */
  atMinimumCount: number;
  atMinimumFraction: number;
}

function gcd(a: number, b: number): number {
  while (b !== 0) {
    const t = a % b;
    a = b;
    b = t;
  }
  return a;
}

const CONTAINER_BITS: [unknown, number, number][] = [
  [Uint8Array, 8, 255],
  [Int8Array, 8, 127],
  [Uint16Array, 16, 65535],
  [Int16Array, 16, 32767],
  [Int32Array, 32, 2147483647],
  [Uint32Array, 32, 4294967295],
];

function container(data: unknown): { bits: number; max: number } | undefined {
  for (const [ctor, bits, max] of CONTAINER_BITS) {
    if (data instanceof (ctor as new () => object)) return { bits, max };
  }
  return undefined;
}

/**
 * Pile-up rule (common practice, chosen here): the top code holds at least 3 pixels and more than twice the
 * largest count among the 8 occupied codes below it, i.e. a spike rather than the tail of a distribution.
 */
const PILE_UP_MIN = 3;
const PILE_UP_RATIO = 2;
const PILE_UP_NEIGHBOURS = 8;

/**
 * Quantization step, effective bit depth, saturation code and the fractions of pixels at saturation and at the
 * minimum code. Integer data (and 32-bit integers spanning <= 2^20 codes) are read from the exact histogram;
 * float data holding only integers give the step as the gcd of (value - minimum), with no pile-up detection.
 * @param opts.saturationAdu a known saturation level: pixels at or above it are counted instead of detecting one
 * @returns counts of 0 and undefined facts when no pixel is valid
 * @example dataFacts(frameView(bias)).quantizationStepAdu // 16 for a 12-bit camera writing 16-bit files
 */
export function dataFacts(input: FrameView | StatsInput, opts: SampleOptions & { saturationAdu?: number } = {}): DataFacts {
  const view = toView(input);
  const s = sampleView(view, opts);
  const n = s.n;
  const box = container(view.data);
  const empty: DataFacts = {
    validCount: 0,
    minimumAdu: Number.NaN,
    maximumAdu: Number.NaN,
    distinctValues: undefined,
    quantizationStepAdu: undefined,
    quantizationNoiseAdu: undefined,
    effectiveBitDepth: undefined,
    saturationAdu: undefined,
    saturatedCount: 0,
    saturatedFraction: 0,
    atMinimumCount: 0,
    atMinimumFraction: 0,
  };
  if (n === 0) return empty;
  let step = 0;
  let distinct: number | undefined;
  let min: number;
  let max: number;
  let atMin: number;
  let saturation = opts.saturationAdu;
  let saturated = 0;
  if (s.kind === 'histogram') {
    const { counts, origin, lo, hi } = s;
    min = origin + lo;
    max = origin + hi;
    atMin = counts[lo] as number;
    distinct = 0;
    for (let b = lo; b <= hi; b++) {
      if (counts[b] !== 0) {
        distinct++;
        if (step !== 1) step = gcd(b - lo, step);
      }
    }
    if (saturation === undefined) {
      if (box !== undefined && max === box.max && box.bits <= 16) saturation = max;
      else {
        const top = counts[hi] as number;
        let neighbour = 0;
        let seen = 0;
        for (let b = hi - 1; b >= lo && seen < PILE_UP_NEIGHBOURS; b--) {
          const c = counts[b] as number;
          if (c === 0) continue;
          seen++;
          if (c > neighbour) neighbour = c;
        }
        if (top >= PILE_UP_MIN && top > PILE_UP_RATIO * neighbour) saturation = max;
      }
    }
    if (saturation !== undefined) {
      const from = Math.max(lo, Math.ceil(saturation) - origin);
      for (let b = from; b <= hi; b++) saturated += counts[b] as number;
    }
  } else {
    const a = s.values;
    min = s.min;
    max = s.max;
    atMin = 0;
    let integers = true;
    for (let i = 0; i < n; i++) {
      const v = a[i] as number;
      if (v === min) atMin++;
      if (saturation !== undefined && v >= saturation) saturated++;
      if (integers) {
        const d = v - min;
        if (!Number.isInteger(d) || d > 2 ** 52) integers = false;
        else if (step !== 1) step = gcd(d, step);
      }
    }
    if (!integers) step = 0;
  }
  const stepAdu = step > 0 ? step : undefined;
  return {
    validCount: n,
    minimumAdu: min,
    maximumAdu: max,
    distinctValues: distinct,
    quantizationStepAdu: stepAdu,
    quantizationNoiseAdu: stepAdu === undefined ? undefined : stepAdu / Math.sqrt(12),
    effectiveBitDepth: stepAdu === undefined || box === undefined ? undefined : box.bits - Math.log2(stepAdu),
    saturationAdu: saturation,
    saturatedCount: saturated,
    saturatedFraction: saturated / n,
    atMinimumCount: atMin,
    atMinimumFraction: atMin / n,
  };
}
