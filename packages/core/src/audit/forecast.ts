import { medianOf } from './robust.js';
import type { FrameMetrics } from './types.js';
import { finite } from './values.js';

/**
 * How frame weights were obtained (one method for all frames of a filter, so weights are comparable):
 * - `given`: `FrameMetrics.weight` (every frame has one);
 * - `star-snr`: (starSignalAdu / noiseAdu)^2, i.e. SNR^2 of a sky-limited star (every frame has a star signal);
 * - `snr-estimate`: snrEstimate^2 (every frame has one);
 * - `inverse-noise-variance`: 1 / noiseAdu^2, assuming equal transparency (otherwise).
 */
export type WeightMethod = 'given' | 'star-snr' | 'snr-estimate' | 'inverse-noise-variance';

/**
 * Raw weights of the frames of one stack (one filter), with the method that every frame allows.
 *
 * Method: frames normalised to a common star signal S have per-pixel noise sigma / S; the minimum-variance
 * weighted mean weights each by the inverse of that variance, S^2 / sigma^2 = SNR^2 (inverse-variance
 * weighting, a standard result). Without star signals, 1/sigma^2 (equal signal assumed).
 * @returns one weight per frame (NaN where the frame's values do not allow one) and the method
 */
export function frameWeights(frames: readonly FrameMetrics[]): { weights: number[]; method: WeightMethod } {
  const positive = (v: number | null | undefined) => {
    const x = finite(v);
    return x !== undefined && x > 0 ? x : undefined;
  };
  if (frames.length > 0 && frames.every((f) => positive(f.weight) !== undefined)) {
    return { weights: frames.map((f) => f.weight as number), method: 'given' };
  }
  if (frames.length > 0 && frames.every((f) => positive(f.starSignalAdu) !== undefined)) {
    return {
      weights: frames.map((f) => {
        const n = positive(f.noiseAdu);
        return n === undefined ? Number.NaN : ((f.starSignalAdu as number) / n) ** 2;
      }),
      method: 'star-snr',
    };
  }
  if (frames.length > 0 && frames.every((f) => positive(f.snrEstimate) !== undefined)) {
    return { weights: frames.map((f) => (f.snrEstimate as number) ** 2), method: 'snr-estimate' };
  }
  return {
    weights: frames.map((f) => {
      const n = positive(f.noiseAdu);
      return n === undefined ? Number.NaN : 1 / (n * n);
    }),
    method: 'inverse-noise-variance',
  };
}

/**
 * Kish's effective sample size of weights, N_eff = (sum w)^2 / sum w^2 (L. Kish, Survey Sampling, 1965; from
 * memory). Equal weights give N; one weight dominating the others gives about 1. It measures how unevenly the
 * weights spread: the noise of a weighted mean of N equally noisy frames is 1/sqrt(N_eff) of one frame's.
 * @param weights non-negative weights; non-finite values are left out
 * @returns N_eff; 0 when no weight is positive
 * @example kishEffectiveCount([1, 1, 1, 1]) // 4
 */
export function kishEffectiveCount(weights: readonly number[]): number {
  let s = 0;
  let s2 = 0;
  for (const w of weights) {
    if (!Number.isFinite(w) || w < 0) continue;
    s += w;
    s2 += w * w;
  }
  return s2 > 0 ? (s * s) / s2 : 0;
}

/** What a weighted stack of some frames is expected to give, relative to one typical frame. */
export interface StackEstimate {
  frameCount: number;
  /** Sum of known exposures (s). */
  totalExposureSeconds: number;
  /** Sum of the relative weights (typical frame = 1). */
  weightSum: number;
  /** Kish N_eff of the weights. */
  kishEffectiveFrames: number;
  /** Typical frames giving the same stack noise: sum of relative weights (inverse-variance weights). */
  equivalentTypicalFrames: number;
  /** Stack noise / typical frame's noise with the weights: 1 / sqrt(weightSum); null for no frame. */
  weightedNoiseRelative: number | null;
  /** Same for a plain (equal-weight) mean: sqrt(sum 1/w) / N; null for no frame. */
  equalWeightNoiseRelative: number | null;
  /** 1 / sqrt(N): N frames of equal quality (REFERENCE D.4); null for no frame. */
  idealNoiseRelative: number | null;
  /** SNR of the weighted stack / SNR of a typical frame = sqrt(weightSum). */
  snrGain: number;
}

/**
 * Expected stack noise from relative inverse-variance weights (typical frame weight 1).
 *
 * Method: a weighted mean of frames with variances v_i = 1/w_i and weights w_i has variance
 * sum w_i^2 v_i / (sum w_i)^2 = 1 / sum w_i; a plain mean has sum v_i / N^2 (propagation of independent
 * errors); equal frames give 1/N, so noise falls as 1/sqrt(N) (REFERENCE D.4).
 * @param relativeWeights weights divided by the typical frame's; non-finite or non-positive ones are left out
 * @param exposuresSeconds exposures of the same frames (for the total), optional
 * @returns the estimate; noise fields are null and gains 0 for no usable frame
 */
export function stackEstimate(relativeWeights: readonly number[], exposuresSeconds: readonly number[] = []): StackEstimate {
  let sum = 0;
  let sumInverse = 0;
  let n = 0;
  let exposure = 0;
  relativeWeights.forEach((w, i) => {
    if (!(Number.isFinite(w) && w > 0)) return;
    n++;
    sum += w;
    sumInverse += 1 / w;
    const e = exposuresSeconds[i];
    if (e !== undefined && Number.isFinite(e)) exposure += e;
  });
  return {
    frameCount: n,
    totalExposureSeconds: exposure,
    weightSum: sum,
    kishEffectiveFrames: kishEffectiveCount(relativeWeights.filter((w) => Number.isFinite(w) && w > 0)),
    equivalentTypicalFrames: sum,
    weightedNoiseRelative: n > 0 ? 1 / Math.sqrt(sum) : null,
    equalWeightNoiseRelative: n > 0 ? Math.sqrt(sumInverse) / n : null,
    idealNoiseRelative: n > 0 ? 1 / Math.sqrt(n) : null,
    snrGain: Math.sqrt(sum),
  };
}

/** Stack forecast of one filter. */
export interface StackForecast {
  filter: string | null;
  weightMethod: WeightMethod;
  /** Raw weight of the typical frame: the median over all readable frames of the filter; null when none. */
  typicalWeight: number | null;
  /** Every readable frame. */
  all: StackEstimate;
  /** Frames with verdict `keep` or `review`. */
  notRejected: StackEstimate;
  /** Frames with verdict `keep`. */
  kept: StackEstimate;
  /** kept vs all: SNR ratios (< 1: rejecting costs SNR; > 1: it gains) and exposure kept; null when undefined. */
  keptVsAll: { weightedSnrRatio: number | null; equalWeightSnrRatio: number | null; exposureFraction: number | null };
}

/**
 * Forecast one filter's stack for all frames, those not rejected and those kept.
 * @param frames readable frames of the filter
 * @param verdicts their verdicts (same order)
 * @returns the forecast and each frame's weight relative to the typical frame (null where none)
 */
export function forecastStack(
  filter: string | null,
  frames: readonly FrameMetrics[],
  verdicts: readonly ('keep' | 'review' | 'reject')[],
): { forecast: StackForecast; relativeWeights: (number | null)[] } {
  const { weights, method } = frameWeights(frames);
  const typical = medianOf(weights.filter((w) => Number.isFinite(w) && w > 0));
  const rel = weights.map((w) => (Number.isFinite(w) && w > 0 && typical > 0 ? w / typical : Number.NaN));
  const exposures = frames.map((f) => finite(f.exposureSeconds) ?? Number.NaN);
  const pick = (ok: (v: 'keep' | 'review' | 'reject') => boolean) => {
    const w: number[] = [];
    const e: number[] = [];
    rel.forEach((x, i) => {
      if (ok(verdicts[i] ?? 'reject')) {
        w.push(x);
        e.push(exposures[i] as number);
      }
    });
    return stackEstimate(w, e);
  };
  const all = stackEstimate(rel, exposures);
  const notRejected = pick((v) => v !== 'reject');
  const kept = pick((v) => v === 'keep');
  const ratio = (a: number | null, b: number | null) =>
    a !== null && b !== null && b > 0 && Number.isFinite(a) && Number.isFinite(b) ? a / b : null;
  return {
    forecast: {
      filter,
      weightMethod: method,
      typicalWeight: Number.isFinite(typical) ? typical : null,
      all,
      notRejected,
      kept,
      keptVsAll: {
        weightedSnrRatio: ratio(kept.snrGain, all.snrGain),
        equalWeightSnrRatio: ratio(all.equalWeightNoiseRelative, kept.equalWeightNoiseRelative),
        exposureFraction: ratio(kept.totalExposureSeconds, all.totalExposureSeconds),
      },
    },
    relativeWeights: rel.map((w) => (Number.isFinite(w) ? w : null)),
  };
}
