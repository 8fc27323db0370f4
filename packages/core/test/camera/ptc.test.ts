import { describe, expect, it } from 'vitest';
import { findVariancePeak, fitPhotonTransfer } from '../../src/camera/ptc.js';
import type { PtcInputPoint } from '../../src/camera/ptc.js';
import { fitLine } from '../../src/camera/lineFit.js';

describe('fitPhotonTransfer', () => {
  it('fitPhotonTransfer(EMVA-model points) gives slope 0.5, g = 2.0 and σ_d = 10.0 e- (REFERENCE G row 24, B.5)', () => {
    const points: PtcInputPoint[] = [1000, 5000, 10000].map((s) => ({ signalAdu: s, varianceAdu2: 25 + 1 / 12 + 0.5 * s, pixelCount: 1e6 }));
    const fit = fitPhotonTransfer(points);
    expect(Math.abs(fit.slopeAduPerElectron - 0.5)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(fit.gainElectronsPerAdu - 2.0)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(fit.interceptAdu2 - 25.0833333333)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(fit.readNoiseFromInterceptElectrons! - 10.0)).toBeLessThanOrEqual(1e-9);
    expect(fit.pointsUsed).toBe(3);
    expect(fit.window.basis).toBe('no-saturation');
  });
  it('fitPhotonTransfer(curve with roll-off) fits only the window below 70 % of the variance peak', () => {
    // g = 2 e-/ADU, σ_R = 10 e-, saturation near 30 000 ADU; above it the variance collapses (ADC clipping).
    const signals = [100, 1000, 3000, 6000, 9000, 12000, 15000, 18000, 21000, 24000, 27000, 29500, 31000, 32000];
    const points: PtcInputPoint[] = signals.map((s) => ({
      signalAdu: s,
      varianceAdu2: s <= 29500 ? 25 + 1 / 12 + 0.5 * s * (s > 24000 ? 0.97 : 1) : s === 31000 ? 4000 : 50,
      pixelCount: 65536,
      saturated: s >= 32000,
    }));
    const fit = fitPhotonTransfer(points);
    expect(fit.peak.signalAdu).toBe(29500);
    expect(fit.peak.rolledOff).toBe(true);
    expect(fit.window.basis).toBe('fractions');
    expect(fit.window.maximumSignalAdu).toBeCloseTo(0.7 * 29500, 9);
    expect(fit.exclusions[signals.indexOf(29500)]).toBe('at-or-after-variance-peak');
    expect(fit.exclusions[signals.indexOf(32000)]).toBe('saturated');
    expect(fit.exclusions[signals.indexOf(24000)]).toBe('above-window');
    expect(fit.exclusions[signals.indexOf(100)]).toBe('below-window');
    expect(fit.usedIndices.map((i) => signals[i])).toEqual([3000, 6000, 9000, 12000, 15000, 18000]);
    expect(fit.gainElectronsPerAdu).toBeCloseTo(2, 9);
  });
  it('fitPhotonTransfer(points, {excludeReadNoiseDominated}) drops points whose shot variance is below the read variance', () => {
    const signals = [5, 20, 800, 2000, 4000, 8000];
    const points: PtcInputPoint[] = signals.map((s) => ({ signalAdu: s, varianceAdu2: 100 + 0.25 * s, pixelCount: 1e5 }));
    const fit = fitPhotonTransfer(points, { minimumSignalAdu: 0 });
    expect(fit.exclusions[0]).toBe('read-noise-dominated');
    expect(fit.exclusions[1]).toBe('read-noise-dominated');
    expect(fit.exclusions[2]).toBeNull();
    expect(fit.gainElectronsPerAdu).toBeCloseTo(4, 9);
    const kept = fitPhotonTransfer(points, { minimumSignalAdu: 0, excludeReadNoiseDominated: false });
    expect(kept.pointsUsed).toBe(6);
  });
  it('fitPhotonTransfer(one point) throws FIT_TOO_FEW_POINTS', () => {
    expect(() => fitPhotonTransfer([{ signalAdu: 1000, varianceAdu2: 500, pixelCount: 100 }]))
      .toThrowError(expect.objectContaining({ code: 'FIT_TOO_FEW_POINTS' }));
  });
  it('fitPhotonTransfer(noisy points) reports a gain uncertainty consistent with the point scatter', () => {
    // Var(y)/y² = 2/(N−1): with N = 20001 the relative error per point is 1 %; the truth must lie within 3σ.
    let s = 12345;
    const u = () => { s = (s * 16807) % 2147483647; return s / 2147483647; };
    const normal = () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
    let inside = 0;
    for (let trial = 0; trial < 40; trial++) {
      const points: PtcInputPoint[] = [2000, 4000, 6000, 8000, 10000, 12000].map((x) => {
        const y = 10 + x / 1.7;
        return { signalAdu: x, varianceAdu2: y * (1 + Math.sqrt(2 / 20000) * normal()), pixelCount: 20001 };
      });
      const fit = fitPhotonTransfer(points, { minimumSignalAdu: 0 });
      if (Math.abs(fit.gainElectronsPerAdu - 1.7) < 2 * fit.gainUncertaintyElectronsPerAdu) inside++;
    }
    // about 95 % expected inside 2σ; allow sampling spread
    expect(inside).toBeGreaterThanOrEqual(33);
  });
  it('findVariancePeak(points) ignores a last point that is only statistically lower', () => {
    const p = findVariancePeak([
      { signalAdu: 1000, varianceAdu2: 500, pixelCount: 1e4 },
      { signalAdu: 2000, varianceAdu2: 1001, pixelCount: 1e4 },
      { signalAdu: 2100, varianceAdu2: 1000, pixelCount: 1e4 },
    ]);
    expect(p.index).toBe(1);
    expect(p.rolledOff).toBe(false);
  });
});

describe('fitLine', () => {
  it('fitLine(x, y, w) gives the textbook covariance for an exact line', () => {
    const f = fitLine([0, 1, 2, 3], [1, 3, 5, 7]);
    expect(f.slope).toBeCloseTo(2, 12);
    expect(f.intercept).toBeCloseTo(1, 12);
    expect(f.covariance.slopeVariance).toBeCloseTo(1 / 5, 12); // 1/Σ(x − x̄)²
    expect(f.covariance.interceptVariance).toBeCloseTo(1 / 4 + 1.5 ** 2 / 5, 12);
    expect(f.chiSquare).toBeCloseTo(0, 12);
  });
  it('fitLine(equal x) throws FIT_DEGENERATE', () => {
    expect(() => fitLine([1, 1], [2, 3])).toThrowError(expect.objectContaining({ code: 'FIT_DEGENERATE' }));
  });
});
