/**
 * Read-noise penalty and sub-length closed forms.
 *
 * Method: with B = sky + dark electrons per pixel in one sub and read noise σ_R (e-), the per-pixel noise of a
 * faint target is √(B + σ_R²) instead of √B, so the noise grows by √(1 + σ_R²/B) − 1 and the fraction of useful
 * integration time is B / (B + σ_R²). Solving √(1 + σ_R²/B) − 1 = p for B gives B = σ_R² / ((1 + p)² − 1).
 * References: REFERENCE.md D.2-D.4 (derived there; check values G rows 46-50); Howell, Handbook of CCD
 * Astronomy 2nd ed. §4.4 for the CCD equation these follow from.
 */
import { InvalidInputError } from '../errors.js';

function requirePositive(name: string, v: number): void {
  if (!(v > 0) || !Number.isFinite(v)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `${name} must be a positive finite number; got ${v}`);
}
function requireNonNegative(name: string, v: number): void {
  if (!(v >= 0) || !Number.isFinite(v)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `${name} must be a non-negative finite number; got ${v}`);
}

/**
 * Fractional noise increase caused by read noise: √(1 + σ_R²/B) − 1.
 * @param backgroundElectrons sky + dark electrons per pixel in one sub (B)
 * @param readNoiseElectrons read noise σ_R in electrons
 * @returns the fraction (0.0488 for B = 10 σ_R²); Infinity when B = 0 and σ_R > 0
 * @example readNoisePenalty(1000, 10) // 0.04880884817015163
 */
export function readNoisePenalty(backgroundElectrons: number, readNoiseElectrons: number): number {
  requireNonNegative('backgroundElectrons', backgroundElectrons);
  requireNonNegative('readNoiseElectrons', readNoiseElectrons);
  if (readNoiseElectrons === 0) return 0;
  if (backgroundElectrons === 0) return Infinity;
  return Math.sqrt(1 + (readNoiseElectrons * readNoiseElectrons) / backgroundElectrons) - 1;
}

/** Fraction of integration time that is useful: B / (B + σ_R²) (REFERENCE D.2). */
export function integrationEfficiency(backgroundElectrons: number, readNoiseElectrons: number): number {
  requireNonNegative('backgroundElectrons', backgroundElectrons);
  requireNonNegative('readNoiseElectrons', readNoiseElectrons);
  const rn2 = readNoiseElectrons * readNoiseElectrons;
  if (backgroundElectrons + rn2 === 0) return 1;
  return backgroundElectrons / (backgroundElectrons + rn2);
}

/** Background electrons per pixel needed so the noise increase is at most `maxPenalty` (a fraction): σ_R² / ((1+p)² − 1). */
export function requiredBackgroundElectrons(readNoiseElectrons: number, maxPenalty: number): number {
  requireNonNegative('readNoiseElectrons', readNoiseElectrons);
  requirePositive('maxPenalty', maxPenalty);
  return (readNoiseElectrons * readNoiseElectrons) / ((1 + maxPenalty) ** 2 - 1);
}

/**
 * Shortest sub length keeping the read-noise penalty at most `maxPenalty`: t = σ_R² / (b · ((1+p)² − 1)).
 * @param backgroundRateElectronsPerSecond sky + dark rate b in e-/pixel/s
 * @returns seconds; Infinity when b = 0
 */
export function minimumExposureSeconds(readNoiseElectrons: number, backgroundRateElectronsPerSecond: number, maxPenalty: number): number {
  requireNonNegative('backgroundRateElectronsPerSecond', backgroundRateElectronsPerSecond);
  const need = requiredBackgroundElectrons(readNoiseElectrons, maxPenalty);
  if (need === 0) return 0;
  if (backgroundRateElectronsPerSecond === 0) return Infinity;
  return need / backgroundRateElectronsPerSecond;
}

export interface StackSnrInput {
  totalSeconds: number;
  /** Object signal rate per pixel, e-/s (F). */
  objectRateElectronsPerSecond: number;
  /** Sky + dark rate per pixel, e-/s (b). */
  backgroundRateElectronsPerSecond: number;
  readNoiseElectrons: number;
  /** Number of equal subs the total is split into (N). */
  subs: number;
}

/** Per-pixel SNR of a stack of N equal subs over a fixed total time: F T / √((F + b) T + N σ_R²) (REFERENCE D.4). */
export function stackSnr(input: StackSnrInput): number {
  const { totalSeconds: T, objectRateElectronsPerSecond: F, backgroundRateElectronsPerSecond: b, readNoiseElectrons: r, subs: N } = input;
  requirePositive('totalSeconds', T);
  requireNonNegative('objectRateElectronsPerSecond', F);
  requireNonNegative('backgroundRateElectronsPerSecond', b);
  requireNonNegative('readNoiseElectrons', r);
  if (!Number.isInteger(N) || N < 1) throw new InvalidInputError('INPUT_BAD_PARAMETER', `subs must be a positive integer; got ${N}`);
  const noise = Math.sqrt((F + b) * T + N * r * r);
  return noise === 0 ? 0 : (F * T) / noise;
}

export interface SubLengthRow {
  subSeconds: number;
  subs: number;
  /** SNR of a faint target relative to the same total time with no read noise: √(b t / (b t + σ_R²)). */
  relativeSnr: number;
  readNoisePenaltyPercent: number;
}

/**
 * What splitting a total integration into shorter subs costs, for a faint target (F ≪ b): for each sub length the
 * number of subs (total / t, rounded down, at least 1), the relative SNR against a read-noise-free stack and the
 * read-noise penalty of each sub.
 */
export function subLengthTable(totalSeconds: number, backgroundRateElectronsPerSecond: number, readNoiseElectrons: number, subSeconds: readonly number[]): SubLengthRow[] {
  requirePositive('totalSeconds', totalSeconds);
  return subSeconds.map((t) => {
    requirePositive('subSeconds', t);
    const B = backgroundRateElectronsPerSecond * t;
    return {
      subSeconds: t,
      subs: Math.max(1, Math.floor(totalSeconds / t + 1e-9)),
      relativeSnr: Math.sqrt(integrationEfficiency(B, readNoiseElectrons)),
      readNoisePenaltyPercent: 100 * readNoisePenalty(B, readNoiseElectrons),
    };
  });
}
