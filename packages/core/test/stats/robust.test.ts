import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { contiguousCopy, regionView, viewOf } from '../../src/image/index.js';
import {
  MAD_SIGMA_SCALE,
  madSigma,
  median,
  medianAbsoluteDeviation,
  moments,
  quantile,
  quantiles,
} from '../../src/stats/index.js';
import { sampleView } from '../../src/stats/sample.js';
import { sampleMadDestructive, sampleMedian } from '../../src/stats/robust.js';
import { XorShift32 } from './prng.js';
import { viewCases } from './testViews.js';

describe('median and MAD: REFERENCE.md G check values', () => {
  it('MAD_SIGMA_SCALE is 1/Phi^-1(3/4) = 1.482602218505602 (G33; scipy 1.10 norm.ppf(0.75) = 0.6744897501960817)', () => {
    expect(MAD_SIGMA_SCALE).toBe(1.482602218505602);
    expect(Math.abs(1 / 0.6744897501960817 - MAD_SIGMA_SCALE)).toBeLessThan(1e-12);
  });

  it('medianAbsoluteDeviation([1,2,3,4,100]) is median 3, MAD 1, MAD-sigma 1.482602 (G34; numpy 1.24 / astropy 5.2.1 mad_std)', () => {
    const r = medianAbsoluteDeviation([1, 2, 3, 4, 100]);
    expect(r.median).toBe(3);
    expect(r.mad).toBe(1);
    expect(Math.abs(r.madSigma - 1.482602)).toBeLessThan(1e-6);
    expect(r.count).toBe(5);
  });

  it('medianAbsoluteDeviation([2,4,4,4,5,5,7,9]) gives median 4.5, MAD 0.5 for even n (G35; numpy 1.24 np.median)', () => {
    for (const input of [[2, 4, 4, 4, 5, 5, 7, 9], new Uint16Array([9, 7, 5, 5, 4, 4, 4, 2])]) {
      const r = medianAbsoluteDeviation(input);
      expect(r.median).toBe(4.5);
      expect(r.mad).toBe(0.5);
    }
  });

  it('medianAbsoluteDeviation([0,0,0,16,-16]) is 0 while std (ddof 0) is 10.119289 (G36; numpy 1.24)', () => {
    for (const input of [[0, 0, 0, 16, -16], new Int16Array([0, 0, 0, 16, -16])]) {
      expect(medianAbsoluteDeviation(input).mad).toBe(0);
      expect(Math.abs(moments(input).std - 10.119289)).toBeLessThan(1e-6);
    }
  });

  it('medianAbsoluteDeviation(rounded N(0, 2^2)) is exactly 1 step, MAD-sigma 1.4826 vs true 2 (G59; REFERENCE C.6)', () => {
    const rng = new XorShift32(59);
    const n = 200001;
    const codes = new Int16Array(n);
    for (let i = 0; i < n; i++) codes[i] = Math.round(2 * rng.normal());
    const r = medianAbsoluteDeviation(codes);
    expect(r.median).toBe(0);
    expect(r.mad).toBe(1);
    expect(r.madSigma).toBe(MAD_SIGMA_SCALE);
    expect(Math.abs(moments(codes).std - 2)).toBeLessThan(0.05);
  });
});

describe('median and quantiles', () => {
  it('median(values) of odd and even counts follows numpy 1.24 (mean of the two middle values)', () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median([4, 1, 3, 2])).toBe(2.5);
    expect(median(new Float32Array([0.5, 0.25]))).toBe(0.375);
    expect(median(new Uint8Array([255, 0]))).toBe(127.5);
    expect(median([7])).toBe(7);
  });

  it('median(values) ignores NaN, infinities and BLANK and is NaN with nothing valid', () => {
    expect(median([Number.NaN, 1, 5, Infinity, 3, -Infinity])).toBe(3);
    expect(median(new Int16Array([-32768, 5, 7, -32768]), { blankValue: -32768 })).toBe(6);
    expect(median(new Int32Array([1, 2, 99]), { blankValue: 99n })).toBe(1.5);
    expect(median([])).toBeNaN();
    expect(median([Number.NaN, Number.NaN])).toBeNaN();
    expect(median(new Uint16Array([3, 3]), { blankValue: 3 })).toBeNaN();
    expect(medianAbsoluteDeviation(new Uint16Array(0)).count).toBe(0);
  });

  it('median(view, { mask }) skips pixels whose mask byte is nonzero, addressed by frame (x, y)', () => {
    const pixels = new Uint16Array([1, 2, 3, 4, 5, 6, 7, 8, 100]);
    const mask = new Uint8Array(9);
    mask[8] = 1;
    mask[0] = 1;
    const v = viewOf(pixels, 3, 3);
    expect(median(v, { mask })).toBe(5);
    // Region (1,1)-(2,2) holds 5, 6, 8, 100; 100 is masked.
    expect(median(regionView(v, 1, 1, 2, 2), { mask })).toBe(6);
    expect(median(regionView(viewOf(Float64Array.from(pixels), 3, 3), 1, 1, 2, 2), { mask })).toBe(6);
  });

  it('median(view, { mask }) refuses a mask that does not fit the store', () => {
    let code: string | undefined;
    try {
      median(viewOf(new Uint16Array(9), 3, 3), { mask: new Uint8Array(4) });
    } catch (e) {
      code = (e as { code?: string }).code;
    }
    expect(code).toBe('INPUT_SHAPE_MISMATCH');
  });

  it('quantiles(values, qs) interpolates linearly like numpy 1.24 np.quantile', () => {
    // np.quantile([1, 2, 3, 4], [0, 0.25, 0.5, 0.9, 1]) = [1, 1.75, 2.5, 3.7, 4]
    const expected = [1, 1.75, 2.5, 3.7, 4];
    const fromFloat = quantiles([4, 2, 3, 1], [0, 0.25, 0.5, 0.9, 1]);
    const fromHist = quantiles(new Uint8Array([4, 2, 3, 1]), [0, 0.25, 0.5, 0.9, 1]);
    fromFloat.forEach((v, i) => expect(v).toBeCloseTo(expected[i] as number, 14));
    expect(fromHist).toEqual(fromFloat);
    expect(quantile([5], 0.3)).toBe(5);
    expect(() => quantile([1, 2], 1.5)).toThrow();
  });
});

describe('statistics over views', () => {
  const width = 37;
  const height = 23;
  const rng = new XorShift32(7);
  const u16 = new Uint16Array(width * height);
  for (let i = 0; i < u16.length; i++) u16[i] = 1000 + Math.round(30 * rng.normal());
  u16[5] = 65535;
  const f32 = Float32Array.from(u16, (v, i) => (i % 17 === 0 ? Number.NaN : v / 8));
  const i32 = Int32Array.from(u16, (v) => v * 4096 - 7);

  for (const [label, store] of [
    ['uint16', u16],
    ['float32', f32],
    ['int32 (wide range)', i32],
  ] as const) {
    for (const c of viewCases(store, width, height)) {
      it(`medianAbsoluteDeviation(view) and moments(view) on a ${label} ${c.name} equal those of a contiguous copy`, () => {
        expect(medianAbsoluteDeviation(c.view)).toEqual(medianAbsoluteDeviation(c.copy));
        expect(moments(c.view)).toEqual(moments(c.copy));
        expect(quantiles(c.view, [0.1, 0.9])).toEqual(quantiles(c.copy, [0.1, 0.9]));
        expect(medianAbsoluteDeviation(c.view).count).toBeGreaterThan(0);
      });
    }
  }

  it('medianAbsoluteDeviation(view) on a large uint16 frame (interleaved histogram path) equals the selection path', () => {
    const rng2 = new XorShift32(99);
    const w = 301;
    const h = 250;
    const big = new Uint16Array(w * h);
    for (let i = 0; i < big.length; i++) big[i] = Math.round(5000 + 40 * rng2.normal()) + (i % 997 === 0 ? 60000 - 5000 : 0);
    const view = viewOf(big, w, h);
    const hist = sampleView(view);
    expect(hist.kind).toBe('histogram');
    expect(hist.n).toBe(w * h);
    const viaHist = medianAbsoluteDeviation(view);
    const viaValues = medianAbsoluteDeviation(viewOf(Float64Array.from(big), w, h));
    expect(viaHist).toEqual(viaValues);
    expect(moments(view).mean).toBeCloseTo(moments(Float64Array.from(big)).mean, 9);
  });

  it('moments(view) counts NaN, BLANK and masked pixels separately', () => {
    const m = moments(new Float64Array([1, Number.NaN, 3, -1, Infinity, 5]), { blankValue: -1 });
    expect(m).toMatchObject({ totalCount: 6, validCount: 3, nanCount: 1, blankCount: 1, infiniteCount: 1 });
    expect(m.mean).toBe(3);
    expect(m.min).toBe(1);
    expect(m.max).toBe(5);
    const mask = new Uint8Array([0, 1, 0, 0]);
    expect(moments(new Uint16Array([1, 2, 3, 9]), { mask, blankValue: 9 })).toMatchObject({
      validCount: 2,
      maskedCount: 1,
      blankCount: 1,
      mean: 2,
    });
  });

  it('moments(values, { ddof: 1 }) gives the sample variance (numpy ddof=1: std [1,2,3,4,100] = 43.617657)', () => {
    expect(Math.abs(moments([1, 2, 3, 4, 100], { ddof: 1 }).std - 43.617657)).toBeLessThan(1e-6);
    expect(Math.abs(moments(new Uint8Array([1, 2, 3, 4, 100]), { ddof: 1 }).std - 43.617657)).toBeLessThan(1e-6);
  });

  it('moments(values) keeps precision at mean 1e9 with sigma 1 (corrected two-pass)', () => {
    const a = new Float64Array(9999);
    for (let i = 0; i < a.length; i++) a[i] = 1e9 + (i % 3) - 1;
    expect(moments(a).variance).toBeCloseTo(2 / 3, 9);
  });

  it('moments(BigInt64Array) converts 64-bit integers and honours a bigint BLANK', () => {
    const m = moments(new BigInt64Array([1n, 2n, 3n, -9n]), { blankValue: -9n });
    expect(m.mean).toBe(2);
    expect(m.blankCount).toBe(1);
    expect(median(new BigUint64Array([5n, 1n, 3n]))).toBe(3);
  });
});

describe('properties', () => {
  const smallInts = fc.array(fc.integer({ min: -3000, max: 3000 }), { minLength: 1, maxLength: 60 });

  it('median(x + c) = median(x) + c (property)', () => {
    fc.assert(
      fc.property(smallInts, fc.integer({ min: -10000, max: 10000 }), (xs, c) => {
        expect(median(xs.map((v) => v + c))).toBe(median(xs) + c);
      }),
    );
  });

  it('madSigma(a x) = |a| madSigma(x) (property; MAD itself exactly)', () => {
    fc.assert(
      fc.property(smallInts, fc.integer({ min: -50, max: 50 }), (xs, a) => {
        const scaled = medianAbsoluteDeviation(xs.map((v) => a * v));
        const base = medianAbsoluteDeviation(xs);
        expect(scaled.mad).toBe(Math.abs(a) * base.mad);
        expect(Math.abs(madSigma(xs.map((v) => a * v)) - Math.abs(a) * base.madSigma)).toBeLessThanOrEqual(
          1e-12 * Math.abs(a) * base.madSigma,
        );
      }),
    );
  });

  it('float data holding integers take the exact histogram path and agree with selection (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.oneof(fc.integer({ min: -600000, max: 600000 }), fc.constant(Number.NaN)), { minLength: 1, maxLength: 60 }),
        fc.boolean(),
        (xs, single) => {
          const store = single ? Float32Array.from(xs, (v) => (Number.isNaN(v) ? v : Math.round(v / 64))) : Float64Array.from(xs);
          const view = viewOf(store, store.length, 1);
          const hist = sampleView(view);
          const values = sampleView(view, {}, true);
          if (values.n > 0 && values.max - values.min < 2 ** 19) expect(hist.kind).toBe('histogram');
          expect(hist.tally).toEqual(values.tally);
          // "+ 0" folds -0 (which Math.round can give) into +0; the histogram has no signed zero.
          const mh = sampleMedian(hist) + 0;
          const mv = sampleMedian(values) + 0;
          expect(mh).toEqual(mv);
          expect(sampleMadDestructive(hist, mh)).toEqual(sampleMadDestructive(values, mv));
        },
      ),
    );
    // A non-integer anywhere sends the data to selection.
    expect(sampleView(viewOf(new Float32Array([1, 2, 2.5]), 3, 1)).kind).toBe('values');
    expect(sampleView(viewOf(new Float64Array([0, 2 ** 21]), 2, 1)).kind).toBe('values');
  });

  it('histogram and selection paths agree exactly on integer data (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: -32768, max: 32767 }), { minLength: 0, maxLength: 80 }),
        fc.integer({ min: 1, max: 9 }),
        (xs, width) => {
          const store = Int16Array.from(xs);
          const height = Math.floor(store.length / width);
          const view = viewOf(store, width, height);
          const hist = sampleView(view);
          const values = sampleView(view, {}, true);
          expect(hist.kind).toBe('histogram');
          expect(values.kind).toBe('values');
          const mh = sampleMedian(hist);
          const mv = sampleMedian(values);
          expect(mh).toEqual(mv);
          expect(sampleMadDestructive(hist, mh)).toEqual(sampleMadDestructive(values, mv));
          expect(quantiles(view, [0.05, 0.33, 0.95])).toEqual(
            quantiles(viewOf(Float64Array.from(contiguousCopy(view)), width, height), [0.05, 0.33, 0.95]),
          );
        },
      ),
    );
  });
});
