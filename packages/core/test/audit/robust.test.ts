import { describe, expect, test } from 'vitest';
import { MAD_SIGMA_SCALE, sessionZScores } from '@subgauge/core';
import { medianOf } from '../../src/audit/robust.js';

describe('sessionZScores', () => {
  test('sessionZScores([101, 99, 100, 102, 98, 100, 130], 0.01, 1e-9) gives z(130) = 20.2347 (REFERENCE G row 58, numpy CALC)', () => {
    const r = sessionZScores([101, 99, 100, 102, 98, 100, 130], 0.01, 1e-9);
    expect(r.reference.median).toBe(100);
    expect(r.reference.madSigma).toBeCloseTo(MAD_SIGMA_SCALE, 12);
    expect(r.reference.scaleSource).toBe('mad-sigma');
    expect(r.z[6]).toBeCloseTo(20.2347, 4);
    expect(r.z[0]).toBeCloseTo(1 / MAD_SIGMA_SCALE, 12);
  });

  test('sessionZScores(values with MAD 0, f, a) divides by the floor max(f x |median|, a)', () => {
    // [0,0,0,16,-16]: MAD = 0 (REFERENCE G row 36); floor 0.01 x 0 -> absolute floor 2.
    const r = sessionZScores([0, 0, 0, 16, -16], 0.01, 2);
    expect(r.reference.madSigma).toBe(0);
    expect(r.reference.scaleSource).toBe('floor');
    expect(r.reference.scale).toBe(2);
    expect(r.z).toEqual([0, 0, 0, 8, -8]);
    // Relative floor: median 200, 1 % -> scale 2.
    const s = sessionZScores([200, 200, 200, 210, 200], 0.01, 1e-9);
    expect(s.reference.scale).toBeCloseTo(2, 12);
    expect(s.z[3]).toBeCloseTo(5, 12);
  });

  test('sessionZScores(values with NaN, ...) leaves non-finite values out and gives them NaN', () => {
    const r = sessionZScores([1, Number.NaN, 2, 3, Number.POSITIVE_INFINITY], 0, 1e-9);
    expect(r.reference.count).toBe(3);
    expect(r.reference.median).toBe(2);
    expect(Number.isNaN(r.z[1] as number)).toBe(true);
    expect(Number.isNaN(r.z[4] as number)).toBe(true);
    expect(r.z[3]).toBeCloseTo(1 / MAD_SIGMA_SCALE, 12);
    expect(r.z[2]).toBe(0);
  });

  test('medianOf(even and odd samples) follows the numpy rule (REFERENCE C.1)', () => {
    expect(medianOf([2, 4, 4, 4, 5, 5, 7, 9])).toBe(4.5);
    expect(medianOf([1, 2, 3, 4, 100])).toBe(3);
    expect(Number.isNaN(medianOf([]))).toBe(true);
  });
});
