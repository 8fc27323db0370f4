/**
 * Rearrange `a[left..right]` so that `a[k]` holds the value it would have if that range were sorted, smaller or
 * equal values before it and greater or equal after (NaN-free input).
 *
 * Method: Floyd & Rivest (1975), "Algorithm 489: SELECT", CACM 18(3), with the sampling step of that paper for
 * ranges above 600 elements, in the form d3-array's `quickselect` uses (Hoare partition around a[k]).
 * Expected time O(n).
 */
export function selectInPlace(a: Float64Array, k: number, left = 0, right = a.length - 1): void {
  while (right > left) {
    if (right - left > 600) {
      // Recurse on a sample-sized window around k, so the pivot lands near rank k.
      const n = right - left + 1;
      const m = k - left + 1;
      const z = Math.log(n);
      const s = 0.5 * Math.exp((2 * z) / 3);
      const sd = 0.5 * Math.sqrt((z * s * (n - s)) / n) * (m - n / 2 < 0 ? -1 : 1);
      const newLeft = Math.max(left, Math.floor(k - (m * s) / n + sd));
      const newRight = Math.min(right, Math.floor(k + ((n - m) * s) / n + sd));
      selectInPlace(a, k, newLeft, newRight);
    }
    const t = a[k] as number;
    let i = left;
    let j = right;
    let tmp = a[left] as number;
    a[left] = t;
    a[k] = tmp;
    if ((a[right] as number) > t) {
      tmp = a[left] as number;
      a[left] = a[right] as number;
      a[right] = tmp;
    }
    while (i < j) {
      tmp = a[i] as number;
      a[i] = a[j] as number;
      a[j] = tmp;
      i++;
      j--;
      while ((a[i] as number) < t) i++;
      while ((a[j] as number) > t) j--;
    }
    if (a[left] === t) {
      tmp = a[left] as number;
      a[left] = a[j] as number;
      a[j] = tmp;
    } else {
      j++;
      tmp = a[j] as number;
      a[j] = a[right] as number;
      a[right] = tmp;
    }
    if (j <= k) left = j + 1;
    if (k <= j) right = j - 1;
  }
}

/** Largest of a[left..right] (right >= left). */
function maxOf(a: Float64Array, left: number, right: number): number {
  let m = a[left] as number;
  for (let i = left + 1; i <= right; i++) {
    const v = a[i] as number;
    if (v > m) m = v;
  }
  return m;
}

/** Smallest of a[left..right] (right >= left). */
function minOf(a: Float64Array, left: number, right: number): number {
  let m = a[left] as number;
  for (let i = left + 1; i <= right; i++) {
    const v = a[i] as number;
    if (v < m) m = v;
  }
  return m;
}

/**
 * The order statistics of ranks k and k + 1 (0-based) of a[0..n), reordering a. Needs k + 1 < n.
 */
export function selectPair(a: Float64Array, n: number, k: number): [number, number] {
  selectInPlace(a, k, 0, n - 1);
  const lower = a[k] as number;
  return [lower, minOf(a, k + 1, n - 1)];
}

/**
 * Median of a[0..n) by selection (reorders a). Even n: mean of the two middle values, as numpy 1.24
 * `np.median` does ((a + b) / 2). NaN when n = 0.
 */
export function medianInPlace(a: Float64Array, n: number): number {
  if (n <= 0) return Number.NaN;
  const k = n >> 1;
  selectInPlace(a, k, 0, n - 1);
  const upper = a[k] as number;
  if (n % 2 === 1) return upper;
  return (maxOf(a, 0, k - 1) + upper) / 2;
}

/**
 * Quantile q of a[0..n) with numpy 1.24's default 'linear' method (position (n - 1) q, numpy's `_lerp`:
 * a + (b - a) t, or b - (b - a)(1 - t) when t >= 0.5). Reorders a. NaN when n = 0.
 */
export function quantileInPlace(a: Float64Array, n: number, q: number): number {
  if (n <= 0) return Number.NaN;
  const h = (n - 1) * q;
  const k = Math.floor(h);
  const t = h - k;
  if (k >= n - 1) {
    selectInPlace(a, n - 1, 0, n - 1);
    return a[n - 1] as number;
  }
  const [lo, hi] = selectPair(a, n, k);
  return lerp(lo, hi, t);
}

/** numpy 1.24 `_lerp` (function_base.py): exact at both ends, monotone. */
export function lerp(a: number, b: number, t: number): number {
  const d = b - a;
  return t >= 0.5 ? b - d * (1 - t) : a + d * t;
}
