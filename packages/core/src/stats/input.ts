import ndarray from 'ndarray';
import type { Data } from 'ndarray';
import { InvalidInputError } from '../errors.js';
import type { Pixels } from '../fits/types.js';
import type { FrameView } from '../image/view.js';

/** What the statistics accept: a frame view (any pixel type), a typed array, or a plain array of numbers. */
export type StatsInput = FrameView | Pixels | ArrayLike<number>;

/** Options shared by every statistic over pixels. */
export interface SampleOptions {
  /** Pixels equal to this value are undefined (FITS BLANK) and ignored. */
  blankValue?: number | bigint;
  /**
   * Exclusion mask: one byte per pixel of the frame the view was taken from (row-major, `width * height`),
   * nonzero = excluded; addressed by the same (x, y) as the pixels, so regions and CFA planes of a view
   * use the same mask. For a cube the mask covers one plane.
   */
  mask?: Uint8Array;
  /**
   * Reusable scratch for the selection path (float and wide-integer data). Used when large enough
   * (one float64 per valid pixel); otherwise a new buffer is allocated.
   */
  scratch?: Float64Array;
}

function isView(input: StatsInput): input is FrameView {
  const v = input as Partial<FrameView>;
  return typeof v === 'object' && v !== null && Array.isArray(v.shape) && Array.isArray(v.stride) && 'data' in v;
}

/** Normalise any accepted input to a 2-D view (arrays become one row). Plain arrays are copied once. */
export function toView(input: StatsInput): FrameView {
  if (isView(input)) {
    if (input.shape.length !== 2) {
      throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `expected a 2-D view; found ${input.shape.length} dimensions`);
    }
    return input;
  }
  const arr: Pixels = ArrayBuffer.isView(input) ? (input as Pixels) : Float64Array.from(input as ArrayLike<number>);
  return ndarray(arr as unknown as Data, [1, arr.length], [arr.length, 1], 0) as unknown as FrameView;
}

/** Mask addressing for a view: index into the mask = pixel index - base. */
export interface MaskAddress {
  mask: Uint8Array;
  base: number;
}

/**
 * Check the mask against the view and find its base (the start of the plane the view lies in).
 * @throws InvalidInputError `INPUT_SHAPE_MISMATCH` when the mask cannot belong to the view's frame
 */
export function maskAddress(view: FrameView, mask: Uint8Array | undefined): MaskAddress | undefined {
  if (mask === undefined) return undefined;
  const n = mask.length;
  const dataLength = (view.data as Pixels).length;
  if (n === 0 || dataLength % n !== 0) {
    throw new InvalidInputError(
      'INPUT_SHAPE_MISMATCH',
      `mask of ${n} bytes does not match a pixel store of ${dataLength} values`,
    );
  }
  const h = view.shape[0] ?? 0;
  const w = view.shape[1] ?? 0;
  if (w === 0 || h === 0) return { mask, base: 0 };
  const sy = view.stride[0] ?? 0;
  const sx = view.stride[1] ?? 0;
  const lo = view.offset + Math.min(0, (h - 1) * sy) + Math.min(0, (w - 1) * sx);
  const hi = view.offset + Math.max(0, (h - 1) * sy) + Math.max(0, (w - 1) * sx);
  const base = Math.floor(lo / n) * n;
  if (hi >= base + n) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `view spans more than one ${n}-pixel plane of the mask`);
  }
  return { mask, base };
}

/** Whether the pixel store holds bigint values. */
export function isBigIntStore(data: unknown): data is BigInt64Array | BigUint64Array {
  return data instanceof BigInt64Array || data instanceof BigUint64Array;
}

/** Histogram layout for a store type whose codes all fit in a direct histogram, else undefined. */
export function directHistogramLayout(data: unknown): { origin: number; bins: number } | undefined {
  if (data instanceof Uint16Array) return { origin: 0, bins: 65536 };
  if (data instanceof Int16Array) return { origin: -32768, bins: 65536 };
  if (data instanceof Uint8Array || data instanceof Uint8ClampedArray) return { origin: 0, bins: 256 };
  if (data instanceof Int8Array) return { origin: -128, bins: 256 };
  return undefined;
}

/** Blank value as a number comparable with the store's elements; NaN (matches nothing) when absent. */
export function blankAsNumber(blank: number | bigint | undefined): number {
  if (blank === undefined) return Number.NaN;
  return typeof blank === 'bigint' ? Number(blank) : blank;
}
