/**
 * Scene of the simulator: sky background with a linear gradient, stars with pixel-integrated Gaussian or
 * Moffat profiles, and satellite trails, all added into an electron-rate map (e-/s per pixel, before the
 * sensor's channel response and PRNU; see `exposeSensor`).
 *
 * Pixel convention: 0-based; pixel (i, j) covers [i - ½, i + ½] x [j - ½, j + ½], so its centre is (i, j);
 * row j = 0 is the first row in file order. Angles are measured from +x towards +y, in degrees.
 * Profiles: REFERENCE.md E.1 (FWHM = 2√(2 ln 2) σ; Moffat FWHM = 2α√(2^(1/β) - 1)).
 */
import { InvalidInputError } from '../errors.js';
import type { Rng } from './rng.js';
import { erf } from './special.js';

// 2√(2 ln 2): Gaussian FWHM per σ (REFERENCE.md E.1).
const GAUSSIAN_FWHM_PER_SIGMA_SIM = 2.3548200450309493;

export interface SkyModel {
  /** Mean sky rate over the frame, e-/px/s (for a pixel of response 1). */
  rateElectronsPerSecond: number;
  /** Peak-to-peak change across the frame along the gradient direction, % of the mean. */
  gradientPercent: number;
  /** Direction in which the sky gets brighter. */
  gradientAngleDegrees: number;
}

export type PsfProfile = 'gaussian' | 'moffat';

export interface PsfModel {
  profile: PsfProfile;
  /** FWHM along the minor axis, px. */
  fwhmPixels: number;
  /** Moffat β (> 1); ignored for Gaussians. */
  moffatBeta: number;
  /** Major/minor axis ratio (1 = round); the major-axis FWHM is elongation x fwhmPixels. */
  elongation: number;
  /** Direction of the major axis. */
  angleDegrees: number;
}

export interface Star {
  x: number;
  y: number;
  /** Total flux, e-/s (for unit response), integrated over the whole plane. */
  fluxElectronsPerSecond: number;
}

export interface SatelliteTrail {
  /** A point on the trail's centre line. */
  x: number;
  y: number;
  angleDegrees: number;
  /** Electrons deposited per pixel on the centre line during the exposure (independent of its length). */
  peakElectrons: number;
  /** FWHM of the Gaussian cross-profile, px. */
  widthFwhmPixels: number;
}

function checkMap(rate: Float64Array, width: number, height: number): void {
  if (rate.length !== width * height)
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `rate map: expected ${width * height} values; found ${rate.length}`);
}

/**
 * Add the sky to a rate map: rate(x, y) = s (1 + (G/100) p / (2 p_max)), p = (x - cx) cos θ + (y - cy) sin θ,
 * p_max = ((W - 1)|cos θ| + (H - 1)|sin θ|)/2, so the frame mean is s and opposite corners differ by G %.
 * @param scale multiplies the whole sky (cloud, binning area).
 */
export function addSky(rate: Float64Array, width: number, height: number, sky: SkyModel, scale = 1): void {
  checkMap(rate, width, height);
  const s = sky.rateElectronsPerSecond * scale;
  const th = (sky.gradientAngleDegrees * Math.PI) / 180;
  const c = Math.cos(th);
  const sn = Math.sin(th);
  const pMax = ((width - 1) * Math.abs(c) + (height - 1) * Math.abs(sn)) / 2;
  const k = pMax > 0 ? (sky.gradientPercent / 100 / (2 * pMax)) * s : 0;
  const cx = (width - 1) / 2;
  const cy = (height - 1) / 2;
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const base = s + k * (y - cy) * sn - k * cx * c;
    const kc = k * c;
    for (let x = 0; x < width; x++) rate[row + x] = (rate[row + x] ?? 0) + base + kc * x;
  }
}

/** Moffat α from FWHM and β: α = FWHM / (2√(2^(1/β) - 1)) (REFERENCE.md E.1). */
export function moffatAlpha(fwhmPixels: number, beta: number): number {
  return fwhmPixels / (2 * Math.sqrt(2 ** (1 / beta) - 1));
}

/** Fraction of a round Moffat's flux outside radius r: (1 + r²/α²)^(1 - β). */
export function moffatFluxOutside(radiusPixels: number, alpha: number, beta: number): number {
  return (1 + (radiusPixels * radiusPixels) / (alpha * alpha)) ** (1 - beta);
}

/**
 * Half-size of the square box a star is rendered in, px: 6σ of the major axis for a Gaussian (flux lost
 * < 1e-8); for a Moffat the radius outside which at most 1e-3 of the flux lies, capped at 60 px.
 */
export function psfBoxRadius(psf: PsfModel): number {
  const e = Math.max(1, psf.elongation);
  if (psf.profile === 'gaussian') return Math.ceil((6 * e * psf.fwhmPixels) / GAUSSIAN_FWHM_PER_SIGMA_SIM) + 1;
  const a = moffatAlpha(psf.fwhmPixels, psf.moffatBeta) * e;
  return Math.min(60, Math.ceil(a * Math.sqrt(1000 ** (1 / (psf.moffatBeta - 1)) - 1)) + 1);
}

/** Throw INPUT_BAD_PARAMETER unless the PSF is usable. */
export function validatePsf(psf: PsfModel): void {
  const ok =
    (psf.profile === 'gaussian' || psf.profile === 'moffat') &&
    psf.fwhmPixels > 0.3 &&
    psf.elongation >= 1 &&
    Number.isFinite(psf.angleDegrees) &&
    (psf.profile === 'gaussian' || psf.moffatBeta > 1);
  if (!ok) throw new InvalidInputError('INPUT_BAD_PARAMETER', `psf: expected FWHM > 0.3 px, elongation >= 1, Moffat β > 1; found ${JSON.stringify(psf)}`);
}

/**
 * Add one star to a rate map, integrated over each pixel, inside its box (`psfBoxRadius`) clipped to the frame.
 *
 * Method: round Gaussian — exact pixel integrals as products of erf differences (separable);
 * elongated Gaussian and Moffat — midpoint rule on an n x n sub-grid (n = 7 within 2 FWHM of the centre,
 * 3 out to 5 FWHM, 1 beyond; n doubled when the minor-axis FWHM is under 2 px).
 * @returns the flux actually added (e-/s x scale): the flux inside the clipped box.
 */
export function addStar(rate: Float64Array, width: number, height: number, star: Star, psf: PsfModel, scale = 1): number {
  const flux = star.fluxElectronsPerSecond * scale;
  if (!(flux > 0)) return 0;
  const R = psfBoxRadius(psf);
  const ix = Math.round(star.x);
  const iy = Math.round(star.y);
  const x0 = Math.max(0, ix - R);
  const x1 = Math.min(width - 1, ix + R);
  const y0 = Math.max(0, iy - R);
  const y1 = Math.min(height - 1, iy + R);
  if (x0 > x1 || y0 > y1) return 0;
  let added = 0;
  if (psf.profile === 'gaussian' && psf.elongation === 1) {
    const k = 1 / (Math.SQRT2 * (psf.fwhmPixels / GAUSSIAN_FWHM_PER_SIGMA_SIM));
    const nx = x1 - x0 + 1;
    const fx = new Float64Array(nx);
    let prev = erf((x0 - 0.5 - star.x) * k);
    for (let i = 0; i < nx; i++) {
      const next = erf((x0 + i + 0.5 - star.x) * k);
      fx[i] = 0.5 * (next - prev);
      prev = next;
    }
    prev = erf((y0 - 0.5 - star.y) * k);
    for (let y = y0; y <= y1; y++) {
      const next = erf((y + 0.5 - star.y) * k);
      const fy = 0.5 * (next - prev) * flux;
      prev = next;
      const row = y * width + x0;
      for (let i = 0; i < nx; i++) {
        const v = fy * (fx[i] ?? 0);
        rate[row + i] = (rate[row + i] ?? 0) + v;
        added += v;
      }
    }
    return added;
  }
  const th = (psf.angleDegrees * Math.PI) / 180;
  const c = Math.cos(th);
  const s = Math.sin(th);
  const e = psf.elongation;
  const fw = psf.fwhmPixels;
  const fine = fw < 2 ? 2 : 1;
  const near2 = (2 * fw * e) ** 2;
  const far2 = (5 * fw * e) ** 2;
  const gaussian = psf.profile === 'gaussian';
  // Gaussian: exp(-(u²/e² + v²)/(2σ²)) / (2π σ² e); Moffat: (β-1)/(π α² e) (1 + (u²/e² + v²)/α²)^(-β),
  // with u along the major axis and v along the minor axis.
  const sigma = fw / GAUSSIAN_FWHM_PER_SIGMA_SIM;
  const alpha = moffatAlpha(fw, psf.moffatBeta);
  const beta = psf.moffatBeta;
  const invE2 = 1 / (e * e);
  const gNorm = 1 / (2 * Math.PI * sigma * sigma * e);
  const gK = -1 / (2 * sigma * sigma);
  const mNorm = (beta - 1) / (Math.PI * alpha * alpha * e);
  const mK = 1 / (alpha * alpha);
  for (let y = y0; y <= y1; y++) {
    for (let x = x0; x <= x1; x++) {
      const dx = x - star.x;
      const dy = y - star.y;
      const r2 = dx * dx + dy * dy;
      const n = (r2 < near2 ? 7 : r2 < far2 ? 3 : 1) * fine;
      const h = 1 / n;
      let sum = 0;
      for (let b = 0; b < n; b++) {
        const py = dy - 0.5 + (b + 0.5) * h;
        for (let a = 0; a < n; a++) {
          const px = dx - 0.5 + (a + 0.5) * h;
          const u = px * c + py * s;
          const v = -px * s + py * c;
          const q = u * u * invE2 + v * v;
          sum += gaussian ? gNorm * Math.exp(gK * q) : mNorm * (1 + q * mK) ** -beta;
        }
      }
      const val = sum * h * h * flux;
      rate[y * width + x] = (rate[y * width + x] ?? 0) + val;
      added += val;
    }
  }
  return added;
}

export interface StarRenderOptions {
  /** Flux factor (cloud transmission; 1/b² for a binned frame). */
  fluxScale?: number;
  /** Map star positions: x' = (x + offsetX) / coordinateDivisor - shift; used for dithers and binning. */
  offsetX?: number;
  offsetY?: number;
  /** Divide coordinates by this (the binning factor), mapping unbinned pixel centres to binned ones. */
  coordinateDivisor?: number;
}

/**
 * Add a list of stars. With binning b, an unbinned centre X maps to (X + ½)/b - ½ in binned pixels.
 * @returns the total flux added (e-/s), inside the frame.
 */
export function addStars(
  rate: Float64Array,
  width: number,
  height: number,
  stars: readonly Star[],
  psf: PsfModel,
  options: StarRenderOptions = {},
): number {
  checkMap(rate, width, height);
  validatePsf(psf);
  const scale = options.fluxScale ?? 1;
  const ox = options.offsetX ?? 0;
  const oy = options.offsetY ?? 0;
  const b = options.coordinateDivisor ?? 1;
  let total = 0;
  for (const st of stars) {
    const x = (st.x + ox + 0.5) / b - 0.5;
    const y = (st.y + oy + 0.5) / b - 0.5;
    total += addStar(rate, width, height, { x, y, fluxElectronsPerSecond: st.fluxElectronsPerSecond }, psf, scale);
  }
  return total;
}

/**
 * Add a satellite trail: rate += (peakElectrons / t) exp(-d²/(2σ_w²)), d = distance of the pixel centre
 * from the centre line, σ_w = width / 2.3548, for d < 6σ_w (sampled at pixel centres).
 * @returns the number of pixels touched.
 */
export function addTrail(rate: Float64Array, width: number, height: number, trail: SatelliteTrail, exposureSeconds: number): number {
  checkMap(rate, width, height);
  if (!(exposureSeconds > 0) || !(trail.widthFwhmPixels > 0)) return 0;
  const th = (trail.angleDegrees * Math.PI) / 180;
  const nx = -Math.sin(th);
  const ny = Math.cos(th);
  const sw = trail.widthFwhmPixels / GAUSSIAN_FWHM_PER_SIGMA_SIM;
  const lim = 6 * sw;
  const k = -1 / (2 * sw * sw);
  const peak = trail.peakElectrons / exposureSeconds;
  let touched = 0;
  for (let y = 0; y < height; y++) {
    const dyTerm = (y - trail.y) * ny;
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const d = (x - trail.x) * nx + dyTerm;
      if (d > lim || d < -lim) continue;
      rate[row + x] = (rate[row + x] ?? 0) + peak * Math.exp(k * d * d);
      touched++;
    }
  }
  return touched;
}

/** Perpendicular distance of (x, y) from the trail's centre line, px. */
export function distanceFromTrail(trail: SatelliteTrail, x: number, y: number): number {
  const th = (trail.angleDegrees * Math.PI) / 180;
  return Math.abs(-(x - trail.x) * Math.sin(th) + (y - trail.y) * Math.cos(th));
}

export interface StarFieldOptions {
  count: number;
  minFluxElectronsPerSecond: number;
  maxFluxElectronsPerSecond: number;
  /** Cumulative counts N(> F) ∝ F^(-index) between the limits (an invented, plausible slope). */
  powerLawIndex: number;
  /** Stars are kept at least this far from the edges, px. */
  marginPixels: number;
}

/**
 * Draw a star field (positions uniform inside the margins, fluxes from a truncated power law:
 * F = F_min (1 - u (1 - (F_max/F_min)^(-a)))^(-1/a)). Sorted by decreasing flux.
 */
export function drawStarField(rng: Rng, width: number, height: number, options: StarFieldOptions): Star[] {
  const { count, minFluxElectronsPerSecond: fMin, maxFluxElectronsPerSecond: fMax, powerLawIndex: a, marginPixels: m } = options;
  if (!(fMin > 0 && fMax >= fMin && a > 0 && count >= 0 && width > 2 * m && height > 2 * m))
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `star field: bad options ${JSON.stringify(options)} for ${width}x${height}`);
  const stars: Star[] = [];
  const tail = 1 - (fMax / fMin) ** -a;
  for (let i = 0; i < count; i++) {
    const x = m + rng.uniform() * (width - 1 - 2 * m);
    const y = m + rng.uniform() * (height - 1 - 2 * m);
    const f = fMin * (1 - rng.uniform() * tail) ** (-1 / a);
    stars.push({ x, y, fluxElectronsPerSecond: f });
  }
  stars.sort((p, q) => q.fluxElectronsPerSecond - p.fluxElectronsPerSecond);
  return stars;
}
