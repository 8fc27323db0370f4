import { describe, expect, test } from 'vitest';
import { DEFAULT_AUDIT_LIMITS, auditSession, matchCalibration } from '@subgauge/core';
import type { CalibrationFrameInfo, FrameMetrics } from '@subgauge/core';
import { cleanNight, matchingCalibration } from './night.js';

const lightsL = () => cleanNight(7, { frames: 12 });

describe('matchCalibration', () => {
  test('matchCalibration(lights, matching set) matches bias, dark, flat and flat-dark and says by which rule', () => {
    const { groups, groupOfLight } = matchCalibration(lightsL(), matchingCalibration(), DEFAULT_AUDIT_LIMITS);
    expect(groups).toHaveLength(1);
    const g = groups[0];
    expect(groupOfLight.every((i) => i === 1)).toBe(true);
    expect(g?.bias.rule).toBe('bias-same-settings');
    expect(g?.dark.rule).toBe('dark-equal-exposure');
    expect(g?.dark.files).toHaveLength(5);
    expect(g?.flat.rule).toBe('flat-same-filter');
    expect(g?.flatDark.rule).toBe('flat-dark-flat-exposure');
    expect(g?.missing).toEqual([]);
    expect(g?.flagged).toBe(false);
    expect(g?.biasLevelAdu).toBe(500);
  });

  test('matchCalibration(lights at -10 C, darks only at -20 C) reports missing darks and that temperature failed', () => {
    const cal = matchingCalibration().map((c) => (c.kind === 'dark' ? { ...c, sensorTemperatureCelsius: -20 } : c));
    const { groups } = matchCalibration(lightsL(), cal, DEFAULT_AUDIT_LIMITS);
    const g = groups[0];
    expect(g?.dark.status).toBe('missing');
    expect(g?.dark.failedCounts).toEqual({ temperature: 5 });
    expect(g?.missing).toEqual(['dark']);
    expect(g?.flagged).toBe(true);
  });

  test('auditSession(lights, darks at another temperature) gives every light no-calibration (review)', () => {
    const cal = matchingCalibration().map((c) => (c.kind === 'dark' ? { ...c, sensorTemperatureCelsius: -20 } : c));
    const r = auditSession({ lights: lightsL(), calibration: cal });
    for (const f of r.frames) {
      expect(f.reasons).toEqual(['no-calibration']);
      expect(f.verdict).toBe('review');
      expect(f.details[0]).toMatchObject({ reason: 'no-calibration', metric: 'dark', test: 'missing-match', value: 5 });
    }
  });

  test('matchCalibration(lights in L, flats only in Ha) reports missing flats (filter failed) and no flat-darks needed', () => {
    const cal = matchingCalibration(['Ha']);
    const { groups } = matchCalibration(lightsL(), cal, DEFAULT_AUDIT_LIMITS);
    const g = groups[0];
    expect(g?.flat.status).toBe('missing');
    expect(g?.flat.failedCounts).toEqual({ filter: 3 });
    expect(g?.flatDark.status).toBe('not-applicable');
    expect(g?.flagged).toBe(true);
  });

  test('matchCalibration(lights at gain 100, biases at gain 0) misses the bias but keeps equal-exposure darks', () => {
    const cal = matchingCalibration().map((c) => (c.kind === 'bias' ? { ...c, gainSetting: 0 } : c));
    const { groups, summary } = matchCalibration(lightsL(), cal, DEFAULT_AUDIT_LIMITS);
    const g = groups[0];
    expect(g?.bias.status).toBe('missing');
    expect(g?.bias.failedCounts).toEqual({ gain: 5 });
    expect(g?.dark.status).toBe('matched');
    expect(g?.missing).toEqual(['bias']);
    expect(g?.flagged).toBe(false);
    expect(summary.unusedFiles).toEqual(['bias_0.fits', 'bias_1.fits', 'bias_2.fits', 'bias_3.fits', 'bias_4.fits']);
  });

  test('matchCalibration(lights of 300 s, darks of 600 s) scales darks only when a matching bias exists', () => {
    const cal = matchingCalibration(['L'], 600);
    const scaled = matchCalibration(lightsL(), cal, DEFAULT_AUDIT_LIMITS).groups[0];
    expect(scaled?.dark.status).toBe('scaled');
    expect(scaled?.dark.rule).toBe('dark-scaled');
    expect(scaled?.dark.exposureSeconds).toBe(600);
    const noBias = cal.map((c) => (c.kind === 'bias' ? { ...c, gainSetting: 0 } : c));
    const g = matchCalibration(lightsL(), noBias, DEFAULT_AUDIT_LIMITS).groups[0];
    expect(g?.dark.status).toBe('missing');
    expect(g?.dark.failedCounts).toEqual({ exposure: 5 });
    const off = matchCalibration(lightsL(), cal, { ...DEFAULT_AUDIT_LIMITS, calibration: { ...DEFAULT_AUDIT_LIMITS.calibration, allowScaledDarks: false } });
    expect(off.groups[0]?.dark.status).toBe('missing');
  });

  test('matchCalibration(lights at -10 C and -14 C) splits them into two groups by temperature', () => {
    const lights = lightsL().map((f, i) => (i < 4 ? { ...f, sensorTemperatureCelsius: -14, setTemperatureCelsius: -14 } : f));
    const { groups, groupOfLight } = matchCalibration(lights, matchingCalibration(), DEFAULT_AUDIT_LIMITS);
    expect(groups.map((g) => g.lightCount)).toEqual([4, 8]);
    expect(groups[0]?.temperatureCelsius).toBe(-14);
    expect(groups[0]?.dark.status).toBe('missing');
    expect(groups[1]?.dark.status).toBe('matched');
    expect(groupOfLight.slice(0, 5)).toEqual([1, 1, 1, 1, 2]);
  });

  test('matchCalibration(dark without GAIN) matches and lists gain as unchecked', () => {
    const cal: CalibrationFrameInfo[] = matchingCalibration().map((c) => (c.kind === 'dark' ? { ...c, gainSetting: undefined } : c));
    const g = matchCalibration(lightsL(), cal, DEFAULT_AUDIT_LIMITS).groups[0];
    expect(g?.dark.status).toBe('matched');
    expect(g?.dark.uncheckedCriteria).toEqual(['gain']);
  });

  test('auditSession(lights, no calibration at all) reports the matching but flags nothing by default', () => {
    const r = auditSession({ lights: lightsL(), calibration: [] });
    expect(r.groups[0]?.missing).toEqual(['bias', 'dark', 'flat']);
    expect(r.counts.byReason['no-calibration']).toBe(0);
    expect(r.notes).toContain('no-calibration-frames-given');
    const strict = auditSession({ lights: lightsL(), calibration: [], limits: { calibration: { flagWithoutCalibrationFrames: true } } });
    expect(strict.counts.byReason['no-calibration']).toBe(12);
  });

  test('auditSession(lights) takes the pedestal from the matched biases when the frames give none', () => {
    const lights = lightsL().map((f): FrameMetrics => ({ ...f, pedestalAdu: undefined }));
    const r = auditSession({ lights, calibration: matchingCalibration() });
    expect(r.frames[0]?.pedestalSource).toBe('bias');
    expect(r.frames[0]?.skyAdu).toBeCloseTo((lights[0]?.backgroundAdu as number) - 500, 9);
  });
});
