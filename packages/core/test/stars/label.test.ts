import { describe, expect, it } from 'vitest';
import { labelComponents } from '@subgauge/core';
import { XorShift32 } from './helpers.js';

/** Independent reference: breadth-first flood fill, labels in raster order of the first pixel. */
function floodLabels(mask: Uint8Array, w: number, h: number, conn: 4 | 8): { labels: Int32Array; count: number } {
  const labels = new Int32Array(w * h);
  const queue = new Int32Array(w * h);
  let count = 0;
  for (let start = 0; start < w * h; start++) {
    if (!mask[start] || labels[start]) continue;
    labels[start] = ++count;
    let head = 0;
    let tail = 0;
    queue[tail++] = start;
    while (head < tail) {
      const i = queue[head++]!;
      const x = i % w;
      const y = (i - x) / w;
      for (let dy = -1; dy <= 1; dy++) {
        for (let dx = -1; dx <= 1; dx++) {
          if ((dx === 0 && dy === 0) || (conn === 4 && dx !== 0 && dy !== 0)) continue;
          const xx = x + dx;
          const yy = y + dy;
          if (xx < 0 || yy < 0 || xx >= w || yy >= h) continue;
          const j = yy * w + xx;
          if (mask[j] && !labels[j]) {
            labels[j] = count;
            queue[tail++] = j;
          }
        }
      }
    }
  }
  return { labels, count };
}

describe('labelComponents', () => {
  const pattern = Uint8Array.from([1, 1, 0, 0, 0, 1, 1, 0, 0, 0, 0, 0, 1, 1, 0, 0, 0, 1, 1, 0, 0, 0, 0, 0, 1]);

  it('labelComponents(5x5 pattern of REFERENCE E.3, 4) finds 3 components (G row 56; scipy.ndimage.label)', () => {
    const r = labelComponents(pattern, 5, 5, 4);
    expect(r.count).toBe(3);
    expect(Array.from(r.labels)).toEqual([1, 1, 0, 0, 0, 1, 1, 0, 0, 0, 0, 0, 2, 2, 0, 0, 0, 2, 2, 0, 0, 0, 0, 0, 3]);
  });

  it('labelComponents(5x5 pattern of REFERENCE E.3, 8) finds 1 component (G row 56; scipy.ndimage.label)', () => {
    const r = labelComponents(pattern, 5, 5, 8);
    expect(r.count).toBe(1);
    expect(Array.from(r.labels)).toEqual(Array.from(pattern));
  });

  it('labelComponents joins branches that meet only further down (a U and a spiral) as one component', () => {
    // U: two arms joined on the last row; the arms are separate runs until then
    const u = ['1000001', '1000001', '1000001', '1111111'].join('');
    expect(labelComponents(Uint8Array.from(u, Number), 7, 4, 4).count).toBe(1);
    const spiral = ['1111111', '0000001', '1111101', '1000101', '1011101', '1000001', '1111111'].join('');
    const r = labelComponents(Uint8Array.from(spiral, Number), 7, 7, 4);
    expect(r.count).toBe(1);
  });

  it('labelComponents(random masks) agrees with a breadth-first flood fill for both connectivities', () => {
    const rng = new XorShift32(2024);
    for (let trial = 0; trial < 40; trial++) {
      const w = 1 + Math.floor(rng.uniform() * 60);
      const h = 1 + Math.floor(rng.uniform() * 60);
      const p = 0.2 + 0.5 * rng.uniform();
      const mask = new Uint8Array(w * h);
      for (let i = 0; i < mask.length; i++) mask[i] = rng.uniform() < p ? 1 : 0;
      for (const conn of [4, 8] as const) {
        const ours = labelComponents(mask, w, h, conn);
        const ref = floodLabels(mask, w, h, conn);
        expect(ours.count).toBe(ref.count);
        expect(Array.from(ours.labels)).toEqual(Array.from(ref.labels));
      }
    }
  });

  it('labelComponents(mask of the wrong length or connectivity 6) throws InvalidInputError', () => {
    expect(() => labelComponents(new Uint8Array(5), 2, 2)).toThrow(expect.objectContaining({ code: 'INPUT_SHAPE_MISMATCH' }));
    expect(() => labelComponents(new Uint8Array(4), 2, 2, 6 as 4)).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
  });
});
