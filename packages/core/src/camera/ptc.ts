import { FitError } from '../errors.js';
import { fitLine } from './lineFit.js';
import type { LineFit } from './lineFit.js';
import { readNoiseFromIntercept, varianceRelativeUncertainty } from './formulas.js';

/** One photon-transfer point: the input of the fit. */
export interface PtcInputPoint {
  /** Bias-subtracted mean signal (ADU). */
  signalAdu: number;
  /** Temporal variance Var(A − B)/2 (ADU²). */
  varianceAdu2: number;
  /** Pixels behind the variance. */
  pixelCount: number;
  /** Too many pixels at the ADC maximum: never fitted, but kept for locating the variance peak. */
  saturated?: boolean;
}

/** Why a point is not in the fit. */
export type PtcExclusion =
  | 'saturated'
  | 'no-signal'
  | 'below-window'
  | 'above-window'
  | 'at-or-after-variance-peak'
  | 'read-noise-dominated';

/** Fit-range settings (REFERENCE B.5: sources disagree; the window used is reported). */
export interface PtcWindowOptions {
  /** Lower end as a fraction of the saturation signal (default 0.1). */
  lowerFraction?: number;
  /** Upper end as a fraction of the saturation signal (default 0.7, EMVA 1288's ~70 % [MEM]). */
  upperFraction?: number;
  /** Explicit signal limits (ADU); they replace the fractions. */
  minimumSignalAdu?: number;
  maximumSignalAdu?: number;
  /** Drop points whose shot variance is below the read variance (default true). */
  excludeReadNoiseDominated?: boolean;
}

export interface PtcWindow {
  minimumSignalAdu: number;
  /** null: no upper limit. */
  maximumSignalAdu: number | null;
  lowerFraction: number | null;
  upperFraction: number | null;
  /** 'fractions' of the saturation signal, 'explicit' limits, 'no-saturation' (fractions of the brightest point,
   * no upper limit), or 'relaxed' (too few points: every unsaturated point below the peak). */
  basis: 'fractions' | 'explicit' | 'no-saturation' | 'relaxed';
}

export interface VariancePeak {
  index: number;
  signalAdu: number;
  varianceAdu2: number;
  /** A later (brighter) point lies significantly below the peak. */
  rolledOff: boolean;
}

export interface PtcFitResult {
  /** y = intercept + slope·x, slope = K in ADU/e⁻ (REFERENCE B.5). */
  slopeAduPerElectron: number;
  slopeUncertainty: number;
  interceptAdu2: number;
  interceptUncertaintyAdu2: number;
  gainElectronsPerAdu: number;
  /** From the fit covariance, scaled by √(χ²/dof) when that exceeds 1. */
  gainUncertaintyElectronsPerAdu: number;
  /** g·√(a − Δ²/12): the read noise implied by the intercept (a cross-check; null when a ≤ Δ²/12). */
  readNoiseFromInterceptElectrons: number | null;
  /** χ²/dof of the weighted fit; null with 2 points. */
  reducedChiSquare: number | null;
  pointsUsed: number;
  window: PtcWindow;
  peak: VariancePeak;
  /** Per input point: null when fitted, else why not. */
  exclusions: (PtcExclusion | null)[];
  /** Indices of the fitted points. */
  usedIndices: number[];
}

/** Index of the variance maximum, and whether a brighter point lies more than 5 standard errors below it. */
export function findVariancePeak(points: readonly PtcInputPoint[]): VariancePeak {
  let best = -1;
  for (let i = 0; i < points.length; i++) {
    const p = points[i]!;
    if (!(p.signalAdu > 0) || !Number.isFinite(p.varianceAdu2)) continue;
    if (best < 0 || p.varianceAdu2 > points[best]!.varianceAdu2) best = i;
  }
  if (best < 0) return { index: -1, signalAdu: NaN, varianceAdu2: NaN, rolledOff: false };
  const peak = points[best]!;
  const tolerance = 5 * varianceRelativeUncertainty(peak.pixelCount) * peak.varianceAdu2;
  const rolledOff = points.some((p) => p.signalAdu > peak.signalAdu && p.varianceAdu2 < peak.varianceAdu2 - tolerance);
  return { index: best, signalAdu: peak.signalAdu, varianceAdu2: peak.varianceAdu2, rolledOff };
}

/** Weighted fit with weights (N−1)/(2ŷ²) = 1/Var(y) (REFERENCE B.5/B.11), ŷ re-estimated from the fit twice. */
export function weightedPtcFit(points: readonly PtcInputPoint[], use: readonly number[]): LineFit {
  const x = use.map((i) => points[i]!.signalAdu);
  const y = use.map((i) => points[i]!.varianceAdu2);
  const n = use.map((i) => points[i]!.pixelCount);
  let w = y.map((yi, k) => (n[k]! - 1) / (2 * yi * yi));
  let fit = fitLine(x, y, w);
  for (let it = 0; it < 2; it++) {
    w = x.map((xi, k) => {
      const yh = fit.intercept + fit.slope * xi;
      const m = yh > 0 ? yh : y[k]!;
      return (n[k]! - 1) / (2 * m * m);
    });
    fit = fitLine(x, y, w);
  }
  return fit;
}

/**
 * Photon-transfer fit y = a + b·x over a linear range found automatically: points at or after the variance
 * peak (when it rolls off), saturated points and read-noise-dominated points are left out, and the window
 * [lowerFraction, upperFraction] × saturation signal is applied; g = 1/b, a = σ_R²/g² + Δ²/12.
 *
 * References: REFERENCE B.5 (fit, weights, window), B.6 (variance peak = saturation, EMVA 1288 [MEM]), B.11.
 * @param quantizationStepAdu Δ for the intercept's read noise (default 1).
 * @throws FitError `FIT_TOO_FEW_POINTS` when fewer than 2 usable points remain; `FIT_DEGENERATE` from the line fit
 *   or when the slope is not positive.
 * @example fitPhotonTransfer([{signalAdu: 1000, varianceAdu2: 525.0833, pixelCount: 1e6}, …]).gainElectronsPerAdu
 */
export function fitPhotonTransfer(
  points: readonly PtcInputPoint[], options: PtcWindowOptions = {}, quantizationStepAdu = 1,
): PtcFitResult {
  const lowerFraction = options.lowerFraction ?? 0.1;
  const upperFraction = options.upperFraction ?? 0.7;
  const peak = findVariancePeak(points);
  const maxSignal = Math.max(...points.filter((p) => !p.saturated && p.signalAdu > 0).map((p) => p.signalAdu), 0);
  let window: PtcWindow;
  if (options.minimumSignalAdu !== undefined || options.maximumSignalAdu !== undefined) {
    window = {
      minimumSignalAdu: options.minimumSignalAdu ?? 0, maximumSignalAdu: options.maximumSignalAdu ?? null,
      lowerFraction: null, upperFraction: null, basis: 'explicit',
    };
  } else if (peak.rolledOff) {
    window = {
      minimumSignalAdu: lowerFraction * peak.signalAdu, maximumSignalAdu: upperFraction * peak.signalAdu,
      lowerFraction, upperFraction, basis: 'fractions',
    };
  } else {
    window = { minimumSignalAdu: lowerFraction * maxSignal, maximumSignalAdu: null, lowerFraction, upperFraction: null, basis: 'no-saturation' };
  }
  const baseExclusion = (p: PtcInputPoint): PtcExclusion | null => {
    if (p.saturated) return 'saturated';
    if (!(p.signalAdu > 0) || !(p.varianceAdu2 > 0) || !(p.pixelCount > 1)) return 'no-signal';
    if (peak.rolledOff && p.signalAdu >= peak.signalAdu) return 'at-or-after-variance-peak';
    return null;
  };
  const exclusions: (PtcExclusion | null)[] = points.map((p) => {
    const base = baseExclusion(p);
    if (base) return base;
    if (p.signalAdu < window.minimumSignalAdu) return 'below-window';
    if (window.maximumSignalAdu !== null && p.signalAdu > window.maximumSignalAdu) return 'above-window';
    return null;
  });
  let use = exclusions.flatMap((e, i) => (e === null ? [i] : []));
  if (use.length < 3 && window.basis !== 'explicit') {
    window = { ...window, minimumSignalAdu: 0, maximumSignalAdu: peak.rolledOff ? peak.signalAdu : null, basis: 'relaxed' };
    for (let i = 0; i < points.length; i++) {
      const e = exclusions[i];
      if (e === 'below-window' || e === 'above-window') exclusions[i] = null;
    }
    use = exclusions.flatMap((e, i) => (e === null ? [i] : []));
  }
  if (use.length < 2) throw new FitError('FIT_TOO_FEW_POINTS', `the photon-transfer fit needs 2 points in its window, got ${use.length}`);
  let fit = weightedPtcFit(points, use);
  if (options.excludeReadNoiseDominated ?? true) {
    // shot variance x/g below the read variance a: the slope is poorly constrained there (REFERENCE B.5, F.7)
    const keep = use.filter((i) => fit.slope * points[i]!.signalAdu >= fit.intercept);
    if (keep.length >= 2 && keep.length < use.length) {
      for (const i of use) if (!keep.includes(i)) exclusions[i] = 'read-noise-dominated';
      use = keep;
      fit = weightedPtcFit(points, use);
    }
  }
  if (!(fit.slope > 0)) throw new FitError('FIT_DEGENERATE', `photon-transfer slope is ${fit.slope}, not positive`);
  const reducedChiSquare = fit.degreesOfFreedom > 0 ? fit.chiSquare / fit.degreesOfFreedom : null;
  const scale = reducedChiSquare !== null && reducedChiSquare > 1 ? Math.sqrt(reducedChiSquare) : 1;
  const interceptReadNoise = readNoiseFromIntercept(fit.intercept, 1 / fit.slope, quantizationStepAdu);
  const slopeUncertainty = Math.sqrt(fit.covariance.slopeVariance) * scale;
  const gain = 1 / fit.slope;
  return {
    slopeAduPerElectron: fit.slope,
    slopeUncertainty,
    interceptAdu2: fit.intercept,
    interceptUncertaintyAdu2: Math.sqrt(fit.covariance.interceptVariance) * scale,
    gainElectronsPerAdu: gain,
    gainUncertaintyElectronsPerAdu: slopeUncertainty / (fit.slope * fit.slope),
    readNoiseFromInterceptElectrons: Number.isFinite(interceptReadNoise) ? interceptReadNoise : null,
    reducedChiSquare,
    pointsUsed: use.length,
    window,
    peak,
    exclusions,
    usedIndices: use,
  };
}
