import { describe, expect, it } from 'vitest';
import { detectStars, detectTrails, sourcesOffTrails, type StarSource, type Trail } from '@subgauge/core';
import { XorShift32, addGaussian, addNoise, addTrail, newFrame, randomPositions, toUint16 } from './helpers.js';
import type { Frame } from './helpers.js';

const W = 1400;
const H = 1000;
const SKY = 1000;
const NOISE = 10;

/** Star field: `n` stars of FWHM 3.3 px with a steep (cubed-uniform) brightness spread. */
function starField(rng: XorShift32, n: number): Frame {
  const f = newFrame(W, H, SKY);
  for (const [x, y] of randomPositions(rng, n, W, H, 3, 0)) addGaussian(f, x, y, 2 * Math.PI * 1.4 * 1.4 * (20 + 2500 * rng.uniform() ** 3), 1.4);
  return f;
}

/** A trail through the frame centre (offset `shift` px across) at `angle` degrees. */
function addCrossingTrail(f: Frame, angle: number, peak: number, fwhm: number, shift = 0): void {
  const c = Math.cos((angle * Math.PI) / 180);
  const s = Math.sin((angle * Math.PI) / 180);
  const cx = W / 2 - shift * s;
  const cy = H / 2 + shift * c;
  addTrail(f, cx - 3000 * c, cy - 3000 * s, cx + 3000 * c, cy + 3000 * s, peak, fwhm);
}

/** An imperfect background map, as a mesh estimator would give: 64-px box medians, bilinear between box centres. */
function meshBackground(f: Frame): Float32Array {
  const B = 64;
  const gw = Math.ceil(W / B);
  const gh = Math.ceil(H / B);
  const grid = new Float64Array(gw * gh);
  for (let gy = 0; gy < gh; gy++) {
    for (let gx = 0; gx < gw; gx++) {
      const v: number[] = [];
      for (let y = gy * B; y < Math.min(H, gy * B + B); y++) for (let x = gx * B; x < Math.min(W, gx * B + B); x++) v.push(f.data[y * W + x]!);
      v.sort((a, b) => a - b);
      grid[gy * gw + gx] = v[v.length >> 1]!;
    }
  }
  const out = new Float32Array(W * H);
  for (let y = 0; y < H; y++) {
    const fy = Math.min(gh - 1, Math.max(0, (y + 0.5) / B - 0.5));
    const y0 = Math.floor(fy);
    const y1 = Math.min(gh - 1, y0 + 1);
    for (let x = 0; x < W; x++) {
      const fx = Math.min(gw - 1, Math.max(0, (x + 0.5) / B - 0.5));
      const x0 = Math.floor(fx);
      const x1 = Math.min(gw - 1, x0 + 1);
      const a = grid[y0 * gw + x0]! * (1 - (fx - x0)) + grid[y0 * gw + x1]! * (fx - x0);
      const b = grid[y1 * gw + x0]! * (1 - (fx - x0)) + grid[y1 * gw + x1]! * (fx - x0);
      out[y * W + x] = a * (1 - (fy - y0)) + b * (fy - y0);
    }
  }
  return out;
}

function run(f: Frame, background: number | Float32Array = SKY) {
  const pixels = toUint16(f);
  const img = { pixels, width: W, height: H };
  const stars = detectStars(img, { background, noise: NOISE });
  return detectTrails(img, { background, noise: NOISE, sources: stars.sources });
}

const angleError = (a: number, b: number): number => {
  const d = Math.abs(a - b) % 180;
  return Math.min(d, 180 - d);
};

describe('detectTrails: faint satellite trails', () => {
  const cases: Array<[number, number, number, number]> = [
    // seed, angle (deg), peak (sigma per pixel), FWHM (px)
    [1, 131.8, 3, 2.5],
    [2, 11.4, 3, 2],
    [3, 90, 4, 3],
    [4, 0.4, 4, 2],
    [5, 45, 5, 2.5],
    [6, 178.6, 3.5, 3],
  ];
  for (const [seed, angle, peak, fwhm] of cases) {
    it(`detectTrails(field of 400 stars + ${peak}-sigma trail, FWHM ${fwhm} px, at ${angle} deg) finds one trail within 1 deg (seed ${seed})`, () => {
      const rng = new XorShift32(seed);
      const f = starField(rng, 400);
      addCrossingTrail(f, angle, peak * NOISE, fwhm, 40 * rng.uniform() - 20);
      addNoise(f, rng, NOISE);
      const res = run(f);
      expect(res.trails).toHaveLength(1);
      const t = res.trails[0]!;
      expect(angleError(t.angleDegrees, angle)).toBeLessThan(1);
      expect(t.angleDegrees).toBeGreaterThanOrEqual(0);
      expect(t.angleDegrees).toBeLessThan(180);
      // it crosses the whole frame: the chord through the centre, less at most two 64-px segments
      const c = Math.abs(Math.cos((angle * Math.PI) / 180));
      const s = Math.abs(Math.sin((angle * Math.PI) / 180));
      const chord = Math.min(c > 1e-9 ? W / c : Infinity, s > 1e-9 ? H / s : Infinity);
      expect(t.lengthPixels).toBeGreaterThan(chord - 2 * 64 - 5);
      expect(Math.hypot(t.x1 - t.x0, t.y1 - t.y0)).toBeCloseTo(t.lengthPixels, 6);
      // mean level in the core strip: between half and the full peak for a 2-3 px wide profile
      expect(t.surfaceBrightnessAdu).toBeGreaterThan(0.4 * peak * NOISE);
      expect(t.surfaceBrightnessAdu).toBeLessThan(peak * NOISE);
      expect(t.widthPixels!).toBeGreaterThan(0.6 * fwhm);
      expect(t.widthPixels!).toBeLessThan(1.8 * fwhm);
      expect(t.supportingPixels).toBeGreaterThan(3 * t.lengthPixels);
      expect(t.coverageFraction).toBeGreaterThan(0.8);
    });
  }

  it('detectTrails(two crossing trails) reports both', () => {
    const rng = new XorShift32(8);
    const f = starField(rng, 300);
    addCrossingTrail(f, 20, 5 * NOISE, 2.5);
    addCrossingTrail(f, 110, 4 * NOISE, 2.5, 100);
    addNoise(f, rng, NOISE);
    const res = run(f);
    const angles = res.trails.map((t) => t.angleDegrees).sort((a, b) => a - b);
    expect(angles).toHaveLength(2);
    expect(angleError(angles[0]!, 20)).toBeLessThan(1);
    expect(angleError(angles[1]!, 110)).toBeLessThan(1);
  });

  it('detectTrails(short bright streak, 400 px at 30 sigma) finds it with end points within 70 px', () => {
    const rng = new XorShift32(9);
    const f = starField(rng, 300);
    addTrail(f, 300, 300, 300 + 400 * Math.cos(0.5), 300 + 400 * Math.sin(0.5), 30 * NOISE, 4);
    addNoise(f, rng, NOISE);
    const res = run(f);
    expect(res.trails).toHaveLength(1);
    const t = res.trails[0]!;
    expect(angleError(t.angleDegrees, (0.5 * 180) / Math.PI)).toBeLessThan(1);
    const ends = [
      [t.x0, t.y0],
      [t.x1, t.y1],
    ].sort((a, b) => a[0]! - b[0]!);
    expect(Math.hypot(ends[0]![0]! - 300, ends[0]![1]! - 300)).toBeLessThan(70);
    expect(Math.hypot(ends[1]![0]! - (300 + 400 * Math.cos(0.5)), ends[1]![1]! - (300 + 400 * Math.sin(0.5)))).toBeLessThan(70);
  });
});

describe('detectTrails: clean fields report nothing', () => {
  for (const seed of [11, 12, 13]) {
    it(`detectTrails(sparse field of 400 stars, seed ${seed}) finds no trail`, () => {
      const rng = new XorShift32(seed);
      const f = starField(rng, 400);
      addNoise(f, rng, NOISE);
      expect(run(f).trails).toEqual([]);
    });
    it(`detectTrails(crowded field of 5000 stars, seed ${seed}) finds no trail`, () => {
      const rng = new XorShift32(seed + 100);
      const f = starField(rng, 5000);
      addNoise(f, rng, NOISE);
      expect(run(f).trails).toEqual([]);
    });
    it(`detectTrails(field with a strong gradient removed by a 64-px mesh map, seed ${seed}) finds no trail`, () => {
      const rng = new XorShift32(seed + 200);
      const f = starField(rng, 1500);
      // a sky gradient plus a vignetting-like dip toward the corners: hundreds of sigma across the frame
      for (let y = 0; y < H; y++) {
        for (let x = 0; x < W; x++) {
          const r2 = ((x - W / 2) ** 2 + (y - H / 2) ** 2) / (W * W);
          f.data[y * W + x]! += 2.5 * x + 1.2 * y - 3000 * r2;
        }
      }
      addNoise(f, rng, NOISE);
      expect(run(f, meshBackground(f)).trails).toEqual([]);
    });
  }
});

describe('detectTrails: options and inputs', () => {
  it('detectTrails reports the bin factor it used and checks its inputs', () => {
    const f = newFrame(256, 256, 100);
    addNoise(f, new XorShift32(1), 5);
    const img = { pixels: toUint16(f), width: 256, height: 256 };
    expect(detectTrails(img, { background: 100, noise: 5 }).binFactor).toBe(2);
    expect(detectTrails(img, { background: 100, noise: 5, binFactor: 4 }).binFactor).toBe(4);
    expect(() => detectTrails(img, { background: 100, noise: 5, binFactor: 0 })).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
    expect(() => detectTrails(img, { background: new Float32Array(5), noise: 5 })).toThrow(expect.objectContaining({ code: 'INPUT_SHAPE_MISMATCH' }));
  });
});

describe('sourcesOffTrails', () => {
  // A trail from (10, 20) to (110, 20) (along +x), FWHM 2 px: margin max(3, 2) + 2 = 5 px across and past each end.
  const trail = { x0: 10, y0: 20, x1: 110, y1: 20, widthPixels: 2 } as Trail;
  const at = (id: number, x: number, y: number) => ({ id, x, y }) as StarSource;

  it('sourcesOffTrails drops centroids within 5 px of the segment and keeps the rest (hand-computed geometry)', () => {
    const sources = [
      at(1, 60, 20), // on the line
      at(2, 60, 24.9), // 4.9 px across: on
      at(3, 60, 25.1), // 5.1 px across: off
      at(4, 6, 21), // 4 px before the start, 1 across: on
      at(5, 4, 20), // 6 px before the start: off
      at(6, 114.5, 17), // 4.5 px past the end: on
      at(7, 300, 20), // far along the line's extension: off
    ];
    expect(sourcesOffTrails(sources, [trail]).map((s) => s.id)).toEqual([3, 5, 7]);
  });

  it('sourcesOffTrails measures across a tilted trail and widens the margin with the trail FWHM', () => {
    // 45 degrees through the origin; (10, 0) lies 10 / sqrt 2 = 7.07 px from the line
    const tilted = { x0: 0, y0: 0, x1: 100, y1: 100, widthPixels: 6 } as Trail; // margin 6 + 2 = 8 px
    const s = [at(1, 10, 0), at(2, 20, 0)]; // 7.07 px (on) and 14.1 px (off)
    expect(sourcesOffTrails(s, [tilted]).map((x) => x.id)).toEqual([2]);
    expect(sourcesOffTrails(s, [{ ...tilted, widthPixels: null }]).map((x) => x.id)).toEqual([1, 2]); // margin 5
    expect(sourcesOffTrails(s, []).map((x) => x.id)).toEqual([1, 2]);
  });
});
