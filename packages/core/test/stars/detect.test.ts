import { describe, expect, it } from 'vitest';
import { detectStars, moffatFwhm, InvalidInputError } from '@subgauge/core';
import type { StarSource } from '@subgauge/core';
import { XorShift32, addGaussian, addMoffat, addNoise, newFrame, randomPositions, toFloat32, toUint16 } from './helpers.js';

const FWHM_PER_SIGMA = 2.3548200450309493;

/** Nearest source to (x, y). */
function nearest(sources: StarSource[], x: number, y: number): StarSource {
  let best = sources[0]!;
  for (const s of sources) if (Math.hypot(s.x - x, s.y - y) < Math.hypot(best.x - x, best.y - y)) best = s;
  return best;
}

/** A grid of stars with random sub-pixel offsets; returns the frame and the true positions. */
function gridField(seed: number, size: number, step: number, add: (f: ReturnType<typeof newFrame>, x: number, y: number) => void) {
  const rng = new XorShift32(seed);
  const f = newFrame(size, size, 200);
  const truth: Array<[number, number]> = [];
  for (let y = step / 2; y < size - step / 4; y += step) {
    for (let x = step / 2; x < size - step / 4; x += step) {
      const px = x + rng.uniform() - 0.5;
      const py = y + rng.uniform() - 0.5;
      truth.push([px, py]);
      add(f, px, py);
    }
  }
  return { f, rng, truth };
}

describe('detectStars: detection', () => {
  it('detectStars(noise-only frame, 5 sigma) finds no sources (several seeds)', () => {
    for (const seed of [1, 2, 3]) {
      const f = newFrame(512, 512, 500);
      addNoise(f, new XorShift32(seed), 12);
      const det = detectStars({ pixels: toFloat32(f), width: 512, height: 512 }, { background: 500, noise: 12 });
      expect(det.sources).toHaveLength(0);
      expect(det.thresholdSigma).toBe(5);
      expect(det.connectivity).toBe(8);
    }
  });

  it('detectStars(field of 36 stars) finds each once, centroids within 0.1 px (windowed 0.05 px) of the truth at peak SNR 100', () => {
    const { f, rng, truth } = gridField(11, 300, 50, (fr, x, y) => addGaussian(fr, x, y, 2 * Math.PI * 1.5 * 1.5 * 1000, 1.5));
    addNoise(f, rng, 10);
    const det = detectStars({ pixels: toUint16(f), width: 300, height: 300 }, { background: 200, noise: 10 });
    expect(det.sources).toHaveLength(truth.length);
    for (const [x, y] of truth) {
      const s = nearest(det.sources, x, y);
      expect(Math.hypot(s.x - x, s.y - y)).toBeLessThan(0.1);
      expect(Math.hypot(s.xWindowed - x, s.yWindowed - y)).toBeLessThan(0.05);
      expect(s.blended).toBe(false);
      expect(s.saturated).toBe(false);
      expect(s.touchesEdge).toBe(false);
      expect(s.shapeMethod).toBe('adaptive');
      expect(s.peakAdu).toBeGreaterThan(900);
    }
    expect(det.sources.map((s) => s.id)).toEqual(det.sources.map((_, i) => i + 1));
  });

  it('detectStars(background and noise maps) gives the same sources as the equal scalars, and follows a gradient', () => {
    const { f, rng, truth } = gridField(5, 200, 50, (fr, x, y) => addGaussian(fr, x, y, 20000, 1.6));
    addNoise(f, rng, 8);
    const flat = detectStars({ pixels: toFloat32(f), width: 200, height: 200 }, { background: 200, noise: 8 });
    const maps = detectStars(
      { pixels: toFloat32(f), width: 200, height: 200 },
      { background: new Float32Array(200 * 200).fill(200), noise: new Float64Array(200 * 200).fill(8) },
    );
    expect(maps.sources).toEqual(flat.sources);
    // a strong gradient: with the map the stars are found, with a scalar the bright half floods
    const g = newFrame(200, 200, 0);
    const bg = new Float32Array(200 * 200);
    for (let y = 0; y < 200; y++) for (let x = 0; x < 200; x++) bg[y * 200 + x] = 200 + 3 * x;
    for (let i = 0; i < g.data.length; i++) g.data[i] = f.data[i]! + bg[i]! - 200;
    const withMap = detectStars({ pixels: toFloat32(g), width: 200, height: 200 }, { background: bg, noise: 8 });
    expect(withMap.sources).toHaveLength(truth.length);
    const scalar = detectStars({ pixels: toFloat32(g), width: 200, height: 200 }, { background: 200, noise: 8 });
    expect(scalar.diagnostics.map((d) => d.code)).toContain('STARS_MANY_PIXELS_ABOVE_THRESHOLD');
  });

  it('detectStars(minPixels 5) drops hot pixels and 2x2 specks; minPixels 1 keeps them', () => {
    const f = newFrame(64, 64, 100);
    f.data[10 * 64 + 10] = 5000;
    for (const [dx, dy] of [[0, 0], [1, 0], [0, 1], [1, 1]] as const) f.data[(40 + dy) * 64 + 40 + dx] = 3000;
    const px = toFloat32(f);
    expect(detectStars({ pixels: px, width: 64, height: 64 }, { background: 100, noise: 5 }).sources).toHaveLength(0);
    expect(detectStars({ pixels: px, width: 64, height: 64 }, { background: 100, noise: 5, minPixels: 1 }).sources).toHaveLength(2);
  });

  it('detectStars(connectivity 4) splits a diagonal chain that connectivity 8 keeps whole', () => {
    const f = newFrame(32, 32, 0);
    for (let k = 0; k < 8; k++) f.data[(10 + k) * 32 + 10 + k] = 1000;
    const px = toFloat32(f);
    const opts = { background: 0, noise: 10, minPixels: 1, deblend: false } as const;
    expect(detectStars({ pixels: px, width: 32, height: 32 }, { ...opts, connectivity: 8 }).sources).toHaveLength(1);
    expect(detectStars({ pixels: px, width: 32, height: 32 }, { ...opts, connectivity: 4 }).sources).toHaveLength(8);
  });

  it('detectStars(filterFwhmPixels 4) finds faint stars (peak 2.5 sigma) that the raw 5-sigma threshold misses', () => {
    const { f, rng, truth } = gridField(21, 256, 64, (fr, x, y) => addGaussian(fr, x, y, 2 * Math.PI * 1.7 * 1.7 * 25, 1.7));
    addNoise(f, rng, 10);
    const px = toFloat32(f);
    const raw = detectStars({ pixels: px, width: 256, height: 256 }, { background: 200, noise: 10 });
    const filtered = detectStars({ pixels: px, width: 256, height: 256 }, { background: 200, noise: 10, filterFwhmPixels: 4 });
    expect(raw.sources.length).toBeLessThan(truth.length / 4);
    expect(filtered.thresholdSigma).toBe(4);
    expect(filtered.sources.length).toBe(truth.length);
    for (const [x, y] of truth) expect(Math.hypot(nearest(filtered.sources, x, y).x - x, nearest(filtered.sources, x, y).y - y)).toBeLessThan(1);
  });
});

describe('detectStars: flags and splitting', () => {
  it('detectStars(star clipped at 65535 in Uint16 data) flags it saturated at the default 0.95 x 65535', () => {
    const f = newFrame(64, 64, 1000);
    addGaussian(f, 20.2, 30.7, 2 * Math.PI * 4 * 200000, 2);
    addGaussian(f, 45.5, 30.1, 2 * Math.PI * 4 * 5000, 2);
    const det = detectStars({ pixels: toUint16(f), width: 64, height: 64 }, { background: 1000, noise: 10 });
    expect(det.saturationAdu).toBeCloseTo(0.95 * 65535, 9);
    expect(det.sources).toHaveLength(2);
    expect(nearest(det.sources, 20, 30).saturated).toBe(true);
    expect(nearest(det.sources, 45, 30).saturated).toBe(false);
    const low = detectStars({ pixels: toUint16(f), width: 64, height: 64 }, { background: 1000, noise: 10, saturationAdu: 4000 });
    expect(low.sources.every((s) => s.saturated)).toBe(true);
  });

  it('detectStars(star cut by the frame edge) flags touchesEdge', () => {
    const f = newFrame(64, 64, 0);
    addGaussian(f, 0.5, 32, 20000, 1.5);
    addGaussian(f, 32, 32, 20000, 1.5);
    const det = detectStars({ pixels: toFloat32(f), width: 64, height: 64 }, { background: 0, noise: 5 });
    expect(nearest(det.sources, 0, 32).touchesEdge).toBe(true);
    expect(nearest(det.sources, 32, 32).touchesEdge).toBe(false);
  });

  it('detectStars(maxPixels 50) keeps a big blob as tooLarge with centroid and flux but no FWHM', () => {
    const f = newFrame(128, 128, 0);
    addGaussian(f, 64.25, 60.5, 2 * Math.PI * 36 * 1000, 6);
    const det = detectStars({ pixels: toFloat32(f), width: 128, height: 128 }, { background: 0, noise: 5, maxPixels: 50 });
    expect(det.sources).toHaveLength(1);
    const s = det.sources[0]!;
    expect(s.tooLarge).toBe(true);
    expect(s.fwhmPixels).toBeNull();
    expect(s.shapeMethod).toBe('isophotal');
    expect(s.x).toBeCloseTo(64.25, 3);
    expect(s.y).toBeCloseTo(60.5, 3);
    expect(det.diagnostics.map((d) => d.code)).toContain('STARS_TOO_LARGE_COMPONENTS');
  });

  it('detectStars splits two FWHM-3 stars 2 FWHM apart (blended), not 0.7 FWHM apart, and not with deblend false', () => {
    const sigma = 3 / FWHM_PER_SIGMA;
    const make = (sep: number) => {
      const f = newFrame(80, 80, 0);
      addGaussian(f, 40 - sep / 2, 40.3, 2 * Math.PI * sigma * sigma * 2000, sigma);
      addGaussian(f, 40 + sep / 2, 40.3, 2 * Math.PI * sigma * sigma * 1200, sigma);
      addNoise(f, new XorShift32(9), 5);
      return toFloat32(f);
    };
    const apart = detectStars({ pixels: make(6), width: 80, height: 80 }, { background: 0, noise: 5 });
    expect(apart.sources).toHaveLength(2);
    expect(apart.sources.every((s) => s.blended)).toBe(true);
    const [a, b] = [nearest(apart.sources, 37, 40.3), nearest(apart.sources, 43, 40.3)];
    expect(a.peakAdu).toBeGreaterThan(b.peakAdu);
    expect(Math.abs(a.xPeak - 37)).toBeLessThanOrEqual(1);
    expect(Math.abs(b.xPeak - 43)).toBeLessThanOrEqual(1);
    expect(a.id).toBeLessThan(b.id); // brighter part first
    expect(detectStars({ pixels: make(2), width: 80, height: 80 }, { background: 0, noise: 5 }).sources).toHaveLength(1);
    expect(detectStars({ pixels: make(6), width: 80, height: 80 }, { background: 0, noise: 5, deblend: false }).sources).toHaveLength(1);
  });

  it('detectStars(maxSources 10) measures only the 10 largest components, in raster order, with a STARS_SOURCE_LIMIT warning', () => {
    const f = newFrame(200, 200, 0);
    const fluxes: number[] = [];
    for (let k = 0; k < 30; k++) {
      const flux = 2000 * (k + 1);
      fluxes.push(flux);
      addGaussian(f, 15 + (k % 6) * 33, 15 + Math.floor(k / 6) * 40, flux, 1.5);
    }
    const px = toFloat32(f);
    const all = detectStars({ pixels: px, width: 200, height: 200 }, { background: 0, noise: 5 });
    const few = detectStars({ pixels: px, width: 200, height: 200 }, { background: 0, noise: 5, maxSources: 10 });
    expect(all.sources).toHaveLength(30);
    expect(few.sources).toHaveLength(10);
    const largest = [...all.sources].sort((a, b) => b.areaPixels - a.areaPixels).slice(0, 10);
    expect(few.sources.map((s) => s.fluxAdu).sort((a, b) => a - b)).toEqual(largest.map((s) => s.fluxAdu).sort((a, b) => a - b));
    expect(few.sources.map((s) => s.y)).toEqual([...few.sources.map((s) => s.y)].sort((a, b) => a - b));
    expect(few.diagnostics.map((d) => d.code)).toContain('STARS_SOURCE_LIMIT');
    expect(all.diagnostics.map((d) => d.code)).not.toContain('STARS_SOURCE_LIMIT');
  });

  it('detectStars(bad inputs) throws InvalidInputError with stable codes', () => {
    const img = { pixels: new Float32Array(16), width: 4, height: 4 };
    expect(() => detectStars({ ...img, pixels: new Float32Array(15) }, { background: 0, noise: 1 })).toThrow(InvalidInputError);
    expect(() => detectStars(img, { background: new Float32Array(3), noise: 1 })).toThrow(expect.objectContaining({ code: 'INPUT_SHAPE_MISMATCH' }));
    expect(() => detectStars(img, { background: 0, noise: 0 })).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
    expect(() => detectStars(img, { background: 0, noise: 1, connectivity: 6 as 4 })).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
    expect(() => detectStars({ ...img, pixels: new BigInt64Array(16) as unknown as Float32Array }, { background: 0, noise: 1 })).toThrow(
      expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }),
    );
  });
});

describe('detectStars: shapes, FWHM and half-flux radius', () => {
  it('detectStars(tilted Gaussian 3 x 1.5 at 30 deg) gives adaptive A 3, B 1.5, theta 30, elongation 2 (REFERENCE E.2, G row 55)', () => {
    const f = newFrame(61, 61, 0);
    addGaussian(f, 30.3, 29.6, 2 * Math.PI * 4.5 * 1000, 3, 1.5, 30);
    const det = detectStars({ pixels: toFloat32(f), width: 61, height: 61 }, { background: 0, noise: 1 });
    expect(det.sources).toHaveLength(1);
    const s = det.sources[0]!;
    expect(s.aPixels).toBeCloseTo(3.0, 4);
    expect(s.bPixels).toBeCloseTo(1.5, 4);
    expect(s.thetaDegrees).toBeCloseTo(30, 3);
    expect(s.elongation).toBeCloseTo(2.0, 4);
    expect(s.ellipticity).toBeCloseTo(0.5, 4);
    expect(s.x2Pixels2).toBeCloseTo(7.3125, 3);
    expect(s.y2Pixels2).toBeCloseTo(3.9375, 3);
    expect(s.xyPixels2).toBeCloseTo(2.922836, 3);
    expect(s.fwhmMajorPixels!).toBeCloseTo(3 * FWHM_PER_SIGMA, 4);
    expect(s.fwhmMinorPixels!).toBeCloseTo(1.5 * FWHM_PER_SIGMA, 4);
    expect(s.fwhmPixels!).toBeCloseTo(FWHM_PER_SIGMA * Math.sqrt((9 + 2.25) / 2), 4);
  });

  it('detectStars(noisy Gaussian stars, FWHM 2-8 px, peak SNR 100) measures each FWHM within 3 % (3 seeds)', () => {
    for (const fwhm of [2, 3, 5, 8]) {
      for (const seed of [1, 2, 3]) {
        const sigma = fwhm / FWHM_PER_SIGMA;
        const { f, rng, truth } = gridField(100 * fwhm + seed, 320, 80, (fr, x, y) => addGaussian(fr, x, y, 2 * Math.PI * sigma * sigma * 1000, sigma));
        addNoise(f, rng, 10);
        const det = detectStars({ pixels: toFloat32(f), width: 320, height: 320 }, { background: 200, noise: 10 });
        expect(det.sources).toHaveLength(truth.length);
        for (const s of det.sources) expect(Math.abs(s.fwhmPixels! / fwhm - 1)).toBeLessThan(0.03);
        expect(Math.abs(det.profileLambda)).toBeLessThan(0.1); // Gaussian family found
      }
    }
  });

  it('detectStars(noisy Moffat stars, beta 2.5-4, FWHM 2.5-8 px, peak SNR 100) measures each true FWHM 2 alpha sqrt(2^(1/beta) - 1) within 3 %', () => {
    for (const beta of [2.5, 3, 4]) {
      for (const fwhm of [2.5, 4, 8]) {
        const alpha = fwhm / (2 * Math.sqrt(2 ** (1 / beta) - 1));
        expect(moffatFwhm(alpha, beta)).toBeCloseTo(fwhm, 12);
        const { f, rng, truth } = gridField(7 + Math.round(10 * beta + fwhm), 320, 80, (fr, x, y) => addMoffat(fr, x, y, 1000, alpha, beta, 40));
        addNoise(f, rng, 10);
        const det = detectStars({ pixels: toFloat32(f), width: 320, height: 320 }, { background: 200, noise: 10 });
        expect(det.sources).toHaveLength(truth.length);
        for (const s of det.sources) expect(Math.abs(s.fwhmPixels! / fwhm - 1)).toBeLessThan(0.03);
        // the profile exponent is near -1/beta
        expect(Math.abs(det.profileLambda + 1 / beta)).toBeLessThan(0.1);
      }
    }
  });

  it('detectStars(noise-free Gaussian) gives the half-flux radius of the pixelated star, sigma_eff sqrt(2 ln 2) with sigma_eff^2 = sigma^2 + 1/12', () => {
    for (const sigma of [1.5, 2.5, 3.5]) {
      const f = newFrame(81, 81, 0);
      addGaussian(f, 40.2, 39.7, 1e6, sigma);
      const s = detectStars({ pixels: toFloat32(f), width: 81, height: 81 }, { background: 0, noise: 1 }).sources[0]!;
      const expected = Math.sqrt(sigma * sigma + 1 / 12) * Math.sqrt(2 * Math.LN2);
      expect(Math.abs(s.halfFluxRadiusPixels! / expected - 1)).toBeLessThan(0.01);
    }
  });

  it('detectStars(gainElectronsPerAdu) adds the Poisson term to the SNR; localBackground gives the annulus median', () => {
    const f = newFrame(100, 100, 300);
    addGaussian(f, 50, 50, 50000, 1.5);
    addNoise(f, new XorShift32(4), 10);
    const px = toFloat32(f);
    const a = detectStars({ pixels: px, width: 100, height: 100 }, { background: 300, noise: 10 }).sources[0]!;
    const b = detectStars({ pixels: px, width: 100, height: 100 }, { background: 300, noise: 10, gainElectronsPerAdu: 1, localBackground: true }).sources[0]!;
    expect(a.snr).toBeCloseTo(a.fluxAdu / Math.sqrt(a.areaPixels * 100), 9);
    expect(b.snr).toBeCloseTo(a.fluxAdu / Math.sqrt(a.areaPixels * 100 + a.fluxAdu), 9);
    expect(a.localBackgroundAdu).toBeNull();
    expect(Math.abs(b.localBackgroundAdu! - 300)).toBeLessThan(2);
  });
});

describe('detectStars: a random field', () => {
  it('detectStars(600 random stars on 1024x1024) recovers isolated bright ones with FWHM within 3 %', () => {
    const rng = new XorShift32(77);
    const f = newFrame(1024, 1024, 800);
    const pos = randomPositions(rng, 600, 1024, 1024, 8, 0);
    const sigma = 3.2 / FWHM_PER_SIGMA;
    for (const [x, y] of pos) addGaussian(f, x, y, 2 * Math.PI * sigma * sigma * (60 + 3000 * rng.uniform()), sigma);
    addNoise(f, rng, 10);
    const det = detectStars({ pixels: toUint16(f), width: 1024, height: 1024 }, { background: 800, noise: 10 });
    const isolated = det.sources.filter((s) => !s.blended && s.snr > 100);
    expect(isolated.length).toBeGreaterThan(300);
    const bad = isolated.filter((s) => Math.abs(s.fwhmPixels! / 3.2 - 1) > 0.03);
    // neighbours closer than a few FWHM disturb a few; the rest hold
    expect(bad.length).toBeLessThan(0.03 * isolated.length);
  });
});
