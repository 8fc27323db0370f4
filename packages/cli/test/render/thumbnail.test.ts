import { describe, expect, it } from 'vitest';
import { PNG } from 'pngjs';
import { blockMean, pngSize, thumbnailFactor, thumbnailPng } from '../../src/render/html/thumbnail.js';

describe('thumbnails', () => {
  it('blockMean(pixels, 5, 3, 2) averages 2x2 blocks, partial blocks at the edges, NaN left out', () => {
    // prettier-ignore
    const px = new Float32Array([
      1, 2, 3, 4, 5,
      3, 4, 5, NaN, 7,
      10, 20, 30, 40, 50,
    ]);
    const r = blockMean(px, 5, 3, 2);
    expect([r.width, r.height]).toEqual([3, 2]);
    expect(Array.from(r.values)).toEqual([2.5, 4, 6, 15, 35, 50]);
  });

  it('blockMean(pixels, w, h, f) gives NaN for a block with no finite pixel', () => {
    const r = blockMean(new Float64Array([NaN, Infinity, 1, 1]), 2, 2, 1);
    expect(Number.isNaN(r.values[0])).toBe(true);
    expect(Number.isNaN(r.values[1])).toBe(true);
    expect(r.values[2]).toBe(1);
  });

  it('thumbnailFactor(w, h, max) makes the longer side fit', () => {
    expect(thumbnailFactor(6248, 4176, 256)).toBe(25);
    expect(thumbnailFactor(100, 50, 256)).toBe(1);
    expect(Math.ceil(6248 / thumbnailFactor(6248, 4176, 256))).toBeLessThanOrEqual(256);
  });

  it('thumbnailPng(pixels, w, h) writes a grey PNG whose sky is dark grey, a star bright and row 0 at the bottom', () => {
    const w = 400;
    const h = 300;
    const px = new Uint16Array(w * h);
    let seed = 7;
    for (let i = 0; i < px.length; i++) {
      seed = (seed * 1103515245 + 12345) >>> 0;
      px[i] = 1000 + ((seed >>> 16) % 21) - 10; // sky 1000 ± 10 ADU, uniform
    }
    for (let y = 0; y < 8; y++) for (let x = 0; x < 8; x++) px[y * w + x] = 60000; // a bright patch at row 0
    const png = thumbnailPng(px, w, h, { maxSize: 100 });
    expect(pngSize(png)).toEqual({ width: 100, height: 75 });
    const img = PNG.sync.read(Buffer.from(png));
    const grey = (x: number, y: number) => img.data[(y * img.width + x) * 4]!;
    const sky = grey(50, 40);
    expect(sky).toBeGreaterThan(20);
    expect(sky).toBeLessThan(110);
    expect(grey(0, 74)).toBe(255); // row 0 of the frame is the last PNG row
    expect(grey(0, 0)).toBeLessThan(110);
    const flipped = PNG.sync.read(Buffer.from(thumbnailPng(px, w, h, { maxSize: 100, firstRowAtBottom: false })));
    expect(flipped.data[0]).toBe(255);
  });

  it('thumbnailPng(pixels, w, h) refuses too few pixels; pngSize(bytes) is undefined for non-PNG bytes', () => {
    expect(() => thumbnailPng(new Uint16Array(10), 4, 4)).toThrow(RangeError);
    expect(pngSize(new Uint8Array(30))).toBeUndefined();
  });
});
