/** Frame thumbnails for the report: block-mean downsampling, a stretch that shows faint sky, PNG via pngjs. */
import { MAD_SIGMA_SCALE } from '@subgauge/core';
import { PNG } from 'pngjs';

export interface ThumbnailOptions {
  /** Longest side of the thumbnail (px, default 256); the frame is reduced by whole-block means. */
  maxSize?: number;
  /**
   * `asinh` (default): asinh of the level between median − lowSigma·σ and median + highSigma·σ, so the sky noise
   * shows and stars do not burn out; `linear`: the same window, clipped linear. σ = 1.482602·MAD of the block means.
   */
  stretch?: 'asinh' | 'linear';
  /** Black point below the median, in σ (default 2.5). */
  lowSigma?: number;
  /** White point above the median, in σ (default 60 for asinh, 12 for linear). */
  highSigma?: number;
  /** Write the first image row at the bottom (FITS display convention, default true). */
  firstRowAtBottom?: boolean;
}

/** Downsampling factor for a frame so its longer side fits `maxSize`. */
export function thumbnailFactor(width: number, height: number, maxSize: number): number {
  return Math.max(1, Math.ceil(Math.max(width, height) / Math.max(1, Math.floor(maxSize))));
}

/**
 * Reduce a frame by block means: each output pixel is the mean of the finite pixels of an f×f block (partial blocks
 * at the right and bottom edges use the pixels they have; a block with none is NaN).
 * @param pixels - row-major pixel values, `width × height` of them
 * @returns the reduced image and its size
 */
export function blockMean(
  pixels: ArrayLike<number>,
  width: number,
  height: number,
  factor: number,
): { values: Float64Array; width: number; height: number } {
  const f = Math.max(1, Math.floor(factor));
  const ow = Math.ceil(width / f);
  const oh = Math.ceil(height / f);
  const out = new Float64Array(ow * oh);
  const sums = new Float64Array(ow);
  const counts = new Float64Array(ow);
  for (let oy = 0; oy < oh; oy++) {
    sums.fill(0);
    counts.fill(0);
    const y1 = Math.min(height, (oy + 1) * f);
    for (let y = oy * f; y < y1; y++) {
      let i = y * width;
      for (let x = 0; x < width; x++, i++) {
        const v = pixels[i] as number;
        // NaN, BLANK-as-NaN and infinities are left out of the mean (v - v is NaN for all of them).
        if (v - v === 0) {
          const ox = (x / f) | 0;
          sums[ox] = (sums[ox] as number) + v;
          counts[ox] = (counts[ox] as number) + 1;
        }
      }
    }
    const row = oy * ow;
    for (let ox = 0; ox < ow; ox++) out[row + ox] = counts[ox]! > 0 ? sums[ox]! / counts[ox]! : NaN;
  }
  return { values: out, width: ow, height: oh };
}

/** Median and MAD-sigma of the finite values (a sorted copy; the reduced images are small). */
function robustLevel(values: Float64Array): { median: number; sigma: number; min: number; max: number } {
  const finite = values.filter((v) => Number.isFinite(v)).sort();
  const n = finite.length;
  if (n === 0) return { median: 0, sigma: 1, min: 0, max: 1 };
  const mid = (a: Float64Array) => (a.length % 2 ? a[(a.length - 1) / 2]! : (a[a.length / 2 - 1]! + a[a.length / 2]!) / 2);
  const median = mid(finite);
  const dev = finite.map((v) => Math.abs(v - median)).sort();
  let sigma = MAD_SIGMA_SCALE * mid(dev);
  const min = finite[0]!;
  const max = finite[n - 1]!;
  if (!(sigma > 0)) sigma = (max - min) / 6 || 1;
  return { median, sigma, min, max };
}

/**
 * A grey PNG thumbnail of a frame.
 * @param pixels - row-major values (any numeric typed array), `width × height`
 * @param width - frame width (px, along NAXIS1)
 * @param height - frame height (px, along NAXIS2)
 * @returns PNG bytes, at most `maxSize` on the longer side
 * @example writeHtmlReport('r.html', docs, { thumbnails: [{ file, png: thumbnailPng(image.data, w, h), trails }] })
 */
export function thumbnailPng(pixels: ArrayLike<number>, width: number, height: number, opts: ThumbnailOptions = {}): Uint8Array {
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0) || pixels.length < width * height) {
    throw new RangeError(`thumbnailPng: need ${width} x ${height} pixels; got ${pixels.length}`);
  }
  const factor = thumbnailFactor(width, height, opts.maxSize ?? 256);
  const small = blockMean(pixels, width, height, factor);
  const { median, sigma } = robustLevel(small.values);
  const stretch = opts.stretch ?? 'asinh';
  const lo = median - (opts.lowSigma ?? 2.5) * sigma;
  const hi = median + (opts.highSigma ?? (stretch === 'asinh' ? 60 : 12)) * sigma;
  const span = hi - lo || 1;
  // asinh softening: Q = 20 puts the median sky near 20 % grey with the default window (common practice for
  // display stretches of astronomical images; the exact constant is our choice).
  const q = 20;
  const norm = Math.asinh(q);
  const png = new PNG({ width: small.width, height: small.height, colorType: 0, inputColorType: 6 });
  const bottom = opts.firstRowAtBottom ?? true;
  for (let y = 0; y < small.height; y++) {
    const outRow = bottom ? small.height - 1 - y : y;
    for (let x = 0; x < small.width; x++) {
      const v = small.values[y * small.width + x]!;
      let t = (v - lo) / span;
      t = t < 0 ? 0 : t > 1 ? 1 : t;
      const g = v === v ? Math.round(255 * (stretch === 'asinh' ? Math.asinh(q * t) / norm : t)) : 0;
      const k = (outRow * small.width + x) * 4;
      png.data[k] = g;
      png.data[k + 1] = g;
      png.data[k + 2] = g;
      png.data[k + 3] = 255;
    }
  }
  const buf = PNG.sync.write(png, { colorType: 0, inputColorType: 6 });
  return new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength);
}

/** Width and height from a PNG's IHDR chunk; undefined when the bytes are not a PNG. */
export function pngSize(bytes: Uint8Array): { width: number; height: number } | undefined {
  const sig = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
  if (bytes.length < 24 || sig.some((b, i) => bytes[i] !== b)) return undefined;
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  return { width: dv.getUint32(16), height: dv.getUint32(20) };
}
