import { describe, expect, it } from 'vitest';
import { pairStatistics, pairStatisticsTiles } from '../../src/camera/pairStatistics.js';
import { cfaPlaneView, regionView, tileViews } from '../../src/camera/view.js';
import type { PixelView } from '../../src/camera/view.js';
import { frameFacts, frameLevel, lineNoise } from '../../src/camera/frameStatistics.js';
import { rng } from './helpers.js';

const view = (data: PixelView['data'], width: number, height: number): PixelView =>
  ({ data, width, height, strideX: 1, strideY: width, offset: 0 });

/** Two-pass float64 reference on copied values. */
function naive(a: number[], b: number[]) {
  const n = a.length;
  const mean = (v: number[]) => v.reduce((s, x) => s + x, 0) / v.length;
  const variance = (v: number[]) => { const m = mean(v); return v.reduce((s, x) => s + (x - m) ** 2, 0) / (v.length - 1); };
  const d = a.map((x, i) => x - b[i]!);
  return { n, meanA: mean(a), meanB: mean(b), varianceA: variance(a), varianceB: variance(b), differenceMean: mean(d), differenceVariance: variance(d) };
}

function copyView(v: PixelView): number[] {
  const out: number[] = [];
  for (let y = 0; y < v.height; y++) for (let x = 0; x < v.width; x++) out.push(v.data[v.offset + y * v.strideY + x * v.strideX]!);
  return out;
}

function flatPair(seed: number, w: number, h: number, level: number) {
  const r = rng(seed);
  const a = new Uint16Array(w * h), b = new Uint16Array(w * h);
  for (let i = 0; i < w * h; i++) {
    const p = level * (1 + 0.01 * Math.sin(i));
    a[i] = Math.round(p + Math.sqrt(p) * r.normal());
    b[i] = Math.round(p + Math.sqrt(p) * r.normal());
  }
  return { a, b };
}

describe('pairStatistics', () => {
  it('pairStatistics(a, b, {clipSigma: null}) equals a two-pass reference on the full frame, a region, a CFA plane and odd sizes', () => {
    const w = 37, h = 23;
    const { a, b } = flatPair(1, w, h, 10000);
    const va = view(a, w, h), vb = view(b, w, h);
    const cases: [PixelView, PixelView][] = [
      [va, vb],
      [regionView(va, { x: 30, y: 0, width: 7, height: 23 }), regionView(vb, { x: 30, y: 0, width: 7, height: 23 })],
      [cfaPlaneView(va, 1, 0), cfaPlaneView(vb, 1, 0)],
      [cfaPlaneView(va, 0, 1), cfaPlaneView(vb, 0, 1)],
    ];
    for (const [x, y] of cases) {
      const s = pairStatistics(x, y, { clipSigma: null });
      const ref = naive(copyView(x), copyView(y));
      expect(s.pixelCount).toBe(ref.n);
      for (const k of ['meanA', 'meanB', 'varianceA', 'varianceB', 'differenceMean', 'differenceVariance'] as const) {
        expect(Math.abs(s[k] - ref[k]) / Math.max(1, Math.abs(ref[k]))).toBeLessThan(1e-12);
      }
      expect(s.clipped).toBeNull();
    }
  });
  it('pairStatistics(a, b) keeps precision at a 10⁴ level with σ ≈ 1 (shifted float64 sums)', () => {
    const n = 20000;
    const r = rng(7);
    const a = new Float64Array(n), b = new Float64Array(n);
    for (let i = 0; i < n; i++) { a[i] = 1e8 + r.normal(); b[i] = 1e8 + r.normal(); }
    const s = pairStatistics(view(a, n, 1), view(b, n, 1), { clipSigma: null });
    const ref = naive([...a], [...b]);
    expect(Math.abs(s.differenceVariance - ref.differenceVariance) / ref.differenceVariance).toBeLessThan(1e-9);
    expect(Math.abs(s.varianceA - ref.varianceA) / ref.varianceA).toBeLessThan(1e-9);
  });
  it('pairStatistics(a, b) clipped at 5σ rejects cosmic-ray hits and recovers the temporal variance', () => {
    const w = 200, h = 200;
    const { a, b } = flatPair(3, w, h, 5000);
    const clean = pairStatistics(view(a, w, h), view(b, w, h), { clipSigma: null });
    for (let k = 0; k < 40; k++) a[(k * 997) % (w * h)] = 60000;
    const s = pairStatistics(view(a, w, h), view(b, w, h));
    expect(s.differenceVariance).toBeGreaterThan(10 * clean.differenceVariance);
    expect(s.clipped!.rejectedCount).toBeGreaterThanOrEqual(40);
    expect(s.clipped!.rejectedCount).toBeLessThan(60);
    expect(Math.abs(s.clipped!.differenceVariance / clean.differenceVariance - 1)).toBeLessThan(0.01);
    expect(s.clipped!.clipSigma).toBe(5);
  });
  it('pairStatistics(a, b) on views of different sizes throws INPUT_SHAPE_MISMATCH', () => {
    const a = new Uint16Array(12);
    expect(() => pairStatistics(view(a, 4, 3), view(a, 3, 4))).toThrowError(expect.objectContaining({ code: 'INPUT_SHAPE_MISMATCH' }));
  });
  it('pairStatistics(a, b) skips NaN pixels and returns NaN moments for an all-NaN pair', () => {
    const a = new Float32Array([1, 2, NaN, 4]), b = new Float32Array([0, 0, 0, 0]);
    const s = pairStatistics(view(a, 4, 1), view(b, 4, 1), { clipSigma: null });
    expect(s.pixelCount).toBe(3);
    expect(s.meanA).toBeCloseTo(7 / 3, 12);
    const empty = pairStatistics(view(new Float32Array([NaN, NaN]), 2, 1), view(new Float32Array(2), 2, 1));
    expect(empty.pixelCount).toBe(0);
    expect(empty.differenceVariance).toBeNaN();
  });
  it('pairStatisticsTiles(a, b, 3, 2) covers every pixel exactly once and matches per-tile references', () => {
    const w = 31, h = 17;
    const { a, b } = flatPair(5, w, h, 1000);
    const tiles = pairStatisticsTiles(view(a, w, h), view(b, w, h), 3, 2, { clipSigma: null });
    expect(tiles).toHaveLength(6);
    expect(tiles.reduce((s, t) => s + t.pixelCount, 0)).toBe(w * h);
    const tv = tileViews(view(a, w, h), 3, 2), tb = tileViews(view(b, w, h), 3, 2);
    tiles.forEach((t, i) => {
      const ref = naive(copyView(tv[i]!), copyView(tb[i]!));
      expect(Math.abs(t.differenceVariance - ref.differenceVariance) / ref.differenceVariance).toBeLessThan(1e-12);
    });
  });
});

describe('frame statistics', () => {
  it('frameFacts(view) counts pixels at the extremes and non-integer values', () => {
    const f = frameFacts(view(new Float32Array([3, 1, 1, 7, 7, 7, 2.5, NaN]), 8, 1));
    expect(f).toMatchObject({ pixelCount: 7, min: 1, max: 7, countAtMin: 2, countAtMax: 3, nonIntegerCount: 1 });
    expect(f.mean).toBeCloseTo((3 + 1 + 1 + 21 + 2.5) / 7, 12);
  });
  it('frameLevel(view) gives the median, and a clipped mean that ignores hot pixels', () => {
    const r = rng(11);
    const n = 10000;
    const d = new Float64Array(n);
    for (let i = 0; i < n; i++) d[i] = 100 + 2 * r.normal();
    for (let i = 0; i < 20; i++) d[i * 50] = 5000;
    const l = frameLevel(view(d, n, 1));
    expect(l.mean).toBeGreaterThan(109);
    expect(Math.abs(l.clippedMean - 100)).toBeLessThan(0.1);
    expect(l.keptCount).toBe(n - 20);
    expect(Math.abs(l.median - 100)).toBeLessThan(0.1);
  });
  it('lineNoise(a, b, moments) finds an injected temporal row offset and no column noise', () => {
    const w = 400, h = 300;
    const r = rng(13);
    const a = new Float64Array(w * h), b = new Float64Array(w * h);
    for (let y = 0; y < h; y++) {
      const ra = 3 * r.normal(), rb = 3 * r.normal();
      for (let x = 0; x < w; x++) { a[y * w + x] = 500 + ra + 5 * r.normal(); b[y * w + x] = 500 + rb + 5 * r.normal(); }
    }
    const m = pairStatistics(view(a, w, h), view(b, w, h), { clipSigma: null });
    const ln = lineNoise(view(a, w, h), view(b, w, h), m);
    expect(Math.abs(ln.rowTemporalAdu - 3) / 3).toBeLessThan(0.15);
    expect(ln.columnTemporalAdu).toBeLessThan(0.5);
    expect(ln.columnFixedAdu).toBeLessThan(0.5);
  });
});

describe('pairStatistics difference median on 16-bit integers', () => {
  it('pairStatistics(uint16 pair) clips about the same median as on the float copy (histogram path = selection path)', () => {
    for (const [w, h, seed] of [[31, 17, 1], [64, 64, 2], [5, 4, 3]] as const) {
      const a = new Uint16Array(w * h);
      const b = new Uint16Array(w * h);
      let s = seed;
      for (let i = 0; i < a.length; i++) {
        s = (s * 1103515245 + 12345) >>> 0;
        a[i] = 1000 + (s >>> 20);
        s = (s * 1103515245 + 12345) >>> 0;
        b[i] = 1000 + (s >>> 20) + (i % 97 === 0 ? 3000 : 0);
      }
      const view = (d: Uint16Array | Float64Array) => ({ data: d, width: w, height: h, strideX: 1, strideY: w, offset: 0 });
      const ints = pairStatistics(view(a), view(b));
      const floats = pairStatistics(view(Float64Array.from(a)), view(Float64Array.from(b)));
      expect(ints).toEqual(floats);
    }
  });

  // The integer path takes every clipping window's difference moments from the histogram and makes one pass at
  // the end; the float path makes a pass per window. Both must agree bit for bit (sums of integers are exact).
  const noisyPair = (w: number, h: number, seed: number, spikes: number) => {
    const a = new Uint16Array(w * h);
    const b = new Uint16Array(w * h);
    let s = seed;
    const next = () => ((s = (s * 1103515245 + 12345) >>> 0) >>> 16) / 65536;
    for (let i = 0; i < a.length; i++) {
      const gauss = (next() + next() + next() + next() - 2) * 30; // sum of uniforms, sigma ~ 17
      a[i] = Math.round(2000 + gauss);
      b[i] = Math.round(2000 + (next() + next() + next() + next() - 2) * 30);
      if (next() < spikes) a[i] = Math.min(65535, a[i]! + Math.round(200 + next() * 5000)); // cosmic-ray hits
    }
    return { a, b };
  };

  it('pairStatistics(uint16 pair) iterating its clip on the histogram equals the per-window passes (full, strided, Int16)', () => {
    let iterated = 0;
    for (const [w, h, seed, spikes] of [[200, 150, 7, 0.01], [97, 61, 8, 0.05], [64, 64, 9, 0]] as const) {
      const { a, b } = noisyPair(w, h, seed, spikes);
      const full = (d: ArrayLike<number> & { length: number }) => ({ data: d as Uint16Array, width: w, height: h, strideX: 1, strideY: w, offset: 0 });
      const plane = (d: ArrayLike<number> & { length: number }) => ({ data: d as Uint16Array, width: Math.floor(w / 2), height: Math.floor(h / 2), strideX: 2, strideY: 2 * w, offset: w + 1 });
      for (const view of [full, plane]) {
        const ints = pairStatistics(view(a), view(b));
        expect(ints).toEqual(pairStatistics(view(Float64Array.from(a)), view(Float64Array.from(b))));
        if ((ints.clipped?.iterations ?? 0) > 1) iterated++;
        const i16 = pairStatistics(view(Int16Array.from(a, (v) => v - 2000)), view(Int16Array.from(b, (v) => v - 2000)));
        expect(i16.clipped?.differenceVariance).toBe(ints.clipped?.differenceVariance);
        expect(i16.clipped?.rejectedCount).toBe(ints.clipped?.rejectedCount);
      }
    }
    expect(iterated).toBeGreaterThan(0); // the clipping loop ran more than once somewhere
  });

  it('pairStatistics(uint16 pair) whose integer sums could pass 2^53 falls back to per-window passes', () => {
    const w = 1600, h = 1500; // n * 65535^2 > 2^53
    const { a, b } = noisyPair(w, h, 11, 0.001);
    a[0] = 65535;
    b[0] = 0;
    const view = (d: Uint16Array | Float64Array) => ({ data: d, width: w, height: h, strideX: 1, strideY: w, offset: 0 });
    const ints = pairStatistics(view(a), view(b));
    expect(ints).toEqual(pairStatistics(view(Float64Array.from(a)), view(Float64Array.from(b))));
    expect(ints.clipped?.rejectedCount).toBeGreaterThan(0);
    // the shared histogram is left clear: the next pair is measured as if it were the first
    const next = noisyPair(64, 48, 12, 0.01);
    const nextB = next.b.map((v) => v + 37); // differences centred elsewhere than the big pair's
    const small = (d: Uint16Array | Float64Array) => ({ data: d, width: 64, height: 48, strideX: 1, strideY: 64, offset: 0 });
    const after = pairStatistics(small(next.a), small(nextB));
    expect(after).toEqual(pairStatistics(small(Float64Array.from(next.a)), small(Float64Array.from(nextB))));
    expect(after.clipped?.differenceMedian).toBeLessThan(-30);
  });
});
