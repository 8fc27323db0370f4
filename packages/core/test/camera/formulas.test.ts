import { describe, expect, it } from 'vitest';
import {
  correctedSpatialVariance, darkCurrentFromLevel, doublingTemperature, dsnuEmva, dynamicRange, fitDoublingTemperature,
  gainRelativeUncertainty, howellGain, howellReadNoise, linearityError, prnuEmva, quantizationSigma,
  readNoiseFromIntercept, sigmaRelativeUncertainty, systemGainFromGain, varianceRelativeUncertainty,
} from '../../src/camera/formulas.js';

// Check values: REFERENCE.md section G (rows named in each test), computed there from the formulas of
// Howell 2006 §4.3 (B.3) and the EMVA 1288 model as recalled from memory (B.5-B.9).
describe('photon-transfer formulas', () => {
  it('howellGain(worked numbers) gives 2.0 e-/ADU (REFERENCE G row 21, Howell 2006 §4.3)', () => {
    const g = howellGain({ flatMeanA: 10100, flatMeanB: 10100, biasMeanA: 100, biasMeanB: 100, flatDifferenceVariance: 10050, biasDifferenceVariance: 50 });
    expect(Math.abs(g - 2.0)).toBeLessThanOrEqual(1e-12);
  });
  it('howellGain(…) returns NaN when the flat variance does not exceed the bias variance', () => {
    expect(howellGain({ flatMeanA: 200, flatMeanB: 200, biasMeanA: 100, biasMeanB: 100, flatDifferenceVariance: 50, biasDifferenceVariance: 50 })).toBeNaN();
  });
  it('howellReadNoise(2.0, 7.0710678) gives 10.0 e- (REFERENCE G row 22)', () => {
    expect(Math.abs(howellReadNoise(2.0, 7.0710678) - 10.0)).toBeLessThanOrEqual(1e-6);
  });
  it('systemGainFromGain(2) gives K = 0.5 DN/e- (REFERENCE G row 23)', () => {
    expect(systemGainFromGain(2)).toBe(0.5);
  });
  it('gainRelativeUncertainty(10050, 50, 10000, 10000) gives 1.4214 % (REFERENCE G row 25, B.11)', () => {
    expect(Math.abs(gainRelativeUncertainty(10050, 50, 10000, 10000) * 100 - 1.4214)).toBeLessThanOrEqual(1e-4);
  });
  it('varianceRelativeUncertainty(10000) and sigmaRelativeUncertainty(10000) give 1.41428 % and 0.70714 % (REFERENCE G row 26)', () => {
    expect(Math.abs(varianceRelativeUncertainty(10000) * 100 - 1.41428)).toBeLessThanOrEqual(1e-5);
    expect(Math.abs(sigmaRelativeUncertainty(10000) * 100 - 0.70714)).toBeLessThanOrEqual(1e-5);
  });
  it('quantizationSigma(step) gives 0.288675 / 1.154701 / 4.618802 for steps 1 / 4 / 16 (REFERENCE G row 27)', () => {
    expect(quantizationSigma(1)).toBeCloseTo(0.288675, 6);
    expect(quantizationSigma(4)).toBeCloseTo(1.154701, 6);
    expect(quantizationSigma(16)).toBeCloseTo(4.618802, 6);
  });
  it('dynamicRange(60000, 10) gives 75.563 dB and 12.551 stops; 30000 DN at K = 0.5 is 60000 e- (REFERENCE G row 28)', () => {
    const fullWell = 30000 / 0.5;
    expect(fullWell).toBe(60000);
    const dr = dynamicRange(fullWell, 10);
    expect(Math.abs(dr.decibels - 75.563)).toBeLessThanOrEqual(1e-3);
    expect(Math.abs(dr.stops - 12.551)).toBeLessThanOrEqual(1e-3);
  });
  it('prnuEmva(52, 2, 10000) gives 0.51962 % and dsnuEmva(2, 2) gives 4.0 e- (REFERENCE G row 29, EMVA 1288 from memory)', () => {
    expect(Math.abs(prnuEmva(52, 2, 10000) * 100 - 0.51962)).toBeLessThanOrEqual(1e-5);
    expect(dsnuEmva(2, 1 / 0.5)).toBeCloseTo(4.0, 12);
  });
  it('correctedSpatialVariance(3018.07, 25.08 + 5000, 16) gives 2704 DN² (REFERENCE B.8 check)', () => {
    expect(correctedSpatialVariance(3018.07, 25.08 + 0.5 * 10000, 16)).toBeCloseTo(2704, 1);
  });
  it('linearityError(t = 1…10, y = 1000t(1 − 0.002t)) gives LE 1.33631 % with relative deviations (REFERENCE G row 30, B.7)', () => {
    const t = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
    const y = t.map((v) => 1000 * v * (1 - 0.002 * v));
    const le = linearityError(t, y);
    expect(le.intercept).toBeCloseTo(44.0, 9);
    expect(le.slope).toBeCloseTo(978.0, 9);
    expect(Math.abs(le.linearityErrorPercent - 1.33631)).toBeLessThanOrEqual(1e-4);
    expect(le.definition).toBe('relative');
  });
  it("linearityError(…, 'range', y10 − y1) gives the range-normalised LE 0.2525 % (REFERENCE B.7 check)", () => {
    const t = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
    const y = t.map((v) => 1000 * v * (1 - 0.002 * v));
    expect(Math.abs(linearityError(t, y, 'range', y[9]! - y[0]!).linearityErrorPercent - 0.2525)).toBeLessThanOrEqual(1e-4);
  });
  it('darkCurrentFromLevel(10, 300, 0.8) gives 0.026667 e-/px/s (REFERENCE G row 31)', () => {
    expect(Math.abs(darkCurrentFromLevel(10, 300, 0.8) - 0.026667)).toBeLessThanOrEqual(1e-6);
  });
  it('doublingTemperature(-10, 0.1, 2, 0.4) gives 6.0 °C (REFERENCE G row 32)', () => {
    expect(Math.abs(doublingTemperature(-10, 0.1, 2, 0.4) - 6.0)).toBeLessThanOrEqual(1e-9);
  });
  it('fitDoublingTemperature(three temperatures on one doubling law) recovers T_d', () => {
    const t = [-20, -10, 0];
    const d = t.map((v) => 0.05 * 2 ** ((v + 20) / 7));
    expect(fitDoublingTemperature(t, d)).toBeCloseTo(7, 9);
    expect(() => fitDoublingTemperature([0], [1])).toThrowError(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
  });
  it('readNoiseFromIntercept(25.0833…, 2) subtracts Δ²/12 and gives 10 e- (REFERENCE G row 24 intercept)', () => {
    expect(readNoiseFromIntercept(25 + 1 / 12, 2, 1)).toBeCloseTo(10, 12);
    expect(readNoiseFromIntercept(0.05, 2, 1)).toBeNaN();
  });
});
