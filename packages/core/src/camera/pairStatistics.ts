import { InvalidInputError } from '../errors.js';
import { medianInPlace } from './select.js';
import { tileViews } from './view.js';
import type { NumericPixels, PixelView } from './view.js';

/** Moments of a frame pair over one set of pixels (variances are sample variances, ddof = 1). */
export interface PairMoments {
  pixelCount: number;
  meanA: number;
  meanB: number;
  /** Spatial variance of A over the pixels used (ADU²). */
  varianceA: number;
  varianceB: number;
  /** Mean of A − B (ADU). */
  differenceMean: number;
  /** Variance of A − B (ADU²); the temporal variance of one frame is half of it (REFERENCE B.2). */
  differenceVariance: number;
}

/** Moments after iterative clipping of the difference image about its median. */
export interface ClippedPairMoments extends PairMoments {
  differenceMedian: number;
  clipSigma: number;
  iterations: number;
  rejectedCount: number;
}

export interface PairStatistics extends PairMoments {
  /** Clipped moments, or null when clipping was switched off. */
  clipped: ClippedPairMoments | null;
}

export interface PairStatisticsOptions {
  /** Clip |A − B − median| > clipSigma·σ, iterated (default 5; null turns clipping off). REFERENCE B.11. */
  clipSigma?: number | null;
  /** Clipping passes at most (default 10). */
  maxIterations?: number;
  /** Scratch for the difference median, at least width·height long; reused across calls. */
  scratch?: Float32Array;
}

const EMPTY: PairMoments = {
  pixelCount: 0, meanA: NaN, meanB: NaN, varianceA: NaN, varianceB: NaN, differenceMean: NaN, differenceVariance: NaN,
};

/**
 * One pass over two views: sums for the mean and variance of each frame and of their difference, over the
 * pixels whose difference lies in [lo, hi] (NaN pixels never count). Sums are taken about the first pixel
 * values (shifted data) in float64 so that means near 10⁴ with σ near 1 keep their precision (REFERENCE F.9).
 */
function pairPass(a: PixelView, b: PixelView, lo: number, hi: number): PairMoments {
  const da = a.data, db = b.data;
  const w = a.width, h = a.height;
  const sa = da[a.offset]!, sb = db[b.offset]!;
  const shiftA = sa === sa ? sa : 0, shiftB = sb === sb ? sb : 0;
  const shiftD = shiftA - shiftB;
  let n = 0, a1 = 0, a2 = 0, b1 = 0, b2 = 0, d1 = 0, d2 = 0;
  for (let y = 0; y < h; y++) {
    let ia = a.offset + y * a.strideY, ib = b.offset + y * b.strideY;
    for (let x = 0; x < w; x++) {
      const va = da[ia]!, vb = db[ib]!;
      ia += a.strideX; ib += b.strideX;
      const d = va - vb;
      if (d >= lo && d <= hi) {
        const ca = va - shiftA, cb = vb - shiftB, cd = d - shiftD;
        n++; a1 += ca; a2 += ca * ca; b1 += cb; b2 += cb * cb; d1 += cd; d2 += cd * cd;
      }
    }
  }
  return momentsOf(n, shiftA, shiftB, a1, a2, b1, b2, d1, d2);
}

/** Moments from the count and the shifted sums (values − shift, their squares) of A, B and A − B. */
function momentsOf(n: number, shiftA: number, shiftB: number, a1: number, a2: number, b1: number, b2: number, d1: number, d2: number): PairMoments {
  if (n === 0) return { ...EMPTY };
  const dof = n - 1;
  return {
    pixelCount: n,
    meanA: shiftA + a1 / n,
    meanB: shiftB + b1 / n,
    varianceA: dof > 0 ? Math.max(0, a2 - (a1 * a1) / n) / dof : NaN,
    varianceB: dof > 0 ? Math.max(0, b2 - (b1 * b1) / n) / dof : NaN,
    differenceMean: shiftA - shiftB + d1 / n,
    differenceVariance: dof > 0 ? Math.max(0, d2 - (d1 * d1) / n) / dof : NaN,
  };
}

function fillDifferences(a: PixelView, b: PixelView, out: Float32Array): number {
  const da = a.data, db = b.data;
  let n = 0;
  for (let y = 0; y < a.height; y++) {
    let ia = a.offset + y * a.strideY, ib = b.offset + y * b.strideY;
    for (let x = 0; x < a.width; x++) {
      const d = da[ia]! - db[ib]!;
      ia += a.strideX; ib += b.strideX;
      if (d === d) out[n++] = d;
    }
  }
  return n;
}

const isShortInteger = (d: NumericPixels): boolean => d instanceof Uint16Array || d instanceof Int16Array || d instanceof Uint8Array || d instanceof Int8Array;

// Differences of two <= 16-bit integer frames lie in [-65535, 65535]: one counting pass gives their exact median
// (the same value selection gives, mean of the two middle values for an even count), much faster than selection.
// The histogram is shared and kept all zero between calls: each call clears only the bins it used, so a small tile
// costs its pixels, not the 131 071 bins.
const DIFF_OFFSET = 65535;
let diffCounts: Int32Array | undefined;

/**
 * The differences A − B of two <= 16-bit integer views, counted (index d + DIFF_OFFSET), and their range; with
 * the sums pairPass would take of A and B (shifted by their first pixels) and the range of each frame.
 */
interface DifferenceHistogram {
  counts: Int32Array;
  /** Lowest and highest index holding a count. */
  first: number;
  last: number;
  shiftA: number;
  shiftB: number;
  a1: number; a2: number; b1: number; b2: number;
  minA: number; maxA: number; minB: number; maxB: number;
}

function differenceHistogram(a: PixelView, b: PixelView): DifferenceHistogram {
  const counts = (diffCounts ??= new Int32Array(2 * DIFF_OFFSET + 1));
  const da = a.data, db = b.data;
  const shiftA = da[a.offset]!, shiftB = db[b.offset]!;
  let first = counts.length, last = -1;
  let a1 = 0, a2 = 0, b1 = 0, b2 = 0;
  let minA = shiftA, maxA = shiftA, minB = shiftB, maxB = shiftB;
  for (let y = 0; y < a.height; y++) {
    let ia = a.offset + y * a.strideY, ib = b.offset + y * b.strideY;
    for (let x = 0; x < a.width; x++) {
      const va = da[ia]!, vb = db[ib]!;
      ia += a.strideX; ib += b.strideX;
      const v = va - vb + DIFF_OFFSET;
      counts[v]!++;
      if (v < first) first = v;
      if (v > last) last = v;
      const ca = va - shiftA, cb = vb - shiftB;
      a1 += ca; a2 += ca * ca; b1 += cb; b2 += cb * cb;
      if (va < minA) minA = va; else if (va > maxA) maxA = va;
      if (vb < minB) minB = vb; else if (vb > maxB) maxB = vb;
    }
  }
  return { counts, first, last, shiftA, shiftB, a1, a2, b1, b2, minA, maxA, minB, maxB };
}

/**
 * pairPass(a, b, -Infinity, Infinity) from the histogram's pass, bit for bit: every sum is of integers and stays
 * exact (so order-free) while n · (largest |value − shift|)² <= 2^53. Undefined when that bound does not hold.
 */
function momentsFromHistogram(h: DifferenceHistogram, n: number, out: Float64Array): PairMoments | undefined {
  const shiftD = h.shiftA - h.shiftB;
  const reach = Math.max(h.maxA - h.shiftA, h.shiftA - h.minA, h.maxB - h.shiftB, h.shiftB - h.minB, histogramReach(h, shiftD));
  if (n * reach * reach > 2 ** 53) return undefined;
  histogramDifferenceSums(h, -Infinity, Infinity, shiftD, out);
  return momentsOf(n, h.shiftA, h.shiftB, h.a1, h.a2, h.b1, h.b2, out[1]!, out[2]!);
}

/** Clear the bins `h` used, restoring the all-zero histogram for the next call. */
function clearHistogram(h: DifferenceHistogram): void {
  if (h.last >= h.first) h.counts.fill(0, h.first, h.last + 1);
}

/** The exact median of the n counted differences (mean of the two middle values for an even n). */
function histogramMedian(h: DifferenceHistogram, n: number): number {
  const counts = h.counts;
  const kLow = (n - 1) >>> 1, kHigh = n >>> 1; // 0-based ranks of the middle value(s)
  let seen = 0, low = NaN;
  for (let v = h.first; v <= h.last; v++) {
    const c = counts[v]!;
    if (c === 0) continue;
    if (Number.isNaN(low) && seen + c > kLow) low = v - DIFF_OFFSET;
    if (seen + c > kHigh) return (low + (v - DIFF_OFFSET)) / 2;
    seen += c;
  }
  return NaN;
}

/**
 * Count, sum and sum of squares of (d − shift) over the counted differences d in [lo, hi]. With integer d and
 * shift these are sums of integers, exact while below 2^53, so they equal pairPass's own sums bit for bit.
 */
function histogramDifferenceSums(h: DifferenceHistogram, lo: number, hi: number, shift: number, out: Float64Array): void {
  const counts = h.counts;
  const first = Math.max(h.first, Math.ceil(lo) + DIFF_OFFSET);
  const last = Math.min(h.last, Math.floor(hi) + DIFF_OFFSET);
  let n = 0, d1 = 0, d2 = 0;
  for (let v = first; v <= last; v++) {
    const c = counts[v]!;
    if (c === 0) continue;
    const cd = v - DIFF_OFFSET - shift;
    n += c; d1 += c * cd; d2 += c * cd * cd;
  }
  out[0] = n; out[1] = d1; out[2] = d2;
}

/** Largest |d − shift| over the counted differences (0 when none). */
function histogramReach(h: DifferenceHistogram, shift: number): number {
  if (h.first > h.last) return 0;
  return Math.max(Math.abs(h.first - DIFF_OFFSET - shift), Math.abs(h.last - DIFF_OFFSET - shift));
}

/**
 * Statistics of a frame pair: the mean of each frame and the mean and variance of their difference, plus a
 * clipped variant (difference clipped at `clipSigma`·σ about its median, σ re-estimated each pass).
 *
 * Method: the pair difference removes fixed-pattern noise, so Var(A − B)/2 is the temporal variance of one
 * frame (REFERENCE B.2); non-Gaussian tails (cosmic rays, random-telegraph pixels) inflate it, hence the
 * clipping (REFERENCE B.11, common practice). Float64 accumulation, no per-pixel allocation.
 *
 * @param a first frame (view); @param b second frame, same width and height.
 * @returns moments over all finite pixels and, unless `clipSigma` is null, over the clipped set; NaN fields when empty.
 * @throws InvalidInputError `INPUT_SHAPE_MISMATCH` when the views differ in size.
 * @example pairStatistics(viewOfImage(f1), viewOfImage(f2)).clipped?.differenceVariance
 */
export function pairStatistics(a: PixelView, b: PixelView, options: PairStatisticsOptions = {}): PairStatistics {
  if (a.width !== b.width || a.height !== b.height) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `pair sizes differ: ${a.width}x${a.height} vs ${b.width}x${b.height}`);
  }
  const clipSigma = options.clipSigma === undefined ? 5 : options.clipSigma;
  // An integer pair that will be clipped: one pass counts the differences and takes the unclipped sums.
  const hist = clipSigma !== null && isShortInteger(a.data) && isShortInteger(b.data) ? differenceHistogram(a, b) : undefined;
  const sums = new Float64Array(3);
  const all = (hist && momentsFromHistogram(hist, a.width * a.height, sums)) || pairPass(a, b, -Infinity, Infinity);
  if (clipSigma === null || all.pixelCount < 3) {
    if (hist !== undefined) clearHistogram(hist);
    return { ...all, clipped: null };
  }
  const maxIterations = options.maxIterations ?? 10;
  let sigma = Math.sqrt(all.differenceVariance);
  let current = all;
  let iterations = 0;
  let median: number;
  const shiftD = hist === undefined ? 0 : hist.shiftA - hist.shiftB;
  const n = all.pixelCount;
  if (hist !== undefined && n * histogramReach(hist, shiftD) ** 2 <= 2 ** 53) {
    // Integer pair: the difference moments of every clipping window come from the histogram, exactly as a pass
    // over the pixels would give them; only the final window needs a pass (for the means and variances of A, B).
    median = histogramMedian(hist, n);
    let count = n, lo = -Infinity, hi = Infinity;
    while (iterations < maxIterations && sigma > 0) {
      lo = median - clipSigma * sigma;
      hi = median + clipSigma * sigma;
      histogramDifferenceSums(hist, lo, hi, shiftD, sums);
      iterations++;
      const changed = sums[0] !== count;
      count = sums[0]!;
      if (!changed || count < 3) break;
      sigma = Math.sqrt(Math.max(0, sums[2]! - (sums[1]! * sums[1]!) / count) / (count - 1)); // as pairPass
    }
    clearHistogram(hist);
    if (iterations > 0) current = pairPass(a, b, lo, hi);
  } else {
    if (hist !== undefined) {
      median = histogramMedian(hist, n);
      clearHistogram(hist);
    } else {
      const total = a.width * a.height;
      const scratch = options.scratch && options.scratch.length >= total ? options.scratch : new Float32Array(total);
      median = medianInPlace(scratch, fillDifferences(a, b, scratch));
    }
    while (iterations < maxIterations && sigma > 0) {
      const next = pairPass(a, b, median - clipSigma * sigma, median + clipSigma * sigma);
      iterations++;
      const changed = next.pixelCount !== current.pixelCount;
      current = next;
      if (!changed || next.pixelCount < 3) break;
      sigma = Math.sqrt(next.differenceVariance);
    }
  }
  return {
    ...all,
    clipped: {
      ...current,
      differenceMedian: median,
      clipSigma,
      iterations,
      rejectedCount: all.pixelCount - current.pixelCount,
    },
  };
}

/**
 * `pairStatistics` on each tile of a tilesX x tilesY grid (row-major), one scratch buffer for all tiles.
 * @example pairStatisticsTiles(a, b, 8, 8).map((t) => t.clipped?.differenceVariance)
 */
export function pairStatisticsTiles(
  a: PixelView, b: PixelView, tilesX: number, tilesY: number, options: PairStatisticsOptions = {},
): PairStatistics[] {
  if (a.width !== b.width || a.height !== b.height) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `pair sizes differ: ${a.width}x${a.height} vs ${b.width}x${b.height}`);
  }
  const ta = tileViews(a, tilesX, tilesY), tb = tileViews(b, tilesX, tilesY);
  let largest = 0;
  for (const t of ta) largest = Math.max(largest, t.width * t.height);
  const scratch = options.scratch && options.scratch.length >= largest ? options.scratch : new Float32Array(largest);
  return ta.map((t, i) => pairStatistics(t, tb[i]!, { ...options, scratch }));
}

/** The moments to use: clipped when available, else all pixels. */
export function pairMomentsUsed(s: PairStatistics): PairMoments {
  return s.clipped ?? s;
}
