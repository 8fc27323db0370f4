import {
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
  let view: FrameView = frameView(image, 0);
  if (region) view = regionView(view, region.x, region.y, region.width, region.height);
  const opts = { blankValue: image.blankValue, clip: { sigma: 3, maxIterations: 5 } } as const;
  const whole = viewMeasurements(frameStats(view, opts));
  const out: HduMeasurements = { ...whole, plane: 0, ...(region ? { region } : {}) };
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
  for (const c of m.channels ?? []) {
    lines.push(
      `${m.cfaPattern} ${c.channel.padEnd(2)}: median ${fmtSig(c.stats.median, 6)}, MAD-sigma ${fmtSig(c.stats.madSigma, 4)}, clipped mean ${fmtSig(c.stats.clippedMean, 6)}`,
    );
  }
  return lines;
}
