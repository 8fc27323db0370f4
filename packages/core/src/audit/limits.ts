import { InvalidInputError } from '../errors.js';
import type { ReasonSeverity } from './types.js';

/**
 * Every threshold of the session audit. Ratios compare a frame's value with the median of its comparison set
 * (same filter, exposure, gain, offset, binning and size); z-scores are robust (median and 1.482602 x MAD,
 * REFERENCE C.1) in the same set. A rule that uses both needs both to hold, so a tight set cannot flag a
 * frame for a deviation too small to matter, and a noisy set cannot flag one that sits inside its own scatter.
 * Each rule has a `severity`: the verdict it leads to.
 */
export interface AuditLimits {
  statistics: {
    /** The z scale is max(1.482602 x MAD, this fraction x |median|, a fixed floor per metric). */
    zScaleFloorFraction: number;
    /** Fewest readable frames in a comparison set for the statistical rules to run on it. */
    minFramesForStatistics: number;
  };
  trail: {
    /** A reported trail counts when at least this long (px); 0: every trail the detector reports. */
    minLengthPixels: number;
    severity: ReasonSeverity;
  };
  cloud: {
    /** Star count below this fraction of the median ... */
    starCountRatioBelow: number;
    /** ... together with the sky (background - pedestal) changed by more than this fraction either way, with |z| >= zLimit; */
    skyChangeFraction: number;
    /** or, on its own, star signal below this fraction of the median (transparency loss), with z <= -zLimit. */
    transparencyRatioBelow: number;
    zLimit: number;
    severity: ReasonSeverity;
  };
  softFocus: {
    /** FWHM above this multiple of the median, with z >= zLimit. */
    fwhmRatioAbove: number;
    zLimit: number;
    severity: ReasonSeverity;
  };
  elongatedStars: {
    /** Elongation (A/B) above this value, whatever the session does ... */
    elongationAbove: number;
    /** ... or above the median by more than this, with z >= zLimit. */
    excessAboveMedian: number;
    zLimit: number;
    severity: ReasonSeverity;
  };
  brightSky: {
    /** Sky (background - pedestal) above this multiple of the median, with z >= zLimit ... */
    skyRatioAbove: number;
    /** ... or gradient more than this many percentage points above the median, with z >= zLimit. */
    gradientExcessPercent: number;
    zLimit: number;
    severity: ReasonSeverity;
  };
  fewStars: {
    /** Star count below this fraction of the median, with z <= -zLimit (and the cloud rule not holding) ... */
    starCountRatioBelow: number;
    /** ... or fewer stars than this at all (too few to register the frame). */
    minimumStars: number;
    zLimit: number;
    severity: ReasonSeverity;
  };
  saturated: {
    /** Saturated pixels above this fraction of the frame ... */
    pixelFractionAbove: number;
    /** ... or saturated stars above this fraction of the stars. */
    starFractionAbove: number;
    severity: ReasonSeverity;
  };
  exposure: {
    /** Exposure differs from the filter's most common value by more than this fraction of it. */
    relativeTolerance: number;
    severity: ReasonSeverity;
  };
  /** Gain and offset settings that differ from the filter's most common value (both give `gain-mismatch`). */
  gain: { severity: ReasonSeverity };
  binning: { severity: ReasonSeverity };
  size: { severity: ReasonSeverity };
  temperature: {
    /** |sensor - set point| above this (deg C) ... */
    setpointToleranceCelsius: number;
    /** ... or |sensor - session median sensor temperature| above this (deg C). */
    sessionToleranceCelsius: number;
    severity: ReasonSeverity;
  };
  gaps: {
    /** A start-to-start step longer than this multiple of the cadence (median step) is a gap ... */
    cadenceFactor: number;
    /** ... when it also exceeds the cadence by at least this many seconds. */
    minimumExtraSeconds: number;
  };
  calibration: {
    /** Lights whose temperatures lie within this span share a group (deg C). */
    groupTemperatureToleranceCelsius: number;
    /** Dark and light exposures are equal when they differ by at most this fraction. */
    darkExposureTolerance: number;
    /** Dark temperature within this of the group's (deg C). */
    darkTemperatureToleranceCelsius: number;
    /** Darks of another exposure match when a matching bias allows scaling. */
    allowScaledDarks: boolean;
    /** Flat-dark and flat exposures are equal when they differ by at most this fraction. */
    flatDarkExposureTolerance: number;
    /** A group without a usable dark gets `no-calibration`. */
    requireDarks: boolean;
    /** A group without a matching flat gets `no-calibration`. */
    requireFlats: boolean;
    /** Give `no-calibration` even when no calibration frame at all was handed in. */
    flagWithoutCalibrationFrames: boolean;
    severity: ReasonSeverity;
  };
}

/**
 * Default limits. Justification (a clean night is taken to scatter by about 5 % in star count, 3 % in FWHM and
 * 2 % in background, one sigma; the defaults keep such frames: see the simulated-night tests):
 * - z limits 3: a clean frame passes a one-sided 3-sigma test with probability 0.99865 (normal tail); each
 *   rule also needs a ratio that lies 6 sigma or more beyond the clean scatter, so clean frames are kept.
 * - floor 1 % of the median: metric values written with few digits, or a tiny session, can give MAD = 0; a
 *   deviation under 1 % is never significant for these metrics (common practice, our choice).
 * - 5 frames at least: a median and MAD of fewer frames say little about "the session" (our choice).
 * - cloud: 60 % of the median star count with the sky 10 % off or star signal below 70 %: thin cloud dims
 *   stars (transparency) and either lifts the sky (moon or city light scattered) or darkens it (dark site);
 *   such a frame adds little and distorts the stack's normalisation: reject (common practice, our choice).
 * - soft focus 1.2 x median FWHM: a 20 % wider PSF is visible in the stack's resolution; review, since weights
 *   may keep it useful (common practice, our choice).
 * - elongation 1.4, or 0.15 above the median: round stars measure about 1.05-1.15 from noise and sampling;
 *   tracking or wind errors show from about 1.3 (common practice, from memory).
 * - bright sky 1.25 x median sky: the sky-limited noise grows as sqrt(sky), so +25 % sky costs about 11 % SNR
 *   (D.2 with sky-limited frames); gradient 5 points above the median: a moon or dawn gradient (our choice).
 * - few stars 60 % of the median, or fewer than 10 stars: too few to register reliably (common practice).
 * - saturated: 0.1 % of the pixels (the flat-frame guide of REFERENCE F.6 taken over), or a quarter of the stars.
 * - exposure 0.5 %: exposure times are set values; writers round them to milliseconds (our choice).
 * - temperature 1 deg C: REFERENCE F.8 suggests flagging 0.5-1 deg C; dark current changes 7-15 % per deg C
 *   when it doubles every 5-10 deg C (REFERENCE B.9, F.8).
 * - gaps: 3 x the cadence and at least 60 s more (clouds, meridian flips, refocusing; our choice).
 * - calibration: dark exposure 1 %, dark temperature 2 deg C (as the task sets), lights grouped within 2 deg C.
 * - binning and size mismatches reject: such frames cannot be calibrated or stacked with the others as they are.
 */
export const DEFAULT_AUDIT_LIMITS: AuditLimits = deepFreeze({
  statistics: { zScaleFloorFraction: 0.01, minFramesForStatistics: 5 },
  trail: { minLengthPixels: 0, severity: 'review' },
  cloud: {
    starCountRatioBelow: 0.6,
    skyChangeFraction: 0.1,
    transparencyRatioBelow: 0.7,
    zLimit: 3,
    severity: 'reject',
  },
  softFocus: { fwhmRatioAbove: 1.2, zLimit: 3, severity: 'review' },
  elongatedStars: { elongationAbove: 1.4, excessAboveMedian: 0.15, zLimit: 3, severity: 'review' },
  brightSky: { skyRatioAbove: 1.25, gradientExcessPercent: 5, zLimit: 3, severity: 'review' },
  fewStars: { starCountRatioBelow: 0.6, minimumStars: 10, zLimit: 3, severity: 'review' },
  saturated: { pixelFractionAbove: 0.001, starFractionAbove: 0.25, severity: 'review' },
  exposure: { relativeTolerance: 0.005, severity: 'review' },
  gain: { severity: 'review' },
  binning: { severity: 'reject' },
  size: { severity: 'reject' },
  temperature: { setpointToleranceCelsius: 1, sessionToleranceCelsius: 1, severity: 'review' },
  gaps: { cadenceFactor: 3, minimumExtraSeconds: 60 },
  calibration: {
    groupTemperatureToleranceCelsius: 2,
    darkExposureTolerance: 0.01,
    darkTemperatureToleranceCelsius: 2,
    allowScaledDarks: true,
    flatDarkExposureTolerance: 0.01,
    requireDarks: true,
    requireFlats: true,
    flagWithoutCalibrationFrames: false,
    severity: 'review',
  },
});

/** Any subset of {@link AuditLimits}, section by section. */
export type AuditLimitsInput = { [S in keyof AuditLimits]?: Partial<AuditLimits[S]> };

type Leaf =
  | { kind: 'number'; min: number; max: number; minExclusive?: boolean; integer?: boolean }
  | { kind: 'boolean' }
  | { kind: 'severity' };

const num = (min: number, max = Number.POSITIVE_INFINITY, minExclusive = false): Leaf => ({
  kind: 'number',
  min,
  max,
  minExclusive,
});
const int = (min: number): Leaf => ({ kind: 'number', min, max: Number.MAX_SAFE_INTEGER, integer: true });
const bool: Leaf = { kind: 'boolean' };
const sev: Leaf = { kind: 'severity' };
const positive = num(0, Number.POSITIVE_INFINITY, true);
const fraction = num(0, 1);

const SPEC: { [S in keyof AuditLimits]: { [K in keyof AuditLimits[S]]: Leaf } } = {
  statistics: { zScaleFloorFraction: fraction, minFramesForStatistics: int(3) },
  trail: { minLengthPixels: num(0), severity: sev },
  cloud: {
    starCountRatioBelow: num(0, 1, true),
    skyChangeFraction: num(0),
    transparencyRatioBelow: num(0, 1, true),
    zLimit: num(0),
    severity: sev,
  },
  softFocus: { fwhmRatioAbove: num(1), zLimit: num(0), severity: sev },
  elongatedStars: { elongationAbove: num(1), excessAboveMedian: num(0), zLimit: num(0), severity: sev },
  brightSky: { skyRatioAbove: num(1), gradientExcessPercent: num(0), zLimit: num(0), severity: sev },
  fewStars: { starCountRatioBelow: num(0, 1, true), minimumStars: int(0), zLimit: num(0), severity: sev },
  saturated: { pixelFractionAbove: fraction, starFractionAbove: fraction, severity: sev },
  exposure: { relativeTolerance: num(0, 1), severity: sev },
  gain: { severity: sev },
  binning: { severity: sev },
  size: { severity: sev },
  temperature: { setpointToleranceCelsius: positive, sessionToleranceCelsius: positive, severity: sev },
  gaps: { cadenceFactor: num(1, Number.POSITIVE_INFINITY, true), minimumExtraSeconds: num(0) },
  calibration: {
    groupTemperatureToleranceCelsius: num(0),
    darkExposureTolerance: num(0, 1),
    darkTemperatureToleranceCelsius: num(0),
    allowScaledDarks: bool,
    flatDarkExposureTolerance: num(0, 1),
    requireDarks: bool,
    requireFlats: bool,
    flagWithoutCalibrationFrames: bool,
    severity: sev,
  },
};

function deepFreeze<T extends object>(o: T): T {
  for (const v of Object.values(o)) if (typeof v === 'object' && v !== null) deepFreeze(v as object);
  return Object.freeze(o);
}

function bad(field: string, message: string): InvalidInputError {
  return new InvalidInputError('INPUT_BAD_PARAMETER', `audit limits: ${field}: ${message}`, { keyword: field });
}

function describe(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'an array';
  if (typeof v === 'string') return `"${v.length > 40 ? `${v.slice(0, 40)}...` : v}"`;
  if (typeof v === 'object') return 'an object';
  return String(v);
}

function isPlainObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function checkLeaf(field: string, leaf: Leaf, v: unknown): number | boolean | ReasonSeverity {
  switch (leaf.kind) {
    case 'boolean':
      if (typeof v !== 'boolean') throw bad(field, `expected true or false; found ${describe(v)}`);
      return v;
    case 'severity':
      if (v !== 'review' && v !== 'reject') throw bad(field, `expected "review" or "reject"; found ${describe(v)}`);
      return v;
    case 'number': {
      if (typeof v !== 'number' || !Number.isFinite(v)) throw bad(field, `expected a finite number; found ${describe(v)}`);
      if (leaf.integer && !Number.isInteger(v)) throw bad(field, `expected an integer; found ${v}`);
      const lowOk = leaf.minExclusive ? v > leaf.min : v >= leaf.min;
      if (!lowOk || v > leaf.max) {
        const lo = `${leaf.minExclusive ? '(' : '['}${leaf.min}`;
        const hi = leaf.max === Number.POSITIVE_INFINITY || leaf.max === Number.MAX_SAFE_INTEGER ? 'inf)' : `${leaf.max}]`;
        throw bad(field, `expected a value in ${lo}, ${hi}; found ${v}`);
      }
      return v;
    }
  }
}

/**
 * Validate a partial limits object (e.g. parsed from a user's JSON file) and merge it onto the defaults.
 * @param json `undefined` (defaults), or an object with any of the sections and fields of {@link AuditLimits}
 * @returns a complete, frozen limits object
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` naming the field (`where.keyword`, e.g. `softFocus.zLimit`)
 *   for an unknown section or field, a wrong type or a value out of range
 * @example parseAuditLimits({ softFocus: { fwhmRatioAbove: 1.3 } }).softFocus.fwhmRatioAbove // 1.3
 */
export function parseAuditLimits(json: unknown): AuditLimits {
  if (json === undefined) return DEFAULT_AUDIT_LIMITS;
  if (!isPlainObject(json)) throw bad('(root)', `expected an object; found ${describe(json)}`);
  const out: Record<string, Record<string, unknown>> = {};
  for (const [section, fields] of Object.entries(DEFAULT_AUDIT_LIMITS)) out[section] = { ...fields };
  for (const [section, given] of Object.entries(json)) {
    const spec = (SPEC as Record<string, Record<string, Leaf>>)[section];
    if (spec === undefined) throw bad(section, `unknown section; expected one of ${Object.keys(SPEC).join(', ')}`);
    if (given === undefined) continue;
    if (!isPlainObject(given)) throw bad(section, `expected an object; found ${describe(given)}`);
    const target = out[section] as Record<string, unknown>;
    for (const [key, value] of Object.entries(given)) {
      const field = `${section}.${key}`;
      const leaf = spec[key];
      if (leaf === undefined) throw bad(field, `unknown field; expected one of ${Object.keys(spec).join(', ')}`);
      if (value === undefined) continue;
      target[key] = checkLeaf(field, leaf, value);
    }
  }
  return deepFreeze(out as unknown as AuditLimits);
}
