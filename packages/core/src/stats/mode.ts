import { InvalidInputError } from '../errors.js';
import type { StatsInput } from './input.js';
import { toView } from './input.js';
import { MAD_SIGMA_SCALE } from './robust.js';
import type { SigmaClipOptions } from './sigmaClip.js';
import { clipSample } from './sigmaClip.js';
import { sampleView } from './sample.js';
import { medianInPlace } from './select.js';

export interface BackgroundModeOptions extends SigmaClipOptions {
  /** Mode = alpha median - (alpha - 1) mean (default 2.5, Bertin & Arnouts 1996; Pearson's rule is 3). */
  alpha?: number;
  /** Use the median instead when |mean - median| / std >= this (default 0.3, photutils 1.6.0). */
  skewLimit?: number;
}

/** A sky-level estimate from clipped statistics, with the branch taken. */
export interface BackgroundModeResult {
  /** The estimate. */
  value: number;
  /** 'mode' (alpha median - (alpha - 1) mean), 'median' (skewed), or 'mean' (std = 0). */
  method: 'mode' | 'median' | 'mean';
  mean: number;
  median: number;
  std: number;
  count: number;
  iterations: number;
}

/**
 * Mode estimator of a sky background (REFERENCE C.4): sigma-clip (default 3 sigma, up to 10 iterations, as
 * photutils 1.6.0 `SExtractorBackground` does), then mode = 2.5 median - 1.5 mean.
 *
 * Fallback (chosen: the photutils 1.6.0 rule as implemented, `background/core.py`): when the clipped std is 0
 * the mean is returned; when |mean - median| / std >= 0.3 the distribution is too skewed for the relation and
 * the median is returned. (REFERENCE C.4 quotes the one-sided form (mean - median)/std > 0.3; the installed
 * photutils 1.6.0 takes the absolute value, which also guards strongly negative skew.)
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` for a non-finite alpha
 * @example backgroundMode([5, 5, 5, 6, 6, 6, 6, 7, 7, 8, 9, 12, 15]).value // 5.454545...
 */
export function backgroundMode(input: StatsInput, opts: BackgroundModeOptions = {}): BackgroundModeResult {
  const alpha = opts.alpha ?? 2.5;
  const limit = opts.skewLimit ?? 0.3;
  if (!Number.isFinite(alpha) || !(limit >= 0)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', 'alpha must be finite and skewLimit >= 0');
  }
  const clip = clipSample(sampleView(toView(input), opts), { ...opts, maxIterations: opts.maxIterations ?? 10 });
  const { mean, median, std, count, iterations } = clip;
  let value: number;
  let method: BackgroundModeResult['method'];
  if (std === 0) {
    value = mean;
    method = 'mean';
  } else if (Math.abs(mean - median) / std < limit) {
    value = alpha * median - (alpha - 1) * mean;
    method = 'mode';
  } else {
    value = median;
    method = 'median';
  }
  return { value, method, mean, median, std, count, iterations };
}

/** Robust z-scores with the center and scale behind them. */
export interface RobustZResult {
  z: Float64Array;
  center: number;
  scale: number;
  /** 'mad-sigma' normally; 'std' when MAD = 0; 'none' when both are 0 (z = 0 at the center, +-Infinity elsewhere). */
  scaleKind: 'mad-sigma' | 'std' | 'none';
}

/**
 * Robust z-scores z = (x - median) / (1.4826 MAD) for frame-level outliers (REFERENCE C.1). NaN inputs give
 * NaN scores and are ignored for the center and scale. Guard for MAD = 0 (quantized or mostly constant
 * series): the std (ddof 0) is used instead; when that is 0 too, equal values score 0 and others +-Infinity.
 * @param values one number per frame (or any series)
 * @param out optional buffer for the scores (length >= values.length)
 * @example robustZScores([101, 99, 100, 102, 98, 100, 130]).z[6] // 20.2347
 */
export function robustZScores(values: ArrayLike<number>, out?: Float64Array): RobustZResult {
  const n = values.length;
  const z = out !== undefined && out.length >= n ? out : new Float64Array(n);
  const work = new Float64Array(n);
  let k = 0;
  let sum = 0;
  for (let i = 0; i < n; i++) {
    const v = values[i] as number;
    if (Number.isFinite(v)) {
      work[k++] = v;
      sum += v;
    }
  }
  const center = medianInPlace(work, k);
  const mean = sum / k;
  let ss = 0;
  for (let i = 0; i < k; i++) {
    const d = (work[i] as number) - mean;
    ss += d * d;
  }
  for (let i = 0; i < k; i++) work[i] = Math.abs((work[i] as number) - center);
  const mad = medianInPlace(work, k);
  let scale = mad * MAD_SIGMA_SCALE;
  let scaleKind: RobustZResult['scaleKind'] = 'mad-sigma';
  if (!(scale > 0)) {
    scale = Math.sqrt(ss / k);
    scaleKind = scale > 0 ? 'std' : 'none';
  }
  for (let i = 0; i < n; i++) {
    const d = (values[i] as number) - center;
    z[i] = scaleKind === 'none' ? (d === 0 ? 0 : d / 0) : d / scale;
  }
  return { z, center, scale, scaleKind };
}
