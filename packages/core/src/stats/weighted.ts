// Internal: statistics of a sorted list of distinct values with multiplicities (values[i] ascending,
// counts[i] >= 1), the compact form a box of pixels takes after counting (small integers) or sorting (floats).
// The functions mirror those of histogram.ts and give identical results.
import { MAD_SIGMA_SCALE } from './robust.js';
import type { ClippedStats, SigmaClipParameters } from './sigmaClip.js';

function ranks(values: Float64Array, counts: Uint32Array, lo: number, hi: number, k1: number, k2: number): [number, number] {
  let cum = 0;
  let i = lo;
  for (; i <= hi; i++) {
    cum += counts[i] as number;
    if (cum > k1) break;
  }
  const v1 = values[i] as number;
  while (cum <= k2 && i < hi) {
    i++;
    cum += counts[i] as number;
  }
  return [v1, values[i] as number];
}

export function weightedMedian(values: Float64Array, counts: Uint32Array, lo: number, hi: number, n: number): number {
  if (n <= 0) return Number.NaN;
  const [a, b] = ranks(values, counts, lo, hi, (n - 1) >> 1, n >> 1);
  return a === b ? a : (a + b) / 2;
}

function weightedMad(values: Float64Array, counts: Uint32Array, lo: number, hi: number, n: number, center: number): number {
  const k1 = (n - 1) >> 1;
  const k2 = n >> 1;
  // Start at the last value <= center.
  let left = lo - 1;
  while (left < hi && (values[left + 1] as number) <= center) left++;
  let right = left + 1;
  let cum = 0;
  let d1 = Number.NaN;
  for (;;) {
    const dl = left >= lo ? center - (values[left] as number) : Infinity;
    const dr = right <= hi ? (values[right] as number) - center : Infinity;
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

function moments(values: Float64Array, counts: Uint32Array, lo: number, hi: number, n: number): [number, number] {
  let s = 0;
  for (let i = lo; i <= hi; i++) s += (counts[i] as number) * (values[i] as number);
  const mean = s / n;
  let ss = 0;
  for (let i = lo; i <= hi; i++) {
    const d = (values[i] as number) - mean;
    ss += (counts[i] as number) * d * d;
  }
  return [mean, ss];
}

/** Sigma clipping of a weighted sorted list with the semantics of sigmaClippedStats (astropy 5.2.1). */
export function clipWeighted(
  values: Float64Array,
  counts: Uint32Array,
  m: number,
  params: SigmaClipParameters,
): ClippedStats {
  const sigma = params.sigma ?? 3;
  const lower = params.sigmaLower ?? sigma;
  const upper = params.sigmaUpper ?? sigma;
  const maxIterations = params.maxIterations ?? 5;
  const madScale = params.scale === 'mad-sigma';
  const ddof = params.stdDdof ?? 0;
  let n0 = 0;
  for (let i = 0; i < m; i++) n0 += counts[i] as number;
  let lo = 0;
  let hi = m - 1;
  let n = n0;
  let iterations = 0;
  let changed = n0 > 0 ? 1 : 0;
  let lowerBound = Number.NaN;
  let upperBound = Number.NaN;
  while (changed !== 0 && iterations < maxIterations) {
    iterations++;
    const center = weightedMedian(values, counts, lo, hi, n);
    const spread = madScale
      ? weightedMad(values, counts, lo, hi, n, center) * MAD_SIGMA_SCALE
      : Math.sqrt(moments(values, counts, lo, hi, n)[1] / n);
    lowerBound = center - spread * lower;
    upperBound = center + spread * upper;
    let removed = 0;
    while (lo <= hi && (values[lo] as number) < lowerBound) removed += counts[lo++] as number;
    while (hi >= lo && (values[hi] as number) > upperBound) removed += counts[hi--] as number;
    n -= removed;
    changed = removed;
  }
  if (n === 0) {
    return { mean: Number.NaN, median: Number.NaN, std: Number.NaN, count: 0, rejectedCount: n0, iterations, lowerBound, upperBound };
  }
  const [mean, ss] = moments(values, counts, lo, hi, n);
  return {
    mean,
    median: weightedMedian(values, counts, lo, hi, n),
    std: n - ddof > 0 ? Math.sqrt(ss / (n - ddof)) : Number.NaN,
    count: n,
    rejectedCount: n0 - n,
    iterations,
    lowerBound,
    upperBound,
  };
}

/** Sort a[0..n) and run-length encode it into (values, counts); returns the number of distinct values. */
export function sortAndCount(a: Float64Array, n: number, values: Float64Array, counts: Uint32Array): number {
  const part = a.subarray(0, n);
  part.sort();
  let m = 0;
  let i = 0;
  while (i < n) {
    const v = part[i] as number;
    let j = i + 1;
    while (j < n && part[j] === v) j++;
    values[m] = v;
    counts[m] = j - i;
    m++;
    i = j;
  }
  return m;
}
