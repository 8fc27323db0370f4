import { InvalidInputError } from '../errors.js';
import type { SampleOptions, StatsInput } from './input.js';
import { maskAddress, toView } from './input.js';
import { histogramMad, histogramMedian, histogramMoments, histogramQuantile } from './histogram.js';
import type { PixelCounts, Sample } from './sample.js';
import { emptyTally, sampleView, viewSums } from './sample.js';
import { medianInPlace, quantileInPlace } from './select.js';

/**
 * Scale from MAD to a Gaussian sigma: 1 / Phi^-1(3/4), with Phi^-1(0.75) = 0.6744897501960817.
 * For X ~ N(mu, sigma^2), P(|X - mu| <= 0.67449 sigma) = 1/2, so median |X - mu| = 0.67449 sigma and
 * sigma = MAD / 0.67449 = 1.482602218505602 MAD (the value astropy 5.2.1 `mad_std` uses; REFERENCE C.1).
 */
export const MAD_SIGMA_SCALE = 1.482602218505602;

function checkQuantile(q: number): void {
  if (!(q >= 0 && q <= 1)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `quantile must lie in [0, 1]; found ${q}`);
  }
}

/** Median of a sample (histogram or values; values are reordered). */
export function sampleMedian(s: Sample): number {
  return s.kind === 'histogram' ? histogramMedian(s.counts, s.origin, s.lo, s.hi, s.n) : medianInPlace(s.values, s.n);
}

/** MAD about `center`; for values samples this overwrites the values with |x - center|. */
export function sampleMadDestructive(s: Sample, center: number): number {
  if (s.kind === 'histogram') return histogramMad(s.counts, s.origin, s.lo, s.hi, s.n, center);
  const a = s.values;
  const n = s.n;
  for (let i = 0; i < n; i++) a[i] = Math.abs((a[i] as number) - center);
  return medianInPlace(a, n);
}

/**
 * Median, ignoring NaN, infinities, BLANK and masked pixels.
 *
 * Method: integer data of <= 16 bits (and 32-bit integers spanning <= 2^20 codes) by an exact histogram;
 * other data by Floyd-Rivest selection on a float64 copy. Even count: mean of the two middle values
 * ((a + b) / 2, the numpy 1.24 `np.median` rule).
 * @returns the median; NaN when no pixel is valid
 * @example median([2, 4, 4, 4, 5, 5, 7, 9]) // 4.5
 */
export function median(input: StatsInput, opts: SampleOptions = {}): number {
  return sampleMedian(sampleView(toView(input), opts));
}

/**
 * Quantiles with numpy 1.24's default 'linear' interpolation (position (n - 1) q).
 * @param qs quantiles in [0, 1]
 * @returns one value per quantile; NaN when no pixel is valid
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` for q outside [0, 1]
 * @example quantiles([1, 2, 3, 4], [0.25, 0.5]) // [1.75, 2.5]
 */
export function quantiles(input: StatsInput, qs: readonly number[], opts: SampleOptions = {}): number[] {
  qs.forEach(checkQuantile);
  const s = sampleView(toView(input), opts);
  if (s.kind === 'histogram') return qs.map((q) => histogramQuantile(s.counts, s.origin, s.lo, s.hi, s.n, q));
  return qs.map((q) => quantileInPlace(s.values, s.n, q));
}

/** One quantile; see {@link quantiles}. */
export function quantile(input: StatsInput, q: number, opts: SampleOptions = {}): number {
  return quantiles(input, [q], opts)[0] as number;
}

/** Median, MAD and the Gaussian-consistent sigma derived from it. */
export interface MadResult {
  median: number;
  /** median(|x - median(x)|), unscaled. */
  mad: number;
  /** MAD x {@link MAD_SIGMA_SCALE}. */
  madSigma: number;
  /** Valid pixels used. */
  count: number;
}

/**
 * Median absolute deviation, MAD = median(|x - median(x)|) (REFERENCE C.1), exact on the histogram path
 * (walk outward from the median) and by two selections otherwise.
 * @returns NaN fields and count 0 when no pixel is valid; MAD 0 when more than half the values are equal
 * @example medianAbsoluteDeviation([1, 2, 3, 4, 100]) // { median: 3, mad: 1, madSigma: 1.482602218505602, count: 5 }
 */
export function medianAbsoluteDeviation(input: StatsInput, opts: SampleOptions = {}): MadResult {
  const s = sampleView(toView(input), opts);
  const m = sampleMedian(s);
  const mad = sampleMadDestructive(s, m);
  return { median: m, mad, madSigma: mad * MAD_SIGMA_SCALE, count: s.n };
}

/**
 * Robust sigma: MAD x 1.482602218505602 (astropy 5.2.1 `mad_std`).
 * @example madSigma([2, 4, 4, 4, 5, 5, 7, 9]) // 0.741301109252801
 */
export function madSigma(input: StatsInput, opts: SampleOptions = {}): number {
  return medianAbsoluteDeviation(input, opts).madSigma;
}

/** Mean, spread and extremes with the fate of every pixel. */
export interface Moments extends PixelCounts {
  mean: number;
  /** Variance with the requested ddof (default 0, numpy's default). */
  variance: number;
  std: number;
  min: number;
  max: number;
}

/**
 * Mean, variance, min and max in float64. Histogram data: from the bins (one pass over pixels).
 * Other data: two streaming passes, the corrected two-pass variance (Chan, Golub & LeVeque 1983), no copy.
 * @param opts.ddof delta degrees of freedom (0: population variance, numpy's default; 1: sample variance)
 * @returns NaN statistics when no pixel is valid (variance NaN also when count <= ddof)
 * @example moments([2, 4, 4, 4, 5, 5, 7, 9]).std // 2
 */
export function moments(input: StatsInput, opts: SampleOptions & { ddof?: number } = {}): Moments {
  const view = toView(input);
  const ddof = opts.ddof ?? 0;
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const data = view.data;
  const integerStore =
    data instanceof Uint8Array ||
    data instanceof Int8Array ||
    data instanceof Uint16Array ||
    data instanceof Int16Array;
  if (integerStore) {
    const s = sampleView(view, opts);
    if (s.kind === 'histogram') {
      const { mean, sumSquares } = histogramMoments(s.counts, s.origin, s.lo, s.hi, s.n);
      const variance = s.n - ddof > 0 ? sumSquares / (s.n - ddof) : Number.NaN;
      return {
        ...s.tally,
        mean,
        variance,
        std: Math.sqrt(variance),
        min: s.n > 0 ? s.origin + s.lo : Number.NaN,
        max: s.n > 0 ? s.origin + s.hi : Number.NaN,
      };
    }
  }
  const mask = maskAddress(view, opts.mask);
  const tally = emptyTally(w * h);
  const first = viewSums(view, opts.blankValue, mask, 0, tally);
  const n = first.n;
  if (n === 0) {
    return { ...tally, mean: Number.NaN, variance: Number.NaN, std: Number.NaN, min: Number.NaN, max: Number.NaN };
  }
  const mean = first.sum / n;
  const second = viewSums(view, opts.blankValue, mask, mean);
  const ss = second.sumSquares - (second.sum * second.sum) / n;
  const variance = n - ddof > 0 ? Math.max(0, ss) / (n - ddof) : Number.NaN;
  return { ...tally, mean, variance, std: Math.sqrt(variance), min: first.min, max: first.max };
}
