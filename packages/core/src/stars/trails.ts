// Trail detection (REFERENCE E.4): star-masked, binned, locally normalised mask -> Hough transform
// (rho = x cos(theta) + y sin(theta); Duda & Hart 1972, Comm. ACM 15, 11, from memory) plus long elongated
// components of the mask; every candidate line is then checked at full resolution against strips either side.

import type { Diagnostic } from '../diagnostics.js';
import { InvalidInputError } from '../errors.js';
import { checkStarImage } from './detect.js';
import { labelComponents } from './label.js';
import { medianAndMadSigma } from './select.js';
import { backgroundAt, gridColumnLevels, isLevelGrid } from './levels.js';
import type { BackgroundLevels, DetectTrailsOptions, LevelGrid, LevelMap, StarImage, StarSource, Trail, TrailDetection } from './types.js';

/**
 * Masked regions: disks about sources, plus boxes for saturated ones (bleeds), looked up through a coarse grid.
 * A class, not a literal (DEVELOPERS.md, "Objects made once a frame").
 */
class MaskSet {
  declare readonly cx: Float64Array;
  declare readonly cy: Float64Array;
  declare readonly r2: Float64Array;
  /** Box (inclusive) or, when xb < xa, none. */
  declare readonly xa: Int32Array;
  declare readonly xb: Int32Array;
  declare readonly ya: Int32Array;
  declare readonly yb: Int32Array;
  declare readonly count: number;
  declare readonly cell: number;
  declare readonly gw: number;
  declare readonly gh: number;
  /** Per grid cell: start into `items` (length gw*gh + 1). */
  declare readonly start: Int32Array;
  declare readonly items: Int32Array;

  constructor(
    cx: Float64Array,
    cy: Float64Array,
    r2: Float64Array,
    xa: Int32Array,
    xb: Int32Array,
    ya: Int32Array,
    yb: Int32Array,
    cell: number,
    gw: number,
    gh: number,
    start: Int32Array,
    items: Int32Array,
  ) {
    this.cx = cx;
    this.cy = cy;
    this.r2 = r2;
    this.xa = xa;
    this.xb = xb;
    this.ya = ya;
    this.yb = yb;
    this.count = cx.length;
    this.cell = cell;
    this.gw = gw;
    this.gh = gh;
    this.start = start;
    this.items = items;
  }
}

/** Sources left unmasked: unsaturated and elongated (A/B >= 3), as trail pieces are. */
function isTrailLike(s: StarSource): boolean {
  return !s.saturated && s.elongation >= 3;
}

function buildMasks(sources: readonly StarSource[], width: number, height: number, grow: number): MaskSet {
  const keep = sources.filter((s) => !isTrailLike(s));
  const n = keep.length;
  const cx = new Float64Array(n);
  const cy = new Float64Array(n);
  const r2 = new Float64Array(n);
  const xa = new Int32Array(n);
  const xb = new Int32Array(n);
  const ya = new Int32Array(n);
  const yb = new Int32Array(n);
  const cell = 32;
  const gw = Math.ceil(width / cell);
  const gh = Math.ceil(height / cell);
  const counts = new Int32Array(gw * gh + 1);
  const reach = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const s = keep[k]!;
    // a disk 1.5 equivalent radii plus `grow` (2x for saturated stars, whose halo reaches further)
    const req = Math.sqrt(s.areaPixels / Math.PI);
    const r = (s.saturated ? 2.5 : 1.5) * req + grow;
    cx[k] = s.x;
    cy[k] = s.y;
    r2[k] = r * r;
    if (s.saturated) {
      xa[k] = s.box.xMin - grow;
      xb[k] = s.box.xMax + grow;
      ya[k] = s.box.yMin - grow;
      yb[k] = s.box.yMax + grow;
    } else {
      xa[k] = 1;
      xb[k] = 0;
    }
    reach[k] = r;
  }
  const span = (k: number): [number, number, number, number] => {
    let x0 = cx[k]! - reach[k]!;
    let x1 = cx[k]! + reach[k]!;
    let y0 = cy[k]! - reach[k]!;
    let y1 = cy[k]! + reach[k]!;
    if (xb[k]! >= xa[k]!) {
      x0 = Math.min(x0, xa[k]!);
      x1 = Math.max(x1, xb[k]!);
      y0 = Math.min(y0, ya[k]!);
      y1 = Math.max(y1, yb[k]!);
    }
    const c = (v: number, m: number): number => Math.min(m - 1, Math.max(0, Math.floor(v / cell)));
    return [c(x0, gw), c(x1, gw), c(y0, gh), c(y1, gh)];
  };
  for (let k = 0; k < n; k++) {
    const [a, b, c, d] = span(k);
    for (let gy = c; gy <= d; gy++) for (let gx = a; gx <= b; gx++) counts[gy * gw + gx + 1]!++;
  }
  for (let i = 0; i < gw * gh; i++) counts[i + 1]! += counts[i]!;
  const start = counts.slice();
  const fill = counts.slice(0, gw * gh);
  const items = new Int32Array(start[gw * gh]!);
  for (let k = 0; k < n; k++) {
    const [a, b, c, d] = span(k);
    for (let gy = c; gy <= d; gy++) for (let gx = a; gx <= b; gx++) items[fill[gy * gw + gx]!++] = k;
  }
  return new MaskSet(cx, cy, r2, xa, xb, ya, yb, cell, gw, gh, start, items);
}

function isMasked(m: MaskSet, x: number, y: number): boolean {
  if (m.count === 0) return false;
  const g = Math.floor(y / m.cell) * m.gw + Math.floor(x / m.cell);
  for (let j = m.start[g]!; j < m.start[g + 1]!; j++) {
    const k = m.items[j]!;
    const dx = x - m.cx[k]!;
    const dy = y - m.cy[k]!;
    if (dx * dx + dy * dy <= m.r2[k]!) return true;
    if (x >= m.xa[k]! && x <= m.xb[k]! && y >= m.ya[k]! && y <= m.yb[k]!) return true;
  }
  return false;
}

/**
 * One row's contribution to the block sums with the level of a grid computed in place (the float32 value a map
 * would hold; no row buffer): the same sums in the same order as the map path, one pass over x with a flush at
 * each block edge.
 */
function gridRowSums(
  px: StarImage['pixels'],
  base: number,
  grid: LevelGrid,
  y: number,
  bandMask: Uint8Array,
  mbase: number,
  bin: number,
  colLevels: Float64Array,
  sum: Float64Array,
  cnt: Int32Array,
): void {
  const { colSpans, colWeight, width: w } = grid;
  gridColumnLevels(grid, y, colLevels);
  let bx = 0;
  let edge = Math.min(w, bin);
  let s = 0;
  let c = 0;
  for (let sp = 0; sp < colSpans.length; sp += 3) {
    const xe = sp + 3 < colSpans.length ? colSpans[sp + 3]! : w;
    const a = colLevels[colSpans[sp + 1]!]!;
    const d = colLevels[colSpans[sp + 2]!]! - a;
    for (let x = colSpans[sp]!; x < xe; x++) {
      if (bandMask[mbase + x] === 0) {
        const f = px[base + x]! - Math.fround(a + d * colWeight[x]!);
        if (f === f) {
          s += f;
          c++;
        }
      }
      if (x + 1 === edge) {
        sum[bx]! += s;
        cnt[bx]! += c;
        s = 0;
        c = 0;
        bx++;
        edge = Math.min(w, edge + bin);
      }
    }
  }
}

/**
 * Block means of background-subtracted, unmasked pixels (NaN for blocks with fewer than half their pixels
 * usable). Rows are read in bands of `bin` rows; a band's mask is painted from the mask set first.
 */
function binnedMeans(image: StarImage, background: BackgroundLevels, masks: MaskSet, bin: number): { means: Float32Array; bw: number; bh: number } {
  const { pixels: px, width: w, height: h } = image;
  const bw = Math.ceil(w / bin);
  const bh = Math.ceil(h / bin);
  const means = new Float32Array(bw * bh);
  const sum = new Float64Array(bw);
  const cnt = new Int32Array(bw);
  const bandMask = new Uint8Array(bin * w);
  // a grid is read through one reused row (its values are those a Float32Array map would hold)
  const grid = typeof background !== 'number' && isLevelGrid(background) ? background : null;
  const bgMap = typeof background === 'number' ? null : grid === null ? (background as Float32Array | Float64Array) : null;
  const columnScratch = new Float64Array(grid === null ? 0 : grid.columns);
  const bs = typeof background === 'number' ? background : 0;
  // sources by band: each mask lands in the bands its extent touches
  const bands: number[][] = Array.from({ length: bh }, () => []);
  for (let k = 0; k < masks.count; k++) {
    const r = Math.sqrt(masks.r2[k]!);
    let y0 = masks.cy[k]! - r;
    let y1 = masks.cy[k]! + r;
    if (masks.xb[k]! >= masks.xa[k]!) {
      y0 = Math.min(y0, masks.ya[k]!);
      y1 = Math.max(y1, masks.yb[k]!);
    }
    const b0 = Math.max(0, Math.floor(y0 / bin));
    const b1 = Math.min(bh - 1, Math.floor(y1 / bin));
    for (let b = b0; b <= b1; b++) bands[b]!.push(k);
  }
  for (let by = 0; by < bh; by++) {
    const y0 = by * bin;
    const rows = Math.min(bin, h - y0);
    bandMask.fill(0, 0, rows * w);
    for (const k of bands[by]!) {
      const r2 = masks.r2[k]!;
      const mx = masks.cx[k]!;
      const my = masks.cy[k]!;
      for (let ry = 0; ry < rows; ry++) {
        const dy = y0 + ry - my;
        const rem = r2 - dy * dy;
        if (rem >= 0) {
          const half = Math.sqrt(rem);
          const xa = Math.max(0, Math.ceil(mx - half));
          const xb = Math.min(w - 1, Math.floor(mx + half));
          if (xb >= xa) bandMask.fill(1, ry * w + xa, ry * w + xb + 1);
        }
        if (masks.xb[k]! >= masks.xa[k]! && y0 + ry >= masks.ya[k]! && y0 + ry <= masks.yb[k]!) {
          const xa = Math.max(0, masks.xa[k]!);
          const xb = Math.min(w - 1, masks.xb[k]!);
          if (xb >= xa) bandMask.fill(1, ry * w + xa, ry * w + xb + 1);
        }
      }
    }
    sum.fill(0);
    cnt.fill(0);
    for (let ry = 0; ry < rows; ry++) {
      const base = (y0 + ry) * w;
      const mbase = ry * w;
      if (grid !== null) {
        gridRowSums(px, base, grid, y0 + ry, bandMask, mbase, bin, columnScratch, sum, cnt);
        continue;
      }
      for (let bx = 0; bx < bw; bx++) {
        const xa = bx * bin;
        const xe = Math.min(w, xa + bin);
        let s = 0;
        let c = 0;
        if (bgMap === null) {
          for (let x = xa; x < xe; x++) {
            if (bandMask[mbase + x]) continue;
            const f = px[base + x]! - bs;
            if (f === f) {
              s += f;
              c++;
            }
          }
        } else {
          for (let x = xa; x < xe; x++) {
            if (bandMask[mbase + x]) continue;
            const f = px[base + x]! - bgMap[base + x]!;
            if (f === f) {
              s += f;
              c++;
            }
          }
        }
        sum[bx]! += s;
        cnt[bx]! += c;
      }
    }
    for (let bx = 0; bx < bw; bx++) {
      const full = Math.min(bin, w - bx * bin) * rows;
      means[by * bw + bx] = cnt[bx]! * 2 >= full ? sum[bx]! / cnt[bx]! : NaN;
    }
  }
  return { means, bw, bh };
}

/**
 * z-scores of the block means against a local level and scale: median and MAD-sigma in tiles of 16 x 16 blocks,
 * bilinearly interpolated between tile centres, so residual gradients of the background map and an imperfect
 * noise estimate do not light up whole regions (and tile borders leave no straight edges).
 */
function localZ(means: Float32Array, bw: number, bh: number): Float32Array {
  const T = 16;
  const tw = Math.ceil(bw / T);
  const th = Math.ceil(bh / T);
  const tMed = new Float64Array(tw * th).fill(NaN);
  const tSig = new Float64Array(tw * th).fill(NaN);
  const a = new Float64Array(T * T);
  const work = new Float64Array(T * T);
  for (let ty = 0; ty < th; ty++) {
    for (let tx = 0; tx < tw; tx++) {
      let n = 0;
      let full = 0;
      for (let y = ty * T; y < Math.min(bh, ty * T + T); y++) {
        for (let x = tx * T; x < Math.min(bw, tx * T + T); x++) {
          full++;
          const v = means[y * bw + x]!;
          if (v === v) a[n++] = v;
        }
      }
      if (n >= Math.max(8, full / 4)) {
        const s = medianAndMadSigma(a, n, work);
        tMed[ty * tw + tx] = s.median;
        tSig[ty * tw + tx] = s.madSigma;
      }
    }
  }
  // fill empty tiles with the median over tiles
  const fillWith = (t: Float64Array): void => {
    const v = new Float64Array(t.length);
    let n = 0;
    for (let i = 0; i < t.length; i++) if (t[i]! === t[i]! && t[i]! > -Infinity) v[n++] = t[i]!;
    const m = n > 0 ? medianAndMadSigma(v, n, new Float64Array(n)).median : 0;
    for (let i = 0; i < t.length; i++) if (!(t[i]! === t[i]!)) t[i] = m;
  };
  fillWith(tMed);
  fillWith(tSig);
  const z = new Float32Array(bw * bh);
  for (let y = 0; y < bh; y++) {
    const fy = Math.min(th - 1, Math.max(0, (y + 0.5) / T - 0.5));
    const y0 = Math.floor(fy);
    const y1 = Math.min(th - 1, y0 + 1);
    const wy = fy - y0;
    for (let x = 0; x < bw; x++) {
      const fx = Math.min(tw - 1, Math.max(0, (x + 0.5) / T - 0.5));
      const x0 = Math.floor(fx);
      const x1 = Math.min(tw - 1, x0 + 1);
      const wx = fx - x0;
      const i00 = y0 * tw + x0;
      const i01 = y0 * tw + x1;
      const i10 = y1 * tw + x0;
      const i11 = y1 * tw + x1;
      const med = (1 - wy) * ((1 - wx) * tMed[i00]! + wx * tMed[i01]!) + wy * ((1 - wx) * tMed[i10]! + wx * tMed[i11]!);
      const sig = (1 - wy) * ((1 - wx) * tSig[i00]! + wx * tSig[i01]!) + wy * ((1 - wx) * tSig[i10]! + wx * tSig[i11]!);
      const v = means[y * bw + x]!;
      z[y * bw + x] = v === v && sig > 0 ? (v - med) / sig : NaN;
    }
  }
  return z;
}

/** A line in pixel coordinates: point (px, py) and unit direction (ux, uy). */
interface Line {
  px: number;
  py: number;
  ux: number;
  uy: number;
}

/** Total-least-squares line through points (xs, ys) (principal axis of their scatter). */
function fitLine(xs: Float64Array, ys: Float64Array, n: number): Line | null {
  if (n < 2) return null;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += xs[i]!;
    my += ys[i]!;
  }
  mx /= n;
  my /= n;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    const dx = xs[i]! - mx;
    const dy = ys[i]! - my;
    sxx += dx * dx;
    syy += dy * dy;
    sxy += dx * dy;
  }
  const t = 0.5 * Math.atan2(2 * sxy, sxx - syy);
  return { px: mx, py: my, ux: Math.cos(t), uy: Math.sin(t) };
}

/** Parameter range [t0, t1] of the line inside [0, w-1] x [0, h-1]; null when it misses. */
function clipLine(l: Line, w: number, h: number): [number, number] | null {
  let t0 = -Infinity;
  let t1 = Infinity;
  const clip = (p: number, u: number, lo: number, hi: number): boolean => {
    if (Math.abs(u) < 1e-12) return p >= lo && p <= hi;
    let a = (lo - p) / u;
    let b = (hi - p) / u;
    if (a > b) [a, b] = [b, a];
    t0 = Math.max(t0, a);
    t1 = Math.min(t1, b);
    return t0 <= t1;
  };
  if (!clip(l.px, l.ux, 0, w - 1) || !clip(l.py, l.uy, 0, h - 1)) return null;
  return [t0, t1];
}

const SEGMENT = 64;
/** A remainder shorter than this at the end of a line is not tested as a segment of its own (px). */
const MIN_LAST_SEGMENT = 8;
const HALF_SPAN = 12; // cross-profile half width sampled (px)
const WING_IN = 8; // side strips: HALF_SPAN >= |s| >= WING_IN

/**
 * Check a candidate line at full resolution. The frame is sampled along the line (1 px steps, nearest pixel) at
 * offsets -12..12 px across it, masked pixels left out. A first pass builds the mean cross profile: its centre
 * moves the line, its width sets the core strip (|s| <= max(1, round(1.5 sigma))). A second pass compares, per
 * 64-px segment, the core mean with the side strips (8 <= |s| <= 12 px); a segment counts when the difference is
 * at least 3 standard errors (noise from `noise`). The trail runs from the first to the last such segment.
 */
function verifyLine(
  image: StarImage,
  background: BackgroundLevels,
  noise: LevelMap,
  masks: MaskSet,
  line: Line,
  minLength: number,
): Omit<Trail, 'supportingBlocks' | 'foundBy'> | null {
  const { pixels: px, width: w, height: h } = image;
  let l = { ...line };
  const nx = -l.uy;
  const ny = l.ux;
  const S = HALF_SPAN;
  const profSum = new Float64Array(2 * S + 1);
  const profCnt = new Float64Array(2 * S + 1);
  const sample = (t: number, s: number): number => {
    const x = Math.round(l.px + t * l.ux + s * nx);
    const y = Math.round(l.py + t * l.uy + s * ny);
    if (x < 0 || y < 0 || x >= w || y >= h) return NaN;
    if (isMasked(masks, x, y)) return NaN;
    const i = y * w + x;
    return px[i]! - backgroundAt(background, i);
  };
  const range = clipLine(l, w, h);
  if (range === null || range[1] - range[0] < minLength) return null;
  for (let t = Math.ceil(range[0]); t <= range[1]; t++) {
    for (let s = -S; s <= S; s++) {
      const f = sample(t, s);
      if (f === f) {
        profSum[s + S]! += f;
        profCnt[s + S]!++;
      }
    }
  }
  const prof = new Float64Array(2 * S + 1);
  let wingSum = 0;
  let wingN = 0;
  for (let k = 0; k <= 2 * S; k++) {
    prof[k] = profCnt[k]! > 0 ? profSum[k]! / profCnt[k]! : 0;
    if (Math.abs(k - S) >= WING_IN) {
      wingSum += profSum[k]!;
      wingN += profCnt[k]!;
    }
  }
  const wing = wingN > 0 ? wingSum / wingN : 0;
  // centre and width of the positive core within |s| <= 6
  let m0 = 0;
  let m1 = 0;
  for (let s = -6; s <= 6; s++) {
    const v = prof[s + S]! - wing;
    if (v > 0) {
      m0 += v;
      m1 += v * s;
    }
  }
  if (!(m0 > 0)) return null;
  const shift = m1 / m0;
  let m2 = 0;
  let m0b = 0;
  for (let s = -6; s <= 6; s++) {
    const v = prof[s + S]! - wing;
    if (v > 0) {
      m0b += v;
      m2 += v * (s - shift) * (s - shift);
    }
  }
  const sigmaCross = Math.sqrt(Math.max(m2 / m0b, 0.1));
  const hw = Math.max(1, Math.min(5, Math.round(1.5 * sigmaCross)));
  l = { px: l.px + shift * nx, py: l.py + shift * ny, ux: l.ux, uy: l.uy };
  const range2 = clipLine(l, w, h);
  if (range2 === null) return null;
  const t0 = Math.ceil(range2[0]);
  const tEnd = Math.floor(range2[1]); // last sample along the line inside the frame
  // whole segments, then the remainder up to the frame edge as a shorter last one (when it is worth testing)
  const whole = Math.floor((tEnd - t0 + 1) / SEGMENT);
  const rest = tEnd - t0 + 1 - whole * SEGMENT;
  const nSeg = whole + (rest >= MIN_LAST_SEGMENT ? 1 : 0);
  if (nSeg < 1) return null;
  const segmentEnd = (k: number): number => Math.min(t0 + (k + 1) * SEGMENT, tEnd + 1); // exclusive
  const coreSum = new Float64Array(nSeg);
  const coreN = new Float64Array(nSeg);
  const sideSum = new Float64Array(nSeg);
  const sideN = new Float64Array(nSeg);
  const varSum = new Float64Array(nSeg);
  profSum.fill(0);
  profCnt.fill(0);
  for (let k = 0; k < nSeg; k++) {
    for (let t = t0 + k * SEGMENT, end = segmentEnd(k); t < end; t++) {
      for (let s = -S; s <= S; s++) {
        const as = Math.abs(s);
        if (as > hw && as < WING_IN) continue;
        const x = Math.round(l.px + t * l.ux + s * nx);
        const y = Math.round(l.py + t * l.uy + s * ny);
        if (x < 0 || y < 0 || x >= w || y >= h || isMasked(masks, x, y)) continue;
        const i = y * w + x;
        const f = px[i]! - backgroundAt(background, i);
        if (!(f === f)) continue;
        if (as <= hw) {
          coreSum[k]! += f;
          coreN[k]!++;
          const sg = typeof noise === 'number' ? noise : noise[i]!;
          varSum[k]! += sg * sg;
        } else {
          sideSum[k]! += f;
          sideN[k]!++;
        }
      }
    }
  }
  const good = new Uint8Array(nSeg);
  const segSnr = new Float64Array(nSeg);
  let first = -1;
  let last = -1;
  for (let k = 0; k < nSeg; k++) {
    // need a third of the core samples and of the side samples unmasked
    const len = segmentEnd(k) - (t0 + k * SEGMENT);
    if (coreN[k]! < (len * (2 * hw + 1)) / 3 || sideN[k]! < (len * 2 * (S - WING_IN + 1)) / 3) continue;
    const v = varSum[k]! / coreN[k]!;
    const diff = coreSum[k]! / coreN[k]! - sideSum[k]! / sideN[k]!;
    const se = Math.sqrt(v * (1 / coreN[k]! + 1 / sideN[k]!));
    segSnr[k] = diff / se;
    if (diff >= 3 * se) {
      good[k] = 1;
      if (first < 0) first = k;
      last = k;
    }
  }
  if (first < 0) return null;
  let nGood = 0;
  let cs = 0;
  let cn = 0;
  let ss = 0;
  let sn = 0;
  let vs = 0;
  for (let k = first; k <= last; k++) {
    nGood += good[k]!;
    cs += coreSum[k]!;
    cn += coreN[k]!;
    ss += sideSum[k]!;
    sn += sideN[k]!;
    vs += varSum[k]!;
  }
  const segments = last - first + 1;
  const coverage = nGood / segments;
  // a real trail is bright all along: the median segment must stand out too, not just a few lucky ones
  const spanSnr = Float64Array.from(segSnr.subarray(first, last + 1));
  const medianSegmentSnr = medianAndMadSigma(spanSnr, segments, new Float64Array(segments)).median;
  const ta = t0 + first * SEGMENT;
  const tb = segmentEnd(last) - 1;
  const length = tb - ta + 1;
  if (cn === 0 || sn === 0) return null;
  const sb = cs / cn - ss / sn;
  const se = Math.sqrt((vs / cn) * (1 / cn + 1 / sn));
  const snr = sb / se;
  if (length < minLength || nGood < 4 || coverage < 0.6 || !(medianSegmentSnr >= 5) || !(snr >= 8)) return null;
  // cross-profile FWHM from the first pass (sigma of the positive core); null when the core is too weak
  const widthPixels = m0 > 0 && sigmaCross > 0.35 ? 2.3548200450309493 * sigmaCross : null;
  let angle = (Math.atan2(l.uy, l.ux) * 180) / Math.PI;
  if (angle < 0) angle += 180;
  if (angle >= 180) angle -= 180;
  return {
    x0: l.px + ta * l.ux,
    y0: l.py + ta * l.uy,
    x1: l.px + tb * l.ux,
    y1: l.py + tb * l.uy,
    angleDegrees: angle,
    lengthPixels: tb - ta,
    surfaceBrightnessAdu: sb,
    snr,
    widthPixels,
    supportingPixels: cn,
    coverageFraction: coverage,
  };
}

/** Two trails are one when their directions differ by < 3 degrees and the lines pass within 12 px of each other's middle. */
function sameTrail(a: Trail, b: Trail): boolean {
  let d = Math.abs(a.angleDegrees - b.angleDegrees);
  d = Math.min(d, 180 - d);
  if (d > 3) return false;
  const mx = (b.x0 + b.x1) / 2;
  const my = (b.y0 + b.y1) / 2;
  const ux = Math.cos((a.angleDegrees * Math.PI) / 180);
  const uy = Math.sin((a.angleDegrees * Math.PI) / 180);
  return Math.abs(-(mx - a.x0) * uy + (my - a.y0) * ux) < 12;
}

// The stages live in functions of their own so that the optimizing compiler works on each loop once, not on
// the whole detector again for every loop it enters (on-stack replacement); a worker pool pays that per thread.

interface TrailCandidate {
  line: Line;
  blocks: number;
  foundBy: 'hough' | 'component';
}

function thresholdMask(z: Float32Array, k: number): Uint8Array {
  const mask = new Uint8Array(z.length);
  for (let i = 0; i < mask.length; i++) mask[i] = z[i]! >= k ? 1 : 0;
  return mask;
}

/**
 * Per component (label 1..count): extents and first and second moments, in block coordinates. A class, not a
 * literal (DEVELOPERS.md, "Objects made once a frame").
 */
class BlockMoments {
  declare readonly count: number;
  declare readonly minX: Int32Array;
  declare readonly maxX: Int32Array;
  declare readonly minY: Int32Array;
  declare readonly maxY: Int32Array;
  declare readonly n: Float64Array;
  declare readonly sx: Float64Array;
  declare readonly sy: Float64Array;
  declare readonly sxx: Float64Array;
  declare readonly syy: Float64Array;
  declare readonly sxy: Float64Array;

  constructor(count: number, bw: number, bh: number) {
    this.count = count;
    this.minX = new Int32Array(count + 1).fill(bw);
    this.maxX = new Int32Array(count + 1).fill(-1);
    this.minY = new Int32Array(count + 1).fill(bh);
    this.maxY = new Int32Array(count + 1).fill(-1);
    this.n = new Float64Array(count + 1);
    this.sx = new Float64Array(count + 1);
    this.sy = new Float64Array(count + 1);
    this.sxx = new Float64Array(count + 1);
    this.syy = new Float64Array(count + 1);
    this.sxy = new Float64Array(count + 1);
  }
}

function blockMoments(labels: Int32Array, count: number, bw: number, bh: number): BlockMoments {
  const m = new BlockMoments(count, bw, bh);
  const { minX, maxX, minY, maxY, n, sx, sy, sxx, syy, sxy } = m;
  for (let y = 0; y < bh; y++) {
    for (let x = 0; x < bw; x++) {
      const c = labels[y * bw + x]!;
      if (c === 0) continue;
      if (x < minX[c]!) minX[c] = x;
      if (x > maxX[c]!) maxX[c] = x;
      if (y < minY[c]!) minY[c] = y;
      if (y > maxY[c]!) maxY[c] = y;
      n[c]!++;
      sx[c]! += x;
      sy[c]! += y;
      sxx[c]! += x * x;
      syy[c]! += y * y;
      sxy[c]! += x * y;
    }
  }
  return m;
}

/** The blocks of components spanning at least 3 blocks, as points (block coordinates), and which components those are. */
function keptBlocks(labels: Int32Array, m: BlockMoments, bw: number, bh: number): { xs: Float64Array; ys: Float64Array; keep: Uint8Array } {
  const keep = new Uint8Array(m.count + 1);
  let nPts = 0;
  for (let c = 1; c <= m.count; c++) {
    if (Math.max(m.maxX[c]! - m.minX[c]!, m.maxY[c]! - m.minY[c]!) + 1 >= 3) {
      keep[c] = 1;
      nPts += m.n[c]!;
    }
  }
  const xs = new Float64Array(nPts);
  const ys = new Float64Array(nPts);
  let np = 0;
  for (let y = 0; y < bh; y++) {
    for (let x = 0; x < bw; x++) {
      if (keep[labels[y * bw + x]!]) {
        xs[np] = x;
        ys[np] = y;
        np++;
      }
    }
  }
  return { xs, ys, keep };
}

function toPixels(l: Line, bin: number): Line {
  return { px: (l.px + 0.5) * bin - 0.5, py: (l.py + 0.5) * bin - 0.5, ux: l.ux, uy: l.uy };
}

/** Long, elongated groups of blocks: the major axis of each kept component (second moments). */
function componentCandidates(m: BlockMoments, keep: Uint8Array, bin: number, minLength: number): TrailCandidate[] {
  const candidates: TrailCandidate[] = [];
  for (let c = 1; c <= m.count; c++) {
    if (!keep[c]) continue;
    const n = m.n[c]!;
    const mx = m.sx[c]! / n;
    const my = m.sy[c]! / n;
    const vxx = m.sxx[c]! / n - mx * mx;
    const vyy = m.syy[c]! / n - my * my;
    const vxy = m.sxy[c]! / n - mx * my;
    const mean = (vxx + vyy) / 2;
    const root = Math.sqrt(((vxx - vyy) / 2) ** 2 + vxy * vxy);
    const a2 = mean + root;
    const b2 = Math.max(mean - root, 1 / 12);
    const lengthBlocks = Math.sqrt(12 * a2);
    if (lengthBlocks * bin >= minLength && a2 / b2 >= 25) {
      const t = 0.5 * Math.atan2(2 * vxy, vxx - vyy);
      candidates.push({ line: toPixels({ px: mx, py: my, ux: Math.cos(t), uy: Math.sin(t) }, bin), blocks: n, foundBy: 'component' });
    }
  }
  return candidates;
}

const HOUGH_THETAS = 360;
const HOUGH_RHO_BLOCKS = 2;

/** Add `d` to the accumulator cells of every line through block point (x, y). */
function houghVote(acc: Int32Array, cosT: Float64Array, sinT: Float64Array, D: number, nRho: number, x: number, y: number, d: number): void {
  for (let t = 0, row = D; t < HOUGH_THETAS; t++, row += nRho) acc[row + Math.round(x * cosT[t]! + y * sinT[t]!)]! += d;
}

/** Index of the accumulator's largest cell (the first of equals), or -1 when every cell is <= 0. */
function houghPeak(acc: Int32Array): number {
  let best = 0;
  let bj = -1;
  for (let j = 0; j < acc.length; j++) {
    if (acc[j]! > best) {
      best = acc[j]!;
      bj = j;
    }
  }
  return bj;
}

/** Alive points within `band` of the line (block coordinates) into sx, sy, support; returns the count. */
function collectNear(xs: Float64Array, ys: Float64Array, alive: Uint8Array, l: Line, band: number, sx: Float64Array, sy: Float64Array, support: Int32Array): number {
  let ns = 0;
  const nx = -l.uy;
  const ny = l.ux;
  for (let i = 0; i < xs.length; i++) {
    if (!alive[i]) continue;
    if (Math.abs((xs[i]! - l.px) * nx + (ys[i]! - l.py) * ny) <= band) {
      support[ns] = i;
      sx[ns] = xs[i]!;
      sy[ns] = ys[i]!;
      ns++;
    }
  }
  return ns;
}

/**
 * Hough accumulator over the kept blocks: theta in 0.5-degree steps, rho in 2-block bins (coarse, so that the
 * peak scan stays cheap); each peak's line is then refined on its own blocks, whose votes are taken back.
 */
function houghCandidates(xs: Float64Array, ys: Float64Array, bw: number, bh: number, bin: number, minLength: number, maxCandidates: number): TrailCandidate[] {
  const candidates: TrailCandidate[] = [];
  const nTheta = HOUGH_THETAS;
  const RB = HOUGH_RHO_BLOCKS;
  const D = Math.ceil(Math.hypot(bw, bh) / RB) + 1;
  const nRho = 2 * D + 1;
  const cosT = new Float64Array(nTheta);
  const sinT = new Float64Array(nTheta);
  for (let t = 0; t < nTheta; t++) {
    cosT[t] = Math.cos((Math.PI * t) / nTheta) / RB;
    sinT[t] = Math.sin((Math.PI * t) / nTheta) / RB;
  }
  const np = xs.length;
  const acc = new Int32Array(nTheta * nRho);
  for (let i = 0; i < np; i++) houghVote(acc, cosT, sinT, D, nRho, xs[i]!, ys[i]!, 1);
  const alive = new Uint8Array(np).fill(1);
  // a trail of minLength lights about minLength / bin blocks; allow for masked stretches, gaps and the coarse bins
  const minVotes = Math.max(6, (0.4 * minLength) / bin);
  const sx = new Float64Array(np);
  const sy = new Float64Array(np);
  const support = new Int32Array(np);
  for (let round = 0; round < maxCandidates; round++) {
    const bj = houghPeak(acc);
    if (bj < 0 || acc[bj]! < minVotes) break;
    const t = Math.floor(bj / nRho);
    const rho = ((bj % nRho) - D) * RB;
    const th = (Math.PI * t) / nTheta;
    // the line rho = x cos + y sin: point closest to the origin, direction perpendicular to the normal
    let l: Line | null = { px: rho * Math.cos(th), py: rho * Math.sin(th), ux: -Math.sin(th), uy: Math.cos(th) };
    // refine: wide band first (the coarse angle can be off by 0.25 deg), then a narrow one about the fitted line
    for (const band of [3, 1.5, 1.5]) {
      const ns = collectNear(xs, ys, alive, l, band, sx, sy, support);
      const f = fitLine(sx, sy, ns);
      if (f === null) break;
      l = f;
    }
    const ns = collectNear(xs, ys, alive, l, 1.5, sx, sy, support);
    for (let q = 0; q < ns; q++) {
      houghVote(acc, cosT, sinT, D, nRho, xs[support[q]!]!, ys[support[q]!]!, -1);
      alive[support[q]!] = 0;
    }
    if (ns === 0) acc[bj] = 0;
    else candidates.push({ line: toPixels(l, bin), blocks: ns, foundBy: 'hough' });
  }
  return candidates;
}

/**
 * Find satellite, aircraft and meteor trails (REFERENCE E.4).
 *
 * 1. Sources (usually from `detectStars`) are masked: disks of 1.5 equivalent radii + `maskGrowPixels`
 *    (2.5 radii and the grown box for saturated ones); unsaturated sources with A/B >= 3 stay unmasked, as a
 *    trail's own pieces are found as elongated sources.
 * 2. The frame minus background is averaged in blocks of `binFactor` px; each block is scored against the local
 *    median and MAD-sigma of its 16 x 16-block neighbourhood; blocks with z >= `blockThresholdSigma` (2.5) form
 *    the mask, and its connected groups smaller than 3 blocks across are dropped (faint stars, noise).
 * 3. A Hough accumulator (theta step about 1/diagonal, rho step 1 block) collects the kept blocks; peaks with
 *    at least 40 % of the blocks a `minLengthPixels` trail would light are refined by a total-least-squares
 *    line through the blocks within 1.5 blocks of them. Long groups (>= minLength, A/B >= 5) give lines too.
 * 4. Each line is checked at full resolution (see `verifyLine`): reported when its significant part is at
 *    least `minLengthPixels` long, with >= 4 significant 64-px segments covering >= 60 % of it, a median
 *    segment SNR >= 5 and an overall SNR >= 8.
 */
export function detectTrails(image: StarImage, options: DetectTrailsOptions): TrailDetection {
  const { background, noise } = options;
  checkStarImage(image, background, noise);
  const { width: w, height: h } = image;
  const bin = options.binFactor ?? Math.max(2, Math.ceil(Math.max(w, h) / 1024));
  if (!Number.isInteger(bin) || bin < 1) throw new InvalidInputError('INPUT_BAD_PARAMETER', `binFactor must be a positive integer, got ${bin}`);
  const k = options.blockThresholdSigma ?? 2.5;
  const minLength = options.minLengthPixels ?? Math.max(64, 0.15 * Math.min(w, h));
  const maxTrails = options.maxTrails ?? 8;
  const grow = options.maskGrowPixels ?? 2;
  if (!(k > 0) || !(minLength > 0) || !(maxTrails >= 0) || !(grow >= 0)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', 'blockThresholdSigma and minLengthPixels must be > 0, maxTrails and maskGrowPixels >= 0');
  }
  const sources = options.sources ?? [];
  const masks = buildMasks(sources, w, h, grow);
  const { means, bw, bh } = binnedMeans(image, background, masks, bin);
  const z = localZ(means, bw, bh);
  const { labels, count } = labelComponents(thresholdMask(z, k), bw, bh, 8);
  const moments = blockMoments(labels, count, bw, bh);
  const { xs, ys, keep } = keptBlocks(labels, moments, bw, bh);
  const np = xs.length;
  const candidates = [
    ...componentCandidates(moments, keep, bin, minLength),
    ...houghCandidates(xs, ys, bw, bh, bin, minLength, 2 * maxTrails + 6),
  ];

  const trails: Trail[] = [];
  let checked = 0;
  for (const cand of candidates) {
    if (trails.length >= maxTrails) break;
    checked++;
    const v = verifyLine(image, background, noise, masks, cand.line, minLength);
    if (v === null) continue;
    const trail: Trail = { ...v, supportingBlocks: cand.blocks, foundBy: cand.foundBy };
    if (trails.some((o) => sameTrail(o, trail))) continue;
    trails.push(trail);
  }
  const diagnostics: Diagnostic[] = [];
  if (np > 0.05 * bw * bh) {
    diagnostics.push({
      code: 'TRAILS_NOISY_MASK',
      severity: 'info',
      message: `${((100 * np) / (bw * bh)).toFixed(1)} % of blocks passed the trail mask; the frame may hold nebulosity or large residual structure`,
      where: {},
    });
  }
  return { trails, binFactor: bin, candidatesChecked: checked, diagnostics };
}

/**
 * The sources that do not lie on a detected trail. A trail breaks into pieces the star detector finds as sources;
 * counted as stars they would hide a loss of stars (and skew the shape statistics). A source is on a trail when its
 * centroid is within a margin of the trail's segment (the trail's FWHM, at least 3 px, plus 2 px; common practice
 * for masking a line), across it and past either end.
 * @example sourcesOffTrails(stars.sources, detectTrails(image, opts).trails).length
 */
export function sourcesOffTrails(sources: readonly StarSource[], trails: readonly Trail[]): StarSource[] {
  if (trails.length === 0) return sources.slice();
  return sources.filter((s) => {
    for (const t of trails) {
      const dx = t.x1 - t.x0, dy = t.y1 - t.y0;
      const length = Math.hypot(dx, dy);
      if (!(length > 0)) continue;
      const ux = dx / length, uy = dy / length;
      const margin = Math.max(3, t.widthPixels ?? 3) + 2;
      const along = (s.x - t.x0) * ux + (s.y - t.y0) * uy;
      const across = Math.abs((s.y - t.y0) * ux - (s.x - t.x0) * uy);
      if (across <= margin && along >= -margin && along <= length + margin) return false;
    }
    return true;
  });
}
