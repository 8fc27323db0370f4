import type { FrameView } from '../image/view.js';
import { viewHeight, viewWidth } from '../image/view.js';
import type { SampleOptions } from './input.js';
import { toView } from './input.js';
import { histogramMad, histogramMedian, histogramMoments } from './histogram.js';
import { MAD_SIGMA_SCALE } from './robust.js';
import type { PixelCounts } from './sample.js';
import { sampleView } from './sample.js';
import type { ClippedStats, SigmaClipParameters } from './sigmaClip.js';
import { clipSample, clipValuesInPlace } from './sigmaClip.js';
import { medianInPlace } from './select.js';

export interface FrameStatsOptions extends SampleOptions {
  /** Clipping parameters (default: 3 sigma, 5 iterations, std scale), or false to skip clipping. */
  clip?: SigmaClipParameters | false;
}

/** Whole-view statistics: the per-HDU record of DESIGN section 2 (`min`, `max`, `mean`, `median`, `madSigma`). */
export interface FrameStats extends PixelCounts {
  width: number;
  height: number;
  /** 'histogram': exact integer histogram, one pass over the pixels; 'selection': float64 copy + selection. */
  method: 'histogram' | 'selection';
  min: number;
  max: number;
  mean: number;
  /** Population std (ddof 0). */
  std: number;
  median: number;
  mad: number;
  madSigma: number;
  clipped: ClippedStats | undefined;
}

/**
 * Median, MAD and MAD-sigma, mean/std/min/max, counts of NaN/BLANK/masked pixels and sigma-clipped statistics of
 * a view in as few passes as possible (DESIGN bars P1, P2).
 *
 * Method: integer data of <= 16 bits (and 32-bit integers spanning <= 2^20 codes) make one pass over the pixels
 * into an exact histogram; everything else is computed from the bins (median walk, MAD walk outward from the
 * median, clipping on the bins). Other data: one pass copies the valid pixels into a float64 scratch; the
 * median (selection), mean/std (two passes over the scratch), clipping (in place, keeping the scratch a
 * permutation) and finally the MAD (deviations in place) follow on the scratch.
 * @param view frame, region or CFA plane; arrays are accepted as one row
 * @returns NaN statistics with `validCount` 0 when no pixel is valid
 * @example frameStats(frameView(image), { blankValue: image.blankValue }).madSigma
 */
export function frameStats(view: FrameView | ArrayLike<number>, opts: FrameStatsOptions = {}): FrameStats {
  const v = toView(view);
  const s = sampleView(v, opts);
  const base = { width: viewWidth(v), height: viewHeight(v), ...s.tally };
  const clipParams = opts.clip === false ? undefined : (opts.clip ?? {});
  const n = s.n;
  if (s.kind === 'histogram') {
    const median = histogramMedian(s.counts, s.origin, s.lo, s.hi, n);
    const mad = histogramMad(s.counts, s.origin, s.lo, s.hi, n, median);
    const { mean, sumSquares } = histogramMoments(s.counts, s.origin, s.lo, s.hi, n);
    return {
      ...base,
      method: 'histogram',
      min: n > 0 ? s.origin + s.lo : Number.NaN,
      max: n > 0 ? s.origin + s.hi : Number.NaN,
      mean,
      std: Math.sqrt(sumSquares / n),
      median,
      mad,
      madSigma: mad * MAD_SIGMA_SCALE,
      clipped: clipParams === undefined ? undefined : clipSample(s, clipParams),
    };
  }
  const a = s.values;
  const median = medianInPlace(a, n);
  let sum = 0;
  for (let i = 0; i < n; i++) sum += a[i] as number;
  const mean = sum / n;
  let sd = 0;
  let ss = 0;
  for (let i = 0; i < n; i++) {
    const d = (a[i] as number) - mean;
    sd += d;
    ss += d * d;
  }
  const std = Math.sqrt(Math.max(0, ss - (sd * sd) / n) / n);
  const clipped = clipParams === undefined ? undefined : clipValuesInPlace(a, n, clipParams, { median, std });
  // Clipping left a[0..n) a permutation of the valid values, so the MAD can still use all of them.
  for (let i = 0; i < n; i++) a[i] = Math.abs((a[i] as number) - median);
  const mad = medianInPlace(a, n);
  return {
    ...base,
    method: 'selection',
    min: n > 0 ? s.min : Number.NaN,
    max: n > 0 ? s.max : Number.NaN,
    mean,
    std,
    median,
    mad,
    madSigma: mad * MAD_SIGMA_SCALE,
    clipped,
  };
}
