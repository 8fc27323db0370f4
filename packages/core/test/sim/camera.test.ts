import { describe, expect, it } from 'vitest';
import {
  adcMaxAdu,
  buildFixedPattern,
  bayerChannelAt,
  collectedElectrons,
  darkCurrentAt,
  expectedFlatStats,
  exposeSensor,
  quantizationStepAdu,
  sensorSaturation,
  type CameraModel,
  type FixedPattern,
} from '../../src/sim/camera.js';
import { KESTREL_M14, WREN_C12 } from '../../src/sim/presets.js';
import { Rng, mixSeed } from '../../src/sim/rng.js';

// Tolerances: simulated statistics are compared with their expectation within Z empirical standard
// errors (SE = sample std of the per-pixel quantity / √n), two-sided p ≈ 6e-7 for a correct model.
const Z = 5;

interface PairStats {
  mean: number;
  meanSe: number;
  halfDiffVariance: number;
  halfDiffVarianceSe: number;
  n: number;
}

/** Pair statistics over pixels selected by `keep` (default all): mean of (A+B)/2 and Var(A-B)/2 (ddof 0). */
function pairStats(a: Uint16Array, b: Uint16Array, keep?: (i: number) => boolean): PairStats {
  let n = 0;
  let sm = 0;
  let sd = 0;
  for (let i = 0; i < a.length; i++) {
    if (keep && !keep(i)) continue;
    n++;
    sm += ((a[i] ?? 0) + (b[i] ?? 0)) / 2;
    sd += (a[i] ?? 0) - (b[i] ?? 0);
  }
  const mean = sm / n;
  const md = sd / n;
  let vm = 0;
  let v = 0;
  let vv = 0;
  for (let i = 0; i < a.length; i++) {
    if (keep && !keep(i)) continue;
    const m = ((a[i] ?? 0) + (b[i] ?? 0)) / 2 - mean;
    vm += m * m;
    const d = ((a[i] ?? 0) - (b[i] ?? 0) - md) ** 2 / 2;
    v += d;
    vv += d * d;
  }
  const halfDiffVariance = v / n;
  return {
    mean,
    meanSe: Math.sqrt(vm / n / n),
    halfDiffVariance,
    halfDiffVarianceSe: Math.sqrt(Math.max(vv / n - halfDiffVariance ** 2, 0) / n),
    n,
  };
}

function flatPair(camera: CameraModel, pattern: FixedPattern, electrons: number, seed: number, binning = 1) {
  const t = 10;
  const rate = () => new Float64Array(pattern.width * pattern.height).fill(electrons / t / (binning * binning));
  const exposure = { exposureSeconds: t, temperatureC: -200 }; // no dark current at -200 °C
  const a = exposeSensor(camera, pattern, exposure, rate(), new Rng(mixSeed(seed, 1)));
  const b = exposeSensor(camera, pattern, exposure, rate(), new Rng(mixSeed(seed, 2)));
  return { a, b };
}

describe('camera model', () => {
  it('quantizationStepAdu(camera) and adcMaxAdu(camera) follow the left shift to 16 bits', () => {
    expect(quantizationStepAdu(WREN_C12)).toBe(16);
    expect(adcMaxAdu(WREN_C12)).toBe(4095 * 16);
    expect(quantizationStepAdu(KESTREL_M14)).toBe(4);
    expect(adcMaxAdu(KESTREL_M14)).toBe(16383 * 4);
  });

  it('sensorSaturation(camera) names the full well for the Kestrel M14 and the ADC for the Wren C12', () => {
    expect(sensorSaturation(KESTREL_M14).limit).toBe('full-well');
    expect(sensorSaturation(WREN_C12).limit).toBe('adc');
    expect(sensorSaturation(WREN_C12).electrons).toBeCloseTo((65520 - 1600) * 0.15, 9);
  });

  it('collectedElectrons(camera, n) is the identity below the knee and tends to the full well', () => {
    const k = KESTREL_M14.fullWellKneeFraction * KESTREL_M14.fullWellElectrons;
    expect(collectedElectrons(KESTREL_M14, k)).toBe(k);
    expect(collectedElectrons(KESTREL_M14, 1000)).toBe(1000);
    const above = collectedElectrons(KESTREL_M14, 1e6);
    expect(above).toBeLessThanOrEqual(KESTREL_M14.fullWellElectrons);
    expect(above).toBeGreaterThan(KESTREL_M14.fullWellElectrons - 1e-6);
    // Continuous slope 1 at the knee (tanh'(0) = 1).
    const h = 1e-3;
    expect((collectedElectrons(KESTREL_M14, k + h) - k) / h).toBeCloseTo(1, 6);
  });

  it('darkCurrentAt(camera, T) doubles every darkDoublingTemperatureC', () => {
    const c = KESTREL_M14;
    expect(darkCurrentAt(c, c.darkReferenceTemperatureC)).toBe(c.darkCurrentElectronsPerSecond);
    expect(darkCurrentAt(c, c.darkReferenceTemperatureC + c.darkDoublingTemperatureC)).toBeCloseTo(2 * c.darkCurrentElectronsPerSecond, 15);
    // REFERENCE.md B.9 check value: factor for +10 °C with Td = 6 is 3.1748.
    expect(darkCurrentAt(c, 10) / darkCurrentAt(c, 0)).toBeCloseTo(3.1748, 4);
  });

  it('expectedFlatStats(camera, S, { forceSummation: true }) equals the linear model of REFERENCE.md B.1 well below full well', () => {
    for (const camera of [KESTREL_M14, WREN_C12]) {
      for (const S of [0, 50, 1000, 5000]) {
        const e = expectedFlatStats(camera, S, { forceSummation: true });
        expect(Math.abs(e.meanAdu - e.linearMeanAdu)).toBeLessThan(1e-6 * e.linearMeanAdu);
        expect(Math.abs(e.temporalVarianceAdu2 / e.linearVarianceAdu2 - 1)).toBeLessThan(1e-6);
        expect(e.saturatedFraction).toBe(0);
      }
    }
  });

  it('exposeSensor(...) writes only multiples of the quantization step', () => {
    for (const camera of [KESTREL_M14, WREN_C12]) {
      const pattern = buildFixedPattern(camera);
      const { a } = flatPair(camera, pattern, 3000, 11);
      const step = quantizationStepAdu(camera);
      let bad = 0;
      for (const v of a) if (v % step !== 0) bad++;
      expect(bad).toBe(0);
    }
  });

  it.each([
    ['Kestrel M14', KESTREL_M14],
    ['Wren C12', WREN_C12],
  ] as const)('a %s bias pair has Var(A - B) = 2(σ_R²/g² + Δ²/12) and mean = offset', (_name, camera) => {
    const pattern = buildFixedPattern(camera);
    const exposure = { exposureSeconds: 0, temperatureC: camera.darkReferenceTemperatureC };
    const a = exposeSensor(camera, pattern, exposure, null, new Rng(101));
    const b = exposeSensor(camera, pattern, exposure, null, new Rng(102));
    const s = pairStats(a, b);
    const step = quantizationStepAdu(camera);
    const g = camera.gainElectronsPerAdu;
    const expected = (camera.readNoiseElectrons / g) ** 2 + (step * step) / 12;
    // Var(A-B) = 2 x halfDiffVariance; compare the half-difference variance with σ_R²/g² + Δ²/12.
    expect(Math.abs(s.halfDiffVariance - expected)).toBeLessThan(Z * s.halfDiffVarianceSe);
    expect(Math.abs(s.mean - camera.offsetAdu)).toBeLessThan(Z * s.meanSe);
  });

  it.each([
    ['Kestrel M14', KESTREL_M14, [0.05, 0.3, 0.7, 0.9, 1.0, 1.2]],
    ['Wren C12', WREN_C12, [0.05, 0.3, 0.7, 0.97, 1.0, 1.05]],
  ] as const)('%s flat pairs match expectedFlatStats(camera, S) in mean and temporal variance', (_name, camera, fractions) => {
    const pattern = buildFixedPattern(camera);
    const sat = sensorSaturation(camera).electrons;
    const green = (i: number) => !camera.bayer || bayerChannelAt(camera.bayer.pattern, i % pattern.width, Math.floor(i / pattern.width)) === 'G';
    fractions.forEach((f, j) => {
      const S = f * sat;
      const { a, b } = flatPair(camera, pattern, S, 200 + j);
      const s = pairStats(a, b, camera.bayer ? green : undefined);
      const e = expectedFlatStats(camera, S);
      expect(Math.abs(s.mean - e.meanAdu), `mean at ${f}`).toBeLessThan(Z * s.meanSe + 1e-9);
      expect(Math.abs(s.halfDiffVariance - e.temporalVarianceAdu2), `variance at ${f}`).toBeLessThan(Z * s.halfDiffVarianceSe + 1e-9);
    });
  });

  it('the Kestrel M14 photon transfer curve peaks before full well and never reaches the ADC maximum', () => {
    const camera = KESTREL_M14;
    const levels = [0.5, 0.8, 0.9, 1.0, 1.2, 1.5].map((f) => expectedFlatStats(camera, f * camera.fullWellElectrons));
    const variances = levels.map((l) => l.temporalVarianceAdu2);
    const peak = variances.indexOf(Math.max(...variances));
    expect(peak).toBeGreaterThan(0);
    expect(peak).toBeLessThan(variances.length - 1);
    expect(variances[variances.length - 1]).toBeLessThan(0.25 * (variances[peak] ?? 0));
    for (const l of levels) expect(l.saturatedFraction).toBe(0);
  });

  it('a Wren C12 flat past the ADC limit sits at 65520 in nearly every pixel', () => {
    const camera = WREN_C12;
    const pattern = buildFixedPattern(camera);
    const S = 1.3 * sensorSaturation(camera).electrons;
    const { a } = flatPair(camera, pattern, S, 300);
    let atMax = 0;
    const blueFree = (i: number) => bayerChannelAt('RGGB', i % pattern.width, Math.floor(i / pattern.width)) !== 'B';
    let counted = 0;
    for (let i = 0; i < a.length; i++) {
      if (!blueFree(i)) continue;
      counted++;
      if (a[i] === 65520) atMax++;
    }
    const e = expectedFlatStats(camera, S);
    expect(e.saturatedFraction).toBeGreaterThan(0.999);
    // Green pixels saturate; red (0.78 x 1.3 = 1.01 of the limit) mostly do.
    expect(atMax / counted).toBeGreaterThan(0.75);
  });

  it('Bayer channel means scale with the channel responses (Wren C12, RGGB)', () => {
    const camera = WREN_C12;
    const pattern = buildFixedPattern(camera);
    const S = 4000;
    const { a, b } = flatPair(camera, pattern, S, 400);
    const bayer = camera.bayer;
    if (!bayer) throw new Error('preset must be colour');
    const w = pattern.width;
    for (const [ch, resp] of [
      ['R', bayer.redResponse],
      ['G', bayer.greenResponse],
      ['B', bayer.blueResponse],
    ] as const) {
      const s = pairStats(a, b, (i) => bayerChannelAt(bayer.pattern, i % w, Math.floor(i / w)) === ch);
      const e = expectedFlatStats(camera, S * resp);
      expect(Math.abs(s.mean - e.meanAdu), ch).toBeLessThan(Z * s.meanSe);
      expect(Math.abs(s.halfDiffVariance - e.temporalVarianceAdu2), ch).toBeLessThan(Z * s.halfDiffVarianceSe);
    }
  });

  it('dark level grows with exposure at the true dark current (Kestrel M14, hot pixels excluded)', () => {
    const camera = KESTREL_M14;
    const pattern = buildFixedPattern(camera);
    const hot = new Set(pattern.hotPixels.map((h) => h.y * pattern.width + h.x));
    const T = -10;
    const D = darkCurrentAt(camera, T);
    const bias = exposeSensor(camera, pattern, { exposureSeconds: 0, temperatureC: T }, null, new Rng(500));
    for (const [k, t] of [60, 300, 900].entries()) {
      const dark = exposeSensor(camera, pattern, { exposureSeconds: t, temperatureC: T }, null, new Rng(501 + k));
      const s = pairStats(dark, bias, (i) => !hot.has(i));
      // mean of (dark + bias)/2 = offset + D t/(2g); expectation from the model:
      const e = expectedFlatStats(camera, 0, { darkElectrons: D * t });
      const e0 = expectedFlatStats(camera, 0);
      expect(Math.abs(s.mean - (e.meanAdu + e0.meanAdu) / 2)).toBeLessThan(Z * s.meanSe);
      // The dark signal itself: (mean(dark) - mean(bias)) g / t estimates D.
      const signalAdu = 2 * (s.mean - camera.offsetAdu);
      expect(Math.abs((signalAdu * camera.gainElectronsPerAdu) / t - D)).toBeLessThan((Z * 2 * s.meanSe * camera.gainElectronsPerAdu) / t + 0.02 * D);
    }
  });

  it('buildFixedPattern(camera) places hotPixels.count hot pixels that stand out in a long dark', () => {
    const camera = KESTREL_M14;
    const pattern = buildFixedPattern(camera);
    expect(pattern.hotPixels.length).toBe(camera.hotPixels.count);
    expect(new Set(pattern.hotPixels.map((h) => `${h.x},${h.y}`)).size).toBe(camera.hotPixels.count);
    const T = 0;
    const t = 600;
    const dark = exposeSensor(camera, pattern, { exposureSeconds: t, temperatureC: T }, null, new Rng(600));
    const g = camera.gainElectronsPerAdu;
    const D = darkCurrentAt(camera, T);
    const sigmaAdu = Math.sqrt(camera.readNoiseElectrons ** 2 + camera.dsnuElectrons ** 2 + D * t) / g;
    const level = camera.offsetAdu + (D * t) / g;
    const detected = new Set<number>();
    for (let i = 0; i < dark.length; i++) if ((dark[i] ?? 0) > level + 6 * sigmaAdu) detected.add(i);
    const hotIndex = new Set(pattern.hotPixels.map((h) => h.y * pattern.width + h.x));
    // Every detection is a hot pixel (Gaussian false-alarm rate at 6σ ≈ 1e-9 per pixel).
    for (const i of detected) expect(hotIndex.has(i)).toBe(true);
    // Every hot pixel whose mean excess exceeds 10σ is detected.
    for (const h of pattern.hotPixels) {
      if ((h.rateElectronsPerSecond * t) / g > 10 * sigmaAdu) expect(detected.has(h.y * pattern.width + h.x)).toBe(true);
    }
  });

  it('buildFixedPattern(camera, 2) sums charge: 4x signal, read noise once', () => {
    const camera = KESTREL_M14;
    const pattern = buildFixedPattern(camera, 2);
    expect(pattern.width).toBe(256);
    expect(pattern.height).toBe(192);
    const exposure = { exposureSeconds: 0, temperatureC: 0 };
    const a = exposeSensor(camera, pattern, exposure, null, new Rng(700));
    const b = exposeSensor(camera, pattern, exposure, null, new Rng(701));
    const bias = pairStats(a, b);
    const g = camera.gainElectronsPerAdu;
    const expected = (camera.readNoiseElectrons / g) ** 2 + 16 / 12;
    expect(Math.abs(bias.halfDiffVariance - expected)).toBeLessThan(Z * bias.halfDiffVarianceSe);
    // Flat with 2000 e- per unbinned pixel → about 8000 e- per binned pixel.
    const S = 2000;
    const f = flatPair(camera, pattern, 4 * S, 702, 2);
    const s = pairStats(f.a, f.b);
    const e = expectedFlatStats(camera, 4 * S, { binning: 2 });
    expect(Math.abs(s.mean - e.meanAdu)).toBeLessThan(Z * s.meanSe);
    expect(Math.abs(s.halfDiffVariance - e.temporalVarianceAdu2)).toBeLessThan(Z * s.halfDiffVarianceSe);
  });

  it('buildFixedPattern(camera) adds amp glow that falls away from the right edge (Wren C12)', () => {
    const pattern = buildFixedPattern(WREN_C12);
    const glow = pattern.glowRate;
    expect(glow).not.toBeNull();
    if (!glow) return;
    const w = pattern.width;
    expect(glow[w - 1]).toBeCloseTo(0.4, 6);
    expect(glow[w - 26]).toBeCloseTo(0.4 * Math.exp(-1), 6);
    expect(glow[0]).toBeLessThan(1e-8);
  });

  it('exposeSensor(...) is deterministic for a seed and differs across seeds', () => {
    const camera = WREN_C12;
    const pattern = buildFixedPattern(camera);
    const f = (seed: number) => exposeSensor(camera, pattern, { exposureSeconds: 1, temperatureC: 0 }, new Float64Array(pattern.width * pattern.height).fill(500), new Rng(seed));
    expect(f(1)).toEqual(f(1));
    expect(f(1)).not.toEqual(f(2));
  });

  it('buildFixedPattern(camera) rejects a bad binning with INPUT_BAD_PARAMETER', () => {
    expect(() => buildFixedPattern(KESTREL_M14, 0)).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
    expect(() => buildFixedPattern({ ...KESTREL_M14, adcBits: 18 })).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
  });
});
