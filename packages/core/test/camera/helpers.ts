// Test-only helpers for the camera tests: a Header from a plain record, images from typed arrays, a seeded RNG.
import type { Card, CardValue, Header, ImageData, Pixels } from '../../src/fits/types.js';

/** A Header whose cards are the record's entries, in order (keyword lookup case-insensitive). */
export function headerFrom(record: Record<string, CardValue>): Header {
  const cards: Card[] = Object.entries(record).map(([keyword, value], i) => ({
    index: i + 1, keyword: keyword.toUpperCase(), kind: 'value', value, comment: '', raw: '',
  }));
  const find = (k: string) => cards.find((c) => c.keyword === k.toUpperCase());
  return {
    cards,
    has: (k) => find(k) !== undefined,
    get: (k) => find(k)?.value,
    number: (k) => {
      const v = find(k)?.value;
      if (typeof v === 'number' && Number.isFinite(v)) return v;
      if (typeof v === 'bigint') return Number(v);
      if (typeof v === 'string' && v.trim() !== '' && Number.isFinite(Number(v))) return Number(v);
      return undefined;
    },
    string: (k) => {
      const v = find(k)?.value;
      return typeof v === 'string' ? v.trim() : undefined;
    },
    boolean: (k) => {
      const v = find(k)?.value;
      return typeof v === 'boolean' ? v : undefined;
    },
    comment: (k) => find(k)?.comment,
    commentary: () => [],
  };
}

/** ImageData around a pixel array (2-D, one plane). */
export function imageFrom(pixels: Pixels, width: number, height: number): ImageData {
  const elementType = pixels instanceof Uint16Array ? 'uint16' : pixels instanceof Float32Array ? 'float32'
    : pixels instanceof Float64Array ? 'float64' : pixels instanceof Int32Array ? 'int32' : pixels instanceof Int16Array ? 'int16' : 'uint8';
  return { pixels, elementType, width, height, rowStart: 0, planes: 1, blankCount: 0, blankValue: undefined };
}

/** Seeded PRNG (mulberry32) with normal (Box-Muller) and Poisson samplers; test use only. */
export function rng(seed: number) {
  let s = seed >>> 0;
  const uniform = () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const normal = () => {
    const u = 1 - uniform(), v = uniform();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
  const poisson = (lambda: number) => {
    if (lambda > 50) return Math.max(0, Math.round(lambda + Math.sqrt(lambda) * normal()));
    const l = Math.exp(-lambda);
    let k = 0, p = 1;
    do { k++; p *= uniform(); } while (p > l);
    return k - 1;
  };
  return { uniform, normal, poisson };
}
