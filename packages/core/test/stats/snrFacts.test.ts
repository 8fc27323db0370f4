import { describe, expect, it } from 'vitest';
import { viewOf } from '../../src/image/index.js';
import { backgroundMesh, ccdEquationSnr, dataFacts, regionSnr } from '../../src/stats/index.js';
import { XorShift32 } from './prng.js';
import { viewCases } from './testViews.js';

function codeOf(f: () => unknown): string | undefined {
  try {
    f();
  } catch (e) {
    return (e as { code?: string }).code;
  }
  return undefined;
}

describe('ccdEquationSnr: REFERENCE.md G check values (Howell 2006 section 4.4 form)', () => {
  const base = { sourceElectrons: 1e4, pixelCount: 20, skyElectronsPerPixel: 50, darkElectronsPerPixel: 2, readNoiseElectrons: 5 };
  it('ccdEquationSnr({ N*=1e4, npix=20, nB=200, S=50, D=2, R=5, G=1, sigma_f=0.289 }) = 92.4665 (G44)', () => {
    const snr = ccdEquationSnr({ ...base, backgroundPixelCount: 200, gainElectronsPerAdu: 1, quantizationNoiseAdu: 0.289 });
    expect(Math.abs(snr - 92.4665)).toBeLessThan(1e-4);
    const g2 = ccdEquationSnr({ ...base, backgroundPixelCount: 200, gainElectronsPerAdu: 2, quantizationNoiseAdu: 0.289 });
    expect(Math.abs(g2 - 92.4447)).toBeLessThan(1e-4);
  });

  it('ccdEquationSnr(simple form, no nB and no sigma_f) = 93.0887 (G45)', () => {
    expect(Math.abs(ccdEquationSnr(base) - 93.0887)).toBeLessThan(1e-4);
  });
});

/** Flat sky with Poisson-like Gaussian noise in electrons plus read noise, and one Gaussian star. */
function skyFrame(seed: number, width: number, height: number, gain: number, skyE: number, readE: number, offset: number) {
  const rng = new XorShift32(seed);
  const pixels = new Float64Array(width * height);
  const sigmaE = Math.sqrt(skyE + readE * readE);
  for (let i = 0; i < pixels.length; i++) pixels[i] = offset + (skyE + sigmaE * rng.normal()) / gain;
  return { pixels, sigmaAdu: sigmaE / gain };
}

describe('regionSnr', () => {
  const gain = 2;
  const skyE = 400;
  const readE = 6;
  const offset = 500;
  const w = 121;
  const h = 101;
  const { pixels, sigmaAdu } = skyFrame(17, w, h, gain, skyE, readE, offset);
  // A patch 20 e- per pixel above the sky (no shot noise added: the measured noise is the background's).
  for (let y = 40; y < 60; y++) for (let x = 50; x < 70; x++) pixels[y * w + x] = (pixels[y * w + x] as number) + 10;

  it('regionSnr(view, { region, backgroundRegion }) measures the mean signal above the local background', () => {
    const r = regionSnr(viewOf(pixels, w, h), {
      region: { x: 50, y: 40, width: 20, height: 20 },
      backgroundRegion: { x: 0, y: 0, width: 40, height: 101 },
    });
    expect(r.pixelCount).toBe(400);
    expect(Math.abs(r.meanSignalAdu - 10)).toBeLessThan(3 * sigmaAdu / Math.sqrt(400) + 0.5);
    expect(Math.abs(r.backgroundAdu - (offset + skyE / gain))).toBeLessThan(0.5);
    expect(Math.abs(r.backgroundNoiseAdu / sigmaAdu - 1)).toBeLessThan(0.05);
    expect(r.backgroundPixelCount).toBeGreaterThan(3900);
    expect(r.perPixelSnr).toBeCloseTo(r.meanSignalAdu / r.backgroundNoiseAdu, 12);
    expect(r.snr).toBeCloseTo(r.signalAdu / Math.sqrt(400 * r.backgroundNoiseAdu ** 2 * (1 + 400 / (r.backgroundPixelCount ?? 1))), 10);
  });

  it('regionSnr(view, { aperture, annulus, gain, read noise }) reports electrons and the CCD-equation prediction beside it', () => {
    const r = regionSnr(viewOf(pixels, w, h), {
      aperture: { xCenter: 59.5, yCenter: 49.5, radius: 8 },
      annulus: { innerRadius: 30, outerRadius: 45 },
      gainElectronsPerAdu: gain,
      readNoiseElectrons: readE,
      offsetAdu: offset,
      quantizationNoiseAdu: 0,
    });
    // Pixels with centres within 8 px of (59.5, 49.5): count them directly.
    let expectedPixels = 0;
    for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) if ((x - 59.5) ** 2 + (y - 49.5) ** 2 <= 64) expectedPixels++;
    expect(r.pixelCount).toBe(expectedPixels);
    const e = r.electrons;
    expect(e).toBeDefined();
    if (e === undefined) return;
    expect(Math.abs(e.skyElectronsPerPixel - skyE)).toBeLessThan(2);
    // The frame's noise is exactly sky shot + read noise, so measured and predicted agree closely; the
    // predicted one uses the measured sky level.
    expect(Math.abs(e.snr / e.predictedSnr - 1)).toBeLessThan(0.05);
    expect(e.predictedSnr).toBeCloseTo(
      ccdEquationSnr({
        sourceElectrons: e.signalElectrons,
        pixelCount: r.pixelCount,
        backgroundPixelCount: r.backgroundPixelCount,
        skyElectronsPerPixel: e.skyElectronsPerPixel,
        readNoiseElectrons: readE,
      }),
      12,
    );
  });

  it('regionSnr(view, { mesh }) and { background } use the given level and noise', () => {
    const view = viewOf(pixels, w, h);
    const mesh = backgroundMesh(view, { boxSize: 32 });
    const r = regionSnr(view, { region: { x: 50, y: 40, width: 20, height: 20 }, mesh });
    expect(r.backgroundPixelCount).toBeUndefined();
    expect(Math.abs(r.meanSignalAdu - 10)).toBeLessThan(1.5);
    const k = regionSnr(view, { region: { x: 50, y: 40, width: 20, height: 20 }, background: { levelAdu: 700, noiseAdu: 10 } });
    expect(k.snr).toBeCloseTo(k.signalAdu / Math.sqrt(400 * 100), 10);
  });

  it('regionSnr(view, options) refuses ambiguous or impossible requests with stable codes', () => {
    const view = viewOf(pixels, w, h);
    expect(codeOf(() => regionSnr(view, { region: { x: 0, y: 0, width: 2, height: 2 } }))).toBe('INPUT_BAD_PARAMETER');
    expect(
      codeOf(() => regionSnr(view, { region: { x: 0, y: 0, width: 2, height: 2 }, annulus: { innerRadius: 1, outerRadius: 2 } })),
    ).toBe('INPUT_BAD_PARAMETER');
    expect(
      codeOf(() => regionSnr(view, { region: { x: 120, y: 0, width: 2, height: 2 }, background: { levelAdu: 0, noiseAdu: 1 } })),
    ).toBe('INPUT_OUT_OF_BOUNDS');
    expect(
      codeOf(() => regionSnr(view, { aperture: { xCenter: -3, yCenter: 5, radius: 2 }, background: { levelAdu: 0, noiseAdu: 1 } })),
    ).toBe('INPUT_OUT_OF_BOUNDS');
    const nan = viewOf(new Float32Array(100).fill(Number.NaN), 10, 10);
    expect(codeOf(() => regionSnr(nan, { region: { x: 0, y: 0, width: 3, height: 3 }, background: { levelAdu: 0, noiseAdu: 1 } }))).toBe(
      'INPUT_TOO_FEW_PIXELS',
    );
  });

  for (const c of viewCases(Float64Array.from(pixels), w, h)) {
    it(`regionSnr(view) on a ${c.name} equals the result on a contiguous copy`, () => {
      const opts = {
        aperture: { xCenter: 10, yCenter: 12, radius: 5 },
        annulus: { innerRadius: 7, outerRadius: 10 },
        gainElectronsPerAdu: 2,
        readNoiseElectrons: 6,
      };
      expect(regionSnr(c.view, opts)).toEqual(regionSnr(c.copy, opts));
    });
  }
});

describe('dataFacts (REFERENCE B.10, F.2, F.3, F.6)', () => {
  it('dataFacts(12-bit codes x 16 in uint16) finds step 16, effective depth 12 and sigma_q = 4.618802 (G27)', () => {
    const rng = new XorShift32(27);
    const a = new Uint16Array(20000);
    for (let i = 0; i < a.length; i++) a[i] = 16 * Math.round(100 + 2 * rng.normal());
    const f = dataFacts(a);
    expect(f.quantizationStepAdu).toBe(16);
    expect(f.effectiveBitDepth).toBe(12);
    expect(Math.abs((f.quantizationNoiseAdu ?? 0) - 4.618802)).toBeLessThan(1e-6);
    expect(f.saturationAdu).toBeUndefined();
    expect(f.saturatedFraction).toBe(0);
    // The same codes as float64 give the same step (gcd of value - minimum), without a container depth.
    const g = dataFacts(Float64Array.from(a));
    expect(g.quantizationStepAdu).toBe(16);
    expect(g.effectiveBitDepth).toBeUndefined();
    const q = dataFacts(Uint16Array.from(a, (v) => v / 4));
    expect(q.quantizationStepAdu).toBe(4);
    expect(q.effectiveBitDepth).toBe(14);
  });

  it('dataFacts(uint16 with pixels at 65535) reports saturation at 65535 and the fraction there', () => {
    const a = new Uint16Array(1000).fill(1000);
    for (let i = 0; i < 10; i++) a[i] = 65535;
    a[500] = 999;
    const f = dataFacts(a);
    expect(f.saturationAdu).toBe(65535);
    expect(f.saturatedCount).toBe(10);
    expect(f.saturatedFraction).toBe(0.01);
    expect(f.atMinimumCount).toBe(1);
    expect(f.distinctValues).toBe(3);
    expect(f.quantizationStepAdu).toBe(1);
  });

  it('dataFacts(codes with a pile-up below the container maximum) detects the top code as saturation', () => {
    const rng = new XorShift32(5);
    const a = new Uint16Array(50000);
    for (let i = 0; i < a.length; i++) a[i] = Math.min(60000, Math.round(50000 + 5000 * rng.normal()));
    const f = dataFacts(a);
    expect(f.saturationAdu).toBe(60000);
    expect(f.saturatedFraction).toBeGreaterThan(0.01);
    // A smooth tail is not a pile-up.
    const b = new Uint16Array(50000);
    for (let i = 0; i < b.length; i++) b[i] = Math.round(1000 + 20 * rng.normal());
    expect(dataFacts(b).saturationAdu).toBeUndefined();
    expect(dataFacts(b, { saturationAdu: 1040 }).saturatedCount).toBe(Array.from(b).filter((v) => v >= 1040).length);
  });

  it('dataFacts(bias clipped at zero) reports the fraction of pixels at the minimum code (F.3)', () => {
    const rng = new XorShift32(8);
    const a = new Int16Array(10000);
    for (let i = 0; i < a.length; i++) a[i] = Math.max(0, Math.round(3 + 5 * rng.normal()));
    const f = dataFacts(a);
    expect(f.minimumAdu).toBe(0);
    expect(f.atMinimumFraction).toBeGreaterThan(0.2);
    expect(f.atMinimumFraction).toBe(Array.from(a).filter((v) => v === 0).length / a.length);
  });

  it('dataFacts(empty or non-integer data) leaves the step undefined', () => {
    expect(dataFacts(new Uint16Array(0)).validCount).toBe(0);
    expect(dataFacts(new Float32Array([0.5, 0.75, 1])).quantizationStepAdu).toBeUndefined();
    expect(dataFacts(new Uint16Array([7, 7])).quantizationStepAdu).toBeUndefined();
  });
});
