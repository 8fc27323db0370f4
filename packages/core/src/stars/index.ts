// Public API of the stars area; re-exports only (owned by the stars work).
export type {
  NumericPixels,
  LevelMap,
  LevelGrid,
  BackgroundLevels,
  StarImage,
  DetectStarsOptions,
  PixelBox,
  StarSource,
  StarDetection,
  StarSummaryOptions,
  StarFieldSummary,
  DetectTrailsOptions,
  Trail,
  TrailDetection,
} from './types.js';
export { labelComponents } from './label.js';
export { levelGridRow, levelGridAt } from './levels.js';
export type { LabelResult } from './label.js';
export {
  GAUSSIAN_FWHM_PER_SIGMA,
  gaussianFwhm,
  gaussianHalfFluxRadius,
  moffatFwhm,
  moffatHalfFluxRadius,
  shapeFromMoments,
  imageMoments,
} from './profiles.js';
export type { MomentShape, ImageMoments } from './profiles.js';
export { detectStars, defaultSaturationAdu } from './detect.js';
export { summarizeStars } from './summary.js';
export { detectTrails, sourcesOffTrails } from './trails.js';
export { analyzeStars } from './analyze.js';
export type { AnalyzeStarsOptions, StarAnalysis } from './analyze.js';
