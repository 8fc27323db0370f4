import type { AuditLimits } from './limits.js';
import type { SessionReference } from './robust.js';
import { sessionZScores } from './robust.js';
import type { FrameMetrics, ReasonDetail, ScoredMetric } from './types.js';
import { SCORED_METRICS } from './types.js';
import { finite } from './values.js';

/**
 * Smallest z scale per metric, in the metric's unit, for medians near 0 (the relative floor is
 * `statistics.zScaleFloorFraction` x |median|). Our choice: one star; 0.01 px of FWHM; 0.01 of elongation;
 * 0.1 percentage point of gradient; 0.01 ADU otherwise.
 */
export const Z_SCALE_ABSOLUTE_FLOORS: Readonly<Record<ScoredMetric, number>> = Object.freeze({
  skyAdu: 0.01,
  noiseAdu: 0.01,
  gradientPercent: 0.1,
  starCount: 1,
  fwhmPixels: 0.01,
  elongation: 0.01,
  starSignalAdu: 0.01,
});

/** Robust z-score of each scored metric; null where the value is missing or the set was not compared. */
export type FrameZScores = Record<ScoredMetric, number | null>;

/** Frames compared with each other: one filter with one exposure, gain, offset, binning and size. */
export interface QualitySet {
  /** 1-based, in sorted order of the set keys. */
  index: number;
  filter: string | null;
  exposureSeconds: number | null;
  gainSetting: number | string | null;
  offsetSetting: number | string | null;
  binning: string;
  size: string;
  frameCount: number;
  /** The statistical rules ran (frameCount >= `statistics.minFramesForStatistics`). */
  compared: boolean;
  /** Reference of each metric (null when not compared or no frame has the metric). */
  references: Record<ScoredMetric, SessionReference | null>;
}

/** Sky above the pedestal (ADU). */
export function skyOf(f: FrameMetrics, pedestalAdu: number): number {
  return f.backgroundAdu - pedestalAdu;
}

function metricValue(f: FrameMetrics, m: ScoredMetric, pedestalAdu: number): number {
  switch (m) {
    case 'skyAdu':
      return finite(f.backgroundAdu) === undefined ? Number.NaN : skyOf(f, pedestalAdu);
    case 'starCount':
      return finite(f.starCount) ?? Number.NaN;
    default:
      return finite(f[m]) ?? Number.NaN;
  }
}

/** Reference statistics and z-scores of the metrics over one comparison set (frames in input order). */
export function scoreSet(
  frames: readonly FrameMetrics[],
  pedestals: readonly number[],
  limits: AuditLimits,
): { references: Record<ScoredMetric, SessionReference | null>; z: FrameZScores[] } {
  const references = {} as Record<ScoredMetric, SessionReference | null>;
  const z: FrameZScores[] = frames.map(() => ({}) as FrameZScores);
  for (const m of SCORED_METRICS) {
    const values = frames.map((f, i) => metricValue(f, m, pedestals[i] ?? 0));
    const r = sessionZScores(values, limits.statistics.zScaleFloorFraction, Z_SCALE_ABSOLUTE_FLOORS[m]);
    references[m] = r.reference.count > 0 ? r.reference : null;
    r.z.forEach((v, i) => {
      (z[i] as FrameZScores)[m] = Number.isFinite(v) ? v : null;
    });
  }
  return { references, z };
}

/** Null z-scores for frames that were not compared. */
export function emptyZScores(): FrameZScores {
  const z = {} as FrameZScores;
  for (const m of SCORED_METRICS) z[m] = null;
  return z;
}

function d(
  reason: ReasonDetail['reason'],
  metric: string,
  test: ReasonDetail['test'],
  value: number,
  reference: number | null,
  limit: number,
  zScore: number | null = null,
  zLimit: number | null = null,
): ReasonDetail {
  const ratio = reference !== null && reference !== 0 ? value / reference : null;
  return { reason, metric, test, value, reference, limit, ratio, zScore, zLimit };
}

/**
 * Rules that need no session: trails, saturation, too few stars at all, elongation beyond the absolute limit.
 * @returns details of the reasons that hold (`trail`, `saturated`, `few-stars`, `elongated-stars`)
 */
export function absoluteRules(f: FrameMetrics, limits: AuditLimits): ReasonDetail[] {
  const out: ReasonDetail[] = [];
  const trails = (f.trails ?? []).filter((t) => finite(t.lengthPixels) !== undefined && t.lengthPixels >= limits.trail.minLengthPixels);
  if (trails.length > 0) {
    const longest = Math.max(...trails.map((t) => t.lengthPixels));
    out.push(d('trail', 'trailCount', 'above', trails.length, null, 0));
    out.push(d('trail', 'trailLengthPixels', 'above', longest, null, limits.trail.minLengthPixels));
  }
  const satPix = finite(f.saturatedPixelFraction);
  if (satPix !== undefined && satPix > limits.saturated.pixelFractionAbove) {
    out.push(d('saturated', 'saturatedPixelFraction', 'above', satPix, null, limits.saturated.pixelFractionAbove));
  }
  const satStars = finite(f.saturatedStarFraction);
  if (satStars !== undefined && satStars > limits.saturated.starFractionAbove) {
    out.push(d('saturated', 'saturatedStarFraction', 'above', satStars, null, limits.saturated.starFractionAbove));
  }
  const stars = finite(f.starCount);
  if (stars !== undefined && stars < limits.fewStars.minimumStars) {
    out.push(d('few-stars', 'starCount', 'below', stars, null, limits.fewStars.minimumStars));
  }
  const e = finite(f.elongation);
  if (e !== undefined && e > limits.elongatedStars.elongationAbove) {
    out.push(d('elongated-stars', 'elongation', 'above', e, null, limits.elongatedStars.elongationAbove));
  }
  return out;
}

/**
 * Rules against the comparison set (each needs its ratio and its |z| to hold; limits in {@link AuditLimits}):
 * cloud, soft-focus, elongated-stars (excess over the median), bright-sky (sky or gradient), few-stars
 * (only when cloud does not hold: cloud explains the missing stars).
 * @param absolute details from {@link absoluteRules} (few-stars there is dropped when cloud holds)
 * @returns all details of the frame
 */
export function sessionRules(
  f: FrameMetrics,
  pedestalAdu: number,
  z: FrameZScores,
  refs: Record<ScoredMetric, SessionReference | null>,
  absolute: readonly ReasonDetail[],
  limits: AuditLimits,
): ReasonDetail[] {
  const out: ReasonDetail[] = [];
  const med = (m: ScoredMetric) => refs[m]?.median;
  const stars = finite(f.starCount);
  const sky = finite(f.backgroundAdu) === undefined ? undefined : skyOf(f, pedestalAdu);
  const starMed = med('starCount');
  const skyMed = med('skyAdu');

  // Cloud: a transparency loss (the brightest stars' signal falls), or a star loss with a sky change. The
  // transparency test stands alone: it measures the cloud directly, while star counts also move with seeing.
  const c = limits.cloud;
  let cloud = false;
  {
    const evidence: ReasonDetail[] = [];
    const sig = finite(f.starSignalAdu);
    const sigMed = med('starSignalAdu');
    const transparencyLoss =
      sig !== undefined && sigMed !== undefined && sigMed > 0 && z.starSignalAdu !== null &&
      sig < c.transparencyRatioBelow * sigMed && z.starSignalAdu <= -c.zLimit;
    const starLimit = starMed !== undefined ? c.starCountRatioBelow * starMed : undefined;
    const starLoss =
      stars !== undefined && starMed !== undefined && starMed > 0 && starLimit !== undefined && z.starCount !== null &&
      stars < starLimit && z.starCount <= -c.zLimit;
    let skyEvidence: ReasonDetail | undefined;
    if (sky !== undefined && skyMed !== undefined && skyMed > 0 && z.skyAdu !== null) {
      if (sky > skyMed * (1 + c.skyChangeFraction) && z.skyAdu >= c.zLimit) {
        skyEvidence = d('cloud', 'skyAdu', 'above', sky, skyMed, skyMed * (1 + c.skyChangeFraction), z.skyAdu, c.zLimit);
      } else if (sky < skyMed * (1 - c.skyChangeFraction) && z.skyAdu <= -c.zLimit) {
        skyEvidence = d('cloud', 'skyAdu', 'below', sky, skyMed, skyMed * (1 - c.skyChangeFraction), z.skyAdu, c.zLimit);
      }
    }
    if (transparencyLoss || (starLoss && skyEvidence)) {
      cloud = true;
      if (starLoss) evidence.push(d('cloud', 'starCount', 'below', stars!, starMed!, starLimit!, z.starCount, c.zLimit));
      if (skyEvidence) evidence.push(skyEvidence);
      if (transparencyLoss) {
        evidence.push(d('cloud', 'starSignalAdu', 'below', sig!, sigMed!, c.transparencyRatioBelow * sigMed!, z.starSignalAdu, c.zLimit));
      }
      out.push(...evidence);
    }
  }

  // Soft focus.
  const fwhm = finite(f.fwhmPixels);
  const fwhmMed = med('fwhmPixels');
  const sf = limits.softFocus;
  if (fwhm !== undefined && fwhmMed !== undefined && fwhmMed > 0 && z.fwhmPixels !== null) {
    if (fwhm > sf.fwhmRatioAbove * fwhmMed && z.fwhmPixels >= sf.zLimit) {
      out.push(d('soft-focus', 'fwhmPixels', 'above', fwhm, fwhmMed, sf.fwhmRatioAbove * fwhmMed, z.fwhmPixels, sf.zLimit));
    }
  }

  // Elongation above the session's (the absolute limit is in absoluteRules).
  const e = finite(f.elongation);
  const eMed = med('elongation');
  const el = limits.elongatedStars;
  if (e !== undefined && eMed !== undefined && z.elongation !== null && e <= el.elongationAbove) {
    if (e > eMed + el.excessAboveMedian && z.elongation >= el.zLimit) {
      out.push(d('elongated-stars', 'elongation', 'above', e, eMed, eMed + el.excessAboveMedian, z.elongation, el.zLimit));
    }
  }

  // Bright sky: sky level, or a gradient.
  const bs = limits.brightSky;
  if (sky !== undefined && skyMed !== undefined && skyMed > 0 && z.skyAdu !== null) {
    if (sky > bs.skyRatioAbove * skyMed && z.skyAdu >= bs.zLimit) {
      out.push(d('bright-sky', 'skyAdu', 'above', sky, skyMed, bs.skyRatioAbove * skyMed, z.skyAdu, bs.zLimit));
    }
  }
  const g = finite(f.gradientPercent);
  const gMed = med('gradientPercent');
  if (g !== undefined && gMed !== undefined && z.gradientPercent !== null) {
    if (g > gMed + bs.gradientExcessPercent && z.gradientPercent >= bs.zLimit) {
      out.push(
        d('bright-sky', 'gradientPercent', 'above', g, gMed, gMed + bs.gradientExcessPercent, z.gradientPercent, bs.zLimit),
      );
    }
  }

  // Few stars (relative), unless cloud explains them.
  const fs = limits.fewStars;
  if (!cloud && stars !== undefined && starMed !== undefined && starMed > 0 && z.starCount !== null) {
    if (stars < fs.starCountRatioBelow * starMed && z.starCount <= -fs.zLimit) {
      out.push(d('few-stars', 'starCount', 'below', stars, starMed, fs.starCountRatioBelow * starMed, z.starCount, fs.zLimit));
    }
  }

  const kept = cloud ? absolute.filter((x) => x.reason !== 'few-stars') : [...absolute];
  // The absolute few-stars detail gains the session reference when there is one.
  for (let i = 0; i < kept.length; i++) {
    const k = kept[i] as ReasonDetail;
    if (k.reason === 'few-stars' && k.reference === null && starMed !== undefined) {
      kept[i] = { ...k, reference: starMed, ratio: starMed > 0 ? (k.value as number) / starMed : null, zScore: z.starCount };
    }
  }
  return [...kept, ...out];
}
