import { describe, expect, it } from 'vitest';
import {
  GAUSSIAN_FWHM_PER_SIGMA,
  gaussianFwhm,
  gaussianHalfFluxRadius,
  imageMoments,
  moffatFwhm,
  moffatHalfFluxRadius,
  shapeFromMoments,
  InvalidInputError,
} from '@subgauge/core';

/** The tilted elliptical Gaussian of REFERENCE E.2 / G row 55, sampled at pixel centres of a 41x41 grid. */
function tiltedGaussian(): Float64Array {
  const [w, h, x0, y0, sa, sb, t] = [41, 41, 20.3, 19.6, 3, 1.5, (30 * Math.PI) / 180];
  const v = new Float64Array(w * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const dx = x - x0;
      const dy = y - y0;
      const u = dx * Math.cos(t) + dy * Math.sin(t);
      const q = -dx * Math.sin(t) + dy * Math.cos(t);
      v[y * w + x] = 1000 * Math.exp(-0.5 * ((u * u) / (sa * sa) + (q * q) / (sb * sb)));
    }
  }
  return v;
}

describe('profile widths (REFERENCE E.1, G rows 52-54)', () => {
  it('GAUSSIAN_FWHM_PER_SIGMA and gaussianFwhm(1) equal 2.354820045 (G row 52, [CALC])', () => {
    expect(GAUSSIAN_FWHM_PER_SIGMA).toBeCloseTo(2.354820045, 9);
    expect(gaussianFwhm(1)).toBeCloseTo(2.354820045, 9);
    expect(gaussianFwhm(2.5)).toBeCloseTo(2.5 * 2.354820045, 8);
  });

  it('gaussianHalfFluxRadius(sigma) is 1.177410 sigma = FWHM / 2 (G row 53, [CALC])', () => {
    expect(gaussianHalfFluxRadius(1)).toBeCloseTo(1.17741, 6);
    expect(gaussianHalfFluxRadius(3)).toBeCloseTo(gaussianFwhm(3) / 2, 12);
    // the defining property: 1 - exp(-r^2 / 2 sigma^2) = 1/2 at r = r_half
    const r = gaussianHalfFluxRadius(2);
    expect(1 - Math.exp((-r * r) / 8)).toBeCloseTo(0.5, 12);
  });

  it('moffatFwhm(2, 2.5) is 2.261001 and moffatHalfFluxRadius(2, 2.5) is 1.532842 (G row 54, [CALC])', () => {
    expect(moffatFwhm(2, 2.5)).toBeCloseTo(2.261001, 6);
    expect(moffatHalfFluxRadius(2, 2.5)).toBeCloseTo(1.532842, 6);
    // defining properties: half the peak at FWHM/2; enclosed flux 1 - (1 + r^2/a^2)^(1 - beta) = 1/2 at r_half
    const hw = moffatFwhm(2, 2.5) / 2;
    expect(Math.pow(1 + (hw * hw) / 4, -2.5)).toBeCloseTo(0.5, 12);
    const rh = moffatHalfFluxRadius(2, 2.5);
    expect(1 - Math.pow(1 + (rh * rh) / 4, -1.5)).toBeCloseTo(0.5, 12);
  });

  it('moffatHalfFluxRadius(alpha, beta <= 1) throws InvalidInputError INPUT_BAD_PARAMETER', () => {
    expect(() => moffatHalfFluxRadius(2, 1)).toThrow(InvalidInputError);
    expect(() => moffatFwhm(2, 0)).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
  });
});

describe('second-moment shape (REFERENCE E.2, G row 55)', () => {
  it('imageMoments(tilted Gaussian 3 x 1.5 at 30 deg, 41x41) gives x2 7.3125, y2 3.9375, xy 2.922836, A 3, B 1.5, theta 30 ([CALC] numpy)', () => {
    const m = imageMoments(tiltedGaussian(), 41, 41);
    expect(m.x).toBeCloseTo(20.3, 6);
    expect(m.y).toBeCloseTo(19.6, 6);
    expect(m.x2Pixels2).toBeCloseTo(7.3125, 6);
    expect(m.y2Pixels2).toBeCloseTo(3.9375, 6);
    expect(m.xyPixels2).toBeCloseTo(2.922836, 6);
    expect(m.aPixels).toBeCloseTo(3.0, 6);
    expect(m.bPixels).toBeCloseTo(1.5, 6);
    expect(m.thetaDegrees).toBeCloseTo(30.0, 5);
    expect(m.elongation).toBeCloseTo(2.0, 6);
    expect(m.ellipticity).toBeCloseTo(0.5, 6);
    expect(m.eccentricity).toBeCloseTo(0.866025, 6);
  });

  it('shapeFromMoments(x2, y2, xy) keeps theta in (-90, 90] and measures it from +x towards +y', () => {
    expect(shapeFromMoments(1, 4, 0).thetaDegrees).toBe(90);
    expect(shapeFromMoments(4, 1, 0).thetaDegrees).toBe(0);
    expect(shapeFromMoments(2.5, 2.5, 1.5).thetaDegrees).toBeCloseTo(45, 12);
    expect(shapeFromMoments(2.5, 2.5, -1.5).thetaDegrees).toBeCloseTo(-45, 12);
    const round = shapeFromMoments(2, 2, 0);
    expect(round.elongation).toBe(1);
    expect(round.ellipticity).toBe(0);
  });

  it('imageMoments(values of the wrong length) throws InvalidInputError INPUT_SHAPE_MISMATCH', () => {
    expect(() => imageMoments(new Float64Array(10), 4, 4)).toThrow(expect.objectContaining({ code: 'INPUT_SHAPE_MISMATCH' }));
  });
});
