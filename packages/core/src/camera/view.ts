import { InvalidInputError } from '../errors.js';
import type { Where } from '../errors.js';
import type { ImageData } from '../fits/types.js';
import type { FrameView } from '../image/view.js';

/** Pixel stores the camera kernels read (64-bit integer images are refused: no exact double arithmetic). */
export type NumericPixels =
  | Uint8Array
  | Int8Array
  | Int16Array
  | Uint16Array
  | Int32Array
  | Uint32Array
  | Float32Array
  | Float64Array;

/**
 * A 2-D window onto a shared pixel store: pixel (x, y) is `data[offset + y*strideY + x*strideX]`.
 * Regions, CFA planes and tiles are views of the same store; nothing is copied.
 */
export interface PixelView {
  readonly data: NumericPixels;
  readonly width: number;
  readonly height: number;
  readonly strideX: number;
  readonly strideY: number;
  readonly offset: number;
}

/** A rectangle in pixel coordinates (0-based, x along NAXIS1). */
export interface PixelRegion {
  x: number;
  y: number;
  width: number;
  height: number;
}

/**
 * View of plane 0 of a decoded image.
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` for 64-bit integer pixels, `INPUT_TOO_FEW_PIXELS` for an empty image.
 */
export function pixelViewOf(image: ImageData, where: Where = {}): PixelView {
  const px = image.pixels;
  if (px instanceof BigInt64Array || px instanceof BigUint64Array) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', '64-bit integer pixels are not supported for camera measurements', where);
  }
  if (image.width < 1 || image.height < 1) {
    throw new InvalidInputError('INPUT_TOO_FEW_PIXELS', `image is ${image.width}x${image.height}`, where);
  }
  return { data: px, width: image.width, height: image.height, strideX: 1, strideY: image.width, offset: 0 };
}

/**
 * Sub-rectangle of a view.
 * @throws InvalidInputError `INPUT_OUT_OF_BOUNDS` when the rectangle leaves the view or is empty.
 */
export function regionView(view: PixelView, region: PixelRegion): PixelView {
  const { x, y, width, height } = region;
  if (!(Number.isInteger(x) && Number.isInteger(y) && Number.isInteger(width) && Number.isInteger(height)) ||
      x < 0 || y < 0 || width < 1 || height < 1 || x + width > view.width || y + height > view.height) {
    throw new InvalidInputError('INPUT_OUT_OF_BOUNDS',
      `region ${x},${y},${width},${height} does not fit in ${view.width}x${view.height}`);
  }
  return { ...view, offset: view.offset + y * view.strideY + x * view.strideX, width, height };
}

/** One CFA sub-plane: every second pixel starting at (dx, dy), dx, dy in {0, 1} (REFERENCE F.4). */
export function cfaPlaneView(view: PixelView, dx: 0 | 1, dy: 0 | 1): PixelView {
  return {
    ...view,
    offset: view.offset + dy * view.strideY + dx * view.strideX,
    strideX: 2 * view.strideX,
    strideY: 2 * view.strideY,
    width: Math.ceil((view.width - dx) / 2),
    height: Math.ceil((view.height - dy) / 2),
  };
}

/** The same window as an image-area view (an ndarray of shape [height, width]); no copy. */
export function pixelViewFromFrameView(view: FrameView): PixelView {
  if (view.data instanceof BigInt64Array || view.data instanceof BigUint64Array) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', '64-bit integer pixels are not supported for camera measurements');
  }
  return {
    data: view.data, width: view.shape[1] ?? 0, height: view.shape[0] ?? 0,
    strideX: view.stride[1] ?? 1, strideY: view.stride[0] ?? 0, offset: view.offset,
  };
}

/** Split a view into a tilesX x tilesY grid (row-major); edge tiles take the remainder. Tiles are never empty. */
export function tileViews(view: PixelView, tilesX: number, tilesY: number): PixelView[] {
  const nx = Math.max(1, Math.min(tilesX, view.width));
  const ny = Math.max(1, Math.min(tilesY, view.height));
  const tiles: PixelView[] = [];
  for (let ty = 0; ty < ny; ty++) {
    const y0 = Math.floor((ty * view.height) / ny);
    const y1 = Math.floor(((ty + 1) * view.height) / ny);
    for (let tx = 0; tx < nx; tx++) {
      const x0 = Math.floor((tx * view.width) / nx);
      const x1 = Math.floor(((tx + 1) * view.width) / nx);
      tiles.push({ ...view, offset: view.offset + y0 * view.strideY + x0 * view.strideX, width: x1 - x0, height: y1 - y0 });
    }
  }
  return tiles;
}
