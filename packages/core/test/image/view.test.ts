import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  cfaPattern,
  cfaPatternAt,
  cfaPlanes,
  contiguousCopy,
  frameView,
  regionView,
  steppedView,
  viewHeight,
  viewOf,
  viewWidth,
} from '../../src/image/index.js';
import type { ImageData } from '../../src/fits/types.js';

function ramp(width: number, height: number): Uint16Array {
  const a = new Uint16Array(width * height);
  for (let i = 0; i < a.length; i++) a[i] = i;
  return a;
}

function codeOf(f: () => unknown): string | undefined {
  try {
    f();
  } catch (e) {
    return (e as { code?: string }).code;
  }
  return undefined;
}

describe('frame views', () => {
  it('viewOf(pixels, width, height) addresses pixel (x, y) at y * width + x', () => {
    const v = viewOf(ramp(5, 3), 5, 3);
    expect(viewWidth(v)).toBe(5);
    expect(viewHeight(v)).toBe(3);
    expect(v.get(2, 4)).toBe(14);
  });

  it('viewOf(pixels, width, height) refuses a store shorter than width x height', () => {
    expect(codeOf(() => viewOf(new Uint16Array(5), 3, 2))).toBe('INPUT_SHAPE_MISMATCH');
  });

  it('frameView(image, plane) starts plane k at k x width x height without copying', () => {
    const pixels = ramp(4, 3 * 2);
    const image: ImageData = {
      pixels,
      elementType: 'uint16',
      width: 4,
      height: 3,
      rowStart: 0,
      planes: 2,
      blankCount: 0,
      blankValue: undefined,
    };
    const p1 = frameView(image, 1);
    expect(p1.data).toBe(pixels);
    expect(p1.get(0, 0)).toBe(12);
    expect(Array.from(contiguousCopy(p1))).toEqual(Array.from(pixels.subarray(12, 24)));
    expect(codeOf(() => frameView(image, 2))).toBe('INPUT_OUT_OF_BOUNDS');
  });

  it('regionView(view, x, y, w, h) at the bottom-right edge reads the last column and row', () => {
    const v = viewOf(ramp(7, 5), 7, 5);
    const r = regionView(v, 4, 2, 3, 3);
    expect(Array.from(contiguousCopy(r))).toEqual([18, 19, 20, 25, 26, 27, 32, 33, 34]);
    expect(codeOf(() => regionView(v, 5, 2, 3, 3))).toBe('INPUT_OUT_OF_BOUNDS');
    expect(codeOf(() => regionView(v, -1, 0, 1, 1))).toBe('INPUT_OUT_OF_BOUNDS');
    expect(codeOf(() => regionView(v, 0, 0, 1.5, 1))).toBe('INPUT_OUT_OF_BOUNDS');
  });

  it('regionView(regionView(v, ...), ...) equals the combined region (property)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 13 }),
        fc.integer({ min: 1, max: 11 }),
        fc.nat(),
        fc.nat(),
        fc.nat(),
        fc.nat(),
        (w, h, s1, s2, s3, s4) => {
          const v = viewOf(ramp(w, h), w, h);
          const x1 = s1 % w;
          const y1 = s2 % h;
          const w1 = 1 + (s3 % (w - x1));
          const h1 = 1 + (s4 % (h - y1));
          const outer = regionView(v, x1, y1, w1, h1);
          const x2 = s3 % w1;
          const y2 = s4 % h1;
          const w2 = w1 - x2;
          const h2 = h1 - y2;
          const inner = regionView(outer, x2, y2, w2, h2);
          const combined = regionView(v, x1 + x2, y1 + y2, w2, h2);
          expect(Array.from(contiguousCopy(inner))).toEqual(Array.from(contiguousCopy(combined)));
        },
      ),
    );
  });

  it('steppedView(view, x, y, 2, 2) on a 5 x 3 view takes 2 columns and 1 row from (1, 1)', () => {
    const v = viewOf(ramp(5, 3), 5, 3);
    expect(Array.from(contiguousCopy(steppedView(v, 1, 1, 2, 2)))).toEqual([6, 8]);
    expect(codeOf(() => steppedView(v, 0, 0, 0, 2))).toBe('INPUT_BAD_PARAMETER');
  });
});

describe('CFA layouts', () => {
  it('cfaPattern({ BAYERPAT }) keeps the header layout for a top-down frame', () => {
    const p = cfaPattern({ BAYERPAT: 'RGGB', ROWORDER: 'TOP-DOWN' });
    expect(p?.name).toBe('RGGB');
    expect(p?.r).toEqual({ dx: 0, dy: 0 });
    expect(p?.g1).toEqual({ dx: 1, dy: 0 });
    expect(p?.g2).toEqual({ dx: 0, dy: 1 });
    expect(p?.b).toEqual({ dx: 1, dy: 1 });
  });

  it('cfaPattern({ ROWORDER: "BOTTOM-UP" }) flips the row parity (RGGB becomes GBRG, REFERENCE F.4)', () => {
    expect(cfaPattern({ BAYERPAT: 'RGGB', ROWORDER: 'BOTTOM-UP' })?.name).toBe('GBRG');
    expect(cfaPattern({ BAYERPAT: 'GRBG', ROWORDER: 'bottom-up ' })?.name).toBe('BGGR');
  });

  it('cfaPattern({ XBAYROFF, YBAYROFF }) shifts the origin inside the pattern', () => {
    expect(cfaPattern({ BAYERPAT: 'RGGB', XBAYROFF: 1 })?.name).toBe('GRBG');
    expect(cfaPattern({ BAYERPAT: 'RGGB', YBAYROFF: 1 })?.name).toBe('GBRG');
    expect(cfaPattern({ BAYERPAT: 'RGGB', XBAYROFF: 1, YBAYROFF: 3 })?.name).toBe('BGGR');
    // Offset and flip together cancel in the row direction.
    expect(cfaPattern({ BAYERPAT: 'RGGB', YBAYROFF: 1, ROWORDER: 'BOTTOM-UP' })?.name).toBe('RGGB');
  });

  it('cfaPattern(header) reads COLORTYP when BAYERPAT is absent, and a Header-like getter', () => {
    expect(cfaPattern({ COLORTYP: 'bggr' })?.name).toBe('BGGR');
    const header = { get: (k: string) => ({ BAYERPAT: 'GBRG', XBAYROFF: '1' })[k as 'BAYERPAT'] };
    expect(cfaPattern(header)?.name).toBe('BGGR');
  });

  it('cfaPattern(values) is undefined for monochrome or absent keywords and throws for garbage', () => {
    expect(cfaPattern({})).toBeUndefined();
    expect(cfaPattern({ BAYERPAT: 'MONO' })).toBeUndefined();
    expect(codeOf(() => cfaPattern({ BAYERPAT: 'RGBX' }))).toBe('INPUT_BAD_PARAMETER');
    expect(codeOf(() => cfaPattern({ BAYERPAT: 'RGGB', XBAYROFF: 0.5 }))).toBe('INPUT_BAD_PARAMETER');
  });

  it('cfaPatternAt(pattern, 1, 0) names the layout seen from an odd column', () => {
    const p = cfaPattern({ BAYERPAT: 'RGGB' });
    expect(p).toBeDefined();
    if (p === undefined) return;
    expect(cfaPatternAt(p, 1, 0).name).toBe('GRBG');
    expect(cfaPatternAt(p, 1, 1).name).toBe('BGGR');
    expect(cfaPatternAt(p, 2, 4).name).toBe('RGGB');
  });

  it('cfaPlanes(view, pattern) picks the colour named by the pattern at every plane pixel', () => {
    const w = 6;
    const h = 4;
    const p = cfaPattern({ BAYERPAT: 'GBRG' });
    if (p === undefined) throw new Error('pattern expected');
    // Encode the colour of each pixel from the layout: R=1, G=2, B=3.
    const colour = new Uint8Array(w * h);
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) colour[y * w + x] = { R: 1, G: 2, B: 3 }['GBRG'[(y % 2) * 2 + (x % 2)] as 'R'];
    }
    const planes = cfaPlanes(viewOf(colour, w, h), p);
    expect(new Set(contiguousCopy(planes.r))).toEqual(new Set([1]));
    expect(new Set(contiguousCopy(planes.g1))).toEqual(new Set([2]));
    expect(new Set(contiguousCopy(planes.g2))).toEqual(new Set([2]));
    expect(new Set(contiguousCopy(planes.b))).toEqual(new Set([3]));
    // g1 lies on the red row.
    expect(planes.g1.offset % (2 * w) >= w).toBe(planes.r.offset % (2 * w) >= w);
  });

  it('cfaPlanes(view, pattern) covers every pixel exactly once, also for odd sizes and regions (property)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 9 }),
        fc.integer({ min: 1, max: 9 }),
        fc.constantFrom('RGGB', 'GRBG', 'GBRG', 'BGGR'),
        fc.nat(3),
        fc.nat(3),
        (w, h, name, ox, oy) => {
          const fw = w + ox;
          const fh = h + oy;
          const frame = viewOf(ramp(fw, fh), fw, fh);
          const view = regionView(frame, ox, oy, w, h);
          const p = cfaPattern({ BAYERPAT: name });
          if (p === undefined) throw new Error('pattern expected');
          const planes = cfaPlanes(view, cfaPatternAt(p, ox, oy));
          const seen = new Uint8Array(fw * fh);
          let total = 0;
          for (const plane of [planes.r, planes.g1, planes.g2, planes.b]) {
            for (const v of contiguousCopy(plane)) {
              seen[v] = (seen[v] ?? 0) + 1;
              total++;
            }
          }
          expect(total).toBe(w * h);
          for (let y = 0; y < fh; y++) {
            for (let x = 0; x < fw; x++) {
              const inside = x >= ox && y >= oy;
              expect(seen[y * fw + x]).toBe(inside ? 1 : 0);
            }
          }
          // Each plane still sees the colour the frame layout gives it.
          const colourAt = (i: number) => name[(Math.floor(i / fw) % 2) * 2 + (i % fw) % 2];
          for (const v of contiguousCopy(planes.r)) expect(colourAt(v)).toBe('R');
          for (const v of contiguousCopy(planes.b)) expect(colourAt(v)).toBe('B');
        },
      ),
    );
  });
});
