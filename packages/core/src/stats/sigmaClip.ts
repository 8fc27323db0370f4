import { InvalidInputError } from '../errors.js';
import type { SampleOptions, StatsInput } from './input.js';
import { toView } from './input.js';
import { histogramMad, histogramMedian, histogramMoments } from './histogram.js';
import { MAD_SIGMA_SCALE } from './robust.js';
import type { Sample } from './sample.js';
import { sampleView } from './sample.js';
import { medianInPlace } from './select.js';

/** Clipping parameters, named after astropy 5.2.1 `sigma_clipped_stats` (cenfunc is always the median). */
export interface SigmaClipParameters {
  /** Bound in units of the scale on both sides (default 3). */
  sigma?: number;
  /** Lower bound; defaults to `sigma`. */
  sigmaLower?: number;
  /** Upper bound; defaults to `sigma`. */
  sigmaUpper?: number;
  /** Iteration limit (default 5; Infinity iterates until nothing changes). */
  maxIterations?: number;
  /** Spread used for the bounds: 'std' (ddof 0, astropy's default) or 'mad-sigma'. */
  scale?: 'std' | 'mad-sigma';
  /** ddof of the returned std only (the bounds always use ddof 0, as astropy does). Default 0. */
  stdDdof?: number;
}

export type SigmaClipOptions = SampleOptions & SigmaClipParameters;

/** Statistics of the values that survive clipping. */
export interface ClippedStats {
  mean: number;
  median: number;
  std: number;
  /** Values kept. */
  count: number;
  /** Values rejected by clipping (NaN, BLANK and masked pixels are not counted here). */
  rejectedCount: number;
  /** Iterations run (the last one rejected nothing unless the limit was reached). */
  iterations: number;
  /** Bounds of the last iteration; values on a bound are kept. */
  lowerBound: number;
  upperBound: number;
}

interface Resolved {
  lower: number;
  upper: number;
  maxIterations: number;
  madScale: boolean;
  ddof: number;
}

function resolve(p: SigmaClipParameters): Resolved {
  const sigma = p.sigma ?? 3;
  const lower = p.sigmaLower ?? sigma;
  const upper = p.sigmaUpper ?? sigma;
  const maxIterations = p.maxIterations ?? 5;
  if (!(lower >= 0) || !(upper >= 0) || !(maxIterations >= 0)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', 'sigma bounds and maxIterations must be >= 0');
  }
  return { lower, upper, maxIterations, madScale: p.scale === 'mad-sigma', ddof: p.stdDdof ?? 0 };
}

const EMPTY: ClippedStats = {
  mean: Number.NaN,
  median: Number.NaN,
  std: Number.NaN,
  count: 0,
  rejectedCount: 0,
  iterations: 0,
  lowerBound: Number.NaN,
  upperBound: Number.NaN,
};

/**
 * Clip on an exact histogram: each iteration is one pass over the kept bins (median walk, moments), and
 * the kept set stays a contiguous bin range because rejection is by value.
 */
function clipHistogram(counts: Uint32Array, origin: number, lo0: number, hi0: number, n0: number, r: Resolved): ClippedStats {
  let lo = lo0;
  let hi = hi0;
  let n = n0;
  let iterations = 0;
  let changed = 1;
  let lowerBound = Number.NaN;
  let upperBound = Number.NaN;
  while (changed !== 0 && iterations < r.maxIterations) {
    iterations++;
    const center = histogramMedian(counts, origin, lo, hi, n);
    const spread = r.madScale
      ? histogramMad(counts, origin, lo, hi, n, center) * MAD_SIGMA_SCALE
      : Math.sqrt(histogramMoments(counts, origin, lo, hi, n).sumSquares / n);
    // Same operation order as astropy's SigmaClip._compute_bounds.
    lowerBound = center - spread * r.lower;
    upperBound = center + spread * r.upper;
    // Integer values: v >= b  <=>  v >= ceil(b), exactly.
    const newLo = Math.max(lo, Math.ceil(lowerBound) - origin);
    const newHi = Math.min(hi, Math.floor(upperBound) - origin);
    let removed = 0;
    for (let b = lo; b < newLo && b <= hi; b++) removed += counts[b] as number;
    for (let b = hi; b > newHi && b >= lo; b--) {
      if (b >= newLo) removed += counts[b] as number;
    }
    lo = newLo;
    hi = newHi;
    while (lo <= hi && counts[lo] === 0) lo++;
    while (hi >= lo && counts[hi] === 0) hi--;
    n -= removed;
    changed = removed;
  }
  const { mean, sumSquares } = histogramMoments(counts, origin, lo, hi, n);
  return {
    mean,
    median: histogramMedian(counts, origin, lo, hi, n),
    std: n - r.ddof > 0 ? Math.sqrt(sumSquares / (n - r.ddof)) : Number.NaN,
    count: n,
    rejectedCount: n0 - n,
    iterations,
    lowerBound,
    upperBound,
  };
}

function meanAndSumSquares(a: Float64Array, n: number): [number, number] {
  let s = 0;
  for (let i = 0; i < n; i++) s += a[i] as number;
  const mean = s / n;
  let sd = 0;
  let ss = 0;
  for (let i = 0; i < n; i++) {
    const d = (a[i] as number) - mean;
    sd += d;
    ss += d * d;
  }
  // Chan, Golub & LeVeque (1983) correction term removes the rounding error of the mean.
  return [mean, Math.max(0, ss - (sd * sd) / n)];
}

/**
 * Clip packed values a[0..n) in place. Kept values end up in a[0..count) and rejected ones after them, so the
 * buffer stays a permutation of the input (frameStats computes the MAD from it afterwards).
 */
export function clipValuesInPlace(
  a: Float64Array,
  n0: number,
  params: SigmaClipParameters,
  known?: { median: number; std: number },
): ClippedStats {
  const r = resolve(params);
  if (n0 === 0) return { ...EMPTY, iterations: 0 };
  let n = n0;
  let iterations = 0;
  let changed = 1;
  let lowerBound = Number.NaN;
  let upperBound = Number.NaN;
  let deviations: Float64Array | undefined;
  while (changed !== 0 && iterations < r.maxIterations) {
    iterations++;
    // The caller may already hold the median and std (ddof 0) of all n0 values: the first iteration reuses them.
    const reuse = known !== undefined && n === n0;
    const center = reuse ? known.median : medianInPlace(a, n);
    let spread: number;
    if (reuse && !r.madScale) spread = known.std;
    else if (r.madScale) {
      if (deviations === undefined) deviations = new Float64Array(n);
      for (let i = 0; i < n; i++) deviations[i] = Math.abs((a[i] as number) - center);
      spread = medianInPlace(deviations, n) * MAD_SIGMA_SCALE;
    } else {
      spread = Math.sqrt(meanAndSumSquares(a, n)[1] / n);
    }
    lowerBound = center - spread * r.lower;
    upperBound = center + spread * r.upper;
    let kept = 0;
    for (let i = 0; i < n; i++) {
      const v = a[i] as number;
      if (v >= lowerBound && v <= upperBound) {
        a[i] = a[kept] as number;
        a[kept++] = v;
      }
    }
    changed = n - kept;
    n = kept;
  }
  const [mean, ss] = meanAndSumSquares(a, n);
  return {
    mean,
    median: medianInPlace(a, n),
    std: n - r.ddof > 0 ? Math.sqrt(ss / (n - r.ddof)) : Number.NaN,
    count: n,
    rejectedCount: n0 - n,
    iterations,
    lowerBound,
    upperBound,
  };
}

/** Clip a sample (histogram or packed values; values are reordered, kept first). */
export function clipSample(s: Sample, params: SigmaClipParameters): ClippedStats {
  if (s.kind === 'values') return clipValuesInPlace(s.values, s.n, params);
  const r = resolve(params);
  if (s.n === 0) return { ...EMPTY };
  return clipHistogram(s.counts, s.origin, s.lo, s.hi, s.n, r);
}

/**
 * Iterative sigma clipping with astropy 5.2.1 `sigma_clipped_stats` semantics (REFERENCE C.2): repeat up to
 * `maxIterations` times, stopping when nothing new is rejected: center = median of the kept values,
 * spread = their std (ddof 0) or MAD-sigma, reject x < center - sigmaLower spread or x > center + sigmaUpper spread
 * (values exactly on a bound are kept; rejection accumulates). Returns mean, median and std of what is kept.
 *
 * Method: integer data of <= 16 bits (and 32-bit integers spanning <= 2^20 codes) are clipped on an exact
 * histogram, one pass over the bins per iteration; other data by selection on a float64 copy. Sums in float64.
 * @returns NaN statistics and count 0 when no pixel is valid
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` for negative bounds or iteration limits
 * @example sigmaClippedStats([10, 12, 11, 13, 12, 11, 10, 50, 12, 11]) // mean 11.333, median 11, std 0.9428
 */
export function sigmaClippedStats(input: StatsInput, opts: SigmaClipOptions = {}): ClippedStats {
  resolve(opts);
  return clipSample(sampleView(toView(input), opts), opts);
}
