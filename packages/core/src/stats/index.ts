// Public API of the stats area; re-exports only (owned by the stats work).
export type { StatsInput, SampleOptions } from './input.js';
export type { PixelCounts } from './sample.js';
export type { MadResult, Moments } from './robust.js';
export { MAD_SIGMA_SCALE, median, quantile, quantiles, medianAbsoluteDeviation, madSigma, moments } from './robust.js';
