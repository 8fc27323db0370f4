import { CoreError, measureLightFrame, median, frameView, type FrameMetrics, type LightFrameOptions } from '@subgauge/core';
import { loadFrame, type LoadFailure } from '../io/load.js';

/** One file a task (DESIGN section 3): measure a light, or take a calibration frame's median level. */
export interface FrameTask {
  file: string;
  kind: 'light' | 'calibration-median';
  hdu?: number;
  strict?: boolean;
  maxPixels: number;
  options?: LightFrameOptions;
  /** Also return a downsampled copy of the pixels for report thumbnails (longest side in pixels). */
  thumbnailSize?: number;
}

export interface Thumbnail {
  width: number;
  height: number;
  /** Block means of the frame (row-major). */
  values: Float32Array;
}

export type FrameTaskResult =
  | { ok: true; file: string; metrics?: FrameMetrics; medianAdu?: number; thumbnail?: Thumbnail; mesh?: { columns: number; rows: number; levelAdu: Float64Array } }
  | { ok: false; failure: LoadFailure };

function blockMean(pixels: ArrayLike<number>, width: number, height: number, size: number): Thumbnail {
  const f = Math.max(1, Math.ceil(Math.max(width, height) / size));
  const w = Math.floor(width / f);
  const h = Math.floor(height / f);
  const values = new Float32Array(w * h);
  for (let by = 0; by < h; by++) {
    for (let bx = 0; bx < w; bx++) {
      let s = 0;
      for (let y = by * f; y < by * f + f; y++) {
        let i = y * width + bx * f;
        for (let x = 0; x < f; x++) s += pixels[i++]!;
      }
      values[by * w + bx] = s / (f * f);
    }
  }
  return { width: w, height: h, values };
}

// The pixel buffer of the last frame this thread measured. Tasks in one thread run one after another (the pool
// gives each worker one task at a time; in-process runs await each), and a result never holds pixels, so the
// next frame of the same size is read into it: no fresh pages to fault in, no 50 MB to free per frame.
let spareBuffer: ArrayBuffer | undefined;

export async function runFrameTask(task: FrameTask): Promise<FrameTaskResult> {
  try {
    const reuse = spareBuffer;
    spareBuffer = undefined;
    const frame = await loadFrame(task.file, {
      maxPixels: task.maxPixels,
      ...(task.strict ? { strict: true } : {}),
      ...(task.hdu !== undefined ? { hdu: task.hdu } : {}),
      ...(reuse !== undefined ? { reuseBuffer: reuse } : {}),
    });
    const pixelBuffer = frame.image.pixels.buffer;
    if (pixelBuffer instanceof ArrayBuffer) spareBuffer = pixelBuffer;
    if (task.kind === 'calibration-median') {
      return { ok: true, file: task.file, medianAdu: median(frameView(frame.image), { blankValue: frame.image.blankValue }) };
    }
    const m = measureLightFrame(task.file, frame.image, frame.header, task.options);
    const out: FrameTaskResult = { ok: true, file: task.file, metrics: m.metrics };
    if (task.thumbnailSize && !(frame.image.pixels instanceof BigInt64Array || frame.image.pixels instanceof BigUint64Array)) {
      out.thumbnail = blockMean(frame.image.pixels as ArrayLike<number>, frame.image.width, frame.image.height, task.thumbnailSize);
      out.mesh = { columns: m.mesh.columns, rows: m.mesh.rows, levelAdu: m.mesh.levelAdu };
    }
    return out;
  } catch (err) {
    if (err instanceof CoreError) return { ok: false, failure: { file: task.file, code: err.code, message: err.message, where: { ...err.where, file: task.file } } };
    throw err;
  }
}
