import {
  backgroundMesh,
  dataFacts,
  regionSnr,
  type Hdu,
  cfaPattern,
  cfaPlanes,
  frameStats,
  frameView,
  regionView,
  type FrameView,
  type FrameStats,
} from '@subgauge/core';
import type { RegionOption } from '../options.js';
import { fmtSig } from '../render/table.js';

/** Pixel statistics of one view as reported by inspect (DESIGN section 2 record names). */
export interface ViewMeasurements {
  pixels: number;
  validCount: number;
  nanCount: number;
  blankCount: number;
  min: number;
  max: number;
  mean: number;
  median: number;
  madSigma: number;
  clippedMean: number | undefined;
  clippedMedian: number | undefined;
  clippedStd: number | undefined;
  clippedCount: number | undefined;
}

export interface HduMeasurements extends ViewMeasurements {
  /** Quantization step and effective bit depth (REFERENCE B.10), saturation and minimum-code fractions. */
  quantizationStepAdu: number | undefined;
  effectiveBitDepth: number | undefined;
  saturationAdu: number | undefined;
  saturatedFraction: number;
  atMinimumFraction: number;
  /** Mesh background gradient across the frame (percent of the median level) and the direction it rises (degrees, 0 = +x). */
  backgroundGradientPercent: number | undefined;
  backgroundGradientDirectionDegrees: number | undefined;
  /** For --region: the region's signal over the frame's mesh background and its SNR (ADU, background-limited). */
  regionSnr?: { meanSignalAdu: number; backgroundAdu: number; backgroundNoiseAdu: number; perPixelSnr: number; snr: number; pixelCount: number };
  /** Planes measured: plane 0 of a cube (others are listed by count only). */
  plane: number;
  region?: RegionOption;
  /** Per CFA channel for colour data (BAYERPAT present). */
  channels?: { channel: string; stats: ViewMeasurements }[];
  cfaPattern?: string;
}

function viewMeasurements(stats: FrameStats): ViewMeasurements {
  return {
    pixels: stats.width * stats.height,
    validCount: stats.validCount,
    nanCount: stats.nanCount,
    blankCount: stats.blankCount,
    min: stats.min,
    max: stats.max,
    mean: stats.mean,
    median: stats.median,
    madSigma: stats.madSigma,
    clippedMean: stats.clipped?.mean,
    clippedMedian: stats.clipped?.median,
    clippedStd: stats.clipped?.std,
    clippedCount: stats.clipped?.count,
  };
}

/** Measure an image HDU (plane 0 of a cube), optionally inside a region. */
export function measureImageHdu(hdu: Hdu, region: RegionOption | undefined): HduMeasurements | undefined {
  const image = hdu.image;
  if (!image || image.width === 0 || image.height === 0) return undefined;
  const full: FrameView = frameView(image, 0);
  let view = full;
  if (region) view = regionView(full, region.x, region.y, region.width, region.height);
  const opts = { blankValue: image.blankValue, clip: { sigma: 3, maxIterations: 5 } } as const;
  const whole = viewMeasurements(frameStats(view, opts));
  const facts = dataFacts(view, { blankValue: image.blankValue });
  // The gradient needs a few boxes across: 64-px boxes, or smaller for small images.
  const box = Math.max(8, Math.min(64, Math.floor(Math.min(image.width, image.height) / 4)));
  const mesh = image.width >= 16 && image.height >= 16 ? backgroundMesh(full, { boxSize: box, blankValue: image.blankValue, ...(facts.saturationAdu !== undefined ? { saturationAdu: facts.saturationAdu } : {}) }) : undefined;
  const out: HduMeasurements = {
    ...whole,
    plane: 0,
    ...(region ? { region } : {}),
    quantizationStepAdu: facts.quantizationStepAdu,
    effectiveBitDepth: facts.effectiveBitDepth,
    saturationAdu: facts.saturationAdu,
    saturatedFraction: facts.saturatedFraction,
    atMinimumFraction: facts.atMinimumFraction,
    backgroundGradientPercent: mesh && mesh.validCount >= 3 ? mesh.gradient.percent : undefined,
    backgroundGradientDirectionDegrees: mesh && mesh.validCount >= 3 ? mesh.gradient.directionDegrees : undefined,
  };
  if (region && mesh && mesh.validCount > 0) {
    const r = regionSnr(full, { region: { x: region.x, y: region.y, width: region.width, height: region.height }, mesh, blankValue: image.blankValue });
    out.regionSnr = { meanSignalAdu: r.meanSignalAdu, backgroundAdu: r.backgroundAdu, backgroundNoiseAdu: r.backgroundNoiseAdu, perPixelSnr: r.perPixelSnr, snr: r.snr, pixelCount: r.pixelCount };
  }
  const pattern = cfaPattern(hdu.header);
  if (pattern) {
    // CFA planes are taken on the full frame so the pattern phase is the header's; a region keeps its phase
    // only when x and y are even.
    const base = region && (region.x % 2 || region.y % 2) ? undefined : view;
    if (base) {
      const planes = cfaPlanes(base, pattern);
      out.cfaPattern = pattern.name;
      out.channels = (['r', 'g1', 'g2', 'b'] as const).map((k) => ({
        channel: k.toUpperCase(),
        stats: viewMeasurements(frameStats(planes[k], opts)),
      }));
    }
  }
  return out;
}

/** Detail lines under the table: clipped statistics and per-channel values. */
export function measurementLines(m: HduMeasurements, region: RegionOption | undefined): string[] {
  const lines: string[] = [];
  if (region) lines.push(`region x=${region.x} y=${region.y} ${region.width}x${region.height}`);
  if (m.clippedMean !== undefined) {
    lines.push(
      `3-sigma clipped: mean ${fmtSig(m.clippedMean, 6)}, median ${fmtSig(m.clippedMedian, 6)}, std ${fmtSig(m.clippedStd, 4)} (${m.clippedCount} of ${m.validCount} pixels kept)`,
    );
  }
  const facts: string[] = [];
  if (m.quantizationStepAdu !== undefined) facts.push(`quantization step ${m.quantizationStepAdu} ADU${m.effectiveBitDepth !== undefined ? ` (${m.effectiveBitDepth}-bit data)` : ''}`);
  if (m.saturationAdu !== undefined) facts.push(`${(100 * m.saturatedFraction).toFixed(3)} % of pixels at ${m.saturationAdu}`);
  facts.push(`${(100 * m.atMinimumFraction).toFixed(3)} % at the minimum code`);
  if (m.backgroundGradientPercent !== undefined) facts.push(`background gradient ${m.backgroundGradientPercent.toFixed(2)} % of the median level, rising towards ${m.backgroundGradientDirectionDegrees!.toFixed(0)} deg`);
  lines.push(facts.join('; '));
  if (m.regionSnr) {
    const r = m.regionSnr;
    lines.push(`region signal ${fmtSig(r.meanSignalAdu, 5)} ADU/px above the background ${fmtSig(r.backgroundAdu, 6)} ADU (noise ${fmtSig(r.backgroundNoiseAdu, 4)}): SNR ${fmtSig(r.perPixelSnr, 4)} per pixel, ${fmtSig(r.snr, 4)} summed over ${r.pixelCount} px`);
  }
  for (const c of m.channels ?? []) {
    lines.push(
      `${m.cfaPattern} ${c.channel.padEnd(2)}: median ${fmtSig(c.stats.median, 6)}, MAD-sigma ${fmtSig(c.stats.madSigma, 4)}, clipped mean ${fmtSig(c.stats.clippedMean, 6)}`,
    );
  }
  return lines;
}
