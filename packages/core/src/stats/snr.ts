import { InvalidInputError } from '../errors.js';
import type { FrameView } from '../image/view.js';
import { regionView, viewHeight, viewWidth } from '../image/view.js';
import type { SampleOptions } from './input.js';
import { blankAsNumber, isBigIntStore, maskAddress } from './input.js';
import type { BackgroundMesh } from './mesh.js';
import { meshLevelAt } from './mesh.js';
import { emptyTally, gatherValues, scratchOf } from './sample.js';
import type { SigmaClipParameters } from './sigmaClip.js';
import { clipValuesInPlace } from './sigmaClip.js';

/** Inputs of the CCD equation, all per exposure. */
export interface CcdEquationInput {
  /** N*: source electrons in the aperture. */
  sourceElectrons: number;
  /** n_pix: aperture pixels. */
  pixelCount: number;
  /** n_B: pixels the background was estimated from (omit for a perfectly known background). */
  backgroundPixelCount?: number;
  /** N_S: sky electrons per pixel. */
  skyElectronsPerPixel: number;
  /** N_D: dark electrons per pixel (default 0). */
  darkElectronsPerPixel?: number;
  /** N_R: read noise, electrons per pixel. */
  readNoiseElectrons: number;
  /** G: gain, electrons per ADU (needed only with a quantization term). */
  gainElectronsPerAdu?: number;
  /** sigma_f: A/D quantization noise in ADU (1/sqrt(12) = 0.289 for a step of 1 ADU; default 0). */
  quantizationNoiseAdu?: number;
}

/**
 * The CCD equation (Howell 2006, Handbook of CCD Astronomy, 2nd ed., section 4.4, after Merline & Howell 1995;
 * exact form from memory, REFERENCE D.1):
 * S/N = N* / sqrt(N* + n_pix (1 + n_pix / n_B) (N_S + N_D + N_R^2 + G^2 sigma_f^2)).
 * Without n_B and sigma_f it is the simple form N* / sqrt(N* + n_pix (N_S + N_D + N_R^2)).
 * @returns the predicted SNR; NaN for negative noise terms
 * @example ccdEquationSnr({ sourceElectrons: 1e4, pixelCount: 20, skyElectronsPerPixel: 50, darkElectronsPerPixel: 2, readNoiseElectrons: 5 }) // 93.0887
 */
export function ccdEquationSnr(input: CcdEquationInput): number {
  const nStar = input.sourceElectrons;
  const nPix = input.pixelCount;
  const nB = input.backgroundPixelCount;
  const g = input.gainElectronsPerAdu ?? 1;
  const sf = input.quantizationNoiseAdu ?? 0;
  const perPixel =
    input.skyElectronsPerPixel + (input.darkElectronsPerPixel ?? 0) + input.readNoiseElectrons ** 2 + g * g * sf * sf;
  const factor = nB === undefined || nB === Infinity ? 1 : 1 + nPix / nB;
  const variance = nStar + nPix * factor * perPixel;
  return variance >= 0 ? nStar / Math.sqrt(variance) : Number.NaN;
}

/** A rectangle in view pixels. */
export interface PixelRect {
  x: number;
  y: number;
  width: number;
  height: number;
}

/** A circular aperture: pixels whose centres lie within `radius` of (xCenter, yCenter). */
export interface CircularAperture {
  xCenter: number;
  yCenter: number;
  radius: number;
}

export interface RegionSnrOptions extends SampleOptions {
  /** The measured region: a rectangle or a circular aperture (exactly one). */
  region?: PixelRect;
  aperture?: CircularAperture;
  /**
   * Local background: an annulus around the aperture centre (radii in pixels, inner < d <= outer), a rectangle,
   * a background mesh (level and noise interpolated at the region centre), or known values.
   */
  annulus?: { innerRadius: number; outerRadius: number };
  backgroundRegion?: PixelRect;
  mesh?: BackgroundMesh;
  background?: { levelAdu: number; noiseAdu: number; pixelCount?: number };
  /** Clipping of the background sample (default 3 sigma, 5 iterations). */
  clip?: SigmaClipParameters;
  /** With gain the result also carries electrons and the CCD-equation prediction. */
  gainElectronsPerAdu?: number;
  readNoiseElectrons?: number;
  darkElectronsPerPixel?: number;
  /** Bias level (ADU) under the background, taken off before the sky is turned into electrons (default 0). */
  offsetAdu?: number;
  /** A/D quantization noise in ADU for the prediction (default 1/sqrt(12), a 1-ADU step; REFERENCE B.10). */
  quantizationNoiseAdu?: number;
}

/** SNR of a region, measured and (with gain and read noise) predicted. */
export interface RegionSnr {
  /** Valid pixels in the region or aperture. */
  pixelCount: number;
  /** Pixels behind the background estimate (undefined for a known background or a mesh). */
  backgroundPixelCount: number | undefined;
  backgroundAdu: number;
  /** Per-pixel noise of the background (clipped std), ADU. */
  backgroundNoiseAdu: number;
  /** Sum over the region of (pixel - background), ADU. */
  signalAdu: number;
  /** signalAdu / pixelCount. */
  meanSignalAdu: number;
  /** meanSignalAdu / backgroundNoiseAdu: SNR of one pixel against the background noise. */
  perPixelSnr: number;
  /**
   * Background-limited SNR of the summed signal, in ADU: signal / sqrt(n_pix sigma_B^2 (1 + n_pix / n_B)).
   * It leaves out the source's own shot noise, which needs the gain (see `electrons`).
   */
  snr: number;
  electrons?: {
    signalElectrons: number;
    /** (background - offset) x gain. */
    skyElectronsPerPixel: number;
    backgroundNoiseElectrons: number;
    /** N* / sqrt(N* + n_pix (1 + n_pix / n_B) (g sigma_B)^2): measured background noise plus source shot noise. */
    snr: number;
    /** CCD equation (Howell 2006 section 4.4) with the sky, dark, read and quantization terms; NaN without read noise. */
    predictedSnr: number;
  };
}

function checkRect(view: FrameView, r: PixelRect): FrameView {
  return regionView(view, r.x, r.y, r.width, r.height);
}

/** Valid pixels of a view whose centres fall in the ring r_in^2 < d^2 <= r_out^2 around (xc, yc), packed into out. */
function gatherDisc(
  view: FrameView,
  xc: number,
  yc: number,
  rIn: number,
  rOut: number,
  opts: SampleOptions,
  out: Float64Array,
): number {
  const w = viewWidth(view);
  const h = viewHeight(view);
  const x0 = Math.max(0, Math.ceil(xc - rOut));
  const x1 = Math.min(w - 1, Math.floor(xc + rOut));
  const y0 = Math.max(0, Math.ceil(yc - rOut));
  const y1 = Math.min(h - 1, Math.floor(yc + rOut));
  if (x1 < x0 || y1 < y0) return 0;
  const mask = maskAddress(view, opts.mask);
  const data = view.data as unknown as Float64Array;
  const big = isBigIntStore(view.data);
  const blank = blankAsNumber(opts.blankValue);
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  const in2 = rIn < 0 ? -1 : rIn * rIn;
  const out2 = rOut * rOut;
  let n = 0;
  for (let y = y0; y <= y1; y++) {
    const dy2 = (y - yc) * (y - yc);
    let i = view.offset + y * sy + x0 * sx;
    for (let x = x0; x <= x1; x++) {
      const d2 = (x - xc) * (x - xc) + dy2;
      if (d2 > in2 && d2 <= out2 && (mask === undefined || mask.mask[i - mask.base] === 0)) {
        const v = big ? Number(data[i]) : (data[i] as number);
        if (v === v && v !== Infinity && v !== -Infinity && v !== blank) out[n++] = v;
      }
      i += sx;
    }
  }
  return n;
}

/**
 * SNR of a region or circular aperture against a local background (REFERENCE D.1).
 * The background level is the sigma-clipped median of the annulus or background rectangle and its noise the
 * clipped std (per pixel); with a mesh both are interpolated at the region centre. The signal is the sum of
 * (pixel - background) over the region. Given the gain (e-/ADU) the measured SNR in electrons adds the
 * source's shot noise, and beside it the CCD equation predicts the SNR from the sky level (above `offsetAdu`),
 * dark current, read noise and quantization.
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` unless exactly one of region/aperture and one background are
 *   given (annulus only with an aperture); `INPUT_OUT_OF_BOUNDS` for a region outside the view or an aperture
 *   centre outside it; `INPUT_TOO_FEW_PIXELS` when the region or background has no valid pixel
 * @example regionSnr(view, { aperture: { xCenter: 120, yCenter: 80, radius: 4 }, annulus: { innerRadius: 8, outerRadius: 14 }, gainElectronsPerAdu: 1.2, readNoiseElectrons: 3 })
 */
export function regionSnr(view: FrameView, opts: RegionSnrOptions): RegionSnr {
  const shapes = (opts.region ? 1 : 0) + (opts.aperture ? 1 : 0);
  const backgrounds = (opts.annulus ? 1 : 0) + (opts.backgroundRegion ? 1 : 0) + (opts.mesh ? 1 : 0) + (opts.background ? 1 : 0);
  if (shapes !== 1 || backgrounds !== 1 || (opts.annulus !== undefined && opts.aperture === undefined)) {
    throw new InvalidInputError(
      'INPUT_BAD_PARAMETER',
      'give exactly one of region/aperture and one of annulus (with an aperture), backgroundRegion, mesh, background',
    );
  }
  const w = viewWidth(view);
  const h = viewHeight(view);
  // Region pixels.
  let values: Float64Array;
  let n: number;
  let cx: number;
  let cy: number;
  if (opts.region !== undefined) {
    const r = checkRect(view, opts.region);
    values = scratchOf(opts.region.width * opts.region.height, opts.scratch);
    n = gatherValues(r, opts.blankValue, maskAddress(r, opts.mask), values, emptyTally(0)).n;
    cx = opts.region.x + (opts.region.width - 1) / 2;
    cy = opts.region.y + (opts.region.height - 1) / 2;
  } else {
    const a = opts.aperture as CircularAperture;
    if (!(a.xCenter >= 0 && a.xCenter <= w - 1 && a.yCenter >= 0 && a.yCenter <= h - 1)) {
      throw new InvalidInputError('INPUT_OUT_OF_BOUNDS', `aperture centre (${a.xCenter}, ${a.yCenter}) outside ${w} x ${h}`);
    }
    if (!(a.radius > 0)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `aperture radius must be > 0; found ${a.radius}`);
    const side = 2 * Math.ceil(a.radius) + 1;
    values = scratchOf(side * side, opts.scratch);
    n = gatherDisc(view, a.xCenter, a.yCenter, -1, a.radius, opts, values);
    cx = a.xCenter;
    cy = a.yCenter;
  }
  if (n === 0) throw new InvalidInputError('INPUT_TOO_FEW_PIXELS', 'the region holds no valid pixel');
  let sum = 0;
  for (let i = 0; i < n; i++) sum += values[i] as number;
  // Background.
  let level: number;
  let noise: number;
  let nB: number | undefined;
  if (opts.background !== undefined) {
    level = opts.background.levelAdu;
    noise = opts.background.noiseAdu;
    nB = opts.background.pixelCount;
  } else if (opts.mesh !== undefined) {
    level = meshLevelAt(opts.mesh, cx, cy, 'level');
    noise = meshLevelAt(opts.mesh, cx, cy, 'noise');
  } else {
    let bg: Float64Array;
    let m: number;
    if (opts.annulus !== undefined) {
      const { innerRadius, outerRadius } = opts.annulus;
      if (!(innerRadius >= 0 && outerRadius > innerRadius)) {
        throw new InvalidInputError('INPUT_BAD_PARAMETER', 'annulus needs 0 <= innerRadius < outerRadius');
      }
      const side = 2 * Math.ceil(outerRadius) + 1;
      bg = new Float64Array(side * side);
      m = gatherDisc(view, cx, cy, innerRadius, outerRadius, opts, bg);
    } else {
      const r = checkRect(view, opts.backgroundRegion as PixelRect);
      bg = new Float64Array((opts.backgroundRegion as PixelRect).width * (opts.backgroundRegion as PixelRect).height);
      m = gatherValues(r, opts.blankValue, maskAddress(r, opts.mask), bg, emptyTally(0)).n;
    }
    if (m === 0) throw new InvalidInputError('INPUT_TOO_FEW_PIXELS', 'the background sample holds no valid pixel');
    const clipped = clipValuesInPlace(bg, m, opts.clip ?? {});
    level = clipped.median;
    noise = clipped.std;
    nB = clipped.count;
  }
  const signalAdu = sum - n * level;
  const factor = nB === undefined ? 1 : 1 + n / nB;
  const result: RegionSnr = {
    pixelCount: n,
    backgroundPixelCount: nB,
    backgroundAdu: level,
    backgroundNoiseAdu: noise,
    signalAdu,
    meanSignalAdu: signalAdu / n,
    perPixelSnr: signalAdu / n / noise,
    snr: signalAdu / Math.sqrt(n * noise * noise * factor),
  };
  const g = opts.gainElectronsPerAdu;
  if (g !== undefined) {
    if (!(g > 0)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `gain must be > 0 e-/ADU; found ${g}`);
    const signalElectrons = signalAdu * g;
    const skyElectronsPerPixel = (level - (opts.offsetAdu ?? 0)) * g;
    const noiseE = noise * g;
    const rn = opts.readNoiseElectrons;
    result.electrons = {
      signalElectrons,
      skyElectronsPerPixel,
      backgroundNoiseElectrons: noiseE,
      snr: signalElectrons / Math.sqrt(Math.max(0, signalElectrons) + n * factor * noiseE * noiseE),
      predictedSnr:
        rn === undefined
          ? Number.NaN
          : ccdEquationSnr({
              sourceElectrons: signalElectrons,
              pixelCount: n,
              ...(nB === undefined ? {} : { backgroundPixelCount: nB }),
              skyElectronsPerPixel,
              darkElectronsPerPixel: opts.darkElectronsPerPixel ?? 0,
              readNoiseElectrons: rn,
              gainElectronsPerAdu: g,
              quantizationNoiseAdu: opts.quantizationNoiseAdu ?? 1 / Math.sqrt(12),
            }),
    };
  }
  return result;
}
