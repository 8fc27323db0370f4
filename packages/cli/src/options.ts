import { InvalidArgumentError } from 'commander';

/** `--region x,y,w,h` in 0-based pixel coordinates (x along NAXIS1). */
export interface RegionOption {
  x: number;
  y: number;
  width: number;
  height: number;
}

export function parseRegion(text: string): RegionOption {
  const parts = text.split(',').map((s) => s.trim());
  if (parts.length !== 4 || parts.some((p) => !/^\d+$/.test(p))) {
    throw new InvalidArgumentError('expected x,y,w,h as four non-negative integers, e.g. 100,200,64,64');
  }
  const [x, y, width, height] = parts.map(Number) as [number, number, number, number];
  if (width < 1 || height < 1) throw new InvalidArgumentError('width and height must be at least 1');
  return { x, y, width, height };
}

export function parseNonNegativeInt(text: string): number {
  if (!/^\d+$/.test(text.trim())) throw new InvalidArgumentError('expected a non-negative integer');
  return Number(text);
}

export function parsePositiveInt(text: string): number {
  const n = parseNonNegativeInt(text);
  if (n < 1) throw new InvalidArgumentError('expected a positive integer');
  return n;
}

export function parsePositiveNumber(text: string): number {
  const n = Number(text);
  if (!Number.isFinite(n) || n <= 0) throw new InvalidArgumentError('expected a positive number');
  return n;
}

export function parseNumber(text: string): number {
  const n = Number(text);
  if (text.trim() === '' || !Number.isFinite(n)) throw new InvalidArgumentError('expected a number');
  return n;
}

/** Pixel counts with an optional M (1e6) or G (1e9) suffix: `400M`. */
export function parsePixelCount(text: string): number {
  const m = /^(\d+(?:\.\d+)?)\s*([kKmMgG]?)$/.exec(text.trim());
  if (!m) throw new InvalidArgumentError('expected a pixel count such as 400M or 120000000');
  const scale = { '': 1, k: 1e3, K: 1e3, m: 1e6, M: 1e6, g: 1e9, G: 1e9 }[m[2] ?? ''] ?? 1;
  return Math.round(Number(m[1]) * scale);
}

/** Durations such as `4h`, `90m`, `1h30m`, `300s` or plain seconds, in seconds. */
export function parseDurationSeconds(text: string): number {
  const t = text.trim();
  if (/^\d+(\.\d+)?$/.test(t)) return Number(t);
  const re = /(\d+(?:\.\d+)?)\s*(h|m|s)/gy;
  let total = 0;
  let matched = 0;
  for (const m of t.matchAll(re)) {
    const v = Number(m[1]);
    total += m[2] === 'h' ? v * 3600 : m[2] === 'm' ? v * 60 : v;
    matched += m[0].length;
  }
  if (matched !== t.replace(/\s+/g, '').length && matched !== t.length) {
    throw new InvalidArgumentError('expected a duration such as 4h, 90m, 1h30m or 300s');
  }
  if (!(total > 0)) throw new InvalidArgumentError('the duration must be positive');
  return total;
}
