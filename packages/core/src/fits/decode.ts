import type { ElementType, HduLayout, ImageData, Pixels } from './types.js';

/** True on little-endian hosts; FITS data are big-endian (FITS 3.0 §5). */
export const HOST_LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/** Copy `length` bytes into a fresh buffer whose length is a multiple of 8, so 32-bit views fit. */
function copyAligned(src: Uint8Array, length: number): ArrayBuffer {
  const buffer = alignedBuffer(length);
  new Uint8Array(buffer, 0, length).set(src.subarray(0, length));
  return buffer;
}

/** Swap bytes of each 16-bit half of each 32-bit word, then xor with `mask`. */
function swap16(words: Uint32Array, mask: number): void {
  const n = words.length;
  if (HOST_LITTLE_ENDIAN) {
    for (let i = 0; i < n; i++) {
      const w = words[i]!;
      words[i] = (((w & 0x00ff00ff) << 8) | ((w >>> 8) & 0x00ff00ff)) ^ mask;
    }
  } else if (mask !== 0) {
    for (let i = 0; i < n; i++) words[i] = words[i]! ^ mask;
  }
}

/** Reverse the bytes of each 32-bit word, then xor with `mask`. */
function swap32(words: Uint32Array, mask: number): void {
  const n = words.length;
  if (HOST_LITTLE_ENDIAN) {
    for (let i = 0; i < n; i++) {
      const w = words[i]!;
      words[i] = ((w >>> 24) | ((w >>> 8) & 0xff00) | ((w & 0xff00) << 8) | (w << 24)) ^ mask;
    }
  } else if (mask !== 0) {
    for (let i = 0; i < n; i++) words[i] = words[i]! ^ mask;
  }
}

/** Reverse the bytes of each 64-bit word (pairs of 32-bit words); xor the high word with `highMask`. */
function swap64(words: Uint32Array, highMask: number): void {
  const n = words.length;
  if (HOST_LITTLE_ENDIAN) {
    for (let i = 0; i + 1 < n; i += 2) {
      const a = words[i]!;
      const b = words[i + 1]!;
      words[i] = (b >>> 24) | ((b >>> 8) & 0xff00) | ((b & 0xff00) << 8) | (b << 24);
      words[i + 1] = ((a >>> 24) | ((a >>> 8) & 0xff00) | ((a & 0xff00) << 8) | (a << 24)) ^ highMask;
    }
  } else if (highMask !== 0) {
    for (let i = 0; i + 1 < n; i += 2) words[i] = words[i]! ^ highMask;
  }
}

/**
 * Raw stored values in host order, swapped in place in `buffer` from `byteOffset` (no DataView per
 * pixel). `byteOffset` is a multiple of 8 for 64-bit types and of 4 otherwise; whole 32-bit words are
 * swapped and a partial last word (8- and 16-bit data) byte by byte, so no byte past the data changes.
 */
function rawArray(buffer: ArrayBuffer, byteOffset: number, bitpix: number, count: number, unsignedMask: boolean): Pixels {
  const dataBytes = count * (Math.abs(bitpix) / 8);
  const words = new Uint32Array(buffer, byteOffset, Math.floor(dataBytes / 4));
  const tail = new Uint8Array(buffer, byteOffset + words.length * 4, dataBytes - words.length * 4);
  switch (bitpix) {
    case 8:
      if (unsignedMask) {
        for (let i = 0; i < words.length; i++) words[i] = words[i]! ^ 0x80808080;
        for (let i = 0; i < tail.length; i++) tail[i] = tail[i]! ^ 0x80;
        return new Int8Array(buffer, byteOffset, count);
      }
      return new Uint8Array(buffer, byteOffset, count);
    case 16:
      // uint16: swap, then xor 0x8000 (= add 32768 to the signed value, FITS 3.0 Table 4.9).
      swap16(words, unsignedMask ? 0x80008000 : 0);
      if (tail.length === 2) {
        const hi = tail[0]!;
        tail[0] = HOST_LITTLE_ENDIAN ? tail[1]! : hi ^ (unsignedMask ? 0x80 : 0);
        tail[1] = HOST_LITTLE_ENDIAN ? hi ^ (unsignedMask ? 0x80 : 0) : tail[1]!;
      }
      return unsignedMask ? new Uint16Array(buffer, byteOffset, count) : new Int16Array(buffer, byteOffset, count);
    case 32:
      swap32(words, unsignedMask ? 0x80000000 : 0);
      return unsignedMask ? new Uint32Array(buffer, byteOffset, count) : new Int32Array(buffer, byteOffset, count);
    case 64:
      swap64(words, unsignedMask ? 0x80000000 : 0);
      return unsignedMask ? new BigUint64Array(buffer, byteOffset, count) : new BigInt64Array(buffer, byteOffset, count);
    case -32:
      swap32(words, 0);
      return new Float32Array(buffer, byteOffset, count);
    default:
      swap64(words, 0);
      return new Float64Array(buffer, byteOffset, count);
  }
}

/** Count pixels equal to `value` (exact comparison). */
function countEqual(pixels: Pixels, value: number | bigint): number {
  let n = 0;
  if (typeof value === 'bigint') {
    const p = pixels as BigInt64Array | BigUint64Array;
    for (let i = 0; i < p.length; i++) if (p[i] === value) n++;
  } else {
    const p = pixels as Exclude<Pixels, BigInt64Array | BigUint64Array>;
    for (let i = 0; i < p.length; i++) if (p[i] === value) n++;
  }
  return n;
}

/** BLANK in physical units for data kept as integers; undefined when it cannot occur in that type. */
function physicalBlank(type: ElementType, blank: bigint): number | bigint | undefined {
  switch (type) {
    case 'uint8':
      return blank >= 0n && blank <= 255n ? Number(blank) : undefined;
    case 'int8':
      return blank >= 0n && blank <= 255n ? Number(blank) - 128 : undefined;
    case 'int16':
      return blank >= -32768n && blank <= 32767n ? Number(blank) : undefined;
    case 'uint16':
      return blank >= -32768n && blank <= 32767n ? Number(blank) + 32768 : undefined;
    case 'int32':
      return blank >= -2147483648n && blank <= 2147483647n ? Number(blank) : undefined;
    case 'uint32':
      return blank >= -2147483648n && blank <= 2147483647n ? Number(blank) + 2147483648 : undefined;
    case 'int64':
      return BigInt.asIntN(64, blank) === blank ? blank : undefined;
    case 'uint64':
      return BigInt.asIntN(64, blank) === blank ? blank + 2n ** 63n : undefined;
    default:
      return undefined;
  }
}

/**
 * Scale stored integers into floats: physical = BZERO + BSCALE x stored (FITS 3.0 §4.4.2.5), BLANK → NaN.
 * Mirrors astropy 5.2.1 `_get_scaled_image_data`: float32 output is computed in float32 (multiply,
 * then add, each rounded), float64 in float64; a multiply by 1 or add of 0 is skipped as astropy does.
 */
function scaleIntegers(raw: Pixels, out: Float32Array | Float64Array, bscale: number, bzero: number, blank: bigint | undefined): void {
  const n = out.length;
  const single = out instanceof Float32Array;
  const bs = single ? Math.fround(bscale) : bscale;
  const bz = single ? Math.fround(bzero) : bzero;
  const doScale = bscale !== 1;
  const doZero = bzero !== 0;
  if (raw instanceof BigInt64Array) {
    // Read the 64-bit words as hi * 2^32 + lo: one correctly rounded addition, like numpy's int64 → float64.
    const w = new Uint32Array(raw.buffer, raw.byteOffset, n * 2);
    const lo = HOST_LITTLE_ENDIAN ? 0 : 1;
    const hi = 1 - lo;
    const blankHi = blank === undefined ? NaN : Number(BigInt.asIntN(32, blank >> 32n));
    const blankLo = blank === undefined ? NaN : Number(BigInt.asUintN(32, blank));
    for (let i = 0; i < n; i++) {
      const h = w[2 * i + hi]! | 0;
      const l = w[2 * i + lo]!;
      let v = h * 4294967296 + l;
      if (doScale) v *= bs;
      if (doZero) v += bz;
      out[i] = h === blankHi && l === blankLo ? NaN : v;
    }
    return;
  }
  const r = raw as Exclude<Pixels, BigInt64Array | BigUint64Array>;
  const b = blank === undefined ? NaN : Number(blank);
  if (single) {
    for (let i = 0; i < n; i++) {
      const x = r[i]!;
      let v = doScale ? Math.fround(x * bs) : x;
      if (doZero) v = Math.fround(v + bz);
      out[i] = x === b ? NaN : v;
    }
  } else {
    for (let i = 0; i < n; i++) {
      const x = r[i]!;
      let v = doScale ? x * bs : x;
      if (doZero) v += bz;
      out[i] = x === b ? NaN : v;
    }
  }
}

/** Apply BSCALE/BZERO to float data in place, in the data's own precision (astropy 5.2.1 behaviour). */
function scaleFloatsInPlace(data: Float32Array | Float64Array, bscale: number, bzero: number): void {
  const n = data.length;
  const single = data instanceof Float32Array;
  const bs = single ? Math.fround(bscale) : bscale;
  const bz = single ? Math.fround(bzero) : bzero;
  if (bscale !== 1) for (let i = 0; i < n; i++) data[i] = data[i]! * bs;
  if (bzero !== 0) for (let i = 0; i < n; i++) data[i] = data[i]! + bz;
}

/** Where the requested pixels are: `width` x `height` x `planes`, starting at row `rowStart`. */
export interface DecodeShape {
  width: number;
  height: number;
  planes: number;
  rowStart: number;
}

/**
 * Decode image pixels from big-endian bytes. `src` starts at the first requested pixel and holds at
 * least width x height x planes x |BITPIX|/8 bytes. One copy, swapped in place; with `inPlace` and
 * `src` aligned to the element size (8 bytes for 64-bit types, else 4), no copy: the bytes of `src`
 * are swapped where they are and become the pixel store.
 */
export function decodePixels(src: Uint8Array, layout: HduLayout, shape: DecodeShape, inPlace = false): ImageData {
  const count = shape.width * shape.height * shape.planes;
  const dataBytes = count * (Math.abs(layout.bitpix) / 8);
  const alignment = Math.abs(layout.bitpix) === 64 ? 8 : 4;
  if (inPlace && src.byteOffset % alignment === 0 && src.length >= dataBytes) return decodeInto(src.buffer as ArrayBuffer, src.byteOffset, layout, shape);
  return decodeBuffer(copyAligned(src, dataBytes), layout, shape);
}

/** A fresh buffer for `length` bytes of raw data: zero-filled, its length a multiple of 8. */
export function alignedBuffer(length: number): ArrayBuffer {
  return new ArrayBuffer(Math.ceil(length / 8) * 8);
}

/**
 * Decode image pixels already copied into `buffer` (from {@link alignedBuffer}; raw big-endian data
 * from byte 0). The buffer is swapped in place and becomes the pixel store: no further copy.
 */
export function decodeBuffer(buffer: ArrayBuffer, layout: HduLayout, shape: DecodeShape): ImageData {
  return decodeInto(buffer, 0, layout, shape);
}

/** Decode the raw big-endian data at `byteOffset` of `buffer`, swapping them in place. */
function decodeInto(buffer: ArrayBuffer, byteOffset: number, layout: HduLayout, shape: DecodeShape): ImageData {
  const type = layout.elementType ?? 'float64';
  const count = shape.width * shape.height * shape.planes;
  const bitpix = layout.bitpix;
  const unsigned = type === 'int8' || type === 'uint16' || type === 'uint32' || type === 'uint64';
  const scaledInts = bitpix > 0 && (type === 'float32' || type === 'float64');
  const raw = rawArray(buffer, byteOffset, bitpix, count, unsigned);
  let pixels: Pixels = raw;
  let blankCount = 0;
  let blankValue: number | bigint | undefined;
  const bzero = Number(layout.bzero);
  if (scaledInts) {
    const out = type === 'float32' ? new Float32Array(count) : new Float64Array(count);
    scaleIntegers(raw, out, layout.bscale, bzero, layout.blank);
    if (layout.blank !== undefined) blankCount = countBlankRaw(raw, layout.blank);
    pixels = out;
  } else if (bitpix < 0) {
    if (layout.bscale !== 1 || bzero !== 0) scaleFloatsInPlace(raw as Float32Array | Float64Array, layout.bscale, bzero);
  } else if (layout.blank !== undefined) {
    // Integers without scaling keep their values (astropy would turn BLANK pixels into NaN in a float
    // copy; the other pixels' physical values are the same); the count says how many are undefined.
    blankValue = physicalBlank(type, layout.blank);
    if (blankValue !== undefined) blankCount = countEqual(raw, blankValue);
  }
  return {
    pixels,
    elementType: type,
    width: shape.width,
    height: shape.height,
    rowStart: shape.rowStart,
    planes: shape.planes,
    blankCount,
    blankValue,
  };
}

function countBlankRaw(raw: Pixels, blank: bigint): number {
  if (raw instanceof BigInt64Array) return countEqual(raw, BigInt.asIntN(64, blank));
  return countEqual(raw, Number(blank));
}
