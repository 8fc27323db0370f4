import { describe, expect, test } from 'vitest';
import { DEFAULT_AUDIT_LIMITS, checkConsistency, findGaps } from '@subgauge/core';
import type { FrameMetrics } from '@subgauge/core';
import { NIGHT_START_MS, cleanNight } from './night.js';

describe('findGaps', () => {
  test('findGaps(frames with a 40-minute pause) lists the gap with its step and idle time', () => {
    const frames = cleanNight(9, { frames: 20 });
    // Shift frames 11-20 by 40 minutes (a meridian flip and refocus, say).
    for (const f of frames.slice(10)) f.startTimeMs = (f.startTimeMs as number) + 40 * 60_000;
    const t = findGaps(frames, DEFAULT_AUDIT_LIMITS);
    expect(t.gaps).toHaveLength(1);
    const g = t.gaps[0];
    expect(g?.afterFile).toBe('L_010.fits');
    expect(g?.beforeFile).toBe('L_011.fits');
    const step = ((frames[10]?.startTimeMs as number) - (frames[9]?.startTimeMs as number)) / 1000;
    expect(g?.stepSeconds).toBeCloseTo(step, 9);
    expect(g?.idleSeconds).toBeCloseTo(step - 300, 9);
    expect(t.cadenceSeconds as number).toBeGreaterThan(306);
    expect(t.cadenceSeconds as number).toBeLessThan(308);
    expect(t.overlaps).toEqual([]);
  });

  test('findGaps(frames in shuffled order) sorts them by start time', () => {
    const frames = cleanNight(9, { frames: 8 });
    const t = findGaps([...frames].reverse(), DEFAULT_AUDIT_LIMITS);
    expect(t.firstStartMs).toBe(NIGHT_START_MS);
    expect(t.gaps).toEqual([]);
    expect(t.timedFrameCount).toBe(8);
  });

  test('findGaps(start times 100 s apart for 300 s exposures) lists overlaps (REFERENCE F.8)', () => {
    const frames = cleanNight(9, { frames: 4 }).map((f, i) => ({ ...f, startTimeMs: NIGHT_START_MS + i * 100_000 }));
    const t = findGaps(frames, DEFAULT_AUDIT_LIMITS);
    expect(t.overlaps).toHaveLength(3);
    expect(t.overlaps[0]).toEqual({ file: 'L_001.fits', nextFile: 'L_002.fits', stepSeconds: 100, exposureSeconds: 300 });
  });

  test('findGaps(two timed frames) gives no cadence', () => {
    const t = findGaps(cleanNight(9, { frames: 2 }), DEFAULT_AUDIT_LIMITS);
    expect(t.cadenceSeconds).toBeNull();
    expect(t.gaps).toEqual([]);
  });
});

describe('checkConsistency', () => {
  test('checkConsistency(two filters) takes the most common value per filter', () => {
    const l = cleanNight(1, { frames: 6, filter: 'L' });
    const ha = cleanNight(2, { frames: 5, filter: 'Ha', exposureSeconds: 600, gainSetting: 200 });
    (ha[0] as FrameMetrics).exposureSeconds = 300;
    const c = checkConsistency([...l, ...ha], DEFAULT_AUDIT_LIMITS);
    expect(c.filters.map((f) => f.filter)).toEqual(['Ha', 'L']);
    const haExposure = c.filters[0]?.checks.find((k) => k.attribute === 'exposureSeconds');
    expect(haExposure?.reference).toBe(600);
    expect(haExposure?.mismatchedFiles).toEqual(['Ha_001.fits']);
    expect(haExposure?.values).toEqual([
      { value: 600, frameCount: 4 },
      { value: 300, frameCount: 1 },
    ]);
    expect(c.filters[0]?.checks.find((k) => k.attribute === 'gainSetting')?.reference).toBe(200);
    expect(c.perFrame[6]?.details).toEqual([
      expect.objectContaining({ reason: 'exposure-mismatch', value: 300, reference: 600, limit: 3 }),
    ]);
    // L frames at gain 100 are not compared with Ha frames at gain 200.
    expect(c.perFrame.slice(0, 6).every((p) => p.details.length === 0)).toBe(true);
  });

  test('checkConsistency(frame 1.5 C warmer than the session with its set point met) flags the session deviation', () => {
    const frames = cleanNight(3, { frames: 9 });
    const f = frames[4] as FrameMetrics;
    f.setTemperatureCelsius = -8.5;
    f.sensorTemperatureCelsius = -8.5;
    const c = checkConsistency(frames, DEFAULT_AUDIT_LIMITS);
    expect(c.perFrame[4]?.details).toEqual([
      expect.objectContaining({ reason: 'temperature-drift', metric: 'sessionDeviationCelsius', value: -8.5, limit: 1 }),
    ]);
    expect(c.temperature.setpoints[0]).toEqual({ value: -10, frameCount: 8 });
  });

  test('checkConsistency(tied values) picks the smaller value whatever the order', () => {
    const frames = cleanNight(3, { frames: 4 }).map((f, i) => ({ ...f, gainSetting: i < 2 ? 120 : 100 }));
    for (const order of [frames, [...frames].reverse()]) {
      const c = checkConsistency(order, DEFAULT_AUDIT_LIMITS);
      expect(c.filters[0]?.checks.find((k) => k.attribute === 'gainSetting')?.reference).toBe(100);
    }
  });
});
