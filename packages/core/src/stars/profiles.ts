// Closed-form profile widths and second-moment shape (REFERENCE E.1, E.2).

import { InvalidInputError } from '../errors.js';

/** FWHM / sigma of a Gaussian: 2 sqrt(2 ln 2) (REFERENCE E.1). */
export const GAUSSIAN_FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2);

/** FWHM of a Gaussian of standard deviation `sigma` (same unit). */
export function gaussianFwhm(sigma: number): number {
  return GAUSSIAN_FWHM_PER_SIGMA * sigma;
}

/** Half-flux radius of a circular 2-D Gaussian: sigma sqrt(2 ln 2) = FWHM / 2 (REFERENCE E.1). */
export function gaussianHalfFluxRadius(sigma: number): number {
  return sigma * Math.sqrt(2 * Math.LN2);
}

/** FWHM of a Moffat profile (1 + r^2/alpha^2)^-beta: 2 alpha sqrt(2^(1/beta) - 1) (REFERENCE E.1). */
export function moffatFwhm(alpha: number, beta: number): number {
  if (!(beta > 0)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `Moffat beta must be > 0, got ${beta}`);
  return 2 * alpha * Math.sqrt(Math.pow(2, 1 / beta) - 1);
}

/** Half-flux radius of a circular Moffat profile: alpha sqrt(2^(1/(beta-1)) - 1), beta > 1 (REFERENCE E.1). */
export function moffatHalfFluxRadius(alpha: number, beta: number): number {
  if (!(beta > 1)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `Moffat beta must be > 1 for a finite flux, got ${beta}`);
  return alpha * Math.sqrt(Math.pow(2, 1 / (beta - 1)) - 1);
}

/** Ellipse parameters of a second-moment matrix. */
export interface MomentShape {
  x2Pixels2: number;
  y2Pixels2: number;
  xyPixels2: number;
  aPixels: number;
  bPixels: number;
  /** Degrees from +x towards +y, in (-90, 90]. */
  thetaDegrees: number;
  elongation: number;
  ellipticity: number;
  eccentricity: number;
}

/** A, B, theta, elongation, ellipticity and eccentricity from the central moments x2, y2, xy (REFERENCE E.2). */
export function shapeFromMoments(x2: number, y2: number, xy: number): MomentShape {
  const mean = (x2 + y2) / 2;
  const half = (x2 - y2) / 2;
  const root = Math.sqrt(half * half + xy * xy);
  const a2 = mean + root;
  const b2 = Math.max(mean - root, 0);
  const a = Math.sqrt(Math.max(a2, 0));
  const b = Math.sqrt(b2);
  let theta = (0.5 * Math.atan2(2 * xy, x2 - y2) * 180) / Math.PI;
  if (theta <= -90) theta += 180;
  return {
    x2Pixels2: x2,
    y2Pixels2: y2,
    xyPixels2: xy,
    aPixels: a,
    bPixels: b,
    thetaDegrees: theta,
    elongation: b > 0 ? a / b : Infinity,
    ellipticity: a > 0 ? 1 - b / a : 0,
    eccentricity: a > 0 ? Math.sqrt(Math.max(0, 1 - b2 / a2)) : 0,
  };
}

/** Result of {@link imageMoments}. */
export interface ImageMoments extends MomentShape {
  /** Flux-weighted centroid (px, pixel centres at integers). */
  x: number;
  y: number;
  /** Sum of the positive values used. */
  sum: number;
  /** Count of positive values used. */
  count: number;
}

/**
 * Unweighted second moments of the positive values of a background-subtracted image (REFERENCE E.2):
 * centroid, x2, y2, xy, A, B, theta. Non-positive and NaN values are left out.
 */
export function imageMoments(values: ArrayLike<number>, width: number, height: number): ImageMoments {
  if (values.length !== width * height) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `values has ${values.length} elements, expected ${width * height}`);
  }
  // accumulate about the grid centre to keep the sums small (float64)
  const cx = (width - 1) / 2;
  const cy = (height - 1) / 2;
  let s = 0;
  let sx = 0;
  let sy = 0;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  let n = 0;
  for (let y = 0; y < height; y++) {
    const dy = y - cy;
    let i = y * width;
    for (let x = 0; x < width; x++, i++) {
      const f = values[i]!;
      if (!(f > 0)) continue;
      const dx = x - cx;
      s += f;
      sx += f * dx;
      sy += f * dy;
      sxx += f * dx * dx;
      syy += f * dy * dy;
      sxy += f * dx * dy;
      n++;
    }
  }
  if (!(s > 0)) throw new InvalidInputError('INPUT_TOO_FEW_PIXELS', 'no positive values to take moments of');
  const mx = sx / s;
  const my = sy / s;
  const shape = shapeFromMoments(sxx / s - mx * mx, syy / s - my * my, sxy / s - mx * my);
  return { ...shape, x: cx + mx, y: cy + my, sum: s, count: n };
}
