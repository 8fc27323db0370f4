// Star detection: threshold at k sigma above the background (optionally after a Gaussian matched filter),
// connected components on runs with union-find, minimum size, saddle split of touching stars, measurement.
// Method outline: REFERENCE E.3 (threshold + connected groups, Bertin & Arnouts 1996 for the filtered variant).

import type { Diagnostic } from '../diagnostics.js';
import { InvalidInputError } from '../errors.js';
import { RunList, labelRuns } from './label.js';
import { MeasureContext, PROFILE_LAMBDAS, finishProfile, measureFootprint, measureRunsComponent, profileChiSquaresOf } from './measure.js';
import type { PendingSource } from './measure.js';
import { backgroundAt, gridColumnLevels, isLevelGrid, levelGridRow } from './levels.js';
import type { BackgroundLevels, DetectStarsOptions, LevelMap, NumericPixels, StarDetection, StarImage, StarSource } from './types.js';

/** Check a frame and its background/noise maps; throws InvalidInputError. */
export function checkStarImage(image: StarImage, background: BackgroundLevels, noise: LevelMap): void {
  const { pixels, width, height } = image;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `bad frame size ${width}x${height}`);
  }
  if ((pixels as unknown) instanceof BigInt64Array || (pixels as unknown) instanceof BigUint64Array) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', '64-bit integer pixels are not supported by the star kernels');
  }
  const n = width * height;
  if (pixels.length !== n) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `pixels has ${pixels.length} elements, expected ${width}x${height} = ${n}`);
  }
  if (typeof background === 'number') {
    if (!Number.isFinite(background)) throw new InvalidInputError('INPUT_BAD_PARAMETER', 'background must be finite');
  } else if (isLevelGrid(background)) {
    if (background.width !== width || background.height !== height) {
      throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `background grid is for ${background.width}x${background.height}, frame is ${width}x${height}`);
    }
  } else if (background.length !== n) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `background map has ${background.length} elements, expected ${n}`);
  }
  if (typeof noise === 'number') {
    if (!(noise > 0) || !Number.isFinite(noise)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `noise must be a finite number > 0, got ${noise}`);
  } else if (noise.length !== n) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `noise map has ${noise.length} elements, expected ${n}`);
  }
}

/** Default saturation level: 0.95 x the type maximum for 8- and 16-bit unsigned data (REFERENCE E.3), else none. */
export function defaultSaturationAdu(pixels: NumericPixels): number {
  if (pixels instanceof Uint16Array) return 0.95 * 65535;
  if (pixels instanceof Uint8Array) return 0.95 * 255;
  return Infinity;
}

/** Runs of pixels with pixels[i] > background + k * noise. Returns the count of pixels above. */
function thresholdRaw(image: StarImage, background: BackgroundLevels, noise: LevelMap, k: number, runs: RunList): number {
  const { pixels: px, width: w, height: h } = image;
  let above = 0;
  // one loop per kind of level so the hot loop carries no type tests
  if (typeof background === 'number' && typeof noise === 'number') {
    const t = background + k * noise;
    for (let y = 0; y < h; y++) {
      const base = y * w;
      let x = 0;
      while (x < w) {
        if (px[base + x]! > t) {
          const x0 = x++;
          while (x < w && px[base + x]! > t) x++;
          runs.push(y, x0, x - 1);
          above += x - x0;
        } else x++;
      }
    }
  } else if (typeof noise === 'number' && typeof background !== 'number' && isLevelGrid(background)) {
    // Along one run of columns between two grid centres the level is a + d x weight, monotonic in x, so the
    // smaller of its end values bounds the threshold from below: most pixels are rejected against that bound
    // alone, and only the rest are tested against their exact level (the float32 value a map would hold).
    const { colSpans, colWeight } = background;
    const colLevels = new Float64Array(background.columns);
    const kn = k * noise;
    for (let y = 0; y < h; y++) {
      const base = y * w;
      gridColumnLevels(background, y, colLevels);
      let open = false;
      let x0 = 0;
      for (let sp = 0; sp < colSpans.length; sp += 3) {
        const xs = colSpans[sp]!;
        const xe = sp + 3 < colSpans.length ? colSpans[sp + 3]! : w;
        const a = colLevels[colSpans[sp + 1]!]!;
        const d = colLevels[colSpans[sp + 2]!]! - a;
        const l0 = Math.fround(a + d * colWeight[xs]!);
        const l1 = Math.fround(a + d * colWeight[xe - 1]!);
        const lo = (l0 < l1 ? l0 : l1) + kn;
        for (let x = xs; x < xe; x++) {
          const v = px[base + x]!;
          if (v > lo && v > Math.fround(a + d * colWeight[x]!) + kn) {
            if (!open) {
              open = true;
              x0 = x;
            }
          } else if (open) {
            open = false;
            runs.push(y, x0, x - 1);
            above += x - x0;
          }
        }
      }
      if (open) {
        runs.push(y, x0, w - 1);
        above += w - x0;
      }
    }
  } else if (typeof noise === 'number' && typeof background !== 'number') {
    // a grid is read through one reused row (its values are those a Float32Array map would hold)
    const grid = isLevelGrid(background) ? background : null;
    const rowLevels = new Float32Array(grid === null ? 0 : w);
    const columnScratch = new Float64Array(grid === null ? 0 : grid.columns);
    const kn = k * noise;
    for (let y = 0; y < h; y++) {
      const base = y * w;
      const bg = grid === null ? (background as Float32Array | Float64Array) : levelGridRow(grid, y, rowLevels, columnScratch);
      const bo = grid === null ? base : 0;
      let x = 0;
      while (x < w) {
        if (px[base + x]! > bg[bo + x]! + kn) {
          const x0 = x++;
          while (x < w && px[base + x]! > bg[bo + x]! + kn) x++;
          runs.push(y, x0, x - 1);
          above += x - x0;
        } else x++;
      }
    }
  } else {
    const nm = noise as Float32Array | Float64Array;
    const grid = typeof background !== 'number' && isLevelGrid(background) ? background : null;
    const bgMap = typeof background === 'number' ? null : grid === null ? (background as Float32Array | Float64Array) : new Float32Array(w);
    const columnScratch = new Float64Array(grid === null ? 0 : grid.columns);
    const bs = typeof background === 'number' ? background : 0;
    for (let y = 0; y < h; y++) {
      const base = y * w;
      if (grid !== null) levelGridRow(grid, y, bgMap as Float32Array, columnScratch);
      const bo = grid === null ? base : 0;
      let x = 0;
      while (x < w) {
        const i = base + x;
        if (px[i]! > (bgMap === null ? bs : bgMap[bo + x]!) + k * nm[i]!) {
          const x0 = x++;
          while (x < w && px[base + x]! > (bgMap === null ? bs : bgMap[bo + x]!) + k * nm[base + x]!) x++;
          runs.push(y, x0, x - 1);
          above += x - x0;
        } else x++;
      }
    }
  }
  return above;
}

/** Normalised 1-D Gaussian kernel of the given FWHM, radius ceil(3 sigma) (at least 1). */
function gaussianKernel(fwhm: number): Float64Array {
  const sigma = fwhm / (2 * Math.sqrt(2 * Math.LN2));
  const r = Math.max(1, Math.ceil(3 * sigma));
  const k = new Float64Array(2 * r + 1);
  let s = 0;
  for (let i = -r; i <= r; i++) s += k[i + r] = Math.exp((-0.5 * i * i) / (sigma * sigma));
  for (let i = 0; i < k.length; i++) k[i]! /= s;
  return k;
}

/**
 * Runs where the background-subtracted image, convolved with a normalised Gaussian (separable, edge pixels
 * repeated), exceeds k * noise * sqrt(sum w^2) — the noise of the filtered image for white noise. Streams the
 * frame through a ring of 2r + 1 horizontally filtered rows, so memory stays at a few rows.
 */
function thresholdFiltered(image: StarImage, background: BackgroundLevels, noise: LevelMap, k: number, fwhm: number, runs: RunList): number {
  const { pixels: px, width: w, height: h } = image;
  const kern = gaussianKernel(fwhm);
  const r = (kern.length - 1) / 2;
  let ss = 0;
  for (let i = 0; i < kern.length; i++) ss += kern[i]! * kern[i]!;
  const noiseFactor = ss; // sqrt(sum of squares of the 2-D kernel) = sum of squares of the 1-D kernel
  const K = 2 * r + 1;
  const ring: Float64Array[] = [];
  for (let i = 0; i < K; i++) ring.push(new Float64Array(w));
  const sub = new Float64Array(w + 2 * r);
  const out = new Float64Array(w);
  let above = 0;
  const grid = typeof background !== 'number' && isLevelGrid(background) ? background : null;
  const bgMap = typeof background === 'number' ? null : grid === null ? (background as Float32Array | Float64Array) : new Float32Array(w);
  const columnScratch = new Float64Array(grid === null ? 0 : grid.columns);
  const bs = typeof background === 'number' ? background : 0;
  const noiseMap = typeof noise === 'number' ? null : noise;
  const tScalar = typeof noise === 'number' ? k * noiseFactor * noise : 0;
  const kf = k * noiseFactor;
  const hfilter = (y: number): void => {
    const base = y * w;
    if (bgMap === null) {
      for (let x = 0; x < w; x++) {
        const v = px[base + x]! - bs;
        sub[x + r] = v === v ? v : 0;
      }
    } else {
      if (grid !== null) levelGridRow(grid, y, bgMap as Float32Array, columnScratch);
      const bo = grid === null ? base : 0;
      for (let x = 0; x < w; x++) {
        const v = px[base + x]! - bgMap[bo + x]!;
        sub[x + r] = v === v ? v : 0;
      }
    }
    for (let i = 0; i < r; i++) {
      sub[i] = sub[r]!;
      sub[w + r + i] = sub[w + r - 1]!;
    }
    const dst = ring[y % K]!;
    dst.fill(0);
    // tap by tap over the whole row: simple loops the compiler keeps tight
    for (let j = 0; j < K; j++) {
      const wk = kern[j]!;
      for (let x = 0; x < w; x++) dst[x]! += wk * sub[x + j]!;
    }
  };
  let done = -1; // last source row filtered
  for (let yo = 0; yo < h; yo++) {
    const need = Math.min(h - 1, yo + r);
    while (done < need) hfilter(++done);
    out.fill(0);
    for (let j = -r; j <= r; j++) {
      const yy = Math.min(h - 1, Math.max(0, yo + j));
      const src = ring[yy % K]!;
      const wk = kern[j + r]!;
      for (let x = 0; x < w; x++) out[x]! += wk * src[x]!;
    }
    const base = yo * w;
    let x = 0;
    while (x < w) {
      if (out[x]! > (noiseMap === null ? tScalar : kf * noiseMap[base + x]!)) {
        const x0 = x++;
        while (x < w && out[x]! > (noiseMap === null ? tScalar : kf * noiseMap[base + x]!)) x++;
        runs.push(yo, x0, x - 1);
        above += x - x0;
      } else x++;
    }
  }
  return above;
}

/** Scratch for the saddle split, grown as needed; a class, not a literal (DEVELOPERS.md, "Objects made once a frame"). */
class SplitScratch {
  declare readonly vals: Float64Array;
  declare readonly order: Int32Array;
  declare readonly regionOf: Int32Array;
  declare readonly parent: Int32Array;
  declare readonly peak: Float64Array;
  declare readonly peakPix: Int32Array;
  declare readonly size: Int32Array;
  declare readonly part: Int32Array;
  declare readonly grid: Int32Array;

  constructor(n: number) {
    this.vals = new Float64Array(n);
    this.order = new Int32Array(n);
    this.regionOf = new Int32Array(n);
    this.parent = new Int32Array(n);
    this.peak = new Float64Array(n);
    this.peakPix = new Int32Array(n);
    this.size = new Int32Array(n);
    this.part = new Int32Array(n);
    this.grid = new Int32Array(n);
  }
}

/**
 * Split a component at saddle points. Pixels are visited from the brightest down (a flooding, as in watershed
 * segmentation); a pixel touching no visited pixel starts a region at its peak; a pixel touching several
 * regions is a saddle: every region but the brightest is merged into the brightest unless it rises above the
 * saddle by at least max(dipSigma x noise, dipFraction x its peak) and holds at least minPixels pixels above
 * the saddle. (For two equal Gaussian stars the midpoint dips by 58 % at 1.5 FWHM apart and not at all at
 * 1 FWHM, so the default 0.3 splits pairs from about 1.3 FWHM [derived].) Writes each pixel's part number
 * (0 = brightest) into sc.part and returns the number of parts.
 */
function splitComponent(
  ctx: MeasureContext,
  idx: Int32Array,
  n: number,
  bx0: number,
  by0: number,
  gw: number,
  gh: number,
  connectivity: 4 | 8,
  minPixels: number,
  dipSigma: number,
  dipFraction: number,
  sc: SplitScratch,
): number {
  const { pixels, width, background, noise } = ctx;
  const { vals, order, regionOf, parent, peak, peakPix, size, part } = sc;
  const grid = sc.grid;
  grid.fill(-1, 0, gw * gh);
  for (let k = 0; k < n; k++) {
    const i = idx[k]!;
    const x = i % width;
    const y = (i - x) / width;
    grid[(y - by0) * gw + (x - bx0)] = k;
    const v = pixels[i]! - backgroundAt(background, i);
    vals[k] = v === v ? v : -Infinity;
    order[k] = k;
    regionOf[k] = -1;
  }
  const ord = order.subarray(0, n);
  ord.sort((a, b) => vals[b]! - vals[a]! || a - b);
  const find = (r: number): number => {
    while (parent[r]! !== r) {
      const g = parent[parent[r]!]!;
      parent[r] = g;
      r = g;
    }
    return r;
  };
  const roots = new Int32Array(8);
  let regions = 0;
  for (let j = 0; j < n; j++) {
    const k = ord[j]!;
    const i = idx[k]!;
    const x = (i % width) - bx0;
    const y = (i - (i % width)) / width - by0;
    const v = vals[k]!;
    let m = 0;
    for (let dy = -1; dy <= 1; dy++) {
      const yy = y + dy;
      if (yy < 0 || yy >= gh) continue;
      for (let dx = -1; dx <= 1; dx++) {
        if (dx === 0 && dy === 0) continue;
        if (connectivity === 4 && dx !== 0 && dy !== 0) continue;
        const xx = x + dx;
        if (xx < 0 || xx >= gw) continue;
        const q = grid[yy * gw + xx]!;
        if (q < 0) continue;
        const rq = regionOf[q]!;
        if (rq < 0) continue;
        const root = find(rq);
        let seen = false;
        for (let t = 0; t < m; t++) if (roots[t] === root) seen = true;
        if (!seen) roots[m++] = root;
      }
    }
    if (m === 0) {
      const r = regions++;
      parent[r] = r;
      peak[r] = v;
      peakPix[r] = k;
      size[r] = 1;
      regionOf[k] = r;
      continue;
    }
    let main = roots[0]!;
    for (let t = 1; t < m; t++) if (peak[roots[t]!]! > peak[main]!) main = roots[t]!;
    for (let t = 0; t < m; t++) {
      const r = roots[t]!;
      if (r === main) continue;
      const sig = typeof noise === 'number' ? noise : noise[idx[peakPix[r]!]!]!;
      const minDip = Math.max(dipSigma * sig, dipFraction * peak[r]!);
      if (peak[r]! - v < minDip || size[r]! < minPixels) {
        parent[r] = main;
        size[main]! += size[r]!;
      }
    }
    regionOf[k] = main;
    size[main]!++;
  }
  // number the surviving regions by peak, brightest first
  let parts = 0;
  const partOfRoot = sc.size; // reuse: sizes are no longer needed
  const rootList: number[] = [];
  for (let r = 0; r < regions; r++) if (find(r) === r) rootList.push(r);
  rootList.sort((a, b) => peak[b]! - peak[a]! || a - b);
  for (const r of rootList) partOfRoot[r] = parts++;
  for (let k = 0; k < n; k++) part[k] = partOfRoot[find(regionOf[k]!)]!;
  return parts;
}

/** Most stars whose profile exponent is scanned to set the frame's exponent. */
const CALIBRATION_STARS = 64;

/**
 * The frame's profile exponent (Box-Cox lambda, see measure.ts): the exponent that minimises the summed
 * chi-square of the profile fits of up to 64 of the highest-SNR clean stars (not saturated, blended, too large
 * or on the edge; SNR >= 30 preferred), first on the grid PROFILE_LAMBDAS, then by three bisection steps
 * (+-0.05, +-0.025, +-0.0125 about the best so far). All stars of a frame share one PSF family, and one exponent
 * fitted to many stars keeps faint stars' FWHM from chasing noise. 0 (Gaussian) when no star qualifies.
 */
function calibrateProfile(ctx: MeasureContext, pending: PendingSource[]): { lambda: number; stars: number } {
  const clean = pending.filter((p) => p.shape !== null && !p.source.saturated && !p.source.blended && !p.source.touchesEdge);
  clean.sort((a, b) => b.source.snr - a.source.snr || a.source.id - b.source.id);
  let pick = clean.filter((p) => p.source.snr >= 30).slice(0, CALIBRATION_STARS);
  if (pick.length < 3) pick = clean.slice(0, CALIBRATION_STARS);
  const L = PROFILE_LAMBDAS.length;
  const total = new Float64Array(L);
  const one = new Float64Array(L);
  const used: PendingSource[] = [];
  for (const p of pick) {
    if (!profileChiSquaresOf(ctx, p, PROFILE_LAMBDAS, one)) continue;
    if (!one.every((v) => Number.isFinite(v))) continue;
    for (let k = 0; k < L; k++) total[k]! += one[k]!;
    used.push(p);
  }
  if (used.length === 0) return { lambda: 0, stars: 0 };
  let bi = 0;
  for (let k = 1; k < L; k++) if (total[k]! < total[bi]!) bi = k;
  let lambda = PROFILE_LAMBDAS[bi]!;
  let bestTotal = total[bi]!;
  const pair = new Float64Array(2);
  for (const step of [0.05, 0.025, 0.0125]) {
    const cand = [lambda - step, lambda + step];
    const sum = [0, 0];
    for (const p of used) {
      if (!profileChiSquaresOf(ctx, p, cand, pair)) pair.fill(Infinity);
      sum[0]! += pair[0]!;
      sum[1]! += pair[1]!;
    }
    for (let k = 0; k < 2; k++) {
      if (sum[k]! < bestTotal) {
        bestTotal = sum[k]!;
        lambda = cand[k]!;
      }
    }
  }
  return { lambda, stars: used.length };
}

/** Per component: pixel count, bounding box and a linked list of its runs in raster order. */
interface ComponentExtents {
  area: Int32Array;
  head: Int32Array;
  next: Int32Array;
  bx0: Int32Array;
  bx1: Int32Array;
  by0: Int32Array;
  by1: Int32Array;
}

// The loops live in small functions of their own so that the optimizing compiler works on each loop once,
// not on the whole detector again for every loop it enters (on-stack replacement); a worker pool pays the
// compile cost once per thread.
function componentExtents(runs: RunList, componentOfRun: Int32Array, componentCount: number, width: number): ComponentExtents {
  const area = new Int32Array(componentCount);
  const head = new Int32Array(componentCount).fill(-1);
  const tail = new Int32Array(componentCount);
  const next = new Int32Array(runs.count).fill(-1);
  const bx0 = new Int32Array(componentCount).fill(width);
  const bx1 = new Int32Array(componentCount).fill(-1);
  const by0 = new Int32Array(componentCount);
  const by1 = new Int32Array(componentCount);
  for (let r = 0; r < runs.count; r++) {
    const c = componentOfRun[r]!;
    const x0 = runs.x0[r]!;
    const x1 = runs.x1[r]!;
    const y = runs.y[r]!;
    area[c]! += x1 - x0 + 1;
    if (head[c]! < 0) {
      head[c] = r;
      by0[c] = y;
    } else next[tail[c]!] = r;
    tail[c] = r;
    by1[c] = y;
    if (x0 < bx0[c]!) bx0[c] = x0;
    if (x1 > bx1[c]!) bx1[c] = x1;
  }
  return { area, head, next, bx0, bx1, by0, by1 };
}

/** Fit each pending source's profile with the frame's lambda and return the finished sources. */
function finishSources(ctx: MeasureContext, pending: readonly PendingSource[], lambda: number): StarSource[] {
  const sources: StarSource[] = new Array(pending.length);
  for (let i = 0; i < pending.length; i++) {
    finishProfile(ctx, pending[i]!, lambda);
    sources[i] = pending[i]!.source;
  }
  return sources;
}

interface SplitSettings {
  connectivity: 4 | 8;
  minPixels: number;
  dipSigma: number;
  dipFraction: number;
}

/**
 * Measure the chosen components into `pending` (in order): each is split at its saddles when `split` is given,
 * and each part measured; a component over maxPixels is measured whole, unsplit. Returns that count.
 */
function measureComponents(
  ctx: MeasureContext,
  runs: RunList,
  comps: ComponentExtents,
  chosen: readonly number[],
  maxPixels: number,
  split: SplitSettings | null,
  pending: PendingSource[],
): number {
  const { area, head, next, bx0, bx1, by0, by1 } = comps;
  const width = ctx.width;
  let idx = new Int32Array(1024);
  let sorted = new Int32Array(1024);
  let sc = new SplitScratch(1024);
  let tooLargeCount = 0;
  for (let i = 0; i < chosen.length; i++) {
    const c = chosen[i]!;
    const n = area[c]!;
    if (n > maxPixels) {
      tooLargeCount++;
      pending.push(measureRunsComponent(ctx, runs.y, runs.x0, runs.x1, head[c]!, next, n, { id: pending.length + 1, blended: false }));
      continue;
    }
    if (idx.length < n) {
      idx = new Int32Array(2 * n);
      sorted = new Int32Array(2 * n);
    }
    let m = 0;
    for (let r = head[c]!; r >= 0; r = next[r]!) {
      const base = runs.y[r]! * width;
      for (let x = runs.x0[r]!; x <= runs.x1[r]!; x++) idx[m++] = base + x;
    }
    const gw = bx1[c]! - bx0[c]! + 1;
    const gh = by1[c]! - by0[c]! + 1;
    let parts = 1;
    if (split !== null && n >= split.minPixels + 2) {
      if (sc.vals.length < n || sc.grid.length < gw * gh) sc = new SplitScratch(Math.max(2 * n, gw * gh));
      parts = splitComponent(ctx, idx, n, bx0[c]!, by0[c]!, gw, gh, split.connectivity, split.minPixels, split.dipSigma, split.dipFraction, sc);
    }
    if (parts === 1) {
      pending.push(measureFootprint(ctx, idx, 0, n, { id: pending.length + 1, blended: false }));
      continue;
    }
    // order pixels by part (counting sort) and measure each part
    const counts = new Int32Array(parts + 1);
    for (let q = 0; q < n; q++) counts[sc.part[q]! + 1]!++;
    for (let p = 0; p < parts; p++) counts[p + 1]! += counts[p]!;
    const starts = counts.slice(0, parts);
    for (let q = 0; q < n; q++) sorted[counts[sc.part[q]!]!++] = idx[q]!;
    for (let p = 0; p < parts; p++) {
      const s0 = starts[p]!;
      const len = (p + 1 < parts ? starts[p + 1]! : n) - s0;
      pending.push(measureFootprint(ctx, sorted, s0, len, { id: pending.length + 1, blended: true }));
    }
  }
  return tooLargeCount;
}

/**
 * Detect and measure stars (REFERENCE E.3, E.2, E.1).
 *
 * Pixels above background + k x noise (k = `thresholdSigma`, default 5; with `filterFwhmPixels` > 0 the
 * background-subtracted frame is first convolved with a normalised Gaussian of that FWHM and thresholded at
 * k x its own noise, default k = 4) form connected components (8-connectivity by default); components with
 * fewer than `minPixels` (5) pixels are dropped, those above `maxPixels` (10000) are kept as `tooLarge` with
 * centroid, flux and isophotal moments only; the rest are split at saddles (see `splitComponent`) and each
 * part is measured (see `measure.ts`). Sources come in raster order of their component's first pixel.
 */
export function detectStars(image: StarImage, options: DetectStarsOptions): StarDetection {
  const { background, noise } = options;
  checkStarImage(image, background, noise);
  const { pixels, width, height } = image;
  const filterFwhm = options.filterFwhmPixels ?? 0;
  if (!(filterFwhm >= 0) || !Number.isFinite(filterFwhm)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `filterFwhmPixels must be >= 0, got ${filterFwhm}`);
  }
  const k = options.thresholdSigma ?? (filterFwhm > 0 ? 4 : 5);
  if (!(k > 0) || !Number.isFinite(k)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `thresholdSigma must be > 0, got ${k}`);
  const connectivity = options.connectivity ?? 8;
  if (connectivity !== 4 && connectivity !== 8) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `connectivity must be 4 or 8, got ${String(connectivity)}`);
  }
  const minPixels = options.minPixels ?? 5;
  const maxPixels = options.maxPixels ?? 10000;
  if (!Number.isInteger(minPixels) || minPixels < 1 || !(maxPixels >= minPixels)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `need integer minPixels >= 1 and maxPixels >= minPixels (${minPixels}, ${maxPixels})`);
  }
  const maxSources = options.maxSources ?? 50000;
  if (!(maxSources >= 1)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `maxSources must be >= 1, got ${maxSources}`);
  const saturationAdu = options.saturationAdu ?? defaultSaturationAdu(pixels);
  const gain = options.gainElectronsPerAdu;
  if (gain !== undefined && !(gain > 0)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `gainElectronsPerAdu must be > 0, got ${gain}`);
  const deblend = options.deblend ?? true;
  const dipSigma = options.deblendMinDipSigma ?? 3;
  const dipFraction = options.deblendMinDipFraction ?? 0.3;

  const runs = new RunList(4096);
  const above = filterFwhm > 0 ? thresholdFiltered(image, background, noise, k, filterFwhm, runs) : thresholdRaw(image, background, noise, k, runs);
  const { componentOfRun, componentCount } = labelRuns(runs, connectivity);

  const comps = componentExtents(runs, componentOfRun, componentCount, width);
  const ctx = new MeasureContext(pixels, width, height, background, noise, saturationAdu, gain, options.localBackground ?? false);
  // components to measure; past maxSources only the largest (a cheap stand-in for the brightest) are kept
  let chosen: number[] = [];
  for (let c = 0; c < componentCount; c++) if (comps.area[c]! >= minPixels) chosen.push(c);
  const candidates = chosen.length;
  if (chosen.length > maxSources) {
    const area = comps.area;
    chosen.sort((a, b) => area[b]! - area[a]! || a - b);
    chosen = chosen.slice(0, maxSources).sort((a, b) => a - b);
  }
  const pending: PendingSource[] = [];
  const split = deblend ? { connectivity, minPixels, dipSigma, dipFraction } : null;
  const tooLargeCount = measureComponents(ctx, runs, comps, chosen, maxPixels, split, pending);

  const { lambda: profileLambda, stars: calibrationStars } =
    options.profileLambda !== undefined ? { lambda: options.profileLambda, stars: 0 } : calibrateProfile(ctx, pending);
  const sources = finishSources(ctx, pending, profileLambda);

  const diagnostics: Diagnostic[] = [];
  if (above > 0.05 * width * height) {
    diagnostics.push({
      code: 'STARS_MANY_PIXELS_ABOVE_THRESHOLD',
      severity: 'warning',
      message: `${((100 * above) / (width * height)).toFixed(1)} % of pixels are above the detection threshold; background or noise may be wrong`,
      where: {},
    });
  }
  if (candidates > chosen.length) {
    diagnostics.push({
      code: 'STARS_SOURCE_LIMIT',
      severity: 'warning',
      message: `${candidates} components passed the threshold; only the ${chosen.length} largest were measured (maxSources)`,
      where: {},
    });
  }
  if (tooLargeCount > 0) {
    diagnostics.push({
      code: 'STARS_TOO_LARGE_COMPONENTS',
      severity: 'info',
      message: `${tooLargeCount} component(s) larger than ${maxPixels} pixels were not split or shape-fitted`,
      where: {},
    });
  }
  return {
    sources,
    thresholdSigma: k,
    filterFwhmPixels: filterFwhm,
    connectivity,
    saturationAdu,
    profileLambda,
    profileCalibrationStars: calibrationStars,
    pixelsAboveThreshold: above,
    componentCount,
    width,
    height,
    diagnostics,
  };
}
