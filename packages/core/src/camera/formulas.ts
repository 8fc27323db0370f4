// Closed-form photon-transfer formulas. Each names its source; [MEM] marks details recalled from memory
// (REFERENCE.md section H explains which sources were read).
import { InvalidInputError } from '../errors.js';
import { fitLine } from './lineFit.js';

/** Inputs of the two-flat / two-bias formula: means and difference variances over the same region. */
export interface TwoPairInput {
  flatMeanA: number;
  flatMeanB: number;
  biasMeanA: number;
  biasMeanB: number;
  /** σ²(F1 − F2), ADU². */
  flatDifferenceVariance: number;
  /** σ²(B1 − B2), ADU². */
  biasDifferenceVariance: number;
}

/**
 * Gain in e⁻/ADU from two flats and two biases:
 * g = ((F̄1 + F̄2) − (B̄1 + B̄2)) / (σ²(F1 − F2) − σ²(B1 − B2)).
 *
 * References: Howell, Handbook of CCD Astronomy, 2nd ed. (2006) §4.3, attributed there to Janesick (REFERENCE B.3).
 * @returns NaN when the denominator is not positive.
 * @example howellGain({ flatMeanA: 10100, flatMeanB: 10100, biasMeanA: 100, biasMeanB: 100, flatDifferenceVariance: 10050, biasDifferenceVariance: 50 }) // 2
 */
export function howellGain(p: TwoPairInput): number {
  const den = p.flatDifferenceVariance - p.biasDifferenceVariance;
  if (!(den > 0)) return NaN;
  return (p.flatMeanA + p.flatMeanB - (p.biasMeanA + p.biasMeanB)) / den;
}

/**
 * Read noise in e⁻: σ_R = g · σ(B1 − B2) / √2 (Howell 2006 §4.3, REFERENCE B.3/B.4).
 * @param gainElectronsPerAdu g; @param biasDifferenceSigmaAdu σ(B1 − B2) in ADU.
 */
export function howellReadNoise(gainElectronsPerAdu: number, biasDifferenceSigmaAdu: number): number {
  return (gainElectronsPerAdu * biasDifferenceSigmaAdu) / Math.SQRT2;
}

/**
 * Relative standard error of a gain from one flat pair (n pixels) and one bias pair (m pixels), ignoring the
 * error of the means: σ_g/g ≈ √(2V_F²/(n−1) + 2V_B²/(m−1)) / (V_F − V_B) (REFERENCE B.11, derived there from
 * Var(s²) = 2σ⁴/(n−1)).
 */
export function gainRelativeUncertainty(
  flatDifferenceVariance: number, biasDifferenceVariance: number, flatPixels: number, biasPixels: number,
): number {
  const vf = flatDifferenceVariance, vb = biasDifferenceVariance;
  return Math.sqrt((2 * vf * vf) / (flatPixels - 1) + (2 * vb * vb) / (biasPixels - 1)) / (vf - vb);
}

/** Relative standard error of a Gaussian sample variance from n values: √(2/(n−1)) (standard result, REFERENCE B.11). */
export function varianceRelativeUncertainty(n: number): number {
  return Math.sqrt(2 / (n - 1));
}

/** Relative standard error of a Gaussian sample standard deviation: ≈ 1/√(2(n−1)) (REFERENCE B.11). */
export function sigmaRelativeUncertainty(n: number): number {
  return 1 / Math.sqrt(2 * (n - 1));
}

/** Standard deviation of uniform rounding to a step Δ: Δ/√12 (REFERENCE B.10; EMVA 1288 uses σ_q² = 1/12 DN² [MEM]). */
export function quantizationSigma(stepAdu: number): number {
  return stepAdu / Math.sqrt(12);
}

/** EMVA 1288 overall system gain K in DN/e⁻ from the astronomers' g in e⁻/ADU: K = 1/g (REFERENCE notation). */
export function systemGainFromGain(gainElectronsPerAdu: number): number {
  return 1 / gainElectronsPerAdu;
}

/**
 * Read noise in e⁻ from the PTC intercept a = σ_R²/g² + Δ²/12 (REFERENCE B.5): σ_R = g·√(a − Δ²/12).
 * @returns NaN when a − Δ²/12 is not positive.
 */
export function readNoiseFromIntercept(interceptAdu2: number, gainElectronsPerAdu: number, stepAdu = 1): number {
  const v = interceptAdu2 - (stepAdu * stepAdu) / 12;
  return v > 0 ? gainElectronsPerAdu * Math.sqrt(v) : NaN;
}

/** Dynamic range μ_e.sat/σ_d as a ratio, in dB (20·log10) and in stops (log2) — the simple astronomy form of REFERENCE B.12. */
export function dynamicRange(fullWellElectrons: number, readNoiseElectrons: number): { ratio: number; decibels: number; stops: number } {
  const ratio = fullWellElectrons / readNoiseElectrons;
  return { ratio, decibels: 20 * Math.log10(ratio), stops: Math.log2(ratio) };
}

/**
 * Spatial variance of an average of L frames corrected for temporal noise: s² = s²_measured − σ²_temporal/L
 * (EMVA 1288 [MEM], REFERENCE B.8). Clamped at 0.
 */
export function correctedSpatialVariance(measuredVariance: number, temporalVariance: number, frames: number): number {
  return Math.max(0, measuredVariance - temporalVariance / frames);
}

/**
 * PRNU as a fraction: √(s²_y − s²_y.dark) / (μ_y − μ_y.dark) (EMVA 1288 definition, recalled from memory;
 * REFERENCE B.8). Multiply by 100 for per cent.
 * @returns NaN when s_y < s_dark or the signal is not positive.
 */
export function prnuEmva(spatialSigmaAdu: number, darkSpatialSigmaAdu: number, signalAboveDarkAdu: number): number {
  const v = spatialSigmaAdu * spatialSigmaAdu - darkSpatialSigmaAdu * darkSpatialSigmaAdu;
  if (!(v >= 0) || !(signalAboveDarkAdu > 0)) return NaN;
  return Math.sqrt(v) / signalAboveDarkAdu;
}

/** DSNU in e⁻: s_y.dark / K = s_y.dark · g (EMVA 1288 definition, recalled from memory; REFERENCE B.8). */
export function dsnuEmva(darkSpatialSigmaAdu: number, gainElectronsPerAdu: number): number {
  return darkSpatialSigmaAdu * gainElectronsPerAdu;
}

/** Dark current in e⁻/pixel/s from a bias-subtracted dark level: D = g·level/t (REFERENCE B.9). */
export function darkCurrentFromLevel(levelAdu: number, exposureSeconds: number, gainElectronsPerAdu: number): number {
  return (gainElectronsPerAdu * levelAdu) / exposureSeconds;
}

/** Doubling temperature from two temperatures: T_d = (T2 − T1)/log2(D2/D1) (REFERENCE B.9). NaN when D2 = D1 or either ≤ 0. */
export function doublingTemperature(t1Celsius: number, d1: number, t2Celsius: number, d2: number): number {
  if (!(d1 > 0 && d2 > 0) || d1 === d2) return NaN;
  return (t2Celsius - t1Celsius) / Math.log2(d2 / d1);
}

/**
 * Doubling temperature from two or more temperatures: least-squares line of log2(D) against T, T_d = 1/slope
 * (the model D(T) = D(T0)·2^((T − T0)/T_d) of REFERENCE B.9).
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` when fewer than 2 positive rates at distinct temperatures.
 */
export function fitDoublingTemperature(temperaturesCelsius: readonly number[], rates: readonly number[]): number {
  const t: number[] = [], l: number[] = [];
  for (let i = 0; i < temperaturesCelsius.length; i++) {
    const r = rates[i]!;
    if (r > 0) { t.push(temperaturesCelsius[i]!); l.push(Math.log2(r)); }
  }
  if (t.length < 2 || Math.min(...t) === Math.max(...t)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', 'a doubling temperature needs positive dark current at 2 or more temperatures');
  }
  return 1 / fitLine(t, l).slope;
}

/** Which linearity-deviation definition was used (REFERENCE B.7; both EMVA 1288 variants are recalled from memory). */
export type LinearityDefinition = 'relative' | 'range';

export interface LinearityErrorResult {
  /** LE = (max δ − min δ)/2 in per cent. */
  linearityErrorPercent: number;
  definition: LinearityDefinition;
  /** δᵢ in per cent, in input order. */
  deviationsPercent: number[];
  intercept: number;
  slope: number;
}

/**
 * Linearity error of mean signal y against exposure x: an ordinary least-squares line through the points, then
 * δᵢ = (yᵢ − fitᵢ)/fitᵢ·100 % ('relative', EMVA 1288 Release 3.1/4 style) or δᵢ = (yᵢ − fitᵢ)/(0.9·range)·100 %
 * ('range', Release 3.0 style, `rangeAdu` = y_sat − y_dark), and LE = (max δ − min δ)/2.
 *
 * References: EMVA 1288 as recalled from memory, REFERENCE B.7 (the definition dominates the number: print it).
 * @throws FitError `FIT_TOO_FEW_POINTS` / `FIT_DEGENERATE` from the line fit.
 * @example linearityError([1,2,3,4,5,6,7,8,9,10], y).linearityErrorPercent // 1.33631 for y = 1000t(1 − 0.002t)
 */
export function linearityError(
  x: readonly number[], y: readonly number[], definition: LinearityDefinition = 'relative', rangeAdu?: number,
): LinearityErrorResult {
  const fit = fitLine(x, y);
  if (definition === 'range' && !(rangeAdu !== undefined && rangeAdu > 0)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', "the 'range' linearity definition needs rangeAdu > 0");
  }
  const deviationsPercent = x.map((xi, i) => {
    const f = fit.intercept + fit.slope * xi;
    const r = y[i]! - f;
    return definition === 'relative' ? (r / f) * 100 : (r / (0.9 * rangeAdu!)) * 100;
  });
  const le = (Math.max(...deviationsPercent) - Math.min(...deviationsPercent)) / 2;
  return { linearityErrorPercent: le, definition, deviationsPercent, intercept: fit.intercept, slope: fit.slope };
}
