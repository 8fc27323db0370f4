// One call for the per-frame audit: detection and shapes, the frame summary, and the trail check.

import { detectStars } from './detect.js';
import { summarizeStars } from './summary.js';
import { detectTrails, sourcesOffTrails } from './trails.js';
import type {
  BackgroundLevels,
  DetectStarsOptions,
  DetectTrailsOptions,
  LevelMap,
  StarDetection,
  StarFieldSummary,
  StarImage,
  StarSource,
  StarSummaryOptions,
  TrailDetection,
} from './types.js';

/** Options of {@link analyzeStars}: the shared background and noise, and per-step options. */
export interface AnalyzeStarsOptions {
  background: BackgroundLevels;
  noise: LevelMap;
  detect?: Omit<DetectStarsOptions, 'background' | 'noise'>;
  summary?: StarSummaryOptions;
  /** Trail check options, or false to skip it. */
  trails?: Omit<DetectTrailsOptions, 'background' | 'noise' | 'sources'> | false;
}

/** Result of {@link analyzeStars}. `trails` is null when the check was skipped. */
export interface StarAnalysis {
  detection: StarDetection;
  /** The stars: the detected sources less those on a detected trail (all of them when trails were not checked). */
  stars: StarSource[];
  summary: StarFieldSummary;
  trails: TrailDetection | null;
}

/**
 * Detect and measure stars, look for trails with the detected sources masked, and summarise the stars: the sources
 * less those on a detected trail (as the audit counts them).
 */
export function analyzeStars(image: StarImage, options: AnalyzeStarsOptions): StarAnalysis {
  const { background, noise } = options;
  const detection = detectStars(image, { ...options.detect, background, noise });
  const trails = options.trails === false ? null : detectTrails(image, { ...options.trails, background, noise, sources: detection.sources });
  const stars = trails === null ? detection.sources : sourcesOffTrails(detection.sources, trails.trails);
  const summary = summarizeStars(stars, options.summary);
  return { detection, stars, summary, trails };
}
