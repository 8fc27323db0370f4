import type { SampleOptions, StatsInput } from './input.js';
import { toView } from './input.js';
import { histogramMad } from './histogram.js';
import { sampleMedian } from './robust.js';
import type { Sample } from './sample.js';
import { sampleView } from './sample.js';
import { medianInPlace } from './select.js';

/** Tuning constants; astropy 5.2.1 defaults. */
export interface BiweightOptions extends SampleOptions {
  /** Tuning constant of the location (default 6). */
  locationC?: number;
  /** Tuning constant of the scale (default 9). */
  scaleC?: number;
}

/** Biweight location and scale with the median and MAD they start from. */
export interface BiweightResult {
  location: number;
  scale: number;
  median: number;
  mad: number;
  count: number;
}

/**
 * Sums of the biweight over a sample, single step from the median M (REFERENCE C.3):
 * u = (x - M) / (c MAD); over |u| < 1: location sums d w and w with w = (1 - u^2)^2 (c = locationC);
 * scale sums d^2 (1 - u^2)^4 and (1 - u^2)(1 - 5 u^2) (c = scaleC).
 */
function biweightOfSample(s: Sample, locationC: number, scaleC: number): BiweightResult {
  const n = s.n;
  if (n === 0) return { location: Number.NaN, scale: Number.NaN, median: Number.NaN, mad: Number.NaN, count: 0 };
  const m = sampleMedian(s);
  let mad: number;
  if (s.kind === 'histogram') mad = histogramMad(s.counts, s.origin, s.lo, s.hi, n, m);
  else {
    const dev = new Float64Array(n);
    for (let i = 0; i < n; i++) dev[i] = Math.abs((s.values[i] as number) - m);
    mad = medianInPlace(dev, n);
  }
  // astropy 5.2.1: MAD = 0 (or NaN) returns the median as location and 0 as scale.
  if (!(mad > 0)) return { location: m, scale: 0, median: m, mad, count: n };
  const cl = locationC * mad;
  const cs = scaleC * mad;
  let sdw = 0;
  let sw = 0;
  let num = 0;
  let den = 0;
  // The same accumulation for bins (d, count) and for single values (count 1); written out twice so the
  // pixel loop makes no function call.
  if (s.kind === 'histogram') {
    for (let b = s.lo; b <= s.hi; b++) {
      const count = s.counts[b] as number;
      if (count === 0) continue;
      const d = s.origin + b - m;
      const ul = d / cl;
      if (Math.abs(ul) < 1) {
        const w = (1 - ul * ul) * (1 - ul * ul);
        sdw += count * d * w;
        sw += count * w;
      }
      const us = d / cs;
      if (Math.abs(us) < 1) {
        const u2 = us * us;
        const one = 1 - u2;
        num += count * d * d * one * one * one * one;
        den += count * one * (1 - 5 * u2);
      }
    }
  } else {
    const a = s.values;
    for (let i = 0; i < n; i++) {
      const d = (a[i] as number) - m;
      const ul = d / cl;
      if (Math.abs(ul) < 1) {
        const w = (1 - ul * ul) * (1 - ul * ul);
        sdw += d * w;
        sw += w;
      }
      const us = d / cs;
      if (Math.abs(us) < 1) {
        const u2 = us * us;
        const one = 1 - u2;
        num += d * d * one * one * one * one;
        den += one * (1 - 5 * u2);
      }
    }
  }
  return { location: m + sdw / sw, scale: Math.sqrt((n * num) / (den * den)), median: m, mad, count: n };
}

/**
 * Biweight location (c = 6) and scale (c = 9) in astropy 5.2.1's single-step variant: one step from the
 * median, with the unscaled MAD, n = all valid values (modify_sample_size = False). MAD = 0 gives location =
 * median and scale = 0, as astropy does.
 *
 * References: Beers, Flynn & Gebhardt (1990), AJ 100, 32 (citation from memory, REFERENCE C.3); astropy 5.2.1
 * `biweight_location` / `biweight_scale`. The original paper iterates; results can differ (REFERENCE C.3).
 * @returns NaN fields and count 0 when no value is valid
 * @example biweight([1, 2, 3, 4, 100]) // location 2.570650, scale 1.424399
 */
export function biweight(input: StatsInput, opts: BiweightOptions = {}): BiweightResult {
  return biweightOfSample(sampleView(toView(input), opts), opts.locationC ?? 6, opts.scaleC ?? 9);
}

/** Biweight location only; see {@link biweight}. */
export function biweightLocation(input: StatsInput, opts: BiweightOptions = {}): number {
  return biweight(input, opts).location;
}

/** Biweight scale only; see {@link biweight}. */
export function biweightScale(input: StatsInput, opts: BiweightOptions = {}): number {
  return biweight(input, opts).scale;
}
