import { FitError } from '../errors.js';

/** A fitted straight line y = intercept + slope·x with its parameter covariance. */
export interface LineFit {
  intercept: number;
  slope: number;
  /** (XᵀWX)⁻¹: the covariance when the weights are 1/σ² of each point. */
  covariance: { interceptVariance: number; slopeVariance: number; covariance: number };
  /** Σ wᵢ (yᵢ − ŷᵢ)². */
  chiSquare: number;
  /** Points − 2. */
  degreesOfFreedom: number;
  pointCount: number;
}

/**
 * Weighted least-squares straight line (closed form about the weighted centroid, float64).
 *
 * @param weights per-point weights (default 1); for the covariance to be the parameter covariance they must be 1/σᵢ².
 *   With unit weights, scale the covariance by chiSquare/degreesOfFreedom (the usual OLS estimate).
 * @throws FitError `FIT_TOO_FEW_POINTS` for fewer than 2 points with positive weight, `FIT_DEGENERATE` when all x are equal.
 * @example fitLine([1000, 5000, 10000], [525.0833, 2525.0833, 5025.0833]).slope // 0.5
 */
export function fitLine(x: ArrayLike<number>, y: ArrayLike<number>, weights?: ArrayLike<number>): LineFit {
  const n = x.length;
  let sw = 0, sx = 0, sy = 0, used = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i]! : 1;
    if (!(w > 0)) continue;
    used++; sw += w; sx += w * x[i]!; sy += w * y[i]!;
  }
  if (used < 2) throw new FitError('FIT_TOO_FEW_POINTS', `a line needs 2 points, got ${used}`);
  const mx = sx / sw, my = sy / sw;
  let sxx = 0, sxy = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i]! : 1;
    if (!(w > 0)) continue;
    const dx = x[i]! - mx;
    sxx += w * dx * dx; sxy += w * dx * (y[i]! - my);
  }
  if (!(sxx > 0)) throw new FitError('FIT_DEGENERATE', 'all x values are equal');
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  let chi = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i]! : 1;
    if (!(w > 0)) continue;
    const r = y[i]! - intercept - slope * x[i]!;
    chi += w * r * r;
  }
  const slopeVariance = 1 / sxx;
  return {
    intercept,
    slope,
    covariance: { interceptVariance: 1 / sw + (mx * mx) / sxx, slopeVariance, covariance: -mx / sxx },
    chiSquare: chi,
    degreesOfFreedom: used - 2,
    pointCount: used,
  };
}
