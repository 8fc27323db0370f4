// Connected-component labelling on horizontal runs: one raster pass collects runs of set pixels and joins
// each run to the overlapping runs of the row above with union-find (path halving, root = earliest run).
// Iterative throughout; cost grows with the number of runs, not pixels. (Run-based labelling is common
// practice; union-find as in Tarjan 1975, from memory.)

import { InvalidInputError } from '../errors.js';

/** Growable list of runs [x0, x1] (inclusive) on row y, pushed in raster order. */
export class RunList {
  y: Int32Array;
  x0: Int32Array;
  x1: Int32Array;
  count = 0;
  constructor(capacity = 1024) {
    this.y = new Int32Array(capacity);
    this.x0 = new Int32Array(capacity);
    this.x1 = new Int32Array(capacity);
  }
  push(y: number, x0: number, x1: number): void {
    if (this.count === this.y.length) this.grow();
    const i = this.count++;
    this.y[i] = y;
    this.x0[i] = x0;
    this.x1[i] = x1;
  }
  private grow(): void {
    const n = this.y.length * 2;
    const y = new Int32Array(n);
    const x0 = new Int32Array(n);
    const x1 = new Int32Array(n);
    y.set(this.y);
    x0.set(this.x0);
    x1.set(this.x1);
    this.y = y;
    this.x0 = x0;
    this.x1 = x1;
  }
}

/** Components of a run list: `componentOfRun[r]` is 0-based, numbered in raster order of each component's first run. */
export interface RunComponents {
  componentOfRun: Int32Array;
  componentCount: number;
}

/** Join runs into connected components (runs must be in raster order). */
export function labelRuns(runs: RunList, connectivity: 4 | 8): RunComponents {
  const n = runs.count;
  const ry = runs.y;
  const rx0 = runs.x0;
  const rx1 = runs.x1;
  const parent = new Int32Array(n);
  for (let i = 0; i < n; i++) parent[i] = i;
  const d = connectivity === 8 ? 1 : 0;

  const find = (i: number): number => {
    while (parent[i]! !== i) {
      const g = parent[parent[i]!]!;
      parent[i] = g;
      i = g;
    }
    return i;
  };

  let prevStart = 0; // runs of the previous row are [prevStart, prevEnd)
  let prevEnd = 0;
  let rowStart = 0;
  let row = n > 0 ? ry[0]! : 0;
  let j = 0;
  for (let r = 0; r < n; r++) {
    const y = ry[r]!;
    if (y !== row) {
      // new row: the row just finished becomes "previous" only if it is adjacent
      if (y === row + 1) {
        prevStart = rowStart;
        prevEnd = r;
      } else {
        prevStart = r;
        prevEnd = r;
      }
      rowStart = r;
      row = y;
      j = prevStart;
    }
    const a = rx0[r]! - d;
    const b = rx1[r]! + d;
    while (j < prevEnd && rx1[j]! < a) j++;
    for (let k = j; k < prevEnd && rx0[k]! <= b; k++) {
      const ra = find(r);
      const rb = find(k);
      if (ra !== rb) {
        if (ra < rb) parent[rb] = ra;
        else parent[ra] = rb;
      }
    }
  }

  const componentOfRun = new Int32Array(n);
  let count = 0;
  for (let r = 0; r < n; r++) {
    const root = find(r);
    // root <= r always (links go to the smaller index), so its id is known already
    if (root === r) componentOfRun[r] = count++;
    else componentOfRun[r] = componentOfRun[root]!;
  }
  return { componentOfRun, componentCount: count };
}

/** Labels of {@link labelComponents}: 0 = background, 1..count in raster order of first pixel. */
export interface LabelResult {
  labels: Int32Array;
  count: number;
}

/**
 * Label the connected components of a binary mask (non-zero = set), like `scipy.ndimage.label` with the
 * cross (4) or full 3x3 (8) structuring element: labels 1..count in raster order of each component's first pixel.
 */
export function labelComponents(mask: ArrayLike<number>, width: number, height: number, connectivity: 4 | 8 = 8): LabelResult {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 0 || height < 0) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `bad size ${width}x${height}`);
  }
  if (mask.length !== width * height) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `mask has ${mask.length} elements, expected ${width * height}`);
  }
  if (connectivity !== 4 && connectivity !== 8) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `connectivity must be 4 or 8, got ${String(connectivity)}`);
  }
  const runs = new RunList();
  for (let y = 0; y < height; y++) {
    const base = y * width;
    let x = 0;
    while (x < width) {
      if (mask[base + x] !== 0) {
        const x0 = x;
        while (x + 1 < width && mask[base + x + 1] !== 0) x++;
        runs.push(y, x0, x);
      }
      x++;
    }
  }
  const { componentOfRun, componentCount } = labelRuns(runs, connectivity);
  const labels = new Int32Array(width * height);
  for (let r = 0; r < runs.count; r++) {
    const base = runs.y[r]! * width;
    labels.fill(componentOfRun[r]! + 1, base + runs.x0[r]!, base + runs.x1[r]! + 1);
  }
  return { labels, count: componentCount };
}
