import { InvalidInputError } from '../errors.js';
import type { FrameView } from '../image/view.js';
import { viewHeight, viewWidth } from '../image/view.js';
import type { SampleOptions } from './input.js';
import type { MaskAddress } from './input.js';
import { blankAsNumber, directHistogramLayout, maskAddress } from './input.js';
import type { PixelCounts } from './sample.js';
import { emptyTally, gatherValues, integerFloatRange, scratchOf } from './sample.js';
import type { SigmaClipParameters } from './sigmaClip.js';
import { medianInPlace } from './select.js';
import { clipWeighted, sortAndCount, weightedMedian } from './weighted.js';
import type { backgroundMode } from './mode.js';
import type { LevelGrid } from '../stars/types.js';

/** Box layout along one axis: start, size and centre of every box. */
interface Axis {
  starts: Int32Array;
  sizes: Int32Array;
  centres: Float64Array;
}

function axisBoxes(length: number, box: number, keepPartial: boolean): Axis {
  const full = Math.floor(length / box);
  const count = keepPartial && length % box !== 0 ? full + 1 : full;
  const starts = new Int32Array(count);
  const sizes = new Int32Array(count);
  const centres = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    const s = i * box;
    const n = Math.min(box, length - s);
    starts[i] = s;
    sizes[i] = n;
    centres[i] = s + (n - 1) / 2;
  }
  return { starts, sizes, centres };
}

function checkBox(name: string, v: number): void {
  if (!Number.isInteger(v) || v < 1) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `${name} must be an integer >= 1; found ${v}`);
  }
}

/** Box view without the public bounds check (boxes are built inside the view). */
function boxView(view: FrameView, x: number, y: number, w: number, h: number): FrameView {
  return view.hi(y + h, x + w).lo(y, x) as unknown as FrameView;
}

/**
 * Reused buffers for turning one box into a sorted (value, count) list. A class, not an object literal, as every
 * object made once a frame and read by hot loops (DEVELOPERS.md, "Objects made once a frame").
 */
class BoxWork {
  /** Direct histogram layout of the store, when it holds integers of <= 16 bits. */
  declare readonly origin: number | undefined;
  declare readonly blank: number;
  declare readonly fine: Uint32Array;
  declare readonly coarse: Uint32Array;
  declare readonly scratch: Float64Array;
  declare readonly values: Float64Array;
  declare readonly counts: Uint32Array;

  constructor(origin: number | undefined, blank: number, boxPixels: number, scratch: Float64Array) {
    this.origin = origin;
    this.blank = blank;
    this.fine = new Uint32Array(origin === undefined ? 0 : 65536);
    this.coarse = new Uint32Array(256);
    this.scratch = scratch;
    this.values = new Float64Array(boxPixels);
    this.counts = new Uint32Array(boxPixels);
  }
}

function boxWork(view: FrameView, boxPixels: number, opts: SampleOptions): BoxWork {
  const layout = directHistogramLayout(view.data);
  const blank = blankAsNumber(opts.blankValue);
  let origin = layout?.origin;
  if (origin === undefined && (view.data instanceof Float32Array || view.data instanceof Float64Array)) {
    // Float frames holding integer ADU within 65536 codes (and no NaN) take the counting path too.
    const r = integerFloatRange(view, blank, maskAddress(view, opts.mask));
    if (r !== undefined && r.nonFinite === 0 && r.hi - r.lo < 65536) origin = r.lo > r.hi ? 0 : r.lo;
  }
  return new BoxWork(origin, origin !== undefined && Number.isInteger(blank) ? blank : Number.NaN, boxPixels, scratchOf(boxPixels, opts.scratch));
}

/**
 * The valid pixels of one box as a sorted (value, count) list in work.values / work.counts.
 * Integers of <= 16 bits: one counting pass into a fine (65536) and a coarse (256, high byte) histogram, then
 * a walk over the occupied coarse buckets only, clearing the bins it reads (no clearing pass, no sort).
 * Other data: gather and sort.
 * @returns m distinct values holding n pixels
 */
function boxDistribution(
  box: FrameView,
  mask: MaskAddress | undefined,
  blankValue: number | bigint | undefined,
  work: BoxWork,
  tally: PixelCounts,
): { m: number; n: number } {
  if (work.origin === undefined) {
    const { n } = gatherValues(box, blankValue, mask, work.scratch, tally);
    return { m: sortAndCount(work.scratch, n, work.values, work.counts), n };
  }
  const { fine, coarse, values, counts, blank } = work;
  const origin = work.origin;
  const data = box.data as unknown as Float64Array;
  const h = box.shape[0] ?? 0;
  const w = box.shape[1] ?? 0;
  const sy = box.stride[0] ?? 0;
  const sx = box.stride[1] ?? 0;
  let n = 0;
  let blanks = 0;
  let masked = 0;
  const hasBlank = blank === blank;
  if (mask === undefined && !hasBlank) {
    // The common case, kept free of per-pixel tests.
    for (let y = 0; y < h; y++) {
      let i = box.offset + y * sy;
      for (let x = 0; x < w; x++) {
        const code = (data[i] as number) - origin;
        (fine[code] as number)++;
        (coarse[code >> 8] as number)++;
        i += sx;
      }
    }
    n = w * h;
  } else for (let y = 0; y < h; y++) {
    let i = box.offset + y * sy;
    for (let x = 0; x < w; x++) {
      if (mask !== undefined && mask.mask[i - mask.base] !== 0) masked++;
      else {
        const v = data[i] as number;
        if (hasBlank && v === blank) blanks++;
        else {
          const code = v - origin;
          (fine[code] as number)++;
          (coarse[code >> 8] as number)++;
          n++;
        }
      }
      i += sx;
    }
  }
  tally.blankCount += blanks;
  tally.maskedCount += masked;
  tally.validCount += n;
  let m = 0;
  let seen = 0;
  for (let cb = 0; cb < 256 && seen < n; cb++) {
    if (coarse[cb] === 0) continue;
    seen += coarse[cb] as number;
    coarse[cb] = 0;
    const end = (cb + 1) << 8;
    for (let code = cb << 8; code < end; code++) {
      const c = fine[code] as number;
      if (c !== 0) {
        values[m] = code + origin;
        counts[m] = c;
        m++;
        fine[code] = 0;
      }
    }
  }
  return { m, n };
}

/**
 * Median of a box of integers of <= 16 bits with no mask and no BLANK (the benchmark case), exactly.
 * Four interleaved histograms ("lanes") break the store-to-load chain of repeated increments of the same bin
 * (common practice for histogramming), the walk starts at the smallest code and stops at the middle ranks,
 * and a second pass clears exactly the bins that were touched.
 */
function boxMedianLanes(box: FrameView, origin: number, lanes: Uint32Array[]): number {
  const l0 = lanes[0] as Uint32Array;
  const l1 = lanes[1] as Uint32Array;
  const l2 = lanes[2] as Uint32Array;
  const l3 = lanes[3] as Uint32Array;
  const data = box.data as unknown as Float64Array;
  const h = box.shape[0] ?? 0;
  const w = box.shape[1] ?? 0;
  const sy = box.stride[0] ?? 0;
  const sx = box.stride[1] ?? 0;
  const w4 = w - (w % 4);
  let min = 65536;
  for (let y = 0; y < h; y++) {
    let i = box.offset + y * sy;
    let x = 0;
    for (; x < w4; x += 4) {
      const c0 = (data[i] as number) - origin;
      const c1 = (data[i + sx] as number) - origin;
      const c2 = (data[i + 2 * sx] as number) - origin;
      const c3 = (data[i + 3 * sx] as number) - origin;
      (l0[c0] as number)++;
      (l1[c1] as number)++;
      (l2[c2] as number)++;
      (l3[c3] as number)++;
      if (c0 < min) min = c0;
      if (c1 < min) min = c1;
      if (c2 < min) min = c2;
      if (c3 < min) min = c3;
      i += 4 * sx;
    }
    for (; x < w; x++) {
      const c0 = (data[i] as number) - origin;
      (l0[c0] as number)++;
      if (c0 < min) min = c0;
      i += sx;
    }
  }
  const n = w * h;
  let result = Number.NaN;
  if (n > 0) {
    const k1 = (n - 1) >> 1;
    const k2 = n >> 1;
    let cum = 0;
    let b = min;
    for (; ; b++) {
      cum += (l0[b] as number) + (l1[b] as number) + (l2[b] as number) + (l3[b] as number);
      if (cum > k1) break;
    }
    const v1 = b;
    while (cum <= k2) {
      b++;
      cum += (l0[b] as number) + (l1[b] as number) + (l2[b] as number) + (l3[b] as number);
    }
    result = v1 === b ? origin + b : (2 * origin + v1 + b) / 2;
  }
  for (let y = 0; y < h; y++) {
    let i = box.offset + y * sy;
    let x = 0;
    for (; x < w4; x += 4) {
      l0[(data[i] as number) - origin] = 0;
      l1[(data[i + sx] as number) - origin] = 0;
      l2[(data[i + 2 * sx] as number) - origin] = 0;
      l3[(data[i + 3 * sx] as number) - origin] = 0;
      i += 4 * sx;
    }
    for (; x < w; x++) {
      l0[(data[i] as number) - origin] = 0;
      i += sx;
    }
  }
  return result;
}

/** Per-box medians on a regular grid: the plain mesh of the benchmark reference (numpy `np.median` per box). */
export interface BoxMedianMesh {
  boxWidth: number;
  boxHeight: number;
  columns: number;
  rows: number;
  /** medians[row * columns + column]; NaN for a box without valid pixels. */
  medians: Float64Array;
}

/**
 * Median of each box of `boxSize` x `boxSize` pixels, row-major over the grid. With `edges: 'drop'` (default)
 * the frame is cropped to a whole number of boxes, as `../shared/bench-ref/ref_bench.py` step e does
 * (reshape to (rows, box, columns, box) and `np.median` per box); `'keep'` keeps partial edge boxes.
 * Integers of <= 16 bits are counted per box (exact, no sort); other data are copied into one reused float64
 * scratch and the median found by selection.
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` for a box size < 1
 * @example boxMedianMesh(frameView(image), 64).medians
 */
export function boxMedianMesh(
  view: FrameView,
  boxSize = 64,
  opts: SampleOptions & { edges?: 'drop' | 'keep'; boxHeight?: number } = {},
): BoxMedianMesh {
  const boxHeight = opts.boxHeight ?? boxSize;
  checkBox('boxSize', boxSize);
  checkBox('boxHeight', boxHeight);
  const keep = opts.edges === 'keep';
  const ax = axisBoxes(viewWidth(view), boxSize, keep);
  const ay = axisBoxes(viewHeight(view), boxHeight, keep);
  const columns = ax.starts.length;
  const rows = ay.starts.length;
  const medians = new Float64Array(columns * rows);
  const mask = maskAddress(view, opts.mask);
  const tally = emptyTally(0);
  const work = boxWork(view, boxSize * boxHeight, opts);
  const plain = work.origin !== undefined && mask === undefined && work.blank !== work.blank;
  const lanes = plain ? [work.fine, new Uint32Array(65536), new Uint32Array(65536), new Uint32Array(65536)] : [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      const b = boxView(view, ax.starts[c] as number, ay.starts[r] as number, ax.sizes[c] as number, ay.sizes[r] as number);
      if (plain) medians[r * columns + c] = boxMedianLanes(b, work.origin as number, lanes);
      else if (work.origin !== undefined) {
        const { m, n } = boxDistribution(b, mask, opts.blankValue, work, tally);
        medians[r * columns + c] = weightedMedian(work.values, work.counts, 0, m - 1, n);
      } else {
        const { n } = gatherValues(b, opts.blankValue, mask, work.scratch, tally);
        medians[r * columns + c] = medianInPlace(work.scratch, n);
      }
    }
  }
  return { boxWidth: boxSize, boxHeight, columns, rows, medians };
}

/** Options of {@link backgroundMesh}. */
export interface BackgroundMeshOptions extends SampleOptions {
  /** Box width in pixels (default 64). */
  boxSize?: number;
  /** Box height in pixels (default `boxSize`). */
  boxHeight?: number;
  /** Clipping inside each box (default 3 sigma, 5 iterations, std scale). */
  clip?: SigmaClipParameters;
  /**
   * Level statistic of a box after clipping: 'median' (default), 'mean', or 'mode' (2.5 median - 1.5 mean, with
   * the fallback of {@link backgroundMode}).
   */
  level?: 'median' | 'mean' | 'mode';
  /** Pixels at or above this value are saturated: excluded and counted as bad. */
  saturationAdu?: number;
  /** A box is invalid when more than this fraction of its pixels are bad (masked, NaN, BLANK, saturated). Default 0.5. */
  maxBadFraction?: number;
  /** Size of the median filter applied to the grid: 1 (none) or 3 (default). */
  filterSize?: 1 | 3;
  /** Pedestal (bias level) taken off the median level before the gradient is expressed in percent (default 0). */
  offsetAdu?: number;
}

/** Least-squares plane through the valid boxes: level = a + slopeX (x - xc) + slopeY (y - yc). */
export interface MeshGradient {
  /** Plane value at the frame centre. */
  centreLevelAdu: number;
  slopeXAduPerPixel: number;
  slopeYAduPerPixel: number;
  /** Change of the plane across the frame: |slopeX| (width - 1) + |slopeY| (height - 1). */
  rangeAdu: number;
  /** rangeAdu / (median level - offsetAdu) x 100. */
  percent: number;
  /**
   * Direction in which the background rises, degrees in [0, 360): 0 = +x (increasing column, NAXIS1),
   * 90 = +y (increasing row index in storage order, NAXIS2). In the FITS display convention (row 0 at the
   * bottom) this is counterclockwise from +x.
   */
  directionDegrees: number;
  /** Boxes behind the fit. */
  boxCount: number;
}

/** A coarse background grid with its smoothing, plane fit and noise; plain data (maps come from {@link meshLevelAt}). */
export interface BackgroundMesh {
  width: number;
  height: number;
  boxWidth: number;
  boxHeight: number;
  columns: number;
  rows: number;
  /** Box centre coordinates (pixels), per column and per row. */
  centresX: Float64Array;
  centresY: Float64Array;
  /** Filled and median-filtered level per box, row-major. */
  levelAdu: Float64Array;
  /** Filled and median-filtered noise (clipped std) per box. */
  noiseAdu: Float64Array;
  /** Level before filling and filtering; NaN for invalid boxes. */
  rawLevelAdu: Float64Array;
  /** 1 for boxes measured, 0 for boxes filled from neighbours. */
  valid: Uint8Array;
  validCount: number;
  /** Median of the smoothed levels and noises. */
  medianLevelAdu: number;
  medianNoiseAdu: number;
  /** (max - min) of the smoothed mesh / (median level - offset) x 100 (REFERENCE C.5 audit metric). */
  meshRangePercent: number;
  gradient: MeshGradient;
  /** Fate of the pixels over all boxes (saturated pixels are counted in `saturatedCount`). */
  pixels: PixelCounts & { saturatedCount: number };
}

function fillInvalid(values: Float64Array, known: Uint8Array, columns: number, rows: number): void {
  // Grow the known region one ring at a time: each unknown box with known 8-neighbours takes their mean.
  const have = Uint8Array.from(known);
  let missing = have.reduce((s, v) => s + (v === 0 ? 1 : 0), 0);
  if (missing === values.length) return;
  const next = new Float64Array(values.length);
  while (missing > 0) {
    const added: number[] = [];
    for (let r = 0; r < rows; r++) {
      for (let c = 0; c < columns; c++) {
        const i = r * columns + c;
        if (have[i] !== 0) continue;
        let s = 0;
        let k = 0;
        for (let dr = -1; dr <= 1; dr++) {
          for (let dc = -1; dc <= 1; dc++) {
            const rr = r + dr;
            const cc = c + dc;
            if (rr < 0 || cc < 0 || rr >= rows || cc >= columns) continue;
            const j = rr * columns + cc;
            if (have[j] !== 0) {
              s += values[j] as number;
              k++;
            }
          }
        }
        if (k > 0) {
          next[i] = s / k;
          added.push(i);
        }
      }
    }
    for (const i of added) {
      values[i] = next[i] as number;
      have[i] = 1;
    }
    missing -= added.length;
  }
}

function medianFilter3(values: Float64Array, columns: number, rows: number): Float64Array {
  const out = new Float64Array(values.length);
  const win = new Float64Array(9);
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      let k = 0;
      for (let rr = Math.max(0, r - 1); rr <= Math.min(rows - 1, r + 1); rr++) {
        for (let cc = Math.max(0, c - 1); cc <= Math.min(columns - 1, c + 1); cc++) win[k++] = values[rr * columns + cc] as number;
      }
      out[r * columns + c] = medianInPlace(win, k);
    }
  }
  return out;
}

/** Placeholder of a mesh under construction (never returned). */
const NO_GRADIENT: MeshGradient = {
  centreLevelAdu: Number.NaN,
  slopeXAduPerPixel: Number.NaN,
  slopeYAduPerPixel: Number.NaN,
  rangeAdu: Number.NaN,
  percent: Number.NaN,
  directionDegrees: Number.NaN,
  boxCount: 0,
};

function fitPlane(mesh: Omit<BackgroundMesh, 'gradient'>, offsetAdu: number): MeshGradient {
  const { columns, rows, centresX, centresY, levelAdu, valid, width, height } = mesh;
  const xc = (width - 1) / 2;
  const yc = (height - 1) / 2;
  let n = 0;
  let sx = 0;
  let sy = 0;
  let sz = 0;
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      const i = r * columns + c;
      if (valid[i] === 0) continue;
      n++;
      sx += (centresX[c] as number) - xc;
      sy += (centresY[r] as number) - yc;
      sz += levelAdu[i] as number;
    }
  }
  const nan: MeshGradient = {
    centreLevelAdu: Number.NaN,
    slopeXAduPerPixel: Number.NaN,
    slopeYAduPerPixel: Number.NaN,
    rangeAdu: Number.NaN,
    percent: Number.NaN,
    directionDegrees: Number.NaN,
    boxCount: n,
  };
  if (n < 3) return nan;
  const mx = sx / n;
  const my = sy / n;
  const mz = sz / n;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  let sxz = 0;
  let syz = 0;
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      const i = r * columns + c;
      if (valid[i] === 0) continue;
      const dx = (centresX[c] as number) - xc - mx;
      const dy = (centresY[r] as number) - yc - my;
      const dz = (levelAdu[i] as number) - mz;
      sxx += dx * dx;
      syy += dy * dy;
      sxy += dx * dy;
      sxz += dx * dz;
      syz += dy * dz;
    }
  }
  const det = sxx * syy - sxy * sxy;
  // A single row or column of boxes cannot fix a plane; fit the one slope it can.
  let bx = 0;
  let by = 0;
  if (det > 1e-12 * (sxx * syy + 1e-300)) {
    bx = (sxz * syy - syz * sxy) / det;
    by = (syz * sxx - sxz * sxy) / det;
  } else if (sxx > 0) bx = sxz / sxx;
  else if (syy > 0) by = syz / syy;
  else return nan;
  const centre = mz - bx * mx - by * my;
  const rangeAdu = Math.abs(bx) * (width - 1) + Math.abs(by) * (height - 1);
  let direction = (Math.atan2(by, bx) * 180) / Math.PI;
  if (direction < 0) direction += 360;
  return {
    centreLevelAdu: centre,
    slopeXAduPerPixel: bx,
    slopeYAduPerPixel: by,
    rangeAdu,
    percent: (100 * rangeAdu) / (mesh.medianLevelAdu - offsetAdu),
    directionDegrees: rangeAdu === 0 ? 0 : direction,
    boxCount: n,
  };
}

/**
 * Mesh background (REFERENCE C.5): boxes of `boxSize` pixels (partial edge boxes kept), per box a sigma-clipped
 * level and noise (clipped std); boxes with more than `maxBadFraction` bad pixels (masked, NaN, BLANK,
 * saturated) are invalid and filled from their neighbours ring by ring; the grid is 3x3 median filtered; a
 * least-squares plane through the valid boxes gives the gradient across the frame.
 * Maps at full resolution are computed on demand: {@link meshLevelAt}, {@link renderMeshMap}.
 * @returns a mesh with NaN levels and `validCount` 0 when no box is valid
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` for a box size < 1 or a bad fraction outside [0, 1]
 * @example backgroundMesh(frameView(image), { boxSize: 64, saturationAdu: 65535 }).gradient.percent
 */
export function backgroundMesh(view: FrameView, opts: BackgroundMeshOptions = {}): BackgroundMesh {
  const boxWidth = opts.boxSize ?? 64;
  const boxHeight = opts.boxHeight ?? boxWidth;
  checkBox('boxSize', boxWidth);
  checkBox('boxHeight', boxHeight);
  const maxBad = opts.maxBadFraction ?? 0.5;
  if (!(maxBad >= 0 && maxBad <= 1)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `maxBadFraction must lie in [0, 1]; found ${maxBad}`);
  }
  const width = viewWidth(view);
  const height = viewHeight(view);
  const ax = axisBoxes(width, boxWidth, true);
  const ay = axisBoxes(height, boxHeight, true);
  const columns = ax.starts.length;
  const rows = ay.starts.length;
  const cells = columns * rows;
  const rawLevel = new Float64Array(cells).fill(Number.NaN);
  const rawNoise = new Float64Array(cells).fill(Number.NaN);
  const valid = new Uint8Array(cells);
  const work = boxWork(view, boxWidth * boxHeight, opts);
  const mask = maskAddress(view, opts.mask);
  const tally = emptyTally(width * height);
  const saturation = opts.saturationAdu ?? Infinity;
  const levelKind = opts.level ?? 'median';
  let saturatedCount = 0;
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      const bw = ax.sizes[c] as number;
      const bh = ay.sizes[r] as number;
      const b = boxView(view, ax.starts[c] as number, ay.starts[r] as number, bw, bh);
      let { m, n } = boxDistribution(b, mask, opts.blankValue, work, tally);
      // Saturated values are the top of the sorted list.
      while (m > 0 && (work.values[m - 1] as number) >= saturation) {
        m--;
        const k = work.counts[m] as number;
        saturatedCount += k;
        n -= k;
      }
      const i = r * columns + c;
      if (n === 0 || (bw * bh - n) / (bw * bh) > maxBad) continue;
      const s = clipWeighted(work.values, work.counts, m, opts.clip ?? {});
      let lv = levelKind === 'mean' ? s.mean : s.median;
      // Mode with the same fallback as backgroundMode (photutils 1.6.0 rule).
      if (levelKind === 'mode') {
        if (s.std === 0) lv = s.mean;
        else if (Math.abs(s.mean - s.median) / s.std < 0.3) lv = 2.5 * s.median - 1.5 * s.mean;
      }
      rawLevel[i] = lv;
      rawNoise[i] = s.std;
      valid[i] = 1;
    }
  }
  tally.validCount -= saturatedCount;
  const validCount = valid.reduce((s, v) => s + v, 0);
  const level = Float64Array.from(rawLevel);
  const noise = Float64Array.from(rawNoise);
  fillInvalid(level, valid, columns, rows);
  fillInvalid(noise, valid, columns, rows);
  const smooth = (opts.filterSize ?? 3) === 3 && validCount > 0;
  const levelAdu = smooth ? medianFilter3(level, columns, rows) : level;
  const noiseAdu = smooth ? medianFilter3(noise, columns, rows) : noise;
  const medianLevelAdu = medianInPlace(Float64Array.from(levelAdu), validCount > 0 ? cells : 0);
  const medianNoiseAdu = medianInPlace(Float64Array.from(noiseAdu), validCount > 0 ? cells : 0);
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < cells; i++) {
    const v = levelAdu[i] as number;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  const offsetAdu = opts.offsetAdu ?? 0;
  // One object literal of fixed shape, the gradient filled in after: a spread copy would give every frame's
  // mesh a new hidden class, and optimized code reading it would be thrown away frame after frame.
  const mesh: BackgroundMesh = {
    width,
    height,
    boxWidth,
    boxHeight,
    columns,
    rows,
    centresX: ax.centres,
    centresY: ay.centres,
    levelAdu,
    noiseAdu,
    rawLevelAdu: rawLevel,
    valid,
    validCount,
    medianLevelAdu,
    medianNoiseAdu,
    meshRangePercent: validCount > 0 ? (100 * (hi - lo)) / (medianLevelAdu - offsetAdu) : Number.NaN,
    pixels: {
      totalCount: tally.totalCount,
      validCount: tally.validCount,
      nanCount: tally.nanCount,
      infiniteCount: tally.infiniteCount,
      blankCount: tally.blankCount,
      maskedCount: tally.maskedCount,
      saturatedCount,
    },
    gradient: NO_GRADIENT,
  };
  mesh.gradient = fitPlane(mesh, offsetAdu);
  return mesh;
}

/** Grid cell for a coordinate: centres[j] <= p <= centres[j + 1] (clamped outside the centres). */
function cellIndex(centres: Float64Array, box: number, p: number): number {
  const n = centres.length;
  if (n === 1) return 0;
  const j = Math.floor((p - (centres[0] as number)) / box);
  return j < 0 ? 0 : j > n - 2 ? n - 2 : j;
}

/**
 * Weight of centres[j + 1] at p, in [0, 1], for j = cellIndex(centres, box, p). Kept apart from cellIndex so the
 * per-pixel setup loops return plain numbers: a returned [j, t] pair is an array whose elements kind flips
 * between integer and double with t, and V8 then re-optimizes its callers ("wrong map").
 */
function cellWeight(centres: Float64Array, j: number, p: number): number {
  if (centres.length === 1 || p < (centres[0] as number)) return 0;
  const a = centres[j] as number;
  const t = (p - a) / ((centres[j + 1] as number) - a);
  return t > 1 ? 1 : t;
}

/**
 * Bilinear interpolation of the smoothed mesh at pixel (x, y); beyond the outermost box centres the value is
 * held constant (no extrapolation).
 * @param which 'level' (default) or 'noise'
 * @example meshLevelAt(mesh, 1024, 768)
 */
export function meshLevelAt(mesh: BackgroundMesh, x: number, y: number, which: 'level' | 'noise' = 'level'): number {
  const grid = which === 'noise' ? mesh.noiseAdu : mesh.levelAdu;
  const j = cellIndex(mesh.centresX, mesh.boxWidth, x);
  const tx = cellWeight(mesh.centresX, j, x);
  const i = cellIndex(mesh.centresY, mesh.boxHeight, y);
  const ty = cellWeight(mesh.centresY, i, y);
  const cols = mesh.columns;
  const j1 = Math.min(j + 1, cols - 1);
  const i1 = Math.min(i + 1, mesh.rows - 1);
  const v00 = grid[i * cols + j] as number;
  const v01 = grid[i * cols + j1] as number;
  const v10 = grid[i1 * cols + j] as number;
  const v11 = grid[i1 * cols + j1] as number;
  const top = v00 + (v01 - v00) * tx;
  const bottom = v10 + (v11 - v10) * tx;
  return top + (bottom - top) * ty;
}

/**
 * Full-resolution map of the smoothed level (or noise), bilinear between box centres as {@link meshLevelAt}.
 * This allocates `width x height` values unless `out` is given.
 * @param out buffer of at least width x height values, filled row-major
 */
export function renderMeshMap(
  mesh: BackgroundMesh,
  which: 'level' | 'noise' = 'level',
  out?: Float32Array | Float64Array,
): Float32Array | Float64Array {
  const { width, height, columns } = mesh;
  const map = out ?? new Float64Array(width * height);
  if (map.length < width * height) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `map buffer holds ${map.length}; needs ${width * height}`);
  }
  const grid = which === 'noise' ? mesh.noiseAdu : mesh.levelAdu;
  const colJ = new Int32Array(width);
  const colT = new Float64Array(width);
  for (let x = 0; x < width; x++) {
    const j = cellIndex(mesh.centresX, mesh.boxWidth, x);
    colJ[x] = j;
    colT[x] = cellWeight(mesh.centresX, j, x);
  }
  const row = new Float64Array(columns);
  for (let y = 0; y < height; y++) {
    const i = cellIndex(mesh.centresY, mesh.boxHeight, y);
    const ty = cellWeight(mesh.centresY, i, y);
    const i1 = Math.min(i + 1, mesh.rows - 1);
    for (let c = 0; c < columns; c++) {
      const a = grid[i * columns + c] as number;
      row[c] = a + ((grid[i1 * columns + c] as number) - a) * ty;
    }
    let k = y * width;
    for (let x = 0; x < width; x++) {
      const j = colJ[x] as number;
      const a = row[j] as number;
      const b = row[Math.min(j + 1, columns - 1)] as number;
      map[k++] = a + (b - a) * (colT[x] as number);
    }
  }
  return map;
}

/** A {@link LevelGrid} of a mesh; a class, not a literal (DEVELOPERS.md, "Objects made once a frame"). */
class MeshLevelGrid implements LevelGrid {
  declare readonly kind: 'level-grid';
  declare readonly width: number;
  declare readonly height: number;
  declare readonly columns: number;
  declare readonly rows: number;
  declare readonly values: Float64Array;
  declare readonly colLeft: Int32Array;
  declare readonly colRight: Int32Array;
  declare readonly colWeight: Float64Array;
  declare readonly colSpans: Int32Array;
  declare readonly rowTop: Int32Array;
  declare readonly rowBottom: Int32Array;
  declare readonly rowWeight: Float64Array;

  constructor(
    width: number,
    height: number,
    columns: number,
    rows: number,
    values: Float64Array,
    colLeft: Int32Array,
    colRight: Int32Array,
    colWeight: Float64Array,
    colSpans: Int32Array,
    rowTop: Int32Array,
    rowBottom: Int32Array,
    rowWeight: Float64Array,
  ) {
    this.kind = 'level-grid';
    this.width = width;
    this.height = height;
    this.columns = columns;
    this.rows = rows;
    this.values = values;
    this.colLeft = colLeft;
    this.colRight = colRight;
    this.colWeight = colWeight;
    this.colSpans = colSpans;
    this.rowTop = rowTop;
    this.rowBottom = rowBottom;
    this.rowWeight = rowWeight;
  }
}

/**
 * The smoothed level (or noise) as a {@link LevelGrid} for the star kernels: the same bilinear interpolation
 * between box centres as {@link renderMeshMap} into a Float32Array, evaluated per row or pixel when read, so no
 * full-resolution map is written (width + height index entries instead of width x height values).
 * @param which 'level' (default) or 'noise'
 */
export function meshLevelGrid(mesh: BackgroundMesh, which: 'level' | 'noise' = 'level'): LevelGrid {
  const { width, height, columns, rows, centresX, centresY, boxWidth, boxHeight } = mesh;
  const colLeft = new Int32Array(width);
  const colRight = new Int32Array(width);
  const colWeight = new Float64Array(width);
  for (let x = 0; x < width; x++) {
    const j = cellIndex(centresX, boxWidth, x);
    colLeft[x] = j;
    colRight[x] = Math.min(j + 1, columns - 1);
    colWeight[x] = cellWeight(centresX, j, x);
  }
  const spans: number[] = [];
  for (let x = 0; x < width; x++) {
    if (x === 0 || colLeft[x] !== colLeft[x - 1]) spans.push(x, colLeft[x] as number, colRight[x] as number);
  }
  const rowTop = new Int32Array(height);
  const rowBottom = new Int32Array(height);
  const rowWeight = new Float64Array(height);
  for (let y = 0; y < height; y++) {
    const i = cellIndex(centresY, boxHeight, y);
    rowTop[y] = i;
    rowBottom[y] = Math.min(i + 1, rows - 1);
    rowWeight[y] = cellWeight(centresY, i, y);
  }
  return new MeshLevelGrid(width, height, columns, rows, which === 'noise' ? mesh.noiseAdu : mesh.levelAdu, colLeft, colRight, colWeight, Int32Array.from(spans), rowTop, rowBottom, rowWeight);
}

