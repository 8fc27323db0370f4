import { describe, expect, it } from 'vitest';
import { analyzeStars, detectStars, detectTrails, summarizeStars } from '@subgauge/core';
import { XorShift32, addGaussian, addNoise, addTrail, newFrame, randomPositions, toUint16 } from './helpers.js';

describe('analyzeStars', () => {
  it('analyzeStars(frame) equals detectStars + summarizeStars + detectTrails with the detected sources', () => {
    const rng = new XorShift32(31);
    const f = newFrame(800, 600, 500);
    for (const [x, y] of randomPositions(rng, 150, 800, 600, 5, 10)) addGaussian(f, x, y, 2 * Math.PI * 2 * (50 + 2000 * rng.uniform()), Math.SQRT2);
    addTrail(f, -10, 100, 810, 500, 40, 2.5);
    addNoise(f, rng, 10);
    const img = { pixels: toUint16(f), width: 800, height: 600 };
    const all = analyzeStars(img, { background: 500, noise: 10, summary: { snrThreshold: 30 } });
    const det = detectStars(img, { background: 500, noise: 10 });
    expect(all.detection).toEqual(det);
    expect(all.summary).toEqual(summarizeStars(det.sources, { snrThreshold: 30 }));
    expect(all.trails).toEqual(detectTrails(img, { background: 500, noise: 10, sources: det.sources }));
    expect(all.trails!.trails).toHaveLength(1);
    expect(analyzeStars(img, { background: 500, noise: 10, trails: false }).trails).toBeNull();
  });
});
