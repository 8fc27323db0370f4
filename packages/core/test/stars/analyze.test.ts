import { describe, expect, it } from 'vitest';
import { analyzeStars, detectStars, detectTrails, sourcesOffTrails, summarizeStars } from '@subgauge/core';
import { XorShift32, addGaussian, addNoise, addTrail, newFrame, randomPositions, toUint16 } from './helpers.js';

describe('analyzeStars', () => {
  it('analyzeStars(frame) equals detectStars + detectTrails with the detected sources + summarizeStars of the sources off the trail', () => {
    const rng = new XorShift32(31);
    const f = newFrame(800, 600, 500);
    for (const [x, y] of randomPositions(rng, 150, 800, 600, 5, 10)) addGaussian(f, x, y, 2 * Math.PI * 2 * (50 + 2000 * rng.uniform()), Math.SQRT2);
    addTrail(f, -10, 100, 810, 500, 40, 2.5);
    addNoise(f, rng, 10);
    const img = { pixels: toUint16(f), width: 800, height: 600 };
    const all = analyzeStars(img, { background: 500, noise: 10, summary: { snrThreshold: 30 } });
    const det = detectStars(img, { background: 500, noise: 10 });
    expect(all.detection).toEqual(det);
    const trails = detectTrails(img, { background: 500, noise: 10, sources: det.sources });
    expect(all.trails).toEqual(trails);
    expect(all.trails!.trails).toHaveLength(1);
    const stars = sourcesOffTrails(det.sources, trails.trails);
    expect(stars.length).toBeLessThan(det.sources.length); // the trail left pieces among the sources
    expect(all.stars).toEqual(stars);
    expect(all.summary).toEqual(summarizeStars(stars, { snrThreshold: 30 }));
    const skipped = analyzeStars(img, { background: 500, noise: 10, trails: false, summary: { snrThreshold: 30 } });
    expect(skipped.trails).toBeNull();
    expect(skipped.summary).toEqual(summarizeStars(det.sources, { snrThreshold: 30 }));
  });
});
