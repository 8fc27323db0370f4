// Internal: exact statistics of integer data held as a histogram (counts per code), over the bin range
// [lo, hi] holding n values. Values are origin + bin; sums are float64.
import { lerp } from './select.js';

/** Values at 0-based ranks k1 <= k2 among the n values in bins [lo, hi]. */
export function histogramRanks(
  counts: Uint32Array,
  origin: number,
  lo: number,
  hi: number,
  k1: number,
  k2: number,
): [number, number] {
  let cum = 0;
  let b = lo;
  for (; b <= hi; b++) {
    cum += counts[b] as number;
    if (cum > k1) break;
  }
  const v1 = origin + b;
  for (; b <= hi && cum <= k2; ) {
    b++;
    cum += counts[b] as number;
  }
  return [v1, origin + b];
}

/** Median (numpy rule: mean of the two middle values for even n). NaN when n = 0. */
export function histogramMedian(counts: Uint32Array, origin: number, lo: number, hi: number, n: number): number {
  if (n <= 0) return Number.NaN;
  const [a, b] = histogramRanks(counts, origin, lo, hi, (n - 1) >> 1, n >> 1);
  return a === b ? a : (a + b) / 2;
}

/** Quantile with numpy's 'linear' method (see quantileInPlace). */
export function histogramQuantile(
  counts: Uint32Array,
  origin: number,
  lo: number,
  hi: number,
  n: number,
  q: number,
): number {
  if (n <= 0) return Number.NaN;
  const h = (n - 1) * q;
  const k = Math.min(Math.floor(h), n - 1);
  const [a, b] = histogramRanks(counts, origin, lo, hi, k, Math.min(k + 1, n - 1));
  return lerp(a, b, h - k);
}

/**
 * Median absolute deviation from `center`, exactly, by walking outward from the center through the bins
 * (deviations come out in increasing order, so the two middle ranks are found without sorting).
 */
export function histogramMad(
  counts: Uint32Array,
  origin: number,
  lo: number,
  hi: number,
  n: number,
  center: number,
): number {
  if (n <= 0) return Number.NaN;
  const k1 = (n - 1) >> 1;
  const k2 = n >> 1;
  let left = Math.min(hi, Math.floor(center - origin));
  let right = Math.max(left + 1, lo);
  let cum = 0;
  let d1 = Number.NaN;
  for (;;) {
    while (left >= lo && counts[left] === 0) left--;
    while (right <= hi && counts[right] === 0) right++;
    const dl = left >= lo ? center - (origin + left) : Infinity;
    const dr = right <= hi ? origin + right - center : Infinity;
    let d: number;
    let c: number;
    if (dl < dr) {
      d = dl;
      c = counts[left] as number;
      left--;
    } else if (dr < dl) {
      d = dr;
      c = counts[right] as number;
      right++;
    } else {
      if (dl === Infinity) return Number.NaN;
      d = dl;
      c = (counts[left] as number) + (counts[right] as number);
      left--;
      right++;
    }
    if (d1 !== d1 && k1 < cum + c) d1 = d;
    if (k2 < cum + c) return d1 === d ? d : (d1 + d) / 2;
    cum += c;
  }
}

/** Mean and sum of squared deviations from it over bins [lo, hi] (two passes over the bins). */
export function histogramMoments(
  counts: Uint32Array,
  origin: number,
  lo: number,
  hi: number,
  n: number,
): { mean: number; sumSquares: number } {
  if (n <= 0) return { mean: Number.NaN, sumSquares: Number.NaN };
  let s = 0;
  for (let b = lo; b <= hi; b++) s += (counts[b] as number) * (origin + b);
  const mean = s / n;
  let ss = 0;
  for (let b = lo; b <= hi; b++) {
    const c = counts[b] as number;
    if (c !== 0) {
      const d = origin + b - mean;
      ss += c * d * d;
    }
  }
  return { mean, sumSquares: ss };
}
