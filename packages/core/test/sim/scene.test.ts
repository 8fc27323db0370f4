import { describe, expect, it } from 'vitest';
import {
  addSky,
  addStar,
  addStars,
  addTrail,
  distanceFromTrail,
  drawStarField,
  moffatAlpha,
  moffatFluxOutside,
  psfBoxRadius,
  type PsfModel,
  type SatelliteTrail,
} from '../../src/sim/scene.js';
import { Rng } from '../../src/sim/rng.js';

const W = 96;
const H = 80;

function moments(map: Float64Array, width: number) {
  let s = 0;
  let sx = 0;
  let sy = 0;
  for (let i = 0; i < map.length; i++) {
    const v = map[i] ?? 0;
    s += v;
    sx += v * (i % width);
    sy += v * Math.floor(i / width);
  }
  const mx = sx / s;
  const my = sy / s;
  let xx = 0;
  let yy = 0;
  let xy = 0;
  for (let i = 0; i < map.length; i++) {
    const v = map[i] ?? 0;
    const dx = (i % width) - mx;
    const dy = Math.floor(i / width) - my;
    xx += v * dx * dx;
    yy += v * dy * dy;
    xy += v * dx * dy;
  }
  return { sum: s, mx, my, xx: xx / s, yy: yy / s, xy: xy / s };
}

const round: PsfModel = { profile: 'gaussian', fwhmPixels: 3, moffatBeta: 3, elongation: 1, angleDegrees: 0 };

describe('scene', () => {
  it('addStar(...) with a round Gaussian adds exactly the flux, centred, with variance σ² + 1/12', () => {
    const map = new Float64Array(W * H);
    const added = addStar(map, W, H, { x: 40.3, y: 37.8, fluxElectronsPerSecond: 1000 }, round);
    const m = moments(map, W);
    expect(added).toBeCloseTo(1000, 6);
    expect(m.sum).toBeCloseTo(1000, 6);
    expect(m.mx).toBeCloseTo(40.3, 6);
    expect(m.my).toBeCloseTo(37.8, 6);
    // Pixel integration convolves with a unit box, adding 1/12 px² to each axis variance.
    const sigma = 3 / 2.3548200450309493;
    expect(m.xx).toBeCloseTo(sigma * sigma + 1 / 12, 5);
    expect(m.yy).toBeCloseTo(sigma * sigma + 1 / 12, 5);
    expect(Math.abs(m.xy)).toBeLessThan(1e-8);
  });

  it('addStar(...) with an elongated Gaussian reproduces the second-moment shape of REFERENCE.md E.2', () => {
    // E.2 check: σ_major = 3, σ_minor = 1.5, θ = 30° → elongation 2; pixel integration adds 1/12 to both axes.
    const fwhm = 1.5 * 2.3548200450309493;
    const psf: PsfModel = { profile: 'gaussian', fwhmPixels: fwhm, moffatBeta: 3, elongation: 2, angleDegrees: 30 };
    const map = new Float64Array(W * H);
    const added = addStar(map, W, H, { x: 48.2, y: 39.6, fluxElectronsPerSecond: 500 }, psf);
    const m = moments(map, W);
    expect(Math.abs(added / 500 - 1)).toBeLessThan(1e-6);
    const half = (m.xx + m.yy) / 2;
    const root = Math.sqrt(((m.xx - m.yy) / 2) ** 2 + m.xy ** 2);
    // The 7x7 midpoint sub-grid integrates each pixel with step h = 1/7, which lowers each axis
    // variance by h²/12 (midpoint-rule error term) relative to exact pixel integration.
    const box = 1 / 12 - 1 / (12 * 49);
    expect(Math.sqrt(half + root)).toBeCloseTo(Math.sqrt(9 + box), 3);
    expect(Math.sqrt(half - root)).toBeCloseTo(Math.sqrt(2.25 + box), 3);
    expect((0.5 * Math.atan2(2 * m.xy, m.xx - m.yy) * 180) / Math.PI).toBeCloseTo(30, 2);
  });

  it('addStar(...) with a Moffat keeps all but the truncated wing flux', () => {
    const psf: PsfModel = { profile: 'moffat', fwhmPixels: 3.2, moffatBeta: 3, elongation: 1, angleDegrees: 0 };
    const R = psfBoxRadius(psf);
    const map = new Float64Array(160 * 160);
    const added = addStar(map, 160, 160, { x: 80.1, y: 79.7, fluxElectronsPerSecond: 2000 }, psf);
    const lost = moffatFluxOutside(R, moffatAlpha(3.2, 3), 3); // flux outside the inscribed circle bounds the box loss
    expect(lost).toBeLessThan(1e-3);
    expect(added).toBeLessThanOrEqual(2000 * (1 + 1e-4));
    expect(added).toBeGreaterThanOrEqual(2000 * (1 - lost - 1e-4));
    const m = moments(map, 160);
    expect(m.mx).toBeCloseTo(80.1, 3);
    expect(m.my).toBeCloseTo(79.7, 3);
    // Half maximum at r = FWHM/2: compare the profile along a row through a star placed at a pixel centre.
    const map2 = new Float64Array(160 * 160);
    addStar(map2, 160, 160, { x: 80, y: 80, fluxElectronsPerSecond: 1 }, { ...psf, fwhmPixels: 12 });
    const peak = map2[80 * 160 + 80] ?? 0;
    expect((map2[80 * 160 + 86] ?? 0) / peak).toBeCloseTo(0.5, 1);
  });

  it('addStar(...) near an edge adds only the flux that falls inside the frame', () => {
    const map = new Float64Array(W * H);
    const added = addStar(map, W, H, { x: 0, y: 40, fluxElectronsPerSecond: 1000 }, round);
    // Half of a Gaussian centred on pixel 0's centre lies at x < 0, minus the half pixel: Φ(0.5/σ)·1000.
    const sigma = 3 / 2.3548200450309493;
    const inside = 0.5 * (1 + erfLike(0.5 / (sigma * Math.SQRT2)));
    expect(added / 1000).toBeCloseTo(inside, 6);
  });

  it('addStars(...) maps unbinned positions to binned pixels and scales the flux', () => {
    const map = new Float64Array(48 * 40);
    const added = addStars(map, 48, 40, [{ x: 40.5, y: 37.5, fluxElectronsPerSecond: 400 }], { ...round, fwhmPixels: 1.5 }, { coordinateDivisor: 2, fluxScale: 0.25 });
    const m = moments(map, 48);
    expect(added).toBeCloseTo(100, 6);
    expect(m.mx).toBeCloseTo(20, 6);
    expect(m.my).toBeCloseTo(18.5, 6);
  });

  it('addSky(...) keeps the frame mean and changes by gradientPercent across the frame', () => {
    const map = new Float64Array(W * H);
    addSky(map, W, H, { rateElectronsPerSecond: 2, gradientPercent: 10, gradientAngleDegrees: 0 });
    let s = 0;
    for (const v of map) s += v;
    expect(s / map.length).toBeCloseTo(2, 12);
    expect((map[W - 1] ?? 0) - (map[0] ?? 0)).toBeCloseTo(0.2, 12);
    expect((map[(H - 1) * W] ?? 0) - (map[0] ?? 0)).toBeCloseTo(0, 12);
    const diag = new Float64Array(W * H);
    addSky(diag, W, H, { rateElectronsPerSecond: 1, gradientPercent: 6, gradientAngleDegrees: 225 });
    // Brighter towards -x, -y: pixel (0, 0) is the brightest corner, (W-1, H-1) the faintest, 6 % apart.
    expect((diag[0] ?? 0) - (diag[W * H - 1] ?? 0)).toBeCloseTo(0.06, 12);
  });

  it('addTrail(...) puts its light on the line: bright pixels lie within half the width of it', () => {
    const trail: SatelliteTrail = { x: 30, y: 20, angleDegrees: 23, peakElectrons: 600, widthFwhmPixels: 2.5 };
    const map = new Float64Array(W * H);
    const touched = addTrail(map, W, H, trail, 120);
    expect(touched).toBeGreaterThan(W);
    let bright = 0;
    for (let i = 0; i < map.length; i++) {
      const x = i % W;
      const y = Math.floor(i / W);
      const d = distanceFromTrail(trail, x, y);
      const v = map[i] ?? 0;
      if (v > 0.5 * (600 / 120)) {
        bright++;
        expect(d).toBeLessThanOrEqual(1.25 + 1e-9);
      }
      if (d < 0.3) expect(v).toBeGreaterThan(0.9 * (600 / 120));
      if (d > 6 * (2.5 / 2.3548200450309493)) expect(v).toBe(0);
    }
    // The line crosses the whole frame: at least one bright pixel per column.
    expect(bright).toBeGreaterThanOrEqual(W);
  });

  it('drawStarField(rng, ...) is deterministic and keeps fluxes and positions inside their limits', () => {
    const opts = { count: 200, minFluxElectronsPerSecond: 20, maxFluxElectronsPerSecond: 3000, powerLawIndex: 0.7, marginPixels: 8 };
    const a = drawStarField(new Rng(5), W, H, opts);
    const b = drawStarField(new Rng(5), W, H, opts);
    const c = drawStarField(new Rng(6), W, H, opts);
    expect(a).toEqual(b);
    expect(a).not.toEqual(c);
    expect(a.length).toBe(200);
    for (const s of a) {
      expect(s.fluxElectronsPerSecond).toBeGreaterThanOrEqual(20);
      expect(s.fluxElectronsPerSecond).toBeLessThanOrEqual(3000);
      expect(s.x).toBeGreaterThanOrEqual(8);
      expect(s.x).toBeLessThanOrEqual(W - 9);
    }
    // Power law N(>F) ∝ F^-0.7: the median flux is F_min (1 - ½(1 - 150^-0.7))^(-1/0.7) ≈ 53.6 e-/s.
    const sorted = a.map((s) => s.fluxElectronsPerSecond).sort((p, q) => p - q);
    const median = sorted[100] ?? 0;
    const expected = 20 * (1 - 0.5 * (1 - 150 ** -0.7)) ** (-1 / 0.7);
    expect(Math.abs(Math.log(median / expected))).toBeLessThan(0.25);
  });
});

// Independent erf for the edge check: Abramowitz & Stegun 7.1.26 (|error| < 1.5e-7).
function erfLike(x: number): number {
  const t = 1 / (1 + 0.3275911 * Math.abs(x));
  const y = 1 - ((((1.061405429 * t - 1.453152027) * t + 1.421413741) * t - 0.284496736) * t + 0.254829592) * t * Math.exp(-x * x);
  return x >= 0 ? y : -y;
}
