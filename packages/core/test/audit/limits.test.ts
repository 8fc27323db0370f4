import { describe, expect, test } from 'vitest';
import { DEFAULT_AUDIT_LIMITS, InvalidInputError, parseAuditLimits } from '@subgauge/core';

function errorOf(json: unknown): InvalidInputError {
  try {
    parseAuditLimits(json);
  } catch (e) {
    if (e instanceof InvalidInputError) return e;
    throw e;
  }
  throw new Error('parseAuditLimits did not throw');
}

describe('parseAuditLimits', () => {
  test('parseAuditLimits(undefined) and parseAuditLimits({}) give the defaults', () => {
    expect(parseAuditLimits(undefined)).toEqual(DEFAULT_AUDIT_LIMITS);
    expect(parseAuditLimits({})).toEqual(DEFAULT_AUDIT_LIMITS);
  });

  test('parseAuditLimits(partial) changes only the given fields', () => {
    const l = parseAuditLimits({ softFocus: { fwhmRatioAbove: 1.3 }, binning: { severity: 'review' } });
    expect(l.softFocus.fwhmRatioAbove).toBe(1.3);
    expect(l.softFocus.zLimit).toBe(DEFAULT_AUDIT_LIMITS.softFocus.zLimit);
    expect(l.binning.severity).toBe('review');
    expect(l.cloud).toEqual(DEFAULT_AUDIT_LIMITS.cloud);
    expect(Object.isFrozen(l.softFocus)).toBe(true);
  });

  test.each([
    [[1, 2], '(root)'],
    [{ softFocos: {} }, 'softFocos'],
    [{ softFocus: 3 }, 'softFocus'],
    [{ softFocus: { fwhmRatio: 1.2 } }, 'softFocus.fwhmRatio'],
    [{ softFocus: { zLimit: '3' } }, 'softFocus.zLimit'],
    [{ softFocus: { fwhmRatioAbove: 0.9 } }, 'softFocus.fwhmRatioAbove'],
    [{ cloud: { starCountRatioBelow: 0 } }, 'cloud.starCountRatioBelow'],
    [{ cloud: { severity: 'drop' } }, 'cloud.severity'],
    [{ statistics: { minFramesForStatistics: 4.5 } }, 'statistics.minFramesForStatistics'],
    [{ temperature: { setpointToleranceCelsius: Number.NaN } }, 'temperature.setpointToleranceCelsius'],
    [{ calibration: { allowScaledDarks: 'yes' } }, 'calibration.allowScaledDarks'],
    [{ gaps: { cadenceFactor: 1 } }, 'gaps.cadenceFactor'],
  ])('parseAuditLimits(%j) throws INPUT_BAD_PARAMETER naming %s', (json, field) => {
    const e = errorOf(json);
    expect(e.code).toBe('INPUT_BAD_PARAMETER');
    expect(e.where.keyword).toBe(field);
    expect(e.message).toContain(field);
  });
});
