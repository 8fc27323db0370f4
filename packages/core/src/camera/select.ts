// Selection on a scratch buffer (Floyd-Rivest style partition as in d3-array's quickselect, simplified to
// Hoare partitioning with median-of-three pivots). Internal to the camera area.

/** Reorder `a[lo..hi]` so that `a[k]` holds the k-th smallest value. */
export function selectInPlace(a: Float32Array | Float64Array, k: number, lo = 0, hi = a.length - 1): void {
  while (hi > lo) {
    const mid = (lo + hi) >>> 1;
    // median of three as pivot, moved to a[lo]
    let x = a[lo]!, y = a[mid]!, z = a[hi]!;
    if (x > y) { const t = x; x = y; y = t; }
    if (y > z) { const t = y; y = z; z = t; if (x > y) { const u = x; x = y; y = u; } }
    const pivot = y;
    let i = lo, j = hi;
    while (i <= j) {
      while (a[i]! < pivot) i++;
      while (a[j]! > pivot) j--;
      if (i <= j) { const t = a[i]!; a[i] = a[j]!; a[j] = t; i++; j--; }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return;
  }
}

/** Median of the first `n` values of `a` (reordered in place); the mean of the two middle values for even n; NaN for n = 0. */
export function medianInPlace(a: Float32Array | Float64Array, n: number): number {
  if (n <= 0) return NaN;
  const h = n >>> 1;
  selectInPlace(a, h, 0, n - 1);
  const upper = a[h]!;
  if (n % 2 === 1) return upper;
  // after selection everything left of h is <= a[h]; the lower middle is their maximum
  let lower = -Infinity;
  for (let i = 0; i < h; i++) if (a[i]! > lower) lower = a[i]!;
  return (lower + upper) / 2;
}
