// Per-source measurements on a footprint: isophotal centroid and moments, adaptive (Gaussian-weighted)
// moments, FWHM from a fitted Box-Cox-quadratic profile (Gaussian and Moffat exactly), half-flux radius,
// SNR, local background.

import type { BackgroundLevels, LevelMap, NumericPixels, PixelBox, StarSource } from './types.js';
import { backgroundAt } from './levels.js';
import { shapeFromMoments } from './profiles.js';
import { clippedMedian } from './select.js';

/** Scratch of {@link MeasureContext}; each buffer is replaced by a larger one when a source needs it. */
class MeasureScratch {
  declare a: Float64Array;
  declare b: Float64Array;
  declare bins: Float64Array;

  constructor() {
    this.a = new Float64Array(4096);
    this.b = new Float64Array(4096);
    this.bins = new Float64Array(1024);
  }
}

/**
 * What the measurements of one frame read; its scratch buffers are reused across sources. A class, not a literal
 * (DEVELOPERS.md, "Objects made once a frame").
 */
export class MeasureContext {
  declare readonly pixels: NumericPixels;
  declare readonly width: number;
  declare readonly height: number;
  declare readonly background: BackgroundLevels;
  declare readonly noise: LevelMap;
  declare readonly saturationAdu: number;
  declare readonly gainElectronsPerAdu: number | undefined;
  declare readonly localBackground: boolean;
  declare readonly scratch: MeasureScratch;

  constructor(
    pixels: NumericPixels,
    width: number,
    height: number,
    background: BackgroundLevels,
    noise: LevelMap,
    saturationAdu: number,
    gainElectronsPerAdu: number | undefined,
    localBackground: boolean,
  ) {
    this.pixels = pixels;
    this.width = width;
    this.height = height;
    this.background = background;
    this.noise = noise;
    this.saturationAdu = saturationAdu;
    this.gainElectronsPerAdu = gainElectronsPerAdu;
    this.localBackground = localBackground;
    this.scratch = new MeasureScratch();
  }
}

const levelAt = (m: LevelMap, i: number): number => (typeof m === 'number' ? m : m[i]!);

/** Isophotal quantities of a footprint (REFERENCE E.2). */
interface Isophotal {
  x: number;
  y: number;
  x2: number;
  y2: number;
  xy: number;
  flux: number;
  peak: number;
  peakIndex: number;
  box: PixelBox;
  saturated: boolean;
}

function isophotalFromIndices(ctx: MeasureContext, idx: Int32Array, start: number, count: number): Isophotal {
  const { pixels, width, background, saturationAdu } = ctx;
  const first = idx[start]!;
  const rx = first % width;
  const ry = (first - rx) / width;
  let s = 0;
  let sx = 0;
  let sy = 0;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  let flux = 0;
  let peak = -Infinity;
  let peakIndex = first;
  let xMin = Infinity;
  let xMax = -Infinity;
  let yMin = Infinity;
  let yMax = -Infinity;
  let saturated = false;
  for (let k = start; k < start + count; k++) {
    const i = idx[k]!;
    const x = i % width;
    const y = (i - x) / width;
    const raw = pixels[i]!;
    if (raw >= saturationAdu) saturated = true;
    const f = raw - backgroundAt(background, i);
    if (x < xMin) xMin = x;
    if (x > xMax) xMax = x;
    if (y < yMin) yMin = y;
    if (y > yMax) yMax = y;
    if (!(f === f)) continue;
    flux += f;
    if (f > peak) {
      peak = f;
      peakIndex = i;
    }
    if (f > 0) {
      const dx = x - rx;
      const dy = y - ry;
      s += f;
      sx += f * dx;
      sy += f * dy;
      sxx += f * dx * dx;
      syy += f * dy * dy;
      sxy += f * dx * dy;
    }
  }
  return finishIsophotal(s, sx, sy, sxx, syy, sxy, rx, ry, flux, peak, peakIndex, { xMin, xMax, yMin, yMax }, saturated);
}

function finishIsophotal(
  s: number,
  sx: number,
  sy: number,
  sxx: number,
  syy: number,
  sxy: number,
  rx: number,
  ry: number,
  flux: number,
  peak: number,
  peakIndex: number,
  box: PixelBox,
  saturated: boolean,
): Isophotal {
  if (!(s > 0)) {
    return { x: rx, y: ry, x2: 0, y2: 0, xy: 0, flux, peak, peakIndex, box, saturated };
  }
  const mx = sx / s;
  const my = sy / s;
  return {
    x: rx + mx,
    y: ry + my,
    x2: sxx / s - mx * mx,
    y2: syy / s - my * my,
    xy: sxy / s - mx * my,
    flux,
    peak,
    peakIndex,
    box,
    saturated,
  };
}

/** Isophotal quantities over runs (for components too large to list pixel by pixel). */
function isophotalFromRuns(
  ctx: MeasureContext,
  runY: Int32Array,
  runX0: Int32Array,
  runX1: Int32Array,
  head: number,
  next: Int32Array,
): Isophotal {
  const { pixels, width, background, saturationAdu } = ctx;
  const rx = runX0[head]!;
  const ry = runY[head]!;
  let s = 0;
  let sx = 0;
  let sy = 0;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  let flux = 0;
  let peak = -Infinity;
  let peakIndex = ry * width + rx;
  let xMin = Infinity;
  let xMax = -Infinity;
  let yMin = Infinity;
  let yMax = -Infinity;
  let saturated = false;
  for (let r = head; r >= 0; r = next[r]!) {
    const y = runY[r]!;
    const x0 = runX0[r]!;
    const x1 = runX1[r]!;
    if (x0 < xMin) xMin = x0;
    if (x1 > xMax) xMax = x1;
    if (y < yMin) yMin = y;
    if (y > yMax) yMax = y;
    const dy = y - ry;
    let i = y * width + x0;
    for (let x = x0; x <= x1; x++, i++) {
      const raw = pixels[i]!;
      if (raw >= saturationAdu) saturated = true;
      const f = raw - backgroundAt(background, i);
      if (!(f === f)) continue;
      flux += f;
      if (f > peak) {
        peak = f;
        peakIndex = i;
      }
      if (f > 0) {
        const dx = x - rx;
        s += f;
        sx += f * dx;
        sy += f * dy;
        sxx += f * dx * dx;
        syy += f * dy * dy;
        sxy += f * dx * dy;
      }
    }
  }
  return finishIsophotal(s, sx, sy, sxx, syy, sxy, rx, ry, flux, peak, peakIndex, { xMin, xMax, yMin, yMax }, saturated);
}

/** Result of the adaptive-moment iteration. */
export interface Adaptive {
  x: number;
  y: number;
  wxx: number;
  wyy: number;
  wxy: number;
}

/**
 * Adaptive second moments (Gaussian weight matched to the object, iterated; Bernstein & Jarvis 2002 AJ 123, 583,
 * from memory). For weight covariance W the weighted moments of a Gaussian of covariance S are (S^-1 + W^-1)^-1,
 * so W <- 2 M_w has the fixed point W = S. That plain step shrinks the error by half per pass; stepping twice as
 * far (W <- W + 2 (2 M_w - W), same for the centre) cancels the first-order error, so it is used once the step is
 * small. Returns null when the iteration fails (no positive weighted flux, size runs away, not positive definite).
 */
function adaptiveMoments(ctx: MeasureContext, x0: number, y0: number, wxx0: number, wyy0: number, wxy0: number): Adaptive | null {
  const { pixels, width, height, background } = ctx;
  let cx = x0;
  let cy = y0;
  let wxx = wxx0;
  let wyy = wyy0;
  let wxy = wxy0;
  const sizeLimit = Math.max(400, 25 * (wxx0 + wyy0));
  for (let it = 0; it < 15; it++) {
    const det = wxx * wyy - wxy * wxy;
    if (!(det > 0) || !(wxx > 0) || !(wyy > 0)) return null;
    const ixx = wyy / det;
    const iyy = wxx / det;
    const ixy = -wxy / det;
    const rx = Math.ceil(4 * Math.sqrt(wxx));
    const ry = Math.ceil(4 * Math.sqrt(wyy));
    const xa = Math.max(0, Math.floor(cx) - rx);
    const xb = Math.min(width - 1, Math.ceil(cx) + rx);
    const ya = Math.max(0, Math.floor(cy) - ry);
    const yb = Math.min(height - 1, Math.ceil(cy) + ry);
    let s = 0;
    let sx = 0;
    let sy = 0;
    let sxx = 0;
    let syy = 0;
    let sxy = 0;
    for (let y = ya; y <= yb; y++) {
      const dy = y - cy;
      let i = y * width + xa;
      for (let x = xa; x <= xb; x++, i++) {
        const dx = x - cx;
        const q = ixx * dx * dx + 2 * ixy * dx * dy + iyy * dy * dy;
        if (q > 16) continue; // beyond 4 sigma the weight is < 3.4e-4
        const f = pixels[i]! - backgroundAt(background, i);
        if (!(f === f)) continue;
        const wf = Math.exp(-0.5 * q) * f;
        s += wf;
        sx += wf * dx;
        sy += wf * dy;
        sxx += wf * dx * dx;
        syy += wf * dy * dy;
        sxy += wf * dx * dy;
      }
    }
    if (!(s > 0)) return null;
    const mx = sx / s;
    const my = sy / s;
    const mxx = sxx / s - mx * mx;
    const myy = syy / s - my * my;
    const mxy = sxy / s - mx * my;
    const txx = 2 * mxx - wxx;
    const tyy = 2 * myy - wyy;
    const txy = 2 * mxy - wxy;
    const rel = (Math.abs(txx) + Math.abs(tyy) + 2 * Math.abs(txy)) / (wxx + wyy);
    const gain = rel < 0.2 ? 2 : 1;
    cx += gain * mx;
    cy += gain * my;
    wxx += gain * txx;
    wyy += gain * tyy;
    wxy += gain * txy;
    if (!(wxx + wyy < sizeLimit)) return null;
    if (rel < 1e-6 && Math.abs(mx) + Math.abs(my) < 1e-5) break;
  }
  const det = wxx * wyy - wxy * wxy;
  if (!(det > 0) || !(wxx > 0) || !(wyy > 0)) return null;
  return { x: cx, y: cy, wxx, wyy, wxy };
}

/** Solve the n x n system held row-major in m (n rows of n + 1: matrix then right-hand side) in place; null when singular. */
function solveInPlace(m: Float64Array, n: number, out: Float64Array): boolean {
  const w = n + 1;
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(m[i * w + i]!));
  if (!(scale > 0)) return false;
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r * w + c]!) > Math.abs(m[piv * w + c]!)) piv = r;
    if (!(Math.abs(m[piv * w + c]!) > 1e-13 * scale)) return false;
    if (piv !== c) {
      for (let k = c; k < w; k++) {
        const t = m[c * w + k]!;
        m[c * w + k] = m[piv * w + k]!;
        m[piv * w + k] = t;
      }
    }
    const d = m[c * w + c]!;
    for (let r = c + 1; r < n; r++) {
      const f = m[r * w + c]! / d;
      if (f === 0) continue;
      for (let k = c; k < w; k++) m[r * w + k]! -= f * m[c * w + k]!;
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let acc = m[r * w + n]!;
    for (let k = r + 1; k < n; k++) acc -= m[r * w + k]! * out[k]!;
    out[r] = acc / m[r * w + r]!;
  }
  return true;
}

/** Half-maximum ellipse of a star: centre, major and minor FWHM (px), the Box-Cox exponent and the fit residual. */
export interface HalfMaximum {
  x: number;
  y: number;
  fwhmMajor: number;
  fwhmMinor: number;
  lambda: number;
  residual: number;
}

const fitMatrix = new Float64Array(6 * 7);
const fitParams = new Float64Array(6);
/** Per point: dx, dy, f / scale, ln(f / scale) (NaN when f <= 0), ln of the reference model. */
const P = 5;
let fitPoints = new Float64Array(P * 1024);

/** Box-Cox exponents scanned: lambda = -1/beta is an exact Moffat beta, 0 a Gaussian, > 0 flatter-topped profiles. */
export const PROFILE_LAMBDAS: readonly number[] = [0.4, 0.2, 0, -0.1, -0.2, -0.3, -0.4, -0.5, -2 / 3];

/** ln of the inverse Box-Cox transform; -Infinity / Infinity outside the range. */
function lnInverse(t: number, lambda: number): number {
  if (lambda === 0) return t;
  const b = 1 + lambda * t;
  if (b > 0) return Math.log(b) / lambda;
  return lambda > 0 ? -Infinity : Infinity;
}

/**
 * Weighted least-squares fit of T(f) = p0 + p1 X + p2 Y + p3 X^2 + p4 XY + p5 Y^2 (X, Y = dx/s, dy/s) to the
 * n points in fitPoints, T the Box-Cox transform (f^lambda - 1)/lambda (ln f at 0). Weights are m^(2 - 2 lambda)
 * with m the data (useReference false) or the reference model (true): the inverse of T's slope squared, i.e.
 * least squares in linear space for constant noise, to first order. Leaves the parameters in fitParams.
 */
function solveQuadratic(n: number, s: number, lambda: number, useReference: boolean): boolean {
  const m = fitMatrix;
  const pts = fitPoints;
  const e = 2 - 2 * lambda;
  m.fill(0);
  let used = 0;
  for (let j = 0; j < n; j++) {
    const o = P * j;
    const lf = pts[o + 3]!;
    if (!(lf === lf)) continue; // f <= 0
    const w = Math.exp(e * (useReference ? pts[o + 4]! : lf));
    if (!(w > 0) || !Number.isFinite(w)) continue;
    const v = lambda === 0 ? lf : (Math.exp(lambda * lf) - 1) / lambda;
    const X = pts[o]! / s;
    const Y = pts[o + 1]! / s;
    const xx = X * X;
    const xy = X * Y;
    const yy = Y * Y;
    const wx = w * X;
    const wy = w * Y;
    const wxx = w * xx;
    const wxy = w * xy;
    const wyy = w * yy;
    // upper triangle of the 6 x 6 normal matrix, rows of 7 (matrix then right-hand side)
    m[0]! += w;
    m[1]! += wx;
    m[2]! += wy;
    m[3]! += wxx;
    m[4]! += wxy;
    m[5]! += wyy;
    m[6]! += w * v;
    m[8]! += wxx;
    m[9]! += wxy;
    m[10]! += wxx * X;
    m[11]! += wxx * Y;
    m[12]! += wxy * Y;
    m[13]! += wx * v;
    m[16]! += wyy;
    m[17]! += wxx * Y;
    m[18]! += wxy * Y;
    m[19]! += wyy * Y;
    m[20]! += wy * v;
    m[24]! += wxx * xx;
    m[25]! += wxx * xy;
    m[26]! += wxx * yy;
    m[27]! += wxx * v;
    m[32]! += wxy * xy;
    m[33]! += wxy * yy;
    m[34]! += wxy * v;
    m[40]! += wyy * yy;
    m[41]! += wyy * v;
    used++;
  }
  if (used < 8) return false;
  for (let r = 1; r < 6; r++) for (let c = 0; c < r; c++) m[r * 7 + c] = m[c * 7 + r]!;
  return solveInPlace(m, 6, fitParams);
}

/** Store ln of the model of fitParams (exponent lambda) as each point's reference. */
function setReference(n: number, s: number, lambda: number): void {
  const p = fitParams;
  const pts = fitPoints;
  for (let j = 0; j < n; j++) {
    const o = P * j;
    const X = pts[o]! / s;
    const Y = pts[o + 1]! / s;
    pts[o + 4] = lnInverse(p[0]! + p[1]! * X + p[2]! * Y + p[3]! * X * X + p[4]! * X * Y + p[5]! * Y * Y, lambda);
  }
}

/** Half-maximum ellipse and linear-space residual (all points, non-positive ones included) of fitParams; null if not a falling profile. */
function evaluateQuadratic(n: number, s: number, lambda: number, cx: number, cy: number): HalfMaximum | null {
  const p = fitParams;
  const g1 = p[1]! / s;
  const g2 = p[2]! / s;
  const hxx = p[3]! / (s * s);
  const hxy = p[4]! / (2 * s * s);
  const hyy = p[5]! / (s * s);
  const detH = hxx * hyy - hxy * hxy;
  if (!(hxx < 0) || !(hyy < 0) || !(detH > 0)) return null;
  // stationary point of g.d + d'Hd: d = -H^-1 g / 2; T there is the fitted peak
  const ddx = -(hyy * g1 - hxy * g2) / (2 * detH);
  const ddy = -(-hxy * g1 + hxx * g2) / (2 * detH);
  if (!(Math.abs(ddx) < 2 && Math.abs(ddy) < 2)) return null;
  const t0 = p[0]! + 0.5 * (g1 * ddx + g2 * ddy);
  const lnPeak = lnInverse(t0, lambda);
  if (!Number.isFinite(lnPeak)) return null;
  // T(peak) - T(peak / 2): how far the quadratic drops at half maximum
  const drop = lambda === 0 ? Math.LN2 : (Math.exp(lambda * lnPeak) * (1 - Math.pow(2, -lambda))) / lambda;
  // eigenvalues of -H: the smaller belongs to the major axis
  const mean = -(hxx + hyy) / 2;
  const root = Math.sqrt(((hxx - hyy) / 2) ** 2 + hxy * hxy);
  const hMin = mean - root;
  const hMax = mean + root;
  if (!(hMin > 0) || !(drop > 0)) return null;
  const pts = fitPoints;
  let residual = 0;
  for (let j = 0; j < n; j++) {
    const o = P * j;
    const X = pts[o]! / s;
    const Y = pts[o + 1]! / s;
    const lm = lnInverse(p[0]! + p[1]! * X + p[2]! * Y + p[3]! * X * X + p[4]! * X * Y + p[5]! * Y * Y, lambda);
    if (lm === Infinity) return null;
    const d = pts[o + 2]! - Math.exp(lm);
    residual += d * d;
  }
  return { x: cx + ddx, y: cy + ddy, fwhmMajor: 2 * Math.sqrt(drop / hMin), fwhmMinor: 2 * Math.sqrt(drop / hMax), lambda, residual };
}

const gnMatrix = new Float64Array(6 * 7);
const gnStep = new Float64Array(6);
const gnTrial = new Float64Array(6);

/** Linear-space residual sum of squares of parameters q (exponent lambda) over all points; Infinity when the model blows up. */
function residualOf(n: number, s: number, lambda: number, q: Float64Array): number {
  const pts = fitPoints;
  let r = 0;
  for (let j = 0; j < n; j++) {
    const o = P * j;
    const X = pts[o]! / s;
    const Y = pts[o + 1]! / s;
    const lm = lnInverse(q[0]! + q[1]! * X + q[2]! * Y + q[3]! * X * X + q[4]! * X * Y + q[5]! * Y * Y, lambda);
    if (lm === Infinity) return Infinity;
    const d = pts[o + 2]! - Math.exp(lm);
    r += d * d;
  }
  return r;
}

/**
 * Gauss-Newton refinement of fitParams in linear space: minimise sum (f - B^-1(q(x)))^2 over all points, negative
 * ones included, so the wings carry no selection bias (the log-space start leaves out f <= 0). The Jacobian is
 * f^(1 - lambda) times the basis, since df/dT = f^(1 - lambda). Steps are halved until the residual falls.
 * Returns the final residual.
 */
function gaussNewton(n: number, s: number, lambda: number, iterations: number): number {
  const p = fitParams;
  const m = gnMatrix;
  const pts = fitPoints;
  let res = residualOf(n, s, lambda, p);
  if (!Number.isFinite(res)) return res;
  for (let it = 0; it < iterations; it++) {
    m.fill(0);
    for (let j = 0; j < n; j++) {
      const o = P * j;
      const X = pts[o]! / s;
      const Y = pts[o + 1]! / s;
      const xx = X * X;
      const xy = X * Y;
      const yy = Y * Y;
      const lm = lnInverse(p[0]! + p[1]! * X + p[2]! * Y + p[3]! * xx + p[4]! * xy + p[5]! * yy, lambda);
      if (lm === -Infinity) continue; // outside a compact (lambda > 0) model: no gradient
      const fm = Math.exp(lm);
      const g = lambda === 1 ? 1 : Math.exp((1 - lambda) * lm);
      const r = pts[o + 2]! - fm;
      const b1 = g * X;
      const b2 = g * Y;
      const b3 = g * xx;
      const b4 = g * xy;
      const b5 = g * yy;
      m[0]! += g * g;
      m[1]! += g * b1;
      m[2]! += g * b2;
      m[3]! += g * b3;
      m[4]! += g * b4;
      m[5]! += g * b5;
      m[6]! += g * r;
      m[8]! += b1 * b1;
      m[9]! += b1 * b2;
      m[10]! += b1 * b3;
      m[11]! += b1 * b4;
      m[12]! += b1 * b5;
      m[13]! += b1 * r;
      m[16]! += b2 * b2;
      m[17]! += b2 * b3;
      m[18]! += b2 * b4;
      m[19]! += b2 * b5;
      m[20]! += b2 * r;
      m[24]! += b3 * b3;
      m[25]! += b3 * b4;
      m[26]! += b3 * b5;
      m[27]! += b3 * r;
      m[32]! += b4 * b4;
      m[33]! += b4 * b5;
      m[34]! += b4 * r;
      m[40]! += b5 * b5;
      m[41]! += b5 * r;
    }
    for (let r = 1; r < 6; r++) for (let c = 0; c < r; c++) m[r * 7 + c] = m[c * 7 + r]!;
    if (!solveInPlace(m, 6, gnStep)) break;
    let t = 1;
    let accepted = false;
    for (let h = 0; h < 5; h++, t *= 0.5) {
      for (let k = 0; k < 6; k++) gnTrial[k] = p[k]! + t * gnStep[k]!;
      const rt = residualOf(n, s, lambda, gnTrial);
      if (rt < res) {
        p.set(gnTrial);
        accepted = rt > res * (1 - 1e-10) ? false : true;
        res = rt;
        break;
      }
    }
    if (!accepted) break;
  }
  return res;
}

/** Fit at one exponent: log-space start (data weights, then the model's), then Gauss-Newton in linear space. */
function fitAt(n: number, s: number, lambda: number, cx: number, cy: number): HalfMaximum | null {
  if (!solveQuadratic(n, s, lambda, false)) return null;
  setReference(n, s, lambda);
  if (!solveQuadratic(n, s, lambda, true)) return null;
  const residual = gaussNewton(n, s, lambda, 4);
  if (!Number.isFinite(residual)) return null;
  return evaluateQuadratic(n, s, lambda, cx, cy);
}

/** Collect the pixels with d' N d <= uLimit about (cx, cy) into fitPoints; returns the count. */
function gatherFitPoints(ctx: MeasureContext, cx: number, cy: number, nxx: number, nyy: number, nxy: number, uLimit: number, scale: number): number {
  const { pixels, width, height, background } = ctx;
  // bounding half-widths of the ellipse d' N d = uLimit (det N = 1): sqrt(uLimit * (N^-1)_xx) with N^-1 = [nyy, -nxy; -nxy, nxx]
  const hx = Math.ceil(Math.sqrt(uLimit * nyy));
  const hy = Math.ceil(Math.sqrt(uLimit * nxx));
  const xa = Math.max(0, Math.round(cx) - hx);
  const xb = Math.min(width - 1, Math.round(cx) + hx);
  const ya = Math.max(0, Math.round(cy) - hy);
  const yb = Math.min(height - 1, Math.round(cy) + hy);
  const need = P * (xb - xa + 1) * (yb - ya + 1);
  if (fitPoints.length < need) fitPoints = new Float64Array(2 * need);
  const pts = fitPoints;
  let n = 0;
  for (let y = ya; y <= yb; y++) {
    const dy = y - cy;
    let i = y * width + xa;
    for (let x = xa; x <= xb; x++, i++) {
      const dx = x - cx;
      if (nxx * dx * dx + 2 * nxy * dx * dy + nyy * dy * dy > uLimit) continue;
      const f = (pixels[i]! - backgroundAt(background, i)) / scale;
      if (!(f === f)) continue;
      const o = P * n;
      pts[o] = dx;
      pts[o + 1] = dy;
      pts[o + 2] = f;
      pts[o + 3] = f > 0 ? Math.log(f) : NaN;
      n++;
    }
  }
  return n;
}

/** Window of the profile fit: pixels with d' N d <= max(4 u_half, 9) about the adaptive centre (at least 3 px out). */
function profileWindow(ctx: MeasureContext, a: Adaptive, uHalf: number, scale: number): { n: number; s: number } {
  const sd = Math.sqrt(a.wxx * a.wyy - a.wxy * a.wxy);
  const uLimit = Math.max(4 * uHalf, 9);
  const n = gatherFitPoints(ctx, a.x, a.y, a.wyy / sd, a.wxx / sd, -a.wxy / sd, uLimit, scale);
  return { n, s: Math.sqrt(uLimit) };
}

/**
 * FWHM as the half-maximum ellipse of a fitted profile. Pixels near the star are Box-Cox transformed,
 * T(f) = (f^lambda - 1)/lambda (ln f at lambda = 0), and a general quadratic in x, y is fitted to T(f) (weighted,
 * in log space, as a start), then refined by Gauss-Newton on f itself: exact for a Gaussian at lambda = 0 and for
 * an elliptical Moffat (1 + q/alpha^2)^-beta at lambda = -1/beta, at any sampling, since the transformed profile
 * is then quadratic. The half maximum comes from the fitted peak, not the brightest pixel. The window holds the
 * pixels with d' N d <= max(4 u_half, 9) about the adaptive centre (N the adaptive shape scaled to det 1, u_half
 * its level at half maximum: out to about one FWHM, at least 3 px); u_half comes first from the adaptive moments,
 * then (when it moved by more than 20 %) once more from the fit. Returns null when the fit does not fall off.
 */
export function halfMaximumFit(ctx: MeasureContext, a: Adaptive, peakScale: number, lambda: number): HalfMaximum | null {
  const scale = peakScale > 0 ? peakScale : 1;
  let uHalf = 2 * Math.LN2 * Math.sqrt(a.wxx * a.wyy - a.wxy * a.wxy); // Gaussian guess from the adaptive moments
  let best: HalfMaximum | null = null;
  for (let round = 0; round < 2; round++) {
    const { n, s } = profileWindow(ctx, a, uHalf, scale);
    if (n < 9) return best;
    const h = fitAt(n, s, lambda, a.x, a.y);
    if (h === null) return best;
    best = h;
    const next = (h.fwhmMajor * h.fwhmMinor) / 4;
    if (Math.abs(next / uHalf - 1) < 0.2) break;
    uHalf = next;
  }
  return best;
}

/**
 * Chi-square of the profile fit of one star at each exponent of `lambdas` (written to `out`; Infinity where a fit
 * fails), over the window set by a Gaussian fit, with `sigma` the pixel noise. Returns false when the star gives
 * no usable window.
 */
export function profileChiSquares(
  ctx: MeasureContext,
  a: Adaptive,
  peakScale: number,
  sigma: number,
  lambdas: readonly number[],
  out: Float64Array,
): boolean {
  const scale = peakScale > 0 ? peakScale : 1;
  const g = halfMaximumFit(ctx, a, scale, 0);
  const uHalf = g !== null ? (g.fwhmMajor * g.fwhmMinor) / 4 : 2 * Math.LN2 * Math.sqrt(a.wxx * a.wyy - a.wxy * a.wxy);
  const { n, s } = profileWindow(ctx, a, uHalf, scale);
  if (n < 9) return false;
  const v = (sigma / scale) ** 2;
  for (let li = 0; li < lambdas.length; li++) {
    const h = fitAt(n, s, lambdas[li]!, a.x, a.y);
    out[li] = h === null ? Infinity : h.residual / v;
  }
  return true;
}

/**
 * Half-flux radius about (cx, cy): the radius holding half of the background-subtracted flux within rAperture.
 * Pixels whose centre is within rFine of the centre are split 4x4 (each part carrying 1/16 of the pixel) and
 * binned at 0.05 px in radius; pixels further out count whole at their centre radius.
 */
function halfFluxRadius(ctx: MeasureContext, cx: number, cy: number, rAperture: number, rFine: number): number | null {
  const { pixels, width, height, background } = ctx;
  const step = 0.05;
  const nb = Math.ceil(rAperture / step) + 2;
  if (ctx.scratch.bins.length < nb) ctx.scratch.bins = new Float64Array(nb * 2);
  const bins = ctx.scratch.bins;
  bins.fill(0, 0, nb);
  const r2a = rAperture * rAperture;
  const r2f = rFine * rFine;
  const xa = Math.max(0, Math.floor(cx - rAperture));
  const xb = Math.min(width - 1, Math.ceil(cx + rAperture));
  const ya = Math.max(0, Math.floor(cy - rAperture));
  const yb = Math.min(height - 1, Math.ceil(cy + rAperture));
  let total = 0;
  for (let y = ya; y <= yb; y++) {
    const dy = y - cy;
    let i = y * width + xa;
    for (let x = xa; x <= xb; x++, i++) {
      const dx = x - cx;
      const rc2 = dx * dx + dy * dy;
      if (rc2 > (rAperture + 0.75) * (rAperture + 0.75)) continue;
      const f = pixels[i]! - backgroundAt(background, i);
      if (!(f === f)) continue;
      if (rc2 > r2f) {
        if (rc2 <= r2a) {
          bins[Math.floor(Math.sqrt(rc2) / step)]! += f;
          total += f;
        }
        continue;
      }
      const fs = f / 16;
      for (let sy = 0; sy < 4; sy++) {
        const ey = dy - 0.375 + 0.25 * sy;
        for (let sx = 0; sx < 4; sx++) {
          const ex = dx - 0.375 + 0.25 * sx;
          const r2 = ex * ex + ey * ey;
          if (r2 > r2a) continue;
          bins[Math.floor(Math.sqrt(r2) / step)]! += fs;
          total += fs;
        }
      }
    }
  }
  if (!(total > 0)) return null;
  const half = total / 2;
  let cum = 0;
  for (let k = 0; k < nb; k++) {
    const b = bins[k]!;
    if (cum + b >= half && b > 0) return (k + (half - cum) / b) * step;
    cum += b;
  }
  return null;
}

/** Sigma-clipped median of raw pixels with rIn <= r < rOut about (cx, cy). */
function annulusMedian(ctx: MeasureContext, cx: number, cy: number, rIn: number, rOut: number): number | null {
  const { pixels, width, height } = ctx;
  const xa = Math.max(0, Math.floor(cx - rOut));
  const xb = Math.min(width - 1, Math.ceil(cx + rOut));
  const ya = Math.max(0, Math.floor(cy - rOut));
  const yb = Math.min(height - 1, Math.ceil(cy + rOut));
  const need = (xb - xa + 1) * (yb - ya + 1);
  if (ctx.scratch.a.length < need) {
    ctx.scratch.a = new Float64Array(need * 2);
    ctx.scratch.b = new Float64Array(need * 2);
  }
  const a = ctx.scratch.a;
  let n = 0;
  const ri2 = rIn * rIn;
  const ro2 = rOut * rOut;
  for (let y = ya; y <= yb; y++) {
    const dy = y - cy;
    let i = y * width + xa;
    for (let x = xa; x <= xb; x++, i++) {
      const dx = x - cx;
      const r2 = dx * dx + dy * dy;
      if (r2 < ri2 || r2 >= ro2) continue;
      const v = pixels[i]!;
      if (v === v) a[n++] = v;
    }
  }
  if (n < 8) return null;
  return clippedMedian(a, n, ctx.scratch.b, 3, 5);
}

/** Flags a footprint carries into its source record. */
export interface FootprintFlags {
  id: number;
  blended: boolean;
}

/** A source after the first measurement stage, with what the profile stage needs. */
export interface PendingSource {
  source: StarSource;
  /** Centre and shape for the profile fit (adaptive moments, or the isophotal ones as a fallback); null when too large. */
  shape: Adaptive | null;
}

function assemble(ctx: MeasureContext, iso: Isophotal, area: number, flags: FootprintFlags, tooLarge: boolean): PendingSource {
  const { width, noise } = ctx;
  let shape = shapeFromMoments(iso.x2, iso.y2, iso.xy);
  let shapeMethod: 'adaptive' | 'isophotal' = 'isophotal';
  let fitShape: Adaptive | null = null;
  if (!tooLarge) {
    const floor = 0.35; // px^2: start no smaller than a sigma of 0.6 px
    const ad = adaptiveMoments(ctx, iso.x, iso.y, Math.max(iso.x2, floor), Math.max(iso.y2, floor), iso.xy);
    fitShape = ad ?? { x: iso.x, y: iso.y, wxx: Math.max(iso.x2, floor), wyy: Math.max(iso.y2, floor), wxy: iso.xy };
    if (ad !== null) {
      shape = shapeFromMoments(ad.wxx, ad.wyy, ad.wxy);
      shapeMethod = 'adaptive';
    }
  }
  const sigma = levelAt(noise, iso.peakIndex);
  const poisson = ctx.gainElectronsPerAdu !== undefined && iso.flux > 0 ? iso.flux / ctx.gainElectronsPerAdu : 0;
  const snr = iso.flux / Math.sqrt(area * sigma * sigma + poisson);
  const px = iso.peakIndex % width;
  const source: StarSource = {
    id: flags.id,
    x: iso.x,
    y: iso.y,
    xWindowed: shapeMethod === 'adaptive' && fitShape !== null ? fitShape.x : iso.x,
    yWindowed: shapeMethod === 'adaptive' && fitShape !== null ? fitShape.y : iso.y,
    xPeak: px,
    yPeak: (iso.peakIndex - px) / width,
    peakAdu: iso.peak,
    fluxAdu: iso.flux,
    areaPixels: area,
    box: iso.box,
    x2Pixels2: shape.x2Pixels2,
    y2Pixels2: shape.y2Pixels2,
    xyPixels2: shape.xyPixels2,
    aPixels: shape.aPixels,
    bPixels: shape.bPixels,
    thetaDegrees: shape.thetaDegrees,
    elongation: shape.elongation,
    ellipticity: shape.ellipticity,
    shapeMethod,
    fwhmPixels: null,
    fwhmMajorPixels: null,
    fwhmMinorPixels: null,
    halfFluxRadiusPixels: null,
    snr,
    localBackgroundAdu: null,
    touchesEdge: iso.box.xMin === 0 || iso.box.yMin === 0 || iso.box.xMax === width - 1 || iso.box.yMax === ctx.height - 1,
    saturated: iso.saturated,
    tooLarge,
    blended: flags.blended,
  };
  return { source, shape: fitShape };
}

/** First stage for a footprint given as flat pixel indices idx[start .. start + count): isophotal and adaptive moments, SNR, flags. */
export function measureFootprint(ctx: MeasureContext, idx: Int32Array, start: number, count: number, flags: FootprintFlags): PendingSource {
  return assemble(ctx, isophotalFromIndices(ctx, idx, start, count), count, flags, false);
}

/** First stage for a too-large component, from its runs (centroid, flux, peak, isophotal moments only). */
export function measureRunsComponent(
  ctx: MeasureContext,
  runY: Int32Array,
  runX0: Int32Array,
  runX1: Int32Array,
  head: number,
  next: Int32Array,
  area: number,
  flags: FootprintFlags,
): PendingSource {
  return assemble(ctx, isophotalFromRuns(ctx, runY, runX0, runX1, head, next), area, flags, true);
}

/** Chi-squares of the profile fits of one source at each of `lambdas` (see profileChiSquares). */
export function profileChiSquaresOf(ctx: MeasureContext, p: PendingSource, lambdas: readonly number[], out: Float64Array): boolean {
  if (p.shape === null) return false;
  const i = p.source.yPeak * ctx.width + p.source.xPeak;
  return profileChiSquares(ctx, p.shape, p.source.peakAdu, levelAt(ctx.noise, i), lambdas, out);
}

/** Second stage: FWHM at the given exponent, half-flux radius, local background. Fills the source record in place. */
export function finishProfile(ctx: MeasureContext, p: PendingSource, lambda: number): void {
  const src = p.source;
  if (p.shape !== null) {
    const hm = halfMaximumFit(ctx, p.shape, src.peakAdu, lambda);
    if (hm !== null) {
      const fwhm = Math.sqrt((hm.fwhmMajor * hm.fwhmMajor + hm.fwhmMinor * hm.fwhmMinor) / 2);
      src.fwhmMajorPixels = hm.fwhmMajor;
      src.fwhmMinorPixels = hm.fwhmMinor;
      src.fwhmPixels = fwhm;
      const rAp = Math.min(40, Math.max(4, 3 * fwhm));
      src.halfFluxRadiusPixels = halfFluxRadius(ctx, p.shape.x, p.shape.y, rAp, Math.min(rAp, fwhm + 1.5));
    }
  }
  if (ctx.localBackground) {
    const size = src.fwhmPixels ?? 2.3548 * Math.sqrt(Math.max(src.aPixels * src.bPixels, 0.25));
    const rIn = Math.max(8, 3 * size, Math.sqrt(src.areaPixels / Math.PI) + 3);
    src.localBackgroundAdu = annulusMedian(ctx, src.x, src.y, rIn, rIn + 8);
  }
}
