import { MAD_SIGMA_SCALE } from '../stats/robust.js';

/** Location and scale of one metric over a comparison set. */
export interface SessionReference {
  /** Median of the finite values. */
  median: number;
  /** 1.482602 x MAD of the finite values. */
  madSigma: number;
  /** The scale the z-scores divide by: max(madSigma, floor). */
  scale: number;
  /** Which term set the scale. */
  scaleSource: 'mad-sigma' | 'floor';
  /** Finite values behind the statistics. */
  count: number;
}

/** Robust z-scores of a sample with their reference; `z[i]` is NaN where `values[i]` is not finite. */
export interface SessionZScores {
  reference: SessionReference;
  z: number[];
}

/** Median of a small sample (copies; even count: mean of the two middle values, as numpy). NaN when empty. */
export function medianOf(values: readonly number[]): number {
  const a = values.filter(Number.isFinite).sort((x, y) => x - y);
  const n = a.length;
  if (n === 0) return Number.NaN;
  const h = n >> 1;
  return n % 2 === 1 ? (a[h] as number) : ((a[h - 1] as number) + (a[h] as number)) / 2;
}

/**
 * Robust z-scores of per-frame values against their session: z = (x - median) / scale with
 * scale = max(1.482602 x MAD, floorFraction x |median|, absoluteFloor).
 *
 * Method: median and MAD = median |x - median| (REFERENCE C.1; 1.482602218505602 = 1/Phi^-1(3/4)). MAD = 0
 * happens when more than half the frames give the same value (rounded metrics, a tiny session); C.1 says to
 * guard it with a fallback to the standard deviation or a floor. We use a floor, because a standard deviation
 * is inflated by the very outliers the audit looks for. The floor is relative (a fraction of |median|) with an
 * absolute minimum for metrics whose median can be 0.
 * @param values one value per frame; non-finite values are left out and get z = NaN
 * @param floorFraction relative floor of the scale (e.g. 0.01)
 * @param absoluteFloor smallest scale in the metric's unit (> 0)
 * @returns z per value and the reference; median NaN and count 0 when no value is finite
 * @example sessionZScores([101, 99, 100, 102, 98, 100, 130], 0.01, 1e-9).z[6] // 20.2347 (REFERENCE G row 58)
 */
export function sessionZScores(values: readonly number[], floorFraction: number, absoluteFloor: number): SessionZScores {
  const finite = values.filter(Number.isFinite);
  const median = medianOf(finite);
  const mad = medianOf(finite.map((v) => Math.abs(v - median)));
  const madSigma = mad * MAD_SIGMA_SCALE;
  const floor = Math.max(floorFraction * Math.abs(median), absoluteFloor);
  const useMad = madSigma >= floor;
  const scale = useMad ? madSigma : floor;
  const z = values.map((v) => (Number.isFinite(v) && finite.length > 0 ? (v - median) / scale : Number.NaN));
  return {
    reference: { median, madSigma, scale, scaleSource: useMad ? 'mad-sigma' : 'floor', count: finite.length },
    z,
  };
}
