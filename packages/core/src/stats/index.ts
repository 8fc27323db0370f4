// Public API of the stats area; re-exports only (owned by the stats work).
export type { StatsInput, SampleOptions } from './input.js';
export type { PixelCounts } from './sample.js';
export type { MadResult, Moments } from './robust.js';
export { MAD_SIGMA_SCALE, median, quantile, quantiles, medianAbsoluteDeviation, madSigma, moments } from './robust.js';
export type { SigmaClipParameters, SigmaClipOptions, ClippedStats } from './sigmaClip.js';
export { sigmaClippedStats } from './sigmaClip.js';
export type { BiweightOptions, BiweightResult } from './biweight.js';
export { biweight, biweightLocation, biweightScale } from './biweight.js';
export type { BackgroundModeOptions, BackgroundModeResult, RobustZResult } from './mode.js';
export { backgroundMode, robustZScores } from './mode.js';
export type { FrameStatsOptions, FrameStats } from './frameStats.js';
export { frameStats } from './frameStats.js';
export type { BoxMedianMesh, BackgroundMeshOptions, MeshGradient, BackgroundMesh } from './mesh.js';
export { boxMedianMesh, backgroundMesh, meshLevelAt, renderMeshMap } from './mesh.js';
export type { CcdEquationInput, PixelRect, CircularAperture, RegionSnrOptions, RegionSnr } from './snr.js';
export { ccdEquationSnr, regionSnr } from './snr.js';
export type { DataFacts } from './dataFacts.js';
export { dataFacts } from './dataFacts.js';
