// File access for FITS in Node: whole-file, header-only and row-range reads. Inputs are opened read-only.
import { closeSync, createReadStream, fstatSync, openSync, readSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { createGunzip, gunzip } from 'node:zlib';
import { promisify } from 'node:util';
import { CoreError, FitsFormatError } from '../errors.js';
import { BLOCK_BYTES, DEFAULT_MAX_PIXELS } from '../fits/constants.js';
import { onesComplementSum } from '../fits/checksum.js';
import { alignedBuffer, decodeBuffer } from '../fits/decode.js';
import { DiagnosticSink } from '../fits/diagnosticSink.js';
import { findHeaderEnd } from '../fits/header.js';
import {
  NOT_CHECKED,
  checkFitsStart,
  checkPadding,
  checkSize,
  checksumStatus,
  decodeTargets,
  hasChecksumCards,
  imageShape,
  parseFits,
  readHduHeader,
  tolerateBrokenExtension,
  reportTrailing,
} from '../fits/parse.js';
import type { ListedHdu } from '../fits/parse.js';
import type { FitsFile, Hdu, ParseOptions } from '../fits/types.js';

const gunzipAsync = promisify(gunzip);

/** A file read for its headers only; `bytesRead` counts the bytes taken from the file. */
export interface HeaderOnlyFile extends FitsFile {
  bytesRead: number;
}

/** Which rows to read: rows [start, start + count) of image HDU `hdu` (default: the first image with pixels). */
export interface RowRange {
  hdu?: number;
  start: number;
  count: number;
}

function isGzipMagic(bytes: Uint8Array): boolean {
  return bytes.length >= 2 && bytes[0] === 0x1f && bytes[1] === 0x8b;
}

function fileError(e: unknown, file: string): CoreError {
  if (e instanceof CoreError) {
    // Every error from these functions names the file.
    if (e.where.file === undefined) e.where.file = file;
    return e;
  }
  const code = (e as NodeJS.ErrnoException | undefined)?.code;
  if (code === 'ENOENT') return new CoreError('INPUT_NOT_FOUND', `no such file: ${file}`, { file }, { cause: e });
  const message = e instanceof Error ? e.message : String(e);
  return new CoreError('INPUT_READ_FAILED', `cannot read ${file}: ${message}`, { file }, { cause: e });
}

async function inflate(bytes: Uint8Array, file: string): Promise<Uint8Array> {
  try {
    return await gunzipAsync(bytes);
  } catch (e) {
    throw new FitsFormatError('FITS_GZIP', `cannot inflate ${file}: ${(e as Error).message}`, { file }, { cause: e });
  }
}

/**
 * Read and parse a FITS file, with the same result as parseFits on its bytes. Headers are read
 * block by block and each decoded data unit is read straight into the buffer that becomes its
 * pixel store (swapped in place), so the file is never held in memory twice. `.gz` files (any file
 * starting with the gzip magic bytes) are inflated with node:zlib and parsed in memory.
 *
 * @param path - the file; opened read-only.
 * @param opts - as for parseFits; `file` is set to `path`. With `rows`, only those rows are read
 *   and checksums are not checked.
 * @throws CoreError 'INPUT_NOT_FOUND' | 'INPUT_READ_FAILED'; FitsFormatError 'FITS_GZIP' and every
 *   parseFits error, all with `where.file`.
 * @example const fits = await readFitsFile('light_0001.fits');
 */
export async function readFitsFile(path: string, opts: ReadFileOptions = {}): Promise<FitsFile> {
  return withFile(path, async (fd, size) => {
    const counter = { n: 0 };
    const first = firstBlockOf(fd, size, counter);
    if (isGzipMagic(first)) return parseFits(await inflate(await readFile(path, { flag: 'r' }), path), { ...opts, file: path, inPlace: true });
    return readDirect(fd, size, first, opts, path, counter);
  });
}

/** readFitsFile's options: parseFits's, and a spare buffer to read pixels into. */
export interface ReadFileOptions extends ParseOptions {
  /**
   * A buffer whose contents are no longer needed (the pixel buffer of a frame already measured, say): the
   * first decoded image is read into it when it is large enough, instead of into fresh memory. A loop over
   * many frames of one size then touches no new pages (each fresh page costs a kernel fault and zeroing).
   */
  reuseBuffer?: ArrayBuffer;
}

/** Read `length` bytes at `position` into an aligned buffer (the future pixel store): `reuse` when it is large enough, else a fresh one. */
function readIntoBuffer(fd: number, position: number, length: number, counter: { n: number }, reuse?: ArrayBuffer): { buffer: ArrayBuffer; bytes: Uint8Array } {
  const buffer = reuse !== undefined && reuse.byteLength >= length ? reuse : alignedBuffer(length);
  const bytes = new Uint8Array(buffer, 0, length);
  let got = 0;
  while (got < length) {
    const n = readSync(fd, bytes, got, length - got, position + got);
    if (n === 0) break;
    got += n;
  }
  counter.n += got;
  return { buffer, bytes: bytes.subarray(0, got) };
}

/** parseFits semantics over a file descriptor: headers walked, data units read one at a time. */
function readDirect(fd: number, size: number, first: Uint8Array, opts: ReadFileOptions, path: string, counter: { n: number }): FitsFile {
  let reuse = opts.reuseBuffer;
  const sink = new DiagnosticSink(opts.strict === true, path);
  const headerBlocks: Uint8Array[] = [];
  const listed = walkHeaders(fd, size, sink, undefined, counter, first, headerBlocks);
  const decode = opts.decode ?? true;
  const verify = (opts.verifyChecksums ?? decode) && opts.rows === undefined;
  const maxPixels = opts.maxPixels ?? DEFAULT_MAX_PIXELS;
  const targets = decode ? decodeTargets(listed, { ...opts, file: path }, sink) : new Set<number>();
  const hdus: Hdu[] = [];
  for (const item of listed) {
    const { layout, header } = item;
    const hdu: Hdu = { layout, header, checksum: { ...NOT_CHECKED } };
    hdus.push(hdu);
    const checked = verify && (opts.hdu === undefined || opts.hdu === layout.index);
    const wantSum = checked && hasChecksumCards(item) && !item.truncated;
    if (checked && !hasChecksumCards(item)) hdu.checksum = { checksum: 'absent', datasum: 'absent' };
    const available = Math.max(0, Math.min(layout.paddedDataBytes, size - layout.dataOffset));
    if (targets.has(layout.index)) {
      const shape = imageShape(layout, opts.rows, path);
      const count = shape.width * shape.height * shape.planes;
      checkSize(count, maxPixels, layout, sink);
      if (item.truncated) {
        throw sink.error('FITS_TRUNCATED', `HDU ${layout.index}: data end at byte ${layout.dataOffset + layout.dataBytes}, the file at ${size}`, {
          hdu: layout.index,
          byte: size,
        });
      }
      const bytesPer = Math.abs(layout.bitpix) / 8;
      if (opts.rows !== undefined) {
        const from = layout.dataOffset + shape.rowStart * shape.width * bytesPer;
        const { buffer } = readIntoBuffer(fd, from, count * bytesPer, counter, reuse);
        reuse = undefined;
        if (count > 0) hdu.image = decodeBuffer(buffer, layout, shape);
        continue;
      }
      // Data and padding in one read; the checksum is taken before the in-place swap.
      const { buffer, bytes } = readIntoBuffer(fd, layout.dataOffset, available, counter, reuse);
      reuse = undefined;
      checkPadding(bytes, layout, sink, layout.dataOffset);
      if (wantSum) hdu.checksum = checksumStatus(item, onesComplementSum(headerBlocks[layout.index]!), onesComplementSum(bytes), sink);
      if (count > 0) hdu.image = decodeBuffer(buffer, layout, shape);
    } else if (wantSum) {
      const { bytes } = readIntoBuffer(fd, layout.dataOffset, available, counter);
      checkPadding(bytes, layout, sink, layout.dataOffset);
      hdu.checksum = checksumStatus(item, onesComplementSum(headerBlocks[layout.index]!), onesComplementSum(bytes), sink);
    }
  }
  return { hdus, diagnostics: sink.list };
}

/** Read exactly `length` bytes at `position` (fewer at the end of the file). */
function readAt(fd: number, position: number, length: number, counter: { n: number }): Uint8Array {
  const buf = new Uint8Array(length);
  let got = 0;
  while (got < length) {
    const n = readSync(fd, buf, got, length - got, position + got);
    if (n === 0) break;
    got += n;
  }
  counter.n += got;
  return got === length ? buf : buf.subarray(0, got);
}

function concat(a: Uint8Array, b: Uint8Array): Uint8Array {
  const out = new Uint8Array(a.length + b.length);
  out.set(a);
  out.set(b, a.length);
  return out;
}

/** Note problems at the end of the walk, like listHdus does for whole files. */
function finishWalk(listed: ListedHdu[], sink: DiagnosticSink): void {
  if (listed.length > 1 && listed[0]!.header.boolean('EXTEND') !== true) {
    sink.info('FITS_MISSING_EXTEND', 'extensions follow but the primary header lacks EXTEND = T', { hdu: 0 });
  }
}

/** Where the data of an HDU end relative to the file size: diagnostics for truncated or short files. */
function checkDataEnd(item: ListedHdu, size: number, sink: DiagnosticSink): boolean {
  const { layout } = item;
  const dataEnd = layout.dataOffset + layout.dataBytes;
  const paddedEnd = layout.dataOffset + layout.paddedDataBytes;
  if (dataEnd > size) {
    item.truncated = true;
    sink.warn('FITS_TRUNCATED', `HDU ${layout.index}: data end at byte ${dataEnd}, the file at ${size}`, { hdu: layout.index, byte: size });
    return false;
  }
  if (paddedEnd > size) {
    sink.warn('FITS_SHORT_LAST_BLOCK', `the file ends ${paddedEnd - size} bytes before the end of its last block`, {
      hdu: layout.index,
      byte: size,
    });
    return false;
  }
  return true;
}

/** Walk the headers of an uncompressed file with positioned reads, skipping data by computed sizes. */
function walkHeaders(
  fd: number,
  size: number,
  sink: DiagnosticSink,
  stopAfter: number | undefined,
  counter: { n: number },
  firstBlock: Uint8Array,
  /** Receives each HDU's header bytes (for checksums), when given. */
  headerBlocks?: Uint8Array[],
) {
  const listed: ListedHdu[] = [];
  let offset = 0;
  for (let hdu = 0; offset < size; hdu++) {
    let bytes = hdu === 0 ? firstBlock : readAt(fd, offset, Math.min(BLOCK_BYTES, size - offset), counter);
    if (hdu === 0) checkFitsStart(bytes, sink);
    else if (!(bytes.length >= 8 && String.fromCharCode(...bytes.subarray(0, 8)) === 'XTENSION')) {
      reportTrailing(bytes, 0, hdu, sink, offset, size - offset);
      break;
    }
    // Header blocks are read one at a time until the END card.
    while (findHeaderEnd(bytes, Math.max(0, bytes.length - BLOCK_BYTES)) === undefined && offset + bytes.length < size) {
      bytes = concat(bytes, readAt(fd, offset + bytes.length, Math.min(BLOCK_BYTES, size - offset - bytes.length), counter));
    }
    let read: ReturnType<typeof readHduHeader>;
    try {
      read = readHduHeader(bytes, 0, hdu, sink, offset);
      if (read === undefined) {
        throw sink.error('FITS_NO_END', `HDU ${hdu}: no END card before the end of the file`, { hdu, byte: offset });
      }
    } catch (err) {
      tolerateBrokenExtension(err, hdu, sink, offset);
      break;
    }
    const item: ListedHdu = { header: read.header, layout: read.layout, truncated: false };
    listed.push(item);
    headerBlocks?.push(bytes.subarray(0, read.layout.headerBytes));
    if (!checkDataEnd(item, size, sink)) break;
    if (stopAfter !== undefined && hdu >= stopAfter) break;
    offset = read.layout.dataOffset + read.layout.paddedDataBytes;
  }
  finishWalk(listed, sink);
  return listed;
}

/** Walk the headers of a gzip file by inflating a stream; data bytes are counted and dropped, never kept. */
async function walkGzipHeaders(path: string, sink: DiagnosticSink, stopAfter: number | undefined, counter: { n: number }) {
  const listed: ListedHdu[] = [];
  const source = createReadStream(path, { flags: 'r' });
  const inflater = createGunzip();
  source.on('error', (e) => inflater.destroy(e));
  source.pipe(inflater);
  let header: Uint8Array = new Uint8Array(0);
  let headerStart = 0;
  let skip = 0;
  let total = 0;
  let hdu = 0;
  let done = false;
  try {
    for await (const chunk of inflater as AsyncIterable<Buffer>) {
      let piece: Uint8Array = chunk;
      total += piece.length;
      while (piece.length > 0 && !done) {
        if (skip > 0) {
          const n = Math.min(skip, piece.length);
          skip -= n;
          piece = piece.subarray(n);
          continue;
        }
        header = concat(header, piece);
        piece = new Uint8Array(0);
        if (hdu === 0 && header.length >= 9) checkFitsStart(header, sink);
        if (hdu > 0 && header.length >= 8 && String.fromCharCode(...header.subarray(0, 8)) !== 'XTENSION') {
          done = true;
          break;
        }
        const end = findHeaderEnd(header, 0);
        if (end === undefined) continue;
        let read: ReturnType<typeof readHduHeader>;
        try {
          read = readHduHeader(header, 0, hdu, sink, headerStart);
        } catch (err) {
          tolerateBrokenExtension(err, hdu, sink, headerStart);
          done = true;
          header = new Uint8Array(0);
          break;
        }
        if (read === undefined) continue;
        listed.push({ header: read.header, layout: read.layout, truncated: false });
        const rest = header.subarray(end.headerBytes);
        skip = read.layout.paddedDataBytes;
        headerStart = read.layout.dataOffset + read.layout.paddedDataBytes;
        header = new Uint8Array(0);
        if (stopAfter !== undefined && hdu >= stopAfter) done = true;
        hdu++;
        piece = rest;
      }
      if (done) break;
    }
  } catch (e) {
    if (e instanceof CoreError) throw e;
    throw new FitsFormatError('FITS_GZIP', `cannot inflate ${path}: ${(e as Error).message}`, { file: path }, { cause: e });
  } finally {
    counter.n += source.bytesRead;
    source.destroy();
    inflater.destroy();
  }
  if (!done) {
    const last = listed[listed.length - 1];
    if (listed.length === 0 || header.length > 0) {
      if (hdu === 0) {
        checkFitsStart(header, sink);
        throw sink.error('FITS_NO_END', 'HDU 0: no END card before the end of the file', { hdu: 0, byte: 0 });
      }
      if (header.length >= 8 && String.fromCharCode(...header.subarray(0, 8)) === 'XTENSION') {
        throw sink.error('FITS_NO_END', `HDU ${hdu}: no END card before the end of the file`, { hdu, byte: headerStart });
      }
      reportTrailing(header, 0, hdu, sink, headerStart);
    } else if (last !== undefined) {
      checkDataEnd(last, total, sink);
    }
  } else if (header.length > 0 && hdu > 0 && String.fromCharCode(...header.subarray(0, 8)) !== 'XTENSION') {
    reportTrailing(header, 0, hdu, sink, headerStart);
  }
  finishWalk(listed, sink);
  return listed;
}

/**
 * Open `path` read-only and run `f` with the descriptor and size. Header and row reads use
 * synchronous positioned reads: they are a few kilobytes, and a thread-pool round trip per block
 * costs more than the read itself (DESIGN P6, header-only inspection of many files).
 */
async function withFile<T>(path: string, f: (fd: number, size: number) => Promise<T> | T): Promise<T> {
  let fd: number | undefined;
  try {
    fd = openSync(path, 'r');
    const { size } = fstatSync(fd);
    return await f(fd, size);
  } catch (e) {
    throw fileError(e, path);
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}

/** The first block of the file (read once; it also tells gzip from plain FITS). */
function firstBlockOf(fd: number, size: number, counter: { n: number }): Uint8Array {
  return readAt(fd, 0, Math.min(BLOCK_BYTES, size), counter);
}

/**
 * Read only the headers of a FITS file: header blocks are read with positioned reads and data are
 * skipped by their computed sizes, so pixel data are never read (DESIGN P6). A `.gz` file is
 * inflated as a stream whose data bytes are dropped as they pass.
 *
 * @param path - the file; opened read-only.
 * @param opts - `strict` (warnings become errors); `hdu`: stop after that HDU (a gzip stream is
 *   then inflated no further). Other ParseOptions are ignored.
 * @returns the HDUs (headers and layouts, no pixels), diagnostics and the number of bytes read.
 *   Data declared past the end of the file give a FITS_TRUNCATED diagnostic, not an error.
 * @throws CoreError 'INPUT_NOT_FOUND' | 'INPUT_READ_FAILED'; FitsFormatError for bad headers or
 *   'FITS_GZIP'; all with `where.file`.
 * @example const { hdus } = await readFitsHeaders('light_0001.fits'); hdus[0]?.header.number('EXPTIME');
 */
export async function readFitsHeaders(path: string, opts: ParseOptions = {}): Promise<HeaderOnlyFile> {
  const sink = new DiagnosticSink(opts.strict === true, path);
  const counter = { n: 0 };
  const listed = await withFile(path, async (fd, size) => {
    const first = firstBlockOf(fd, size, counter);
    if (isGzipMagic(first)) {
      // The stream reads the file again from its start; count only what it reads.
      counter.n = 0;
      return walkGzipHeaders(path, sink, opts.hdu, counter);
    }
    return walkHeaders(fd, size, sink, opts.hdu, counter, first);
  });
  const hdus: Hdu[] = listed.map(({ header, layout }) => ({ header, layout, checksum: { ...NOT_CHECKED } }));
  return { hdus, diagnostics: sink.list, bytesRead: counter.n };
}

/**
 * Read rows [start, start + count) of one image HDU, reading only the headers up to that HDU and the
 * byte range of those rows (for `.gz` files the whole file is inflated). Rows are rows of plane 0.
 *
 * @param path - the file; opened read-only.
 * @param range - `hdu` (default: the first image with pixels), `start`, `count`.
 * @param opts - `strict`, `maxPixels` (applies to the rows read).
 * @returns the HDUs up to the selected one; the selected HDU carries `image` with `rowStart = start`
 *   and `height = count`. Checksums are not checked (only part of the data is read).
 * @throws FitsFormatError 'FITS_NO_IMAGE' | 'FITS_COMPRESSED_NOT_DECODED' | 'FITS_TRUNCATED' |
 *   'FITS_TOO_LARGE'; InvalidInputError 'INPUT_OUT_OF_BOUNDS'; CoreError file errors; all with `where.file`.
 * @example const rows = await readFitsRows('flat.fits', { start: 100, count: 10 });
 */
export async function readFitsRows(path: string, range: RowRange, opts: ParseOptions = {}): Promise<FitsFile> {
  const sink = new DiagnosticSink(opts.strict === true, path);
  const counter = { n: 0 };
  const rows = { start: range.start, count: range.count };
  const parseOpts: ParseOptions = { ...opts, rows, verifyChecksums: false, file: path };
  if (range.hdu !== undefined) parseOpts.hdu = range.hdu;
  else delete parseOpts.hdu;
  return withFile(path, async (fd, size) => {
    const first = firstBlockOf(fd, size, counter);
    if (isGzipMagic(first)) {
      const bytes = await inflate(await readFile(path, { flag: 'r' }), path);
      return parseFits(bytes, { ...parseOpts, inPlace: true });
    }
    const listed = walkHeaders(fd, size, sink, range.hdu, counter, first);
    const target = [...decodeTargets(listed, parseOpts, sink)][0]!;
    const item = listed[target]!;
    const layout = item.layout;
    const shape = imageShape(layout, rows, path);
    checkSize(shape.width * shape.height, opts.maxPixels ?? DEFAULT_MAX_PIXELS, layout, sink);
    const bytesPer = Math.abs(layout.bitpix) / 8;
    const from = layout.dataOffset + shape.rowStart * shape.width * bytesPer;
    const length = shape.width * shape.height * bytesPer;
    if (from + length > size) {
      throw sink.error('FITS_TRUNCATED', `HDU ${target}: rows end at byte ${from + length}, the file at ${size}`, { hdu: target, byte: size });
    }
    const { buffer } = readIntoBuffer(fd, from, length, counter);
    const hdus: Hdu[] = listed.map(({ header, layout: l }) => ({ header, layout: l, checksum: { ...NOT_CHECKED } }));
    if (length > 0) hdus[target]!.image = decodeBuffer(buffer, layout, shape);
    return { hdus, diagnostics: sink.list };
  });
}
