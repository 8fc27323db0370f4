import type { Where } from '../errors.js';

/** Audit verdicts (DESIGN section 2). */
export type AuditVerdict = 'keep' | 'review' | 'reject';

/** Reason codes of an audit verdict (DESIGN section 2), in the order they are listed on a frame. */
export type AuditReason =
  | 'unreadable'
  | 'trail'
  | 'cloud'
  | 'soft-focus'
  | 'elongated-stars'
  | 'bright-sky'
  | 'few-stars'
  | 'saturated'
  | 'exposure-mismatch'
  | 'gain-mismatch'
  | 'temperature-drift'
  | 'binning-mismatch'
  | 'size-mismatch'
  | 'no-calibration';

/** Every reason code in listing order. */
export const AUDIT_REASONS: readonly AuditReason[] = [
  'unreadable',
  'trail',
  'cloud',
  'soft-focus',
  'elongated-stars',
  'bright-sky',
  'few-stars',
  'saturated',
  'exposure-mismatch',
  'gain-mismatch',
  'temperature-drift',
  'binning-mismatch',
  'size-mismatch',
  'no-calibration',
];

/** What a verdict rule leads to when it holds. */
export type ReasonSeverity = 'review' | 'reject';

/** A camera setting as written in the header: a number, or free text for writers that use names. */
export type SettingValue = number | string;

/**
 * Observation values of one frame (normalised header values, see `observationOf` and REFERENCE A.9) plus its size.
 * Missing keywords stay undefined; the audit never guesses them.
 */
export interface FrameObservationValues {
  /** DATE-OBS as epoch milliseconds (start of exposure). */
  startTimeMs?: number | undefined;
  exposureSeconds?: number | undefined;
  filter?: string | undefined;
  sensorTemperatureCelsius?: number | undefined;
  setTemperatureCelsius?: number | undefined;
  /** GAIN as a camera setting (never assumed to be e-/ADU). */
  gainSetting?: SettingValue | undefined;
  offsetSetting?: SettingValue | undefined;
  binningX: number;
  binningY: number;
  /** Image width along NAXIS1 (px). */
  width: number;
  /** Image height along NAXIS2 (px). */
  height: number;
  object?: string | undefined;
}

/** One trail found on a frame (the fields the audit uses from the trail detector's output). */
export interface TrailMetric {
  /** Direction, degrees from +x towards +y. */
  angleDegrees: number;
  lengthPixels: number;
  x0: number;
  y0: number;
  x1: number;
  y1: number;
  /** Detection significance, when the detector gives one. */
  snr?: number | undefined;
  widthPixels?: number | null | undefined;
}

/** How many pixels, stars or frames stand behind each per-frame measurement (DESIGN section 3). */
export interface FrameMetricCounts {
  /** Pixels (or mesh boxes' pixels) behind `backgroundAdu` and `noiseAdu`. */
  backgroundPixels?: number | undefined;
  /** Mesh boxes behind `gradientPercent`. */
  gradientBoxes?: number | undefined;
  /** Stars behind `fwhmPixels`, `elongation` and `elongationAngleDegrees`. */
  shapeStars?: number | undefined;
  /** Stars behind `starSignalAdu`. */
  signalStars?: number | undefined;
  /** Pixels tested for `saturatedPixelFraction`. */
  saturationPixels?: number | undefined;
}

/**
 * Per-frame measurements of one light frame, computed by the pixel modules and handed to the audit as numbers.
 * Optional values may be missing (a frame with no stars has no FWHM); a missing or non-finite value is not
 * compared and the frame gets a note instead.
 */
export interface FrameMetrics extends FrameObservationValues {
  /** The path as given. */
  file: string;
  /** Sky background level (median of the background mesh, ADU), pedestal included. */
  backgroundAdu: number;
  /** Sky noise: MAD-sigma (1.482602 x MAD) of background pixels (ADU). */
  noiseAdu: number;
  /**
   * Bias/offset level contained in `backgroundAdu` (ADU). When absent the median of the matching bias frames
   * (`CalibrationFrameInfo.medianAdu`) is used, else 0; sky ratios use backgroundAdu - pedestal.
   */
  pedestalAdu?: number | undefined;
  /** Spread of the background mesh: (max - min) / median x 100 (percent). */
  gradientPercent?: number | undefined;
  /** Stars detected (sources on a detected trail are not stars). */
  starCount: number;
  /** Median FWHM of unsaturated, isolated stars (px). */
  fwhmPixels?: number | null | undefined;
  fwhmArcsec?: number | null | undefined;
  /** Median A/B of the shape stars (>= 1). */
  elongation?: number | null | undefined;
  /** Axial median of the shape stars' major-axis angles (degrees). */
  elongationAngleDegrees?: number | null | undefined;
  /** Saturated stars / stars (0 to 1). */
  saturatedStarFraction?: number | undefined;
  /** Saturated pixels / pixels (0 to 1). */
  saturatedPixelFraction?: number | undefined;
  trails: TrailMetric[];
  /**
   * Star signal (e.g. median background-subtracted flux of the same bright stars in every frame, ADU); it drops
   * with transparency and feeds the frame weight.
   */
  starSignalAdu?: number | null | undefined;
  /** A frame weight chosen by the caller; used as is when every frame of the filter has one. */
  weight?: number | undefined;
  /** A per-frame SNR estimate; weight = snrEstimate^2 when star signals are missing. */
  snrEstimate?: number | undefined;
  counts?: FrameMetricCounts | undefined;
}

/** A file that could not be read or measured: it gets `reject` with reason `unreadable`. */
export interface UnreadableFrame {
  file: string;
  /** Stable error code of the failure (`ErrorCode` of the library, or a caller's code). */
  code: string;
  message: string;
  where: Where;
}

/** Kinds of calibration frames the matcher handles. */
export type CalibrationKind = 'bias' | 'dark' | 'flat' | 'flat-dark';

/** One calibration frame: its kind, observation values and size. */
export interface CalibrationFrameInfo extends FrameObservationValues {
  file: string;
  kind: CalibrationKind;
  /** Median level (ADU); a bias's median serves as the pedestal of lights that do not give their own. */
  medianAdu?: number | undefined;
}

/** Metrics that get robust z-scores against their comparison set. */
export type ScoredMetric =
  | 'skyAdu'
  | 'noiseAdu'
  | 'gradientPercent'
  | 'starCount'
  | 'fwhmPixels'
  | 'elongation'
  | 'starSignalAdu';

/** Every scored metric in output order. */
export const SCORED_METRICS: readonly ScoredMetric[] = [
  'skyAdu',
  'noiseAdu',
  'gradientPercent',
  'starCount',
  'fwhmPixels',
  'elongation',
  'starSignalAdu',
];

/** How a detail's value was compared with its limit. */
export type DetailTest =
  | 'above'
  | 'below'
  | 'differs'
  | 'deviation-above'
  | 'missing-match'
  | 'present';

/**
 * One measured fact behind a reason: the value, the session reference it was compared with and the limit.
 * Data only; the renderer words it. `limit` is in the metric's unit (e.g. 1.2 x the median FWHM in px).
 */
export interface ReasonDetail {
  reason: AuditReason;
  /** Which value: a `FrameMetrics` field name, or `skyAdu`, `trailCount`, `binning`, `size`, `dark`, `flat`, ... */
  metric: string;
  test: DetailTest;
  value: number | string | null;
  /** Session (comparison set) median, the most common value, or the set point. */
  reference: number | string | null;
  limit: number | string | null;
  /** value / reference for ratio rules, else null. */
  ratio: number | null;
  /** Robust z-score of the value in its comparison set, when the rule uses one. */
  zScore: number | null;
  /** The |z| the rule requires, when it uses one. */
  zLimit: number | null;
}
