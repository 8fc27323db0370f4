import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { regionView, viewOf } from '../../src/image/index.js';
import {
  backgroundMode,
  biweight,
  biweightLocation,
  biweightScale,
  dataFacts,
  frameStats,
  medianAbsoluteDeviation,
  moments,
  robustZScores,
  sigmaClippedStats,
} from '../../src/stats/index.js';
import { XorShift32 } from './prng.js';
import { viewCases } from './testViews.js';

const close = (actual: number, expected: number, tol: number) => expect(Math.abs(actual - expected)).toBeLessThanOrEqual(tol);

describe('sigmaClippedStats: REFERENCE.md G check values (astropy 5.2.1 sigma_clipped_stats)', () => {
  it('sigmaClippedStats([10,12,11,13,12,11,10,50,12,11]) rejects 50 and gives mean 11.333333, median 11, std 0.942809 (G37)', () => {
    for (const input of [[10, 12, 11, 13, 12, 11, 10, 50, 12, 11], new Uint8Array([10, 12, 11, 13, 12, 11, 10, 50, 12, 11])]) {
      const r = sigmaClippedStats(input);
      close(r.mean, 11.333333, 1e-6);
      expect(r.median).toBe(11);
      close(r.std, 0.942809, 1e-6);
      expect(r.count).toBe(9);
      expect(r.rejectedCount).toBe(1);
      expect(r.iterations).toBe(2);
    }
  });

  it('sigmaClippedStats([1,2,3,4,100]) with the std scale rejects nothing: mean 22, median 3 (G38)', () => {
    for (const input of [[1, 2, 3, 4, 100], new Int32Array([1, 2, 3, 4, 100])]) {
      const r = sigmaClippedStats(input);
      close(r.mean, 22, 1e-9);
      close(r.median, 3, 1e-9);
      close(r.std, 39.01281840626232, 1e-9);
      expect(r.iterations).toBe(1);
    }
  });

  it('sigmaClippedStats([1,2,3,4,100], { scale: "mad-sigma" }) rejects 100: mean 2.5, median 2.5, std 1.118034 (G39)', () => {
    for (const input of [[1, 2, 3, 4, 100], new Uint16Array([1, 2, 3, 4, 100])]) {
      const r = sigmaClippedStats(input, { scale: 'mad-sigma' });
      close(r.mean, 2.5, 1e-6);
      close(r.median, 2.5, 1e-6);
      close(r.std, 1.118034, 1e-6);
    }
  });

  it('sigmaClippedStats(20 ones and a 5) keeps the ones that sit exactly on a zero-width bound (REFERENCE C.2)', () => {
    const xs = [...Array<number>(20).fill(1), 5];
    for (const input of [xs, Uint16Array.from(xs)]) {
      const r = sigmaClippedStats(input);
      expect(r.count).toBe(20);
      expect(r.std).toBe(0);
      expect(r.lowerBound).toBe(1);
      expect(r.upperBound).toBe(1);
    }
  });

  it('sigmaClippedStats(values, { sigmaLower, sigmaUpper, maxIterations, stdDdof }) honours each parameter', () => {
    const xs = [-40, 1, 2, 3, 2, 1, 2, 3, 2, 1, 2, 40];
    // Only the upper side clips.
    const upper = sigmaClippedStats(xs, { sigmaLower: 100, sigmaUpper: 1.5 });
    expect(upper.count).toBe(11);
    expect(upper.lowerBound).toBeLessThan(-40);
    // One iteration only.
    expect(sigmaClippedStats(xs, { sigma: 1, maxIterations: 1 }).iterations).toBe(1);
    const ddof1 = sigmaClippedStats([1, 2, 3, 4], { stdDdof: 1 });
    close(ddof1.std, moments([1, 2, 3, 4], { ddof: 1 }).std, 1e-15);
    expect(() => sigmaClippedStats(xs, { sigma: -1 })).toThrow();
    expect(sigmaClippedStats([]).count).toBe(0);
    expect(sigmaClippedStats([Number.NaN]).mean).toBeNaN();
  });

  it('sigmaClippedStats(int16 view) clips on the histogram exactly as the selection path does', () => {
    const rng = new XorShift32(11);
    const n = 5001;
    const xs = new Int16Array(n);
    for (let i = 0; i < n; i++) xs[i] = Math.round(100 + 10 * rng.normal() + (i % 50 === 0 ? 3000 * rng.uniform() : 0));
    for (const scale of ['std', 'mad-sigma'] as const) {
      const h = sigmaClippedStats(xs, { scale, sigma: 2.5 });
      const v = sigmaClippedStats(Float64Array.from(xs), { scale, sigma: 2.5 });
      expect(h.count).toBe(v.count);
      expect(h.median).toBe(v.median);
      expect(h.iterations).toBe(v.iterations);
      close(h.mean, v.mean, 1e-12 * Math.abs(v.mean));
      close(h.std, v.std, 1e-12 * v.std);
    }
  });
});

describe('biweight: REFERENCE.md G check values (astropy 5.2.1 biweight_location / biweight_scale)', () => {
  it('biweight([1,2,3,4,100]) is location 2.570650, scale 1.424399 (G40)', () => {
    for (const input of [[1, 2, 3, 4, 100], new Uint8Array([1, 2, 3, 4, 100])]) {
      const r = biweight(input);
      close(r.location, 2.57065, 1e-6);
      close(r.scale, 1.424399, 1e-6);
    }
  });

  it('biweight([10,12,11,13,12,11,10,50,12,11]) is location 11.385341, scale 1.113491 (G41)', () => {
    close(biweightLocation([10, 12, 11, 13, 12, 11, 10, 50, 12, 11]), 11.385341, 1e-6);
    close(biweightScale([10, 12, 11, 13, 12, 11, 10, 50, 12, 11]), 1.113491, 1e-6);
  });

  it('biweight([1,1,2,2,4,6,9]) takes one step from the median: 2.185277, 2.523923 (REFERENCE C.3)', () => {
    const r = biweight(new Int16Array([1, 1, 2, 2, 4, 6, 9]));
    close(r.location, 2.185277, 1e-6);
    close(r.scale, 2.523923, 1e-6);
  });

  it('biweight([0,0,0,16,-16]) returns the median and scale 0 when MAD = 0 (astropy 5.2.1)', () => {
    expect(biweight([0, 0, 0, 16, -16])).toMatchObject({ location: 0, scale: 0, mad: 0 });
    expect(biweight([]).count).toBe(0);
  });
});

describe('backgroundMode and robustZScores', () => {
  it('backgroundMode(arange(100)) is 49.5 (G42; photutils 1.6.0 SExtractorBackground doc example)', () => {
    const xs = Array.from({ length: 100 }, (_, i) => i);
    const r = backgroundMode(xs);
    close(r.value, 49.5, 1e-9);
    expect(r.method).toBe('mode');
  });

  it('backgroundMode([5,5,5,6,6,6,6,7,7,8,9,12,15]) clips 12 and 15 and gives 5.454545 (G43; (mean-med)/std = 0.2965)', () => {
    const r = backgroundMode(new Uint8Array([5, 5, 5, 6, 6, 6, 6, 7, 7, 8, 9, 12, 15]));
    close(r.value, 5.454545, 1e-6);
    expect(r.method).toBe('mode');
    close(r.mean, 6.363636, 1e-6);
    close(r.std, 1.226431, 1e-6);
    close((r.mean - r.median) / r.std, 0.2965, 1e-4);
  });

  it('backgroundMode(skewed) falls back to the median when |mean - median| / std >= 0.3, and to the mean when std = 0', () => {
    const skewed = backgroundMode([0, 0, 0, 0, 0, 0, 1, 2, 3, 4, 5]);
    expect(skewed.method).toBe('median');
    expect(skewed.value).toBe(skewed.median);
    const flat = backgroundMode([7, 7, 7]);
    expect(flat).toMatchObject({ method: 'mean', value: 7 });
    const pearson = backgroundMode(Array.from({ length: 100 }, (_, i) => i), { alpha: 3 });
    close(pearson.value, 49.5, 1e-9);
  });

  it('robustZScores([101,99,100,102,98,100,130]) gives z(130) = 20.2347 (G58)', () => {
    const r = robustZScores([101, 99, 100, 102, 98, 100, 130]);
    close(r.z[6] as number, 20.2347, 1e-4);
    expect(r.center).toBe(100);
    expect(r.scaleKind).toBe('mad-sigma');
  });

  it('robustZScores(values) falls back to the std when MAD = 0 and ignores NaN for the scale', () => {
    const r = robustZScores([0, 0, 0, 16, -16, Number.NaN]);
    expect(r.scaleKind).toBe('std');
    close(r.z[3] as number, 16 / 10.119288512538814, 1e-12);
    expect(r.z[5]).toBeNaN();
    const none = robustZScores([3, 3, 3]);
    expect(none.scaleKind).toBe('none');
    expect(Array.from(none.z)).toEqual([0, 0, 0]);
  });
});

describe('frameStats', () => {
  const width = 41;
  const height = 29;
  const rng = new XorShift32(3);
  const u16 = new Uint16Array(width * height);
  for (let i = 0; i < u16.length; i++) u16[i] = Math.round(2000 + 25 * rng.normal());
  for (let i = 0; i < 30; i++) u16[rng.below(u16.length)] = 65535;
  const f64 = Float64Array.from(u16, (v, i) => (i % 23 === 0 ? Number.NaN : v * 0.5));

  it('frameStats(uint16 view) equals the separate statistics and agrees with the selection path', () => {
    const f = frameStats(viewOf(u16, width, height));
    expect(f.method).toBe('histogram');
    const mad = medianAbsoluteDeviation(u16);
    expect(f.median).toBe(mad.median);
    expect(f.mad).toBe(mad.mad);
    const m = moments(u16);
    close(f.mean, m.mean, 1e-12 * m.mean);
    close(f.std, m.std, 1e-12 * m.std);
    expect(f.max).toBe(65535);
    const clip = sigmaClippedStats(u16);
    expect(f.clipped).toEqual(clip);
    // Float data holding the same integers take the histogram path too.
    expect(frameStats(viewOf(Float64Array.from(u16), width, height))).toEqual(f);
    // Quarter values are not integers: the selection path, with every statistic scaled exactly by 1/4.
    const g = frameStats(viewOf(Float64Array.from(u16, (v) => v / 4), width, height));
    expect(g.method).toBe('selection');
    expect(g.median).toBe(f.median / 4);
    expect(g.mad).toBe(f.mad / 4);
    expect(g.clipped?.count).toBe(f.clipped?.count);
    expect(g.clipped?.median).toBe((f.clipped?.median ?? 0) / 4);
    close(g.clipped?.mean ?? 0, (f.clipped?.mean ?? 1) / 4, 1e-12 * 2000);
  });

  for (const [label, store] of [
    ['uint16', u16],
    ['float64 with NaN', f64],
  ] as const) {
    for (const c of viewCases(store, width, height)) {
      it(`frameStats(view) on a ${label} ${c.name} equals frameStats of a contiguous copy`, () => {
        const a = frameStats(c.view, { clip: { scale: 'mad-sigma' } });
        const b = frameStats(c.copy, { clip: { scale: 'mad-sigma' } });
        expect({ ...a, width: 0, height: 0 }).toEqual({ ...b, width: 0, height: 0 });
        expect(a.validCount).toBeGreaterThan(0);
      });
    }
  }

  it('frameStats(view, { clip: false }) skips clipping and counts NaN pixels', () => {
    const f = frameStats(viewOf(f64, width, height), { clip: false });
    expect(f.clipped).toBeUndefined();
    expect(f.nanCount).toBe(Math.ceil((width * height) / 23));
    expect(frameStats([]).validCount).toBe(0);
  });
});

describe('view-taking statistics on every view shape', () => {
  const width = 33;
  const height = 27;
  const rng = new XorShift32(31);
  const i16 = new Int16Array(width * height);
  for (let i = 0; i < i16.length; i++) i16[i] = Math.round(-50 + 9 * rng.normal()) + (rng.below(40) === 0 ? 400 : 0);
  const f32 = Float32Array.from(i16, (v, i) => (i % 29 === 0 ? Number.NaN : v / 3));
  for (const [label, store] of [
    ['int16', i16],
    ['float32', f32],
  ] as const) {
    for (const c of viewCases(store, width, height)) {
      it(`sigmaClippedStats, biweight, backgroundMode and dataFacts on a ${label} ${c.name} equal those of a contiguous copy`, () => {
        for (const scale of ['std', 'mad-sigma'] as const) {
          expect(sigmaClippedStats(c.view, { scale })).toEqual(sigmaClippedStats(c.copy, { scale }));
        }
        expect(biweight(c.view)).toEqual(biweight(c.copy));
        expect(backgroundMode(c.view)).toEqual(backgroundMode(c.copy));
        expect(dataFacts(c.view)).toEqual(dataFacts(c.copy));
        expect(sigmaClippedStats(c.view).count).toBeGreaterThan(0);
      });
    }
  }

  it('frameStats(regionView(regionView(v, ...), ...)) equals frameStats of the combined region (property)', () => {
    const v = viewOf(i16, width, height);
    fc.assert(
      fc.property(fc.nat(width - 2), fc.nat(height - 2), fc.nat(), fc.nat(), (x1, y1, a, b) => {
        const w1 = 2 + (a % (width - x1 - 1));
        const h1 = 2 + (b % (height - y1 - 1));
        const outer = regionView(v, x1, y1, w1, h1);
        const x2 = a % w1;
        const y2 = b % h1;
        const inner = regionView(outer, x2, y2, w1 - x2, h1 - y2);
        const combined = regionView(v, x1 + x2, y1 + y2, w1 - x2, h1 - y2);
        expect(frameStats(inner)).toEqual(frameStats(combined));
      }),
    );
  });
});
