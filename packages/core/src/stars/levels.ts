// Background levels for the star kernels: a number, a full-resolution map, or a grid interpolated on the fly.

import type { BackgroundLevels, LevelGrid } from './types.js';

/** True for a {@link LevelGrid} (a number or typed array otherwise). */
export function isLevelGrid(b: BackgroundLevels): b is LevelGrid {
  return typeof b === 'object' && (b as LevelGrid).kind === 'level-grid';
}

/**
 * The first step of reading row y of a level grid: each grid column interpolated down to row y, into
 * out[0..columns). Row readers then interpolate across, span by span (see {@link levelGridRow}).
 * @param out at least `grid.columns` long
 */
export function gridColumnLevels(grid: LevelGrid, y: number, out: Float64Array): void {
  const { values, columns } = grid;
  const top = grid.rowTop[y]! * columns;
  const bottom = grid.rowBottom[y]! * columns;
  const ty = grid.rowWeight[y]!;
  for (let c = 0; c < columns; c++) {
    const a = values[top + c]!;
    out[c] = a + (values[bottom + c]! - a) * ty;
  }
}

/**
 * Row y of a level grid into out[0..width), float32 values equal to those `renderMeshMap` writes into a
 * Float32Array (same arithmetic in the same order: interpolate down the grid columns, then across).
 * @param columnScratch at least `grid.columns` long
 */
export function levelGridRow(grid: LevelGrid, y: number, out: Float32Array, columnScratch: Float64Array): Float32Array {
  const { width, colSpans, colWeight } = grid;
  gridColumnLevels(grid, y, columnScratch);
  // run by run, so the inner loop reads only the weights
  for (let s = 0; s < colSpans.length; s += 3) {
    const end = s + 3 < colSpans.length ? colSpans[s + 3]! : width;
    const a = columnScratch[colSpans[s + 1]!]!;
    const d = columnScratch[colSpans[s + 2]!]! - a;
    for (let x = colSpans[s]!; x < end; x++) out[x] = a + d * colWeight[x]!;
  }
  return out;
}

/** Value of a level grid at pixel index i = y * width + x, equal to `levelGridRow`'s (float32-rounded). */
export function levelGridAt(grid: LevelGrid, i: number): number {
  const { values, columns, width } = grid;
  const x = i % width;
  const y = (i - x) / width;
  const top = grid.rowTop[y]! * columns;
  const bottom = grid.rowBottom[y]! * columns;
  const ty = grid.rowWeight[y]!;
  const jl = grid.colLeft[x]!;
  const jr = grid.colRight[x]!;
  const al = values[top + jl]!;
  const left = al + (values[bottom + jl]! - al) * ty;
  const ar = values[top + jr]!;
  const right = ar + (values[bottom + jr]! - ar) * ty;
  return Math.fround(left + (right - left) * grid.colWeight[x]!);
}

/** Background level at pixel index i, whatever the kind of background. */
export function backgroundAt(b: BackgroundLevels, i: number): number {
  if (typeof b === 'number') return b;
  if (isLevelGrid(b)) return levelGridAt(b, i);
  return b[i]!;
}
