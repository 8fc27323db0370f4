import ndarray from 'ndarray';
import type { Data, NdArray } from 'ndarray';
import { InvalidInputError } from '../errors.js';
import type { ImageData, Pixels } from '../fits/types.js';

/**
 * A 2-D window onto a shared pixel store: an ndarray of shape `[height, width]` (index 0 is y, index 1 is x).
 * Pixel (x, y) sits at `data[offset + y * stride[0] + x * stride[1]]`. Views never copy the store.
 * Use {@link viewWidth} / {@link viewHeight} rather than `shape[...]` so the axis order never leaks.
 */
export type FrameView<T extends Pixels = Pixels> = NdArray<Data> & { data: T };

/** Width of a view in pixels (along NAXIS1, x). */
export function viewWidth(view: { readonly shape: readonly number[] }): number {
  return view.shape[1] ?? 0;
}

/** Height of a view in pixels (along NAXIS2, y). */
export function viewHeight(view: { readonly shape: readonly number[] }): number {
  return view.shape[0] ?? 0;
}

function checkSize(name: string, value: number): void {
  if (!Number.isInteger(value) || value < 0) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `${name} must be a non-negative integer; found ${value}`);
  }
}

/**
 * Wrap a row-major pixel store (x fastest, as FITS stores NAXIS1) as a frame view. No copy.
 * @param pixels the store; its first `width * height` elements are used
 * @param width pixels per row
 * @param height rows
 * @throws InvalidInputError `INPUT_SHAPE_MISMATCH` when the store is shorter than `width * height`
 * @example viewOf(new Uint16Array(12), 4, 3) // 4 x 3 view
 */
export function viewOf<T extends Pixels>(pixels: T, width: number, height: number): FrameView<T> {
  checkSize('width', width);
  checkSize('height', height);
  if (pixels.length < width * height) {
    throw new InvalidInputError(
      'INPUT_SHAPE_MISMATCH',
      `pixel store holds ${pixels.length} values; ${width} x ${height} needs ${width * height}`,
    );
  }
  return ndarray(pixels as unknown as Data, [height, width], [width, 1], 0) as FrameView<T>;
}

/**
 * View of one plane of a decoded image (plane k of a cube starts at `k * width * height`). No copy.
 * @param image decoded image from the FITS reader
 * @param plane 0-based plane index (default 0)
 * @throws InvalidInputError `INPUT_OUT_OF_BOUNDS` when the plane does not exist
 * @example frameView(hdu.image) // the first plane
 */
export function frameView(image: ImageData, plane = 0): FrameView {
  const { width, height, planes } = image;
  if (!Number.isInteger(plane) || plane < 0 || plane >= Math.max(1, planes)) {
    throw new InvalidInputError('INPUT_OUT_OF_BOUNDS', `plane ${plane} requested; the image has ${planes}`);
  }
  const size = width * height;
  if (image.pixels.length < (plane + 1) * size) {
    throw new InvalidInputError(
      'INPUT_SHAPE_MISMATCH',
      `pixel store holds ${image.pixels.length} values; plane ${plane} of ${width} x ${height} needs ${(plane + 1) * size}`,
    );
  }
  return ndarray(image.pixels as unknown as Data, [height, width], [width, 1], plane * size) as FrameView;
}

/**
 * Rectangular region of a view, in the view's own coordinates. No copy (ndarray `lo`/`hi`).
 * @param view the parent view
 * @param x left column (0-based)
 * @param y first row (0-based)
 * @param width columns
 * @param height rows
 * @throws InvalidInputError `INPUT_OUT_OF_BOUNDS` when the region leaves the parent
 * @example regionView(frame, 100, 200, 64, 64)
 */
export function regionView<T extends Pixels>(
  view: FrameView<T>,
  x: number,
  y: number,
  width: number,
  height: number,
): FrameView<T> {
  const w = viewWidth(view);
  const h = viewHeight(view);
  const ok =
    Number.isInteger(x) &&
    Number.isInteger(y) &&
    Number.isInteger(width) &&
    Number.isInteger(height) &&
    x >= 0 &&
    y >= 0 &&
    width >= 0 &&
    height >= 0 &&
    x + width <= w &&
    y + height <= h;
  if (!ok) {
    throw new InvalidInputError(
      'INPUT_OUT_OF_BOUNDS',
      `region x=${x} y=${y} width=${width} height=${height} does not fit in ${w} x ${h}`,
    );
  }
  return view.hi(y + height, x + width).lo(y, x) as unknown as FrameView<T>;
}

/**
 * Every `stepX`-th column and `stepY`-th row starting at (x, y): a sub-sampled view (CFA planes use step 2).
 * @throws InvalidInputError `INPUT_OUT_OF_BOUNDS` when the start lies outside the view, `INPUT_BAD_PARAMETER` for steps < 1
 */
export function steppedView<T extends Pixels>(
  view: FrameView<T>,
  x: number,
  y: number,
  stepX: number,
  stepY: number,
): FrameView<T> {
  if (!Number.isInteger(stepX) || !Number.isInteger(stepY) || stepX < 1 || stepY < 1) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `steps must be integers >= 1; found ${stepX}, ${stepY}`);
  }
  const w = viewWidth(view);
  const h = viewHeight(view);
  if (!Number.isInteger(x) || !Number.isInteger(y) || x < 0 || y < 0 || x > w || y > h) {
    throw new InvalidInputError('INPUT_OUT_OF_BOUNDS', `start (${x}, ${y}) outside ${w} x ${h}`);
  }
  return view.lo(y, x).step(stepY, stepX) as unknown as FrameView<T>;
}

/**
 * Copy a view into a new contiguous store of the same element type (row-major, x fastest).
 * This is the one deliberate copy; kernels never need it.
 */
export function contiguousCopy<T extends Pixels>(view: FrameView<T>): T {
  const w = viewWidth(view);
  const h = viewHeight(view);
  const src = view.data as unknown as Float64Array;
  const Ctor = (view.data as unknown as { constructor: new (n: number) => T }).constructor;
  const out = new Ctor(w * h);
  const dst = out as unknown as Float64Array;
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  let k = 0;
  for (let yy = 0; yy < h; yy++) {
    let i = view.offset + yy * sy;
    for (let xx = 0; xx < w; xx++) {
      dst[k++] = src[i] as number;
      i += sx;
    }
  }
  return out;
}
