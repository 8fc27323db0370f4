// Small selection helpers for per-source and per-tile statistics (internal to the stars area).

/** k-th smallest (0-based) of a[0..n) by Hoare-style quickselect; reorders a in place. */
export function selectInPlace(a: Float64Array, n: number, k: number): number {
  let lo = 0;
  let hi = n - 1;
  while (hi > lo) {
    // median-of-three pivot
    const mid = (lo + hi) >>> 1;
    let p = a[mid]!;
    const l = a[lo]!;
    const h = a[hi]!;
    if ((l <= p && p <= h) || (h <= p && p <= l)) {
      // p is the median
    } else if ((p <= l && l <= h) || (h <= l && l <= p)) p = l;
    else p = h;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i]! < p) i++;
      while (a[j]! > p) j--;
      if (i <= j) {
        const t = a[i]!;
        a[i] = a[j]!;
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k]!;
  }
  return a[k]!;
}

/** Median of a[0..n) (mean of the two middle values for even n); reorders a. NaN for n = 0. */
export function medianInPlace(a: Float64Array, n: number): number {
  if (n <= 0) return NaN;
  const h = n >>> 1;
  const upper = selectInPlace(a, n, h);
  if (n & 1) return upper;
  // the lower middle is the largest value left of h after selection
  let lower = -Infinity;
  for (let i = 0; i < h; i++) if (a[i]! > lower) lower = a[i]!;
  return (lower + upper) / 2;
}

/** Normal-consistent MAD scale, 1 / Phi^-1(3/4) (REFERENCE G row 33). */
export const MAD_TO_SIGMA = 1.482602218505602;

/** Median and MAD-sigma of a[0..n); `work` (length >= n) is scratch; a is reordered. */
export function medianAndMadSigma(a: Float64Array, n: number, work: Float64Array): { median: number; madSigma: number } {
  const median = medianInPlace(a, n);
  for (let i = 0; i < n; i++) work[i] = Math.abs(a[i]! - median);
  return { median, madSigma: MAD_TO_SIGMA * medianInPlace(work, n) };
}

/** Median after iterative clipping at `k` MAD-sigmas about the median (at most `iterations` passes); a is reordered. */
export function clippedMedian(a: Float64Array, n: number, work: Float64Array, k = 3, iterations = 5): number {
  let m = n;
  let median = NaN;
  for (let it = 0; it < iterations && m > 0; it++) {
    const s = medianAndMadSigma(a, m, work);
    median = s.median;
    if (!(s.madSigma > 0)) break;
    const lo = median - k * s.madSigma;
    const hi = median + k * s.madSigma;
    let w = 0;
    for (let i = 0; i < m; i++) {
      const v = a[i]!;
      if (v >= lo && v <= hi) a[w++] = v;
    }
    if (w === m) break;
    m = w;
  }
  return m > 0 ? medianInPlace(a, m) : median;
}
