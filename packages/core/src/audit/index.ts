// Public API of the audit area; re-exports only (owned by the audit work).
export type {
  AuditVerdict,
  AuditReason,
  ReasonSeverity,
  SettingValue,
  FrameObservationValues,
  TrailMetric,
  FrameMetricCounts,
  FrameMetrics,
  UnreadableFrame,
  CalibrationKind,
  CalibrationFrameInfo,
  ScoredMetric,
  DetailTest,
  ReasonDetail,
} from './types.js';
export { AUDIT_REASONS, SCORED_METRICS } from './types.js';
export type { AuditLimits, AuditLimitsInput } from './limits.js';
export { DEFAULT_AUDIT_LIMITS, parseAuditLimits } from './limits.js';
export type { SessionReference, SessionZScores } from './robust.js';
export { sessionZScores } from './robust.js';
export type { FrameZScores, QualitySet } from './quality.js';
export { Z_SCALE_ABSOLUTE_FLOORS } from './quality.js';
export type {
  ConsistencyAttribute,
  ConsistencyCheck,
  FilterConsistency,
  TemperatureSummary,
  TimeGap,
  TimeOverlap,
  SessionTiming,
} from './consistency.js';
export { checkConsistency, findGaps } from './consistency.js';
export type { MatchCriterion, MatchRule, CalibrationMatch, LightGroup, CalibrationSummary } from './calibration.js';
export { matchCalibration } from './calibration.js';
export type { WeightMethod, StackEstimate, StackForecast } from './forecast.js';
export { frameWeights, kishEffectiveCount, stackEstimate, forecastStack } from './forecast.js';
export type { AuditInput, AuditFrameRecord, AuditCounts, AuditResult } from './session.js';
export { auditSession, verdictOf, isUnreadableFrame } from './session.js';
export { frameObservationValues } from './observation.js';
export type { LightFrameOptions, LightFrameMeasurement } from './frameMetrics.js';
export { measureLightFrame, plateScaleArcsecPerPixel } from './frameMetrics.js';
