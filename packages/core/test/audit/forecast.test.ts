import { describe, expect, test } from 'vitest';
import { forecastStack, frameWeights, kishEffectiveCount, stackEstimate } from '@subgauge/core';
import type { FrameMetrics } from '@subgauge/core';
import { cleanNight } from './night.js';

describe('kishEffectiveCount', () => {
  test('kishEffectiveCount(N equal weights) is N (Kish 1965, from memory)', () => {
    expect(kishEffectiveCount([1, 1, 1, 1])).toBe(4);
    expect(kishEffectiveCount(new Array(37).fill(2.5))).toBeCloseTo(37, 12);
  });

  test('kishEffectiveCount(one dominant weight) is about 1', () => {
    // (1000 + 9)^2 / (1000^2 + 9) = 1018081 / 1000009 = 1.018072 (hand computed).
    expect(kishEffectiveCount([1000, 1, 1, 1, 1, 1, 1, 1, 1, 1])).toBeCloseTo(1018081 / 1000009, 12);
  });

  test('kishEffectiveCount([1, 2, 3]) is 36 / 14 (hand computed)', () => {
    expect(kishEffectiveCount([1, 2, 3])).toBeCloseTo(36 / 14, 12);
    expect(kishEffectiveCount([])).toBe(0);
  });
});

describe('stackEstimate', () => {
  test('stackEstimate(16 weights of 1) gives noise 1/4 of a frame, the 1/sqrt(N) of REFERENCE D.4', () => {
    const s = stackEstimate(new Array(16).fill(1), new Array(16).fill(300));
    expect(s.weightedNoiseRelative).toBeCloseTo(0.25, 12);
    expect(s.equalWeightNoiseRelative).toBeCloseTo(0.25, 12);
    expect(s.idealNoiseRelative).toBeCloseTo(0.25, 12);
    expect(s.snrGain).toBeCloseTo(4, 12);
    expect(s.totalExposureSeconds).toBe(4800);
  });

  test('stackEstimate([1, 1, 0.25, 0.25]) weights beat the plain mean (hand computed)', () => {
    // Weighted: 1/sqrt(2.5) = 0.632456; plain mean: sqrt(1 + 1 + 4 + 4) / 4 = 0.790569.
    const s = stackEstimate([1, 1, 0.25, 0.25]);
    expect(s.weightedNoiseRelative).toBeCloseTo(1 / Math.sqrt(2.5), 12);
    expect(s.equalWeightNoiseRelative).toBeCloseTo(Math.sqrt(10) / 4, 12);
    expect(s.idealNoiseRelative).toBeCloseTo(0.5, 12);
    expect(s.kishEffectiveFrames).toBeCloseTo(2.5 ** 2 / 2.125, 12);
  });
});

describe('frameWeights and forecastStack', () => {
  test('frameWeights(frames with star signals) is (signal / noise)^2', () => {
    const frames = cleanNight(3, { frames: 5 });
    const { weights, method } = frameWeights(frames);
    expect(method).toBe('star-snr');
    const f = frames[2] as FrameMetrics;
    expect(weights[2]).toBeCloseTo(((f.starSignalAdu as number) / f.noiseAdu) ** 2, 9);
  });

  test('frameWeights(frames without star signal in one frame) falls back to 1/noise^2 for all', () => {
    const frames = cleanNight(3, { frames: 5 });
    (frames[1] as FrameMetrics).starSignalAdu = null;
    const { weights, method } = frameWeights(frames);
    expect(method).toBe('inverse-noise-variance');
    expect(weights[0]).toBeCloseTo(1 / (frames[0] as FrameMetrics).noiseAdu ** 2, 15);
  });

  test('forecastStack(frames, verdicts) shows what rejecting a poor frame costs with weights and gains without', () => {
    const frames = cleanNight(4, { frames: 10 }).map((f) => ({ ...f, weight: 1 }));
    (frames[0] as FrameMetrics).weight = 0.05;
    const verdicts = frames.map((_, i): 'keep' | 'reject' => (i === 0 ? 'reject' : 'keep'));
    const { forecast, relativeWeights } = forecastStack('L', frames, verdicts);
    expect(forecast.weightMethod).toBe('given');
    expect(relativeWeights[0]).toBeCloseTo(0.05, 12);
    expect(forecast.kept.frameCount).toBe(9);
    // Weighted: sqrt(9 / 9.05) < 1; plain mean: sqrt(9 + 20) / 10 vs sqrt(9) / 9 -> kept is better.
    expect(forecast.keptVsAll.weightedSnrRatio).toBeCloseTo(Math.sqrt(9 / 9.05), 12);
    expect(forecast.keptVsAll.equalWeightSnrRatio).toBeCloseTo(Math.sqrt(29) / 10 / (3 / 9), 12);
    expect(forecast.keptVsAll.exposureFraction).toBeCloseTo(0.9, 12);
  });
});
