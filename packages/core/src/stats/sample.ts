// Internal: turn a view into either an exact integer histogram or a packed float64 list of its valid values.
// Both loops walk the view row by row on data/stride/offset (no per-pixel calls).
import type { FrameView } from '../image/view.js';
import type { MaskAddress, SampleOptions } from './input.js';
import { blankAsNumber, directHistogramLayout, isBigIntStore, maskAddress } from './input.js';

/** How many pixels a statistic saw, by fate. */
export interface PixelCounts {
  /** Pixels in the view. */
  totalCount: number;
  /** Pixels used (finite, not BLANK, not masked). */
  validCount: number;
  nanCount: number;
  /** +-Infinity pixels (ignored, as astropy's sigma clipping does). */
  infiniteCount: number;
  blankCount: number;
  /** Pixels excluded by the mask (whatever their value). */
  maskedCount: number;
}

export interface HistogramSample {
  kind: 'histogram';
  /** counts[b] = number of valid pixels with value origin + b. */
  counts: Uint32Array;
  origin: number;
  /** First and last occupied bins (lo > hi when empty). */
  lo: number;
  hi: number;
  n: number;
  tally: PixelCounts;
}

export interface ValueSample {
  kind: 'values';
  /** values[0..n) are the valid pixels as float64, in no particular order. */
  values: Float64Array;
  n: number;
  min: number;
  max: number;
  tally: PixelCounts;
}

export type Sample = HistogramSample | ValueSample;

/** Integer ranges up to this many codes go through a histogram (int32/uint32 data). */
export const MAX_HISTOGRAM_BINS = 1 << 20;

function emptyTally(total: number): PixelCounts {
  return { totalCount: total, validCount: 0, nanCount: 0, infiniteCount: 0, blankCount: 0, maskedCount: 0 };
}

/**
 * Count valid pixels into `counts[v - origin]`. Values must be integers inside the histogram (callers ensure it).
 */
export function fillHistogram(
  view: FrameView,
  counts: Uint32Array,
  origin: number,
  blank: number,
  mask: MaskAddress | undefined,
  tally: PixelCounts,
): void {
  const data = view.data as unknown as Float64Array;
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  let blanks = 0;
  let masked = 0;
  // A BLANK that no element can equal is dropped from the loop: comparing integer elements with NaN would
  // force float compares and double the cost of this pass.
  const hasBlank = blank === blank;
  if (mask === undefined && !hasBlank && sx === 1 && w * h >= 1 << 16) {
    // Large contiguous rows: four interleaved histograms break the store-to-load chain of repeated
    // increments of the same bin (sky pixels crowd a few hundred codes); merged at the end.
    const bins = counts.length;
    const c1 = new Uint32Array(bins);
    const c2 = new Uint32Array(bins);
    const c3 = new Uint32Array(bins);
    for (let y = 0; y < h; y++) {
      let i = view.offset + y * sy;
      const end = i + w;
      const end4 = end - (w % 4);
      for (; i < end4; i += 4) {
        (counts[(data[i] as number) - origin] as number)++;
        (c1[(data[i + 1] as number) - origin] as number)++;
        (c2[(data[i + 2] as number) - origin] as number)++;
        (c3[(data[i + 3] as number) - origin] as number)++;
      }
      for (; i < end; i++) (counts[(data[i] as number) - origin] as number)++;
    }
    for (let b = 0; b < bins; b++) counts[b] = (counts[b] as number) + (c1[b] as number) + (c2[b] as number) + (c3[b] as number);
  } else if (mask === undefined && !hasBlank) {
    for (let y = 0; y < h; y++) {
      let i = view.offset + y * sy;
      if (sx === 1) {
        const end = i + w;
        for (; i < end; i++) (counts[(data[i] as number) - origin] as number)++;
      } else {
        for (let x = 0; x < w; x++) {
          (counts[(data[i] as number) - origin] as number)++;
          i += sx;
        }
      }
    }
  } else if (mask === undefined) {
    for (let y = 0; y < h; y++) {
      let i = view.offset + y * sy;
      for (let x = 0; x < w; x++) {
        const v = data[i] as number;
        if (v === blank) blanks++;
        else (counts[v - origin] as number)++;
        i += sx;
      }
    }
  } else {
    const m = mask.mask;
    const base = mask.base;
    for (let y = 0; y < h; y++) {
      let i = view.offset + y * sy;
      for (let x = 0; x < w; x++) {
        if (m[i - base] !== 0) masked++;
        else {
          const v = data[i] as number;
          if (v === blank) blanks++;
          else (counts[v - origin] as number)++;
        }
        i += sx;
      }
    }
  }
  tally.blankCount += blanks;
  tally.maskedCount += masked;
  tally.validCount += w * h - blanks - masked;
}

/** Min and max of valid pixels of an integer (number) store; [Infinity, -Infinity] when none. */
function integerRange(view: FrameView, blank: number, mask: MaskAddress | undefined): [number, number] {
  const data = view.data as unknown as Float64Array;
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  let lo = Infinity;
  let hi = -Infinity;
  for (let y = 0; y < h; y++) {
    let i = view.offset + y * sy;
    for (let x = 0; x < w; x++) {
      const v = data[i] as number;
      if (v !== blank && (mask === undefined || mask.mask[i - mask.base] === 0)) {
        if (v < lo) lo = v;
        if (v > hi) hi = v;
      }
      i += sx;
    }
  }
  return [lo, hi];
}

/**
 * Copy the valid pixels into `out` (float64), counting NaN, infinities, BLANK and masked pixels.
 * @returns the number of values written, with their min and max
 */
export function gatherValues(
  view: FrameView,
  blankValue: number | bigint | undefined,
  mask: MaskAddress | undefined,
  out: Float64Array,
  tally: PixelCounts,
): { n: number; min: number; max: number } {
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  let n = 0;
  let min = Infinity;
  let max = -Infinity;
  let nans = 0;
  let infs = 0;
  let blanks = 0;
  let masked = 0;
  if (isBigIntStore(view.data)) {
    // 64-bit integers become float64 (exact up to 2^53); one conversion per pixel is unavoidable here.
    const data = view.data as BigInt64Array;
    const blank = blankValue === undefined ? undefined : BigInt(blankValue);
    for (let y = 0; y < h; y++) {
      let i = view.offset + y * sy;
      for (let x = 0; x < w; x++) {
        if (mask !== undefined && mask.mask[i - mask.base] !== 0) masked++;
        else {
          const b = data[i] as bigint;
          if (b === blank) blanks++;
          else {
            const v = Number(b);
            out[n++] = v;
            if (v < min) min = v;
            if (v > max) max = v;
          }
        }
        i += sx;
      }
    }
  } else {
    const data = view.data as unknown as Float64Array;
    const blank = blankAsNumber(blankValue);
    const m = mask?.mask;
    const base = mask?.base ?? 0;
    for (let y = 0; y < h; y++) {
      let i = view.offset + y * sy;
      for (let x = 0; x < w; x++) {
        if (m !== undefined && m[i - base] !== 0) masked++;
        else {
          const v = data[i] as number;
          if (v !== v) nans++;
          else if (v === Infinity || v === -Infinity) infs++;
          else if (v === blank) blanks++;
          else {
            out[n++] = v;
            if (v < min) min = v;
            if (v > max) max = v;
          }
        }
        i += sx;
      }
    }
  }
  tally.nanCount += nans;
  tally.infiniteCount += infs;
  tally.blankCount += blanks;
  tally.maskedCount += masked;
  tally.validCount += n;
  return { n, min, max };
}

/** A float64 buffer of at least `n` elements: the caller's scratch when big enough. */
export function scratchOf(n: number, scratch: Float64Array | undefined): Float64Array {
  return scratch !== undefined && scratch.length >= n ? scratch : new Float64Array(n);
}

/** Whether this view would be sampled through a histogram (exact, no copy). */
export function usesHistogram(view: FrameView): boolean {
  return (
    directHistogramLayout(view.data) !== undefined ||
    view.data instanceof Int32Array ||
    view.data instanceof Uint32Array
  );
}

/**
 * For float stores: min and max of the valid values if every one is an integer, else undefined (the scan stops
 * at the first non-integer, so general float data pay almost nothing). Float frames often hold integer ADU.
 */
export function integerFloatRange(
  view: FrameView,
  blank: number,
  mask: MaskAddress | undefined,
): { lo: number; hi: number; nonFinite: number } | undefined {
  const data = view.data as unknown as Float64Array;
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  let lo = Infinity;
  let hi = -Infinity;
  let nonFinite = 0;
  for (let y = 0; y < h; y++) {
    let i = view.offset + y * sy;
    for (let x = 0; x < w; x++) {
      const v = data[i] as number;
      i += sx;
      if (v === blank || (mask !== undefined && mask.mask[i - sx - mask.base] !== 0)) continue;
      // NaN and infinities fail v - v === 0.
      if (v - v !== 0) nonFinite++;
      else if (Math.floor(v) !== v) return undefined;
      else {
        if (v < lo) lo = v;
        if (v > hi) hi = v;
      }
    }
  }
  return { lo, hi, nonFinite };
}

/**
 * Histogram of a float store in one optimistic pass: bins [origin, origin + bins) around the first valid value;
 * the pass gives up (returns false, tally untouched) at the first non-integer or out-of-range value, so general
 * float data cost one look at one pixel. Float frames often hold integer ADU.
 */
function tryFloatHistogram(
  view: FrameView,
  counts: Uint32Array,
  origin: number,
  blank: number,
  mask: MaskAddress | undefined,
  tally: PixelCounts,
): boolean {
  const data = view.data as unknown as Float64Array;
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  const bins = counts.length;
  let nans = 0;
  let infs = 0;
  let blanks = 0;
  let masked = 0;
  let n = 0;
  for (let y = 0; y < h; y++) {
    let i = view.offset + y * sy;
    for (let x = 0; x < w; x++) {
      if (mask !== undefined && mask.mask[i - mask.base] !== 0) masked++;
      else {
        const v = data[i] as number;
        const code = v - origin;
        if (code >= 0 && code < bins && Math.floor(code) === code) {
          if (v === blank) blanks++;
          else {
            (counts[code] as number)++;
            n++;
          }
        } else if (v !== v) nans++;
        else if (v === Infinity || v === -Infinity) infs++;
        else if (v === blank) blanks++;
        else return false;
      }
      i += sx;
    }
  }
  tally.nanCount += nans;
  tally.infiniteCount += infs;
  tally.blankCount += blanks;
  tally.maskedCount += masked;
  tally.validCount += n;
  return true;
}

/** The first valid value of a float view (NaN when none), for centring an optimistic histogram. */
function firstFinite(view: FrameView, blank: number, mask: MaskAddress | undefined): number {
  const data = view.data as unknown as Float64Array;
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  for (let y = 0; y < h; y++) {
    let i = view.offset + y * sy;
    for (let x = 0; x < w; x++) {
      const v = data[i] as number;
      if (v - v === 0 && v !== blank && (mask === undefined || mask.mask[i - mask.base] === 0)) return v;
      i += sx;
    }
  }
  return Number.NaN;
}

/** Whether an element of this integer store can equal `v` (else the BLANK test is dropped from the loop). */
function representable(data: unknown, v: number): boolean {
  if (!Number.isInteger(v)) return false;
  if (data instanceof Uint8Array || data instanceof Uint8ClampedArray) return v >= 0 && v <= 255;
  if (data instanceof Int8Array) return v >= -128 && v <= 127;
  if (data instanceof Uint16Array) return v >= 0 && v <= 65535;
  if (data instanceof Int16Array) return v >= -32768 && v <= 32767;
  if (data instanceof Int32Array) return v >= -2147483648 && v <= 2147483647;
  if (data instanceof Uint32Array) return v >= 0 && v <= 4294967295;
  return true;
}

/**
 * Sample a view: integer data of <= 16 bits, 32-bit integers spanning <= 2^20 codes and float data whose
 * valid values are all integers within 2^19 of the first one as an exact histogram; everything else as packed float64
 * values in the scratch.
 * @param forceValues always gather values (used to cross-check the two paths)
 */
export function sampleView(view: FrameView, opts: SampleOptions = {}, forceValues = false): Sample {
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const tally = emptyTally(w * h);
  const mask = maskAddress(view, opts.mask);
  if (!forceValues) {
    let layout = directHistogramLayout(view.data);
    const blank = blankAsNumber(opts.blankValue);
    if (layout === undefined && (view.data instanceof Int32Array || view.data instanceof Uint32Array)) {
      const [lo, hi] = integerRange(view, blank, mask);
      if (lo > hi) layout = { origin: 0, bins: 1 };
      else if (hi - lo + 1 <= MAX_HISTOGRAM_BINS) layout = { origin: lo, bins: hi - lo + 1 };
    }
    if (layout === undefined && (view.data instanceof Float32Array || view.data instanceof Float64Array)) {
      const first = firstFinite(view, blank, mask);
      if (Number.isInteger(first) && Math.abs(first) < 2 ** 52) {
        const counts = new Uint32Array(MAX_HISTOGRAM_BINS);
        const origin = first - MAX_HISTOGRAM_BINS / 2;
        if (tryFloatHistogram(view, counts, origin, blank, mask, tally)) {
          let lo = 0;
          let hi = MAX_HISTOGRAM_BINS - 1;
          while (lo <= hi && counts[lo] === 0) lo++;
          while (hi >= lo && counts[hi] === 0) hi--;
          return { kind: 'histogram', counts, origin, lo, hi, n: tally.validCount, tally };
        }
      }
    }
    if (layout !== undefined) {
      const counts = new Uint32Array(layout.bins);
      fillHistogram(view, counts, layout.origin, representable(view.data, blank) ? blank : Number.NaN, mask, tally);
      let lo = 0;
      let hi = layout.bins - 1;
      while (lo <= hi && counts[lo] === 0) lo++;
      while (hi >= lo && counts[hi] === 0) hi--;
      return { kind: 'histogram', counts, origin: layout.origin, lo, hi, n: tally.validCount, tally };
    }
  }
  const values = scratchOf(w * h, opts.scratch);
  const { n, min, max } = gatherValues(view, opts.blankValue, mask, values, tally);
  return { kind: 'values', values, n, min, max, tally };
}

/** Sums over the valid pixels of a view, deviations taken from `center`; no allocation. */
export interface ViewSums {
  n: number;
  sum: number;
  sumSquares: number;
  min: number;
  max: number;
}

/**
 * One streaming pass: count, sum and sum of squares of (x - center), min and max of the valid pixels.
 * Called twice (center 0, then the mean) it gives the corrected two-pass variance of Chan, Golub & LeVeque
 * (1983, Am. Stat. 37, 242): var = (sum d^2 - (sum d)^2 / n) / n, stable at means ~1e4 with sigma ~10.
 */
export function viewSums(
  view: FrameView,
  blankValue: number | bigint | undefined,
  mask: MaskAddress | undefined,
  center: number,
  tally?: PixelCounts,
): ViewSums {
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  let n = 0;
  let s = 0;
  let ss = 0;
  let min = Infinity;
  let max = -Infinity;
  let nans = 0;
  let infs = 0;
  let blanks = 0;
  let masked = 0;
  const m = mask?.mask;
  const base = mask?.base ?? 0;
  if (isBigIntStore(view.data)) {
    const data = view.data as BigInt64Array;
    const blank = blankValue === undefined ? undefined : BigInt(blankValue);
    for (let y = 0; y < h; y++) {
      let i = view.offset + y * sy;
      for (let x = 0; x < w; x++) {
        if (m !== undefined && m[i - base] !== 0) masked++;
        else {
          const b = data[i] as bigint;
          if (b === blank) blanks++;
          else {
            const v = Number(b);
            const d = v - center;
            n++;
            s += d;
            ss += d * d;
            if (v < min) min = v;
            if (v > max) max = v;
          }
        }
        i += sx;
      }
    }
  } else {
    const data = view.data as unknown as Float64Array;
    const blank = blankAsNumber(blankValue);
    for (let y = 0; y < h; y++) {
      let i = view.offset + y * sy;
      for (let x = 0; x < w; x++) {
        if (m !== undefined && m[i - base] !== 0) masked++;
        else {
          const v = data[i] as number;
          if (v !== v) nans++;
          else if (v === Infinity || v === -Infinity) infs++;
          else if (v === blank) blanks++;
          else {
            const d = v - center;
            n++;
            s += d;
            ss += d * d;
            if (v < min) min = v;
            if (v > max) max = v;
          }
        }
        i += sx;
      }
    }
  }
  if (tally !== undefined) {
    tally.nanCount += nans;
    tally.infiniteCount += infs;
    tally.blankCount += blanks;
    tally.maskedCount += masked;
    tally.validCount += n;
  }
  return { n, sum: s, sumSquares: ss, min, max };
}

export { emptyTally };
