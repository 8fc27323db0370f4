// Seeded synthetic star fields for the stars tests. Profiles are point-sampled at pixel centres.

/** Marsaglia (2003, J. Stat. Softw. 8(14)) 32-bit xorshift, triple (13, 17, 5). Mirrored in scripts/reference/photutils_goldens.py. */
export class XorShift32 {
  private s: number;
  constructor(seed: number) {
    this.s = seed >>> 0 || 0x9e3779b9;
  }
  nextUint32(): number {
    let x = this.s;
    x ^= x << 13;
    x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5;
    x >>>= 0;
    this.s = x;
    return x;
  }
  /** Uniform in [0, 1) with 24 bits: exact in float64 on both sides of the mirror. */
  uniform(): number {
    return (this.nextUint32() >>> 8) / 16777216;
  }
  /** Approximately standard normal: sum of 12 uniforms minus 6 (Irwin-Hall), integer-exact arithmetic. */
  irwinHall(): number {
    let s = 0;
    for (let i = 0; i < 12; i++) s += this.uniform();
    return s - 6;
  }
  /** Standard normal by Box-Muller (for tests that need no mirror). */
  normal(): number {
    const u = 1 - this.uniform();
    const v = this.uniform();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  }
}

export interface Frame {
  data: Float64Array;
  width: number;
  height: number;
}

export function newFrame(width: number, height: number, level = 0): Frame {
  return { data: new Float64Array(width * height).fill(level), width, height };
}

/** Add an elliptical Gaussian of total flux `flux` (continuous integral), axes sigmaMajor/sigmaMinor, angle from +x towards +y. */
export function addGaussian(
  f: Frame,
  x0: number,
  y0: number,
  flux: number,
  sigmaMajor: number,
  sigmaMinor = sigmaMajor,
  thetaDegrees = 0,
): void {
  const t = (thetaDegrees * Math.PI) / 180;
  const c = Math.cos(t);
  const s = Math.sin(t);
  const amp = flux / (2 * Math.PI * sigmaMajor * sigmaMinor);
  const r = Math.ceil(8 * sigmaMajor);
  for (let y = Math.max(0, Math.floor(y0) - r); y <= Math.min(f.height - 1, Math.ceil(y0) + r); y++) {
    for (let x = Math.max(0, Math.floor(x0) - r); x <= Math.min(f.width - 1, Math.ceil(x0) + r); x++) {
      const dx = x - x0;
      const dy = y - y0;
      const u = dx * c + dy * s;
      const v = -dx * s + dy * c;
      f.data[y * f.width + x]! += amp * Math.exp(-0.5 * ((u * u) / (sigmaMajor * sigmaMajor) + (v * v) / (sigmaMinor * sigmaMinor)));
    }
  }
}

/** Add a round Moffat profile peak (1 + r^2/alpha^2)^-beta, cut at radius `rMax`. */
export function addMoffat(f: Frame, x0: number, y0: number, peak: number, alpha: number, beta: number, rMax = 12 * alpha): void {
  const r = Math.ceil(rMax);
  for (let y = Math.max(0, Math.floor(y0) - r); y <= Math.min(f.height - 1, Math.ceil(y0) + r); y++) {
    for (let x = Math.max(0, Math.floor(x0) - r); x <= Math.min(f.width - 1, Math.ceil(x0) + r); x++) {
      const dx = x - x0;
      const dy = y - y0;
      const r2 = dx * dx + dy * dy;
      if (r2 > rMax * rMax) continue;
      f.data[y * f.width + x]! += peak * Math.pow(1 + r2 / (alpha * alpha), -beta);
    }
  }
}

/** Add a straight trail between two points with a Gaussian cross profile of the given FWHM and peak level per pixel. */
export function addTrail(f: Frame, xa: number, ya: number, xb: number, yb: number, peak: number, fwhm: number): void {
  const sigma = fwhm / 2.3548200450309493;
  const len = Math.hypot(xb - xa, yb - ya);
  const ux = (xb - xa) / len;
  const uy = (yb - ya) / len;
  const reach = 5 * sigma;
  for (let y = 0; y < f.height; y++) {
    for (let x = 0; x < f.width; x++) {
      const dx = x - xa;
      const dy = y - ya;
      const along = dx * ux + dy * uy;
      if (along < 0 || along > len) continue;
      const across = -dx * uy + dy * ux;
      if (Math.abs(across) > reach) continue;
      f.data[y * f.width + x]! += peak * Math.exp((-0.5 * across * across) / (sigma * sigma));
    }
  }
}

/** Add Gaussian read noise of the given sigma. */
export function addNoise(f: Frame, rng: XorShift32, sigma: number): void {
  for (let i = 0; i < f.data.length; i++) f.data[i]! += sigma * rng.normal();
}

/** Round and clip to unsigned 16-bit. */
export function toUint16(f: Frame): Uint16Array {
  const out = new Uint16Array(f.data.length);
  for (let i = 0; i < out.length; i++) out[i] = Math.min(65535, Math.max(0, Math.floor(f.data[i]! + 0.5)));
  return out;
}

export function toFloat32(f: Frame): Float32Array {
  return Float32Array.from(f.data);
}

/** A star field with random positions (kept `minSeparation` apart and `margin` from the edges). */
export function randomPositions(rng: XorShift32, count: number, width: number, height: number, margin: number, minSeparation: number): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  let tries = 0;
  while (out.length < count && tries < count * 200) {
    tries++;
    const x = margin + rng.uniform() * (width - 2 * margin);
    const y = margin + rng.uniform() * (height - 2 * margin);
    if (out.every(([px, py]) => Math.hypot(px - x, py - y) >= minSeparation)) out.push([x, y]);
  }
  return out;
}
