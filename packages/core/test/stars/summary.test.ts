import { describe, expect, it } from 'vitest';
import { detectStars, summarizeStars } from '@subgauge/core';
import type { StarSource } from '@subgauge/core';
import { XorShift32, addGaussian, addNoise, newFrame, toUint16 } from './helpers.js';

/** A grid field of elongated Gaussians (sigma major/minor at angle theta), peak SNR ~100, a few saturated. */
function field(seed: number, sMajor: number, sMinor: number, thetaOf: (i: number) => number, saturatedEvery = 0) {
  const rng = new XorShift32(seed);
  const f = newFrame(600, 600, 1000);
  let i = 0;
  for (let y = 30; y < 600; y += 60) {
    for (let x = 30; x < 600; x += 60) {
      const flux = 2 * Math.PI * sMajor * sMinor * (saturatedEvery && i % saturatedEvery === 0 ? 200000 : 1500);
      addGaussian(f, x + rng.uniform(), y + rng.uniform(), flux, sMajor, sMinor, thetaOf(i));
      i++;
    }
  }
  addNoise(f, rng, 12);
  return detectStars({ pixels: toUint16(f), width: 600, height: 600 }, { background: 1000, noise: 12 });
}

describe('summarizeStars', () => {
  it('summarizeStars(round stars FWHM 3.5) gives median FWHM within 2 %, elongation near 1 and low angle coherence', () => {
    const s = 3.5 / 2.3548200450309493;
    const det = field(1, s, s, () => 0);
    const sum = summarizeStars(det.sources);
    expect(sum.sourceCount).toBe(100);
    expect(sum.shapeStarCount).toBe(100);
    expect(Math.abs(sum.medianFwhmPixels! / 3.5 - 1)).toBeLessThan(0.02);
    expect(Math.abs(sum.fluxWeightedFwhmPixels! / 3.5 - 1)).toBeLessThan(0.02);
    expect(sum.fwhmMadSigmaPixels!).toBeLessThan(0.1);
    expect(sum.medianElongation!).toBeLessThan(1.05);
    expect(sum.elongationAngleCoherence!).toBeLessThan(0.5);
    expect(sum.isolationRadiusPixels).toBeCloseTo(Math.max(8, 4 * sum.medianFwhmPixels!), 9);
    expect(sum.saturatedFraction).toBe(0);
  });

  it('summarizeStars(stars trailed at 30 deg) gives elongation ~1.6, direction 30 deg, coherence near 1', () => {
    const det = field(2, 2.4, 1.5, () => 30);
    const sum = summarizeStars(det.sources);
    expect(sum.medianElongation!).toBeCloseTo(1.6, 1);
    expect(sum.elongationAngleDegrees!).toBeCloseTo(30, 0);
    expect(sum.elongationAngleCoherence!).toBeGreaterThan(0.95);
  });

  it('summarizeStars(angles spread about +-90 deg) wraps: the direction is 90, not 0', () => {
    const det = field(3, 2.4, 1.5, (i) => (i % 2 ? 87 : -87));
    const sum = summarizeStars(det.sources);
    expect(Math.abs(Math.abs(sum.elongationAngleDegrees!) - 90)).toBeLessThan(2);
    expect(sum.elongationAngleCoherence!).toBeGreaterThan(0.9);
  });

  it('summarizeStars counts saturated sources, leaves them out of the shape medians, and counts SNR >= threshold', () => {
    const det = field(4, 1.5, 1.5, () => 0, 10);
    const sum = summarizeStars(det.sources, { snrThreshold: 50 });
    const nSat = det.sources.filter((s) => s.saturated).length;
    expect(nSat).toBe(10);
    expect(sum.saturatedFraction).toBeCloseTo(nSat / det.sources.length, 12);
    expect(sum.shapeStarCount).toBe(det.sources.length - nSat);
    expect(sum.snrThreshold).toBe(50);
    expect(sum.countAboveSnr).toBe(det.sources.filter((s) => s.snr >= 50).length);
    expect(sum.countAboveSnr).toBeGreaterThan(0);
  });

  it('summarizeStars leaves out stars with a neighbour within the isolation radius, and handles no sources', () => {
    const base = field(5, 1.5, 1.5, () => 0).sources;
    const close: StarSource[] = base.map((s, i) => (i === 0 ? { ...base[1]!, x: base[1]!.x + 3, id: 999 } : s));
    const sum = summarizeStars(close, { isolationRadiusPixels: 10 });
    expect(sum.shapeStarCount).toBe(base.length - 2);
    const empty = summarizeStars([]);
    expect(empty.sourceCount).toBe(0);
    expect(empty.medianFwhmPixels).toBeNull();
    expect(empty.elongationAngleDegrees).toBeNull();
    expect(empty.saturatedFraction).toBe(0);
  });
});
