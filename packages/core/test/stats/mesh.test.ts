import { describe, expect, it } from 'vitest';
import { regionView, viewOf } from '../../src/image/index.js';
import {
  backgroundMesh,
  boxMedianMesh,
  median,
  meshLevelAt,
  renderMeshMap,
  sigmaClippedStats,
} from '../../src/stats/index.js';
import { clipValuesInPlace } from '../../src/stats/sigmaClip.js';
import { clipWeighted, sortAndCount } from '../../src/stats/weighted.js';
import { XorShift32 } from './prng.js';
import { viewCases } from './testViews.js';

interface SimFrame {
  pixels: Uint16Array;
  width: number;
  height: number;
  /** True plane: level(x, y) = base + gx (x - xc) + gy (y - yc). */
  base: number;
  gx: number;
  gy: number;
  sigma: number;
}

/** A sky frame with a known linear gradient, Gaussian noise and Gaussian stars, quantized to uint16. */
function simulate(seed: number, width: number, height: number, gx: number, gy: number, stars: number): SimFrame {
  const rng = new XorShift32(seed);
  const base = 1200;
  const sigma = 12;
  const xc = (width - 1) / 2;
  const yc = (height - 1) / 2;
  const img = new Float64Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) img[y * width + x] = base + gx * (x - xc) + gy * (y - yc) + sigma * rng.normal();
  }
  for (let s = 0; s < stars; s++) {
    const sx = rng.uniform() * width;
    const sy = rng.uniform() * height;
    const peak = 200 + 20000 * rng.uniform() * rng.uniform();
    const w = 1.2 + 1.5 * rng.uniform();
    const r = Math.ceil(5 * w);
    for (let y = Math.max(0, Math.floor(sy - r)); y < Math.min(height, sy + r); y++) {
      for (let x = Math.max(0, Math.floor(sx - r)); x < Math.min(width, sx + r); x++) {
        const d2 = (x - sx) ** 2 + (y - sy) ** 2;
        img[y * width + x] = (img[y * width + x] as number) + peak * Math.exp(-d2 / (2 * w * w));
      }
    }
  }
  const pixels = new Uint16Array(width * height);
  for (let i = 0; i < img.length; i++) pixels[i] = Math.min(65535, Math.max(0, Math.round(img[i] as number)));
  return { pixels, width, height, base, gx, gy, sigma };
}

describe('backgroundMesh on simulated frames (gradient + stars, seeded)', () => {
  // Truth: a plane's range over the frame is |gx| (W - 1) + |gy| (H - 1) and its median over the frame is the
  // value at the centre (the plane is symmetric about it), so percent = 100 range / base.
  const cases = [
    { seed: 1, width: 640, height: 480, gx: 0.05, gy: -0.02, stars: 150 },
    { seed: 2, width: 517, height: 389, gx: -0.01, gy: 0.04, stars: 120 },
    { seed: 3, width: 600, height: 400, gx: 0, gy: 0, stars: 200 },
  ];
  for (const c of cases) {
    it(`backgroundMesh(view) recovers gradient ${c.gx}, ${c.gy} ADU/px within 0.5 percentage points and the level within 0.2 sigma (${c.width}x${c.height})`, () => {
      const f = simulate(c.seed, c.width, c.height, c.gx, c.gy, c.stars);
      const mesh = backgroundMesh(viewOf(f.pixels, f.width, f.height), { boxSize: 64 });
      const truePercent = (100 * (Math.abs(f.gx) * (f.width - 1) + Math.abs(f.gy) * (f.height - 1))) / f.base;
      expect(Math.abs(mesh.gradient.percent - truePercent)).toBeLessThan(0.5);
      expect(Math.abs(mesh.medianLevelAdu - f.base)).toBeLessThan(0.2 * f.sigma);
      expect(Math.abs(mesh.gradient.centreLevelAdu - f.base)).toBeLessThan(0.2 * f.sigma);
      expect(Math.abs(mesh.medianNoiseAdu - f.sigma)).toBeLessThan(0.1 * f.sigma);
      if (truePercent > 0) {
        const trueDir = (((Math.atan2(f.gy, f.gx) * 180) / Math.PI) + 360) % 360;
        const dd = Math.abs(((mesh.gradient.directionDegrees - trueDir + 540) % 360) - 180);
        expect(dd).toBeLessThan(5);
      }
      // Partial edge boxes are kept.
      expect(mesh.columns).toBe(Math.ceil(f.width / 64));
      expect(mesh.rows).toBe(Math.ceil(f.height / 64));
      // The smooth map follows the plane to a fraction of the noise away from the edges.
      const x = Math.floor(f.width * 0.3);
      const y = Math.floor(f.height * 0.6);
      const truth = f.base + f.gx * (x - (f.width - 1) / 2) + f.gy * (y - (f.height - 1) / 2);
      expect(Math.abs(meshLevelAt(mesh, x, y) - truth)).toBeLessThan(0.5 * f.sigma);
    });
  }

  it('backgroundMesh(view, { gradient direction }) reports 0 deg for +x and 90 deg for +y (storage order)', () => {
    const fx = simulate(4, 384, 256, 0.05, 0, 0);
    const fy = simulate(5, 384, 256, 0, 0.05, 0);
    expect(backgroundMesh(viewOf(fx.pixels, fx.width, fx.height)).gradient.directionDegrees).toBeLessThan(3);
    expect(Math.abs(backgroundMesh(viewOf(fy.pixels, fy.width, fy.height)).gradient.directionDegrees - 90)).toBeLessThan(3);
  });

  it('backgroundMesh(view, { mask, saturationAdu }) marks boxes with too many bad pixels invalid and fills them from neighbours', () => {
    const f = simulate(6, 320, 256, 0.02, 0, 0);
    const mask = new Uint8Array(f.width * f.height);
    for (let y = 0; y < 64; y++) for (let x = 64; x < 128; x++) mask[y * f.width + x] = 1;
    // Saturate most of another box.
    for (let y = 128; y < 192; y++) for (let x = 0; x < 50; x++) f.pixels[y * f.width + x] = 65535;
    const mesh = backgroundMesh(viewOf(f.pixels, f.width, f.height), { mask, saturationAdu: 65535 });
    expect(mesh.valid[1]).toBe(0);
    expect(mesh.valid[2 * mesh.columns]).toBe(0);
    expect(mesh.validCount).toBe(mesh.columns * mesh.rows - 2);
    expect(mesh.rawLevelAdu[1]).toBeNaN();
    expect(Number.isFinite(mesh.levelAdu[1])).toBe(true);
    expect(Math.abs((mesh.levelAdu[1] as number) - f.base - 0.02 * (95.5 - 159.5))).toBeLessThan(3);
    expect(mesh.pixels.maskedCount).toBe(64 * 64);
    expect(mesh.pixels.saturatedCount).toBeGreaterThanOrEqual(64 * 50);
  });

  it('renderMeshMap(mesh) equals meshLevelAt at every pixel and holds the value beyond the outer centres', () => {
    const f = simulate(7, 150, 97, 0.1, 0.05, 10);
    const mesh = backgroundMesh(viewOf(f.pixels, f.width, f.height), { boxSize: 32 });
    const map = renderMeshMap(mesh);
    for (const [x, y] of [[0, 0], [149, 96], [75, 40], [16, 17], [140, 3]] as const) {
      expect(map[y * f.width + x]).toBeCloseTo(meshLevelAt(mesh, x, y), 9);
    }
    expect(meshLevelAt(mesh, 0, 0)).toBe(mesh.levelAdu[0]);
    const noise = renderMeshMap(mesh, 'noise', new Float32Array(f.width * f.height));
    expect(noise[0]).toBeCloseTo(mesh.noiseAdu[0] as number, 3);
  });

  it('backgroundMesh(view) with no valid pixel gives NaN levels and validCount 0', () => {
    const m = backgroundMesh(viewOf(new Float32Array(64 * 64).fill(Number.NaN), 64, 64));
    expect(m.validCount).toBe(0);
    expect(m.medianLevelAdu).toBeNaN();
    expect(m.gradient.percent).toBeNaN();
  });

  for (const c of viewCases(simulate(8, 203, 141, 0.03, 0.01, 20).pixels, 203, 141)) {
    it(`backgroundMesh(view) on a uint16 ${c.name} equals the mesh of a contiguous copy`, () => {
      const a = backgroundMesh(c.view, { boxSize: 24 });
      const b = backgroundMesh(c.copy, { boxSize: 24 });
      expect(Array.from(a.levelAdu)).toEqual(Array.from(b.levelAdu));
      expect(Array.from(a.noiseAdu)).toEqual(Array.from(b.noiseAdu));
      expect(a.gradient).toEqual(b.gradient);
    });
  }
});

describe('boxMedianMesh', () => {
  const f = simulate(9, 300, 200, 0.02, 0.01, 30);
  it('boxMedianMesh(view, 64) drops partial edge boxes and gives np.median of each box (ref_bench step e)', () => {
    const view = viewOf(f.pixels, f.width, f.height);
    const m = boxMedianMesh(view, 64);
    expect([m.columns, m.rows]).toEqual([4, 3]);
    for (let r = 0; r < m.rows; r++) {
      for (let c = 0; c < m.columns; c++) {
        const region = regionView(view, c * 64, r * 64, 64, 64);
        expect(m.medians[r * m.columns + c]).toBe(median(region));
      }
    }
  });

  it('boxMedianMesh(view, 50, { edges: "keep" }) keeps partial boxes; uint16, float64, masked and CFA views agree', () => {
    const view = viewOf(f.pixels, f.width, f.height);
    const keep = boxMedianMesh(view, 50, { edges: 'keep', boxHeight: 30 });
    expect([keep.columns, keep.rows]).toEqual([6, 7]);
    const asFloat = boxMedianMesh(viewOf(Float64Array.from(f.pixels), f.width, f.height), 50, { edges: 'keep', boxHeight: 30 });
    expect(Array.from(keep.medians)).toEqual(Array.from(asFloat.medians));
    const last = regionView(view, 250, 180, 50, 20);
    expect(keep.medians[6 * 6 + 5]).toBe(median(last));
    const mask = new Uint8Array(f.width * f.height);
    mask[0] = 1;
    const masked = boxMedianMesh(view, 50, { edges: 'keep', boxHeight: 30, mask });
    expect(masked.medians[0]).toBe(median(regionView(view, 0, 0, 50, 30), { mask }));
    for (const c of viewCases(f.pixels, f.width, f.height)) {
      expect(Array.from(boxMedianMesh(c.view, 16, { edges: 'keep' }).medians)).toEqual(
        Array.from(boxMedianMesh(c.copy, 16, { edges: 'keep' }).medians),
      );
    }
  });
});

describe('weighted clipping used by the mesh', () => {
  it('clipWeighted(sorted counts) equals clipValuesInPlace and sigmaClippedStats on the same values', () => {
    const rng = new XorShift32(21);
    for (let t = 0; t < 30; t++) {
      const n = 1 + rng.below(500);
      const xs = new Float64Array(n);
      for (let i = 0; i < n; i++) xs[i] = Math.round(50 + 5 * rng.normal() + (rng.below(20) === 0 ? 200 * rng.uniform() : 0));
      for (const scale of ['std', 'mad-sigma'] as const) {
        const values = new Float64Array(n);
        const counts = new Uint32Array(n);
        const m = sortAndCount(Float64Array.from(xs), n, values, counts);
        const w = clipWeighted(values, counts, m, { scale });
        const v = clipValuesInPlace(Float64Array.from(xs), n, { scale });
        const s = sigmaClippedStats(Uint16Array.from(xs), { scale });
        expect(w.count).toBe(v.count);
        expect(w.median).toBe(v.median);
        expect(w.iterations).toBe(v.iterations);
        expect(w.mean).toBeCloseTo(v.mean, 10);
        expect(w.std).toBeCloseTo(v.std, 10);
        expect(s.count).toBe(w.count);
      }
    }
  });
});
