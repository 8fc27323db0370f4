import { CoreError, type Header, type ImageData, type Where } from '@subgauge/core';
import { readFitsFile, readFitsHeaders } from '@subgauge/core/node';
import { scanPaths } from './scan.js';

/** A file that could not be used, with the stable code and where (DESIGN section 5: folder runs never stop). */
export interface LoadFailure {
  file: string;
  code: string;
  message: string;
  where: Where;
}

export interface LoadedFrame {
  file: string;
  hdu: number;
  header: Header;
  image: ImageData;
}

export interface LoadOptions {
  strict?: boolean;
  hdu?: number;
  maxPixels: number;
  /** A pixel buffer no longer needed, for readFitsFile to read into (see its reuseBuffer). */
  reuseBuffer?: ArrayBuffer;
}

export function failureOf(file: string, err: unknown): LoadFailure {
  if (err instanceof CoreError) return { file, code: err.code, message: err.message, where: { ...err.where, file } };
  throw err;
}

/** NAXIS >= 2 with no empty axis: a frame (or a cube of frames) rather than a 1-D spectrum. */
function isTwoDimensional(axes: readonly number[]): boolean {
  return axes.length >= 2 && axes.every((n) => n > 0);
}

/**
 * The image HDU to measure: the one asked for, else the first 2-D image with pixels (1-D spectra and rows are not
 * frames). `loadFrameHeader` applies the same rule, so headers and pixels always come from the same HDU.
 */
export async function loadFrame(file: string, opts: LoadOptions): Promise<LoadedFrame> {
  const fits = await readFitsFile(file, {
    strict: Boolean(opts.strict),
    maxPixels: opts.maxPixels,
    file,
    verifyChecksums: false,
    ...(opts.hdu !== undefined ? { hdu: opts.hdu } : {}),
    ...(opts.reuseBuffer !== undefined ? { reuseBuffer: opts.reuseBuffer } : {}),
  });
  const hdu =
    opts.hdu !== undefined
      ? fits.hdus.find((h) => h.layout.index === opts.hdu)
      : fits.hdus.find((h) => h.image !== undefined && isTwoDimensional(h.layout.axes));
  if (!hdu || !hdu.image) {
    throw new CoreError(
      opts.hdu === undefined ? 'FITS_NO_IMAGE' : 'INPUT_BAD_PARAMETER',
      opts.hdu === undefined ? 'the file holds no 2-D image with pixels' : `HDU ${opts.hdu} is not an image with pixels`,
      { file, ...(opts.hdu !== undefined ? { hdu: opts.hdu } : {}) },
    );
  }
  return { file, hdu: hdu.layout.index, header: hdu.header, image: hdu.image };
}

/** Header of the image HDU that `loadFrame` would measure, reading no pixel data. */
export async function loadFrameHeader(file: string, opts: LoadOptions): Promise<{ file: string; hdu: number; header: Header; width: number; height: number }> {
  const fits = await readFitsHeaders(file, { strict: Boolean(opts.strict), maxPixels: opts.maxPixels, file });
  const images = fits.hdus.filter((h) => h.layout.kind === 'image' && h.layout.axes.length >= 1 && h.layout.axes.every((n) => n > 0));
  const hdu =
    opts.hdu !== undefined
      ? fits.hdus.find((h) => h.layout.index === opts.hdu)
      : images.find((h) => isTwoDimensional(h.layout.axes));
  if (!hdu) throw new CoreError('FITS_NO_IMAGE', 'the file holds no 2-D image with pixels', { file });
  return { file, hdu: hdu.layout.index, header: hdu.header, width: hdu.layout.axes[0] ?? 0, height: hdu.layout.axes[1] ?? 0 };
}

/** Scan paths and load every frame; failures are collected, never thrown. */
export async function loadFrames(
  paths: readonly string[],
  opts: LoadOptions,
  onProgress?: (done: number, total: number) => void,
): Promise<{ frames: LoadedFrame[]; failures: LoadFailure[]; skipped: string[] }> {
  const { files, missing, skipped } = await scanPaths(paths);
  const failures: LoadFailure[] = missing.map((m) => ({ file: m.path, code: m.code, message: m.message, where: { file: m.path } }));
  const frames: LoadedFrame[] = [];
  let done = 0;
  for (const file of files) {
    try {
      frames.push(await loadFrame(file, opts));
    } catch (err) {
      failures.push(failureOf(file, err));
    }
    onProgress?.(++done, files.length);
  }
  return { frames, failures, skipped };
}
