import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  integrationEfficiency,
  minimumExposureSeconds,
  readNoisePenalty,
  requiredBackgroundElectrons,
  stackSnr,
  subLengthTable,
} from '../../src/sky/penalty.js';
import { evaluateSub, recommendationRate, summarizeSky, darkRateAt, type SkyCamera } from '../../src/sky/subs.js';

// Check values: REFERENCE.md section G rows 46-50 (closed forms derived in REFERENCE D.2-D.4, computed there with
// numpy 1.24 [CALC]).
describe('read-noise penalty closed forms', () => {
  it('readNoisePenalty(10 σ², σ) is +4.8809 % and efficiency 0.909091 (G row 46)', () => {
    expect(100 * readNoisePenalty(10 * 25, 5)).toBeCloseTo(4.8809, 4);
    expect(integrationEfficiency(10 * 25, 5)).toBeCloseTo(0.909091, 6);
  });
  it('requiredBackgroundElectrons(σ, 5 %) is 9.756098 σ² (G row 47)', () => {
    expect(requiredBackgroundElectrons(1, 0.05)).toBeCloseTo(9.756098, 6);
    expect(requiredBackgroundElectrons(3, 0.05) / 9).toBeCloseTo(9.756098, 6);
  });
  it('readNoisePenalty(9 σ², σ) — sky noise 3× read noise — is +5.4093 %, not 5 % (G row 48)', () => {
    expect(100 * readNoisePenalty(9, 1)).toBeCloseTo(5.4093, 4);
  });
  it('minimumExposureSeconds(1.5 e-, 2 e-/px/s, 5 %) is 10.9756 s (G row 49)', () => {
    expect(minimumExposureSeconds(1.5, 2.0, 0.05)).toBeCloseTo(10.9756, 4);
    // REFERENCE D.3 further checks: σ_R = 8, b = 0.5 → 1248.8 s; σ_R = 3, b = 1 → 87.80 s.
    expect(minimumExposureSeconds(8, 0.5, 0.05)).toBeCloseTo(1248.78, 1);
    expect(minimumExposureSeconds(3, 1, 0.05)).toBeCloseTo(87.80, 2);
  });
  it('stackSnr(T 4800 s, F 0.5, b 1.0, σ 5, N 16) is 27.52989 and N 1 is 28.23529 (G row 50)', () => {
    const base = { totalSeconds: 4800, objectRateElectronsPerSecond: 0.5, backgroundRateElectronsPerSecond: 1.0, readNoiseElectrons: 5 };
    expect(stackSnr({ ...base, subs: 16 })).toBeCloseTo(27.52989, 5);
    expect(stackSnr({ ...base, subs: 1 })).toBeCloseTo(28.23529, 5);
    // REFERENCE D.4 ladder: 48 subs 26.1861, 160 subs 22.6779, 480 subs 17.3205
    expect(stackSnr({ ...base, subs: 48 })).toBeCloseTo(26.1861, 4);
    expect(stackSnr({ ...base, subs: 160 })).toBeCloseTo(22.6779, 4);
    expect(stackSnr({ ...base, subs: 480 })).toBeCloseTo(17.3205, 4);
  });
  it('readNoisePenalty at the required background equals the limit (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 0.1, max: 50, noNaN: true }), fc.double({ min: 0.001, max: 0.5, noNaN: true }), (rn, p) => {
        const b = requiredBackgroundElectrons(rn, p);
        expect(readNoisePenalty(b, rn)).toBeCloseTo(p, 10);
      }),
    );
  });
  it('readNoisePenalty(0, σ>0) is Infinity and zero read noise costs nothing', () => {
    expect(readNoisePenalty(0, 3)).toBe(Infinity);
    expect(readNoisePenalty(100, 0)).toBe(0);
    expect(minimumExposureSeconds(3, 0, 0.05)).toBe(Infinity);
  });
  it('readNoisePenalty rejects negative input with INPUT_BAD_PARAMETER', () => {
    expect(() => readNoisePenalty(-1, 3)).toThrowError(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
  });
  it('subLengthTable(total, b, σ, lengths) gives √efficiency and the sub count', () => {
    const rows = subLengthTable(3600, 1.0, 5, [30, 300]);
    expect(rows[0]).toMatchObject({ subSeconds: 30, subs: 120 });
    expect(rows[0]!.relativeSnr).toBeCloseTo(Math.sqrt(30 / 55), 12);
    expect(rows[1]!.relativeSnr).toBeCloseTo(Math.sqrt(300 / 325), 12);
  });
});

describe('evaluateSub and summarizeSky', () => {
  const camera: SkyCamera = { gainElectronsPerAdu: 2.6, readNoiseElectrons: 20, offsetAdu: 100, source: 'options' };
  it('evaluateSub reproduces the worked 5 % target of REFERENCE D.2 (sky 1600.9 ADU with pedestal 100)', () => {
    // exact target: 9.756 σ_R² / g + offset = 9.756098·400/2.6 + 100 = 1600.9 ADU → penalty exactly 5 %
    const target = (requiredBackgroundElectrons(20, 0.05) / 2.6) + 100;
    expect(target).toBeCloseTo(1600.9, 1);
    const r = evaluateSub({ file: 'a.fits', exposureSeconds: 300, backgroundAdu: target }, camera, 5);
    expect(r.readNoisePenaltyPercent).toBeCloseTo(5, 9);
    expect(r.minimumExposureSeconds).toBeCloseTo(300, 6);
    // the 1000 ADU example: +8.2 % (REFERENCE D.2)
    const r2 = evaluateSub({ file: 'b.fits', exposureSeconds: 300, backgroundAdu: 1000 }, camera, 5);
    expect(r2.readNoisePenaltyPercent).toBeCloseTo(8.2, 1);
    expect(r2.status).toBe('read-noise-limited');
  });
  it('darkRateAt doubles per doubling temperature (REFERENCE B.9, G row 32 form)', () => {
    const cam: SkyCamera = { ...camera, darkCurrentElectronsPerSecond: 0.1, referenceTemperatureCelsius: -10, darkDoublingCelsius: 6 };
    expect(darkRateAt(cam, 2)).toBeCloseTo(0.4, 12);
    expect(darkRateAt(cam, undefined)).toBe(0.1);
  });
  it('evaluateSub counts dark electrons in the background and not in the sky', () => {
    const cam: SkyCamera = { ...camera, darkCurrentElectronsPerSecond: 0.5 };
    const r = evaluateSub({ file: 'c.fits', exposureSeconds: 100, backgroundAdu: 100 + 1000 / 2.6 }, cam, 5);
    expect(r.darkElectrons).toBeCloseTo(50, 9);
    expect(r.skyElectrons).toBeCloseTo(950, 9);
    expect(r.skyRateElectronsPerSecond).toBeCloseTo(9.5, 9);
  });
  it('recommendationRate(rates, rule) uses the darker half by default', () => {
    expect(recommendationRate([1, 2, 3, 4, 10, 20], 'darker-half')).toBe(2);
    expect(recommendationRate([1, 2, 3, 4, 10, 20], 'median')).toBe(3.5);
    expect(recommendationRate([5, 1, 3], 'darkest')).toBe(1);
  });
  it('summarizeSky picks the darkest CFA channel and builds the sub-length table', () => {
    const subs = ['R', 'G', 'B'].flatMap((ch, i) =>
      [0, 1, 2].map((k) => evaluateSub({ file: `f${k}.fits`, channel: ch, filter: 'L', exposureSeconds: 60, backgroundAdu: 100 + (i + 1) * 100 + k }, camera, 5)),
    );
    const [s] = summarizeSky(subs, camera, { maxPenaltyPercent: 5, totalSeconds: 3600 });
    expect(s!.limitingChannel).toBe('R');
    expect(s!.subs).toBe(3);
    expect(s!.subLengthTable!.length).toBeGreaterThan(3);
    const rate = s!.recommendationRateElectronsPerSecond;
    expect(s!.recommendedMinimumExposureSeconds).toBeCloseTo(minimumExposureSeconds(20, rate, 0.05), 9);
  });
});
