import { medianInPlace } from './select.js';
import type { PixelView } from './view.js';
import type { PairMoments } from './pairStatistics.js';

/** Facts about one frame from one pass: extremes, how many pixels sit at them, mean, and integer-ness. */
export interface FrameFacts {
  /** Finite pixels. */
  pixelCount: number;
  min: number;
  max: number;
  mean: number;
  countAtMin: number;
  countAtMax: number;
  /** Finite pixels whose value is not an integer (processed or normalised data). */
  nonIntegerCount: number;
}

/**
 * Extremes, their counts, the mean and the count of non-integer values in one pass (float64 sums).
 * @returns NaN fields and pixelCount 0 when no pixel is finite.
 */
export function frameFacts(view: PixelView): FrameFacts {
  const d = view.data;
  let n = 0, min = Infinity, max = -Infinity, cmin = 0, cmax = 0, nonInt = 0, s = 0;
  const shiftRaw = d[view.offset]!;
  const shift = Number.isFinite(shiftRaw) ? shiftRaw : 0;
  for (let y = 0; y < view.height; y++) {
    let i = view.offset + y * view.strideY;
    for (let x = 0; x < view.width; x++) {
      const v = d[i]!;
      i += view.strideX;
      if (v - v !== 0) continue; // NaN and ±Infinity
      n++;
      s += v - shift;
      if (v % 1 !== 0) nonInt++;
      if (v < min) { min = v; cmin = 1; } else if (v === min) cmin++;
      if (v > max) { max = v; cmax = 1; } else if (v === max) cmax++;
    }
  }
  if (n === 0) return { pixelCount: 0, min: NaN, max: NaN, mean: NaN, countAtMin: 0, countAtMax: 0, nonIntegerCount: 0 };
  return { pixelCount: n, min, max, mean: shift + s / n, countAtMin: cmin, countAtMax: cmax, nonIntegerCount: nonInt };
}

/** Pixels with value >= threshold. */
export function countAtOrAbove(view: PixelView, threshold: number): number {
  const d = view.data;
  let c = 0;
  for (let y = 0; y < view.height; y++) {
    let i = view.offset + y * view.strideY;
    for (let x = 0; x < view.width; x++) {
      if (d[i]! >= threshold) c++;
      i += view.strideX;
    }
  }
  return c;
}

/** Robust level of one frame. */
export interface FrameLevel {
  pixelCount: number;
  mean: number;
  median: number;
  /** Mean after iterative clipping at clipSigma·σ about the median (σ = std of the kept pixels). */
  clippedMean: number;
  /** Standard deviation (ddof 1) of the kept pixels. */
  clippedStd: number;
  keptCount: number;
}

function momentsWithin(view: PixelView, lo: number, hi: number, shift: number): { n: number; mean: number; std: number } {
  const d = view.data;
  let n = 0, s1 = 0, s2 = 0;
  for (let y = 0; y < view.height; y++) {
    let i = view.offset + y * view.strideY;
    for (let x = 0; x < view.width; x++) {
      const v = d[i]!;
      i += view.strideX;
      if (v >= lo && v <= hi) {
        const c = v - shift;
        n++; s1 += c; s2 += c * c;
      }
    }
  }
  if (n === 0) return { n: 0, mean: NaN, std: NaN };
  return { n, mean: shift + s1 / n, std: n > 1 ? Math.sqrt(Math.max(0, s2 - (s1 * s1) / n) / (n - 1)) : NaN };
}

/**
 * Median, mean and clipped mean/std of one frame. The clipped mean is preferred over the median on quantized
 * data, where the median moves in whole steps (REFERENCE C.6).
 * @param clipSigma default 5 (common practice for hot-pixel tails, REFERENCE F.6).
 */
export function frameLevel(view: PixelView, clipSigma = 5, scratch?: Float32Array, maxIterations = 10): FrameLevel {
  const total = view.width * view.height;
  const buf = scratch && scratch.length >= total ? scratch : new Float32Array(total);
  const d = view.data;
  let n = 0;
  for (let y = 0; y < view.height; y++) {
    let i = view.offset + y * view.strideY;
    for (let x = 0; x < view.width; x++) {
      const v = d[i]!;
      i += view.strideX;
      if (v === v) buf[n++] = v;
    }
  }
  const median = medianInPlace(buf, n);
  const shift = Number.isFinite(median) ? median : 0;
  const all = momentsWithin(view, -Infinity, Infinity, shift);
  let kept = all;
  let sigma = all.std;
  for (let it = 0; it < maxIterations && sigma > 0; it++) {
    const next = momentsWithin(view, median - clipSigma * sigma, median + clipSigma * sigma, shift);
    const changed = next.n !== kept.n;
    kept = next;
    if (!changed || next.n < 3) break;
    sigma = next.std;
  }
  return { pixelCount: all.n, mean: all.mean, median, clippedMean: kept.mean, clippedStd: kept.std, keptCount: kept.n };
}

/** Row and column noise of a pair (ADU, per frame), from the excess variance of line means over σ²/N. */
export interface LineNoise {
  /** Temporal row noise: sqrt(Var(row means of A − B)/2 − σ²_t/width), 0 when not above the white-noise level. */
  rowTemporalAdu: number;
  /** Fixed row pattern in the pair average: sqrt(Var(row means of (A+B)/2) − rowTemporal²/2 − s²/width). */
  rowFixedAdu: number;
  columnTemporalAdu: number;
  columnFixedAdu: number;
}

function varianceOf(values: Float64Array): number {
  const n = values.length;
  if (n < 2) return NaN;
  let s = 0;
  for (let i = 0; i < n; i++) s += values[i]!;
  const m = s / n;
  let s2 = 0;
  for (let i = 0; i < n; i++) { const c = values[i]! - m; s2 += c * c; }
  return s2 / (n - 1);
}

/**
 * Row and column noise components of a bias (or dark) pair. Independent pixels give line means with variance
 * σ²/N; anything above that is correlated line noise (common practice, REFERENCE F.6). The temporal part comes
 * from the difference frame, the fixed part from the average frame; `moments` are the pair's unclipped moments.
 */
export function lineNoise(a: PixelView, b: PixelView, moments: PairMoments): LineNoise {
  const w = a.width, h = a.height;
  const rowA = new Float64Array(h), rowB = new Float64Array(h);
  const colA = new Float64Array(w), colB = new Float64Array(w);
  const da = a.data, db = b.data;
  // shifting by the frame means keeps the column sums well conditioned
  const ma = moments.meanA, mb = moments.meanB;
  for (let y = 0; y < h; y++) {
    let ia = a.offset + y * a.strideY, ib = b.offset + y * b.strideY;
    let ra = 0, rb = 0;
    for (let x = 0; x < w; x++) {
      const va = da[ia]! - ma, vb = db[ib]! - mb;
      ia += a.strideX; ib += b.strideX;
      ra += va; rb += vb;
      colA[x] = colA[x]! + va; colB[x] = colB[x]! + vb;
    }
    rowA[y] = ra / w; rowB[y] = rb / w;
  }
  for (let x = 0; x < w; x++) { colA[x] = colA[x]! / h; colB[x] = colB[x]! / h; }
  const temporal = moments.differenceVariance / 2;
  const spatialAverage = Math.max(0, (moments.varianceA + moments.varianceB) / 2 - moments.differenceVariance / 4);
  const parts = (la: Float64Array, lb: Float64Array, perLine: number): [number, number] => {
    const diff = new Float64Array(la.length), avg = new Float64Array(la.length);
    for (let i = 0; i < la.length; i++) { diff[i] = la[i]! - lb[i]!; avg[i] = (la[i]! + lb[i]!) / 2; }
    const t2 = Math.max(0, varianceOf(diff) / 2 - temporal / perLine);
    const f2 = Math.max(0, varianceOf(avg) - t2 / 2 - spatialAverage / perLine);
    return [Math.sqrt(t2), Math.sqrt(f2)];
  };
  const [rowTemporalAdu, rowFixedAdu] = parts(rowA, rowB, w);
  const [columnTemporalAdu, columnFixedAdu] = parts(colA, colB, h);
  return { rowTemporalAdu, rowFixedAdu, columnTemporalAdu, columnFixedAdu };
}
