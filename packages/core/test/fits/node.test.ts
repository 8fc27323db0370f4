import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { CoreError, FitsFormatError } from '../../src/errors.js';
import { encodeFits, parseFits } from '../../src/fits/index.js';
import { readFitsFile, readFitsHeaders, readFitsRows, writeFileAtomic } from '../../src/node/index.js';
import { headerBytes } from './helpers.js';

const dir = mkdtempSync(join(tmpdir(), 'subgauge-fits-node-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function rejection(p: Promise<unknown>): Promise<unknown> {
  try {
    await p;
  } catch (e) {
    return e;
  }
  throw new Error('expected the promise to reject');
}

const width = 64;
const height = 50;
const pixels = Uint16Array.from({ length: width * height }, (_, i) => (i * 2654435761) % 65536);
const floats = Float32Array.from({ length: 30 }, (_, i) => i / 7);
const fileBytes = encodeFits([
  { pixels, width, height, cards: [{ keyword: 'EXPTIME', value: 120, real: true }] },
  { pixels: floats, width: 6, height: 5, cards: [{ keyword: 'EXTNAME', value: 'NOISE' }] },
]);
const plain = join(dir, 'frame.fits');
writeFileSync(plain, fileBytes);
const gz = join(dir, 'frame.fits.gz');
writeFileSync(gz, gzipSync(fileBytes));

describe('node file access (@subgauge/core/node)', () => {
  it('readFitsFile(path) reads and decodes a file like parseFits', async () => {
    const fits = await readFitsFile(plain);
    expect(Array.from(fits.hdus[0]!.image!.pixels as Uint16Array)).toEqual(Array.from(pixels));
    expect(fits.hdus[1]!.header.string('EXTNAME')).toBe('NOISE');
    expect(fits.hdus.map((h) => h.checksum.checksum)).toEqual(['valid', 'valid']);
  });

  it('readFitsFile(path.gz) inflates with node:zlib; bad gzip gives FITS_GZIP with where.file', async () => {
    const fits = await readFitsFile(gz);
    expect(Array.from(fits.hdus[1]!.image!.pixels as Float32Array)).toEqual(Array.from(floats));
    const broken = join(dir, 'broken.fits.gz');
    writeFileSync(broken, gzipSync(fileBytes).subarray(0, 200));
    const e = await rejection(readFitsFile(broken));
    expect(e).toBeInstanceOf(FitsFormatError);
    expect(e).toMatchObject({ code: 'FITS_GZIP', where: { file: broken } });
  });

  it('readFitsFile(path) maps file errors to INPUT_NOT_FOUND / INPUT_READ_FAILED and format errors keep where.file', async () => {
    const missing = join(dir, 'nope.fits');
    const e1 = await rejection(readFitsFile(missing));
    expect(e1).toBeInstanceOf(CoreError);
    expect(e1).toMatchObject({ code: 'INPUT_NOT_FOUND', where: { file: missing } });
    expect(await rejection(readFitsFile(dir))).toMatchObject({ code: 'INPUT_READ_FAILED', where: { file: dir } });
    const notFits = join(dir, 'text.fits');
    writeFileSync(notFits, 'plain text');
    expect(await rejection(readFitsFile(notFits))).toMatchObject({ code: 'FITS_NOT_FITS', where: { file: notFits } });
    expect(await rejection(readFitsFile(plain, { rows: { start: 49, count: 5 } }))).toMatchObject({
      code: 'INPUT_OUT_OF_BOUNDS',
      where: { file: plain },
    });
    expect(await rejection(readFitsHeaders(missing))).toMatchObject({ code: 'INPUT_NOT_FOUND', where: { file: missing } });
    expect(await rejection(readFitsRows(missing, { start: 0, count: 1 }))).toMatchObject({ code: 'INPUT_NOT_FOUND', where: { file: missing } });
  });

  it('readFitsHeaders(path) reads only the header blocks (bytesRead = 2 x 2880 for two one-block headers)', async () => {
    const fits = await readFitsHeaders(plain);
    expect(fits.bytesRead).toBe(2 * 2880);
    expect(fits.hdus.map((h) => h.layout.axes)).toEqual([[64, 50], [6, 5]]);
    expect(fits.hdus[0]!.header.number('EXPTIME')).toBe(120);
    expect(fits.hdus[0]!.image).toBeUndefined();
    expect(fits.hdus[1]!.layout.headerOffset).toBe(parseFits(fileBytes).hdus[1]!.layout.headerOffset);
  });

  it('readFitsHeaders(path) lists a file whose data region is missing, with FITS_TRUNCATED as a diagnostic', async () => {
    const header = headerBytes(['SIMPLE  =                    T', 'BITPIX  =                   16', 'NAXIS   =                    2', 'NAXIS1  =                 4000', 'NAXIS2  =                 3000', "OBJECT  = 'NGC 0000'"]);
    const cut = join(dir, 'header-only.fits');
    writeFileSync(cut, header);
    const fits = await readFitsHeaders(cut);
    expect(fits.hdus[0]!.header.string('OBJECT')).toBe('NGC 0000');
    expect(fits.diagnostics.map((d) => d.code)).toEqual(['FITS_TRUNCATED']);
    expect(fits.bytesRead).toBe(2880);
    expect(await rejection(readFitsFile(cut))).toMatchObject({ code: 'FITS_TRUNCATED', where: { file: cut } });
  });

  it('readFitsHeaders(path.gz) reads headers through a gzip stream', async () => {
    const fits = await readFitsHeaders(gz);
    expect(fits.hdus.map((h) => h.layout.axes)).toEqual([[64, 50], [6, 5]]);
    expect(fits.hdus[1]!.header.string('EXTNAME')).toBe('NOISE');
    expect(fits.diagnostics).toEqual([]);
  });

  it('readFitsHeaders(path, { hdu: 0 }) stops after that HDU, for plain and gzip files', async () => {
    const plainFirst = await readFitsHeaders(plain, { hdu: 0 });
    expect(plainFirst.hdus).toHaveLength(1);
    expect(plainFirst.bytesRead).toBe(2880);
    const gzFirst = await readFitsHeaders(gz, { hdu: 0 });
    expect(gzFirst.hdus).toHaveLength(1);
    expect(gzFirst.hdus[0]!.header.number('EXPTIME')).toBe(120);
  });

  it('readFitsRows(path, { start, count }) returns just those rows, reading only their byte range', async () => {
    const rows = await readFitsRows(plain, { start: 10, count: 3 });
    const img = rows.hdus[0]!.image!;
    expect([img.rowStart, img.height, img.width]).toEqual([10, 3, 64]);
    expect(Array.from(img.pixels as Uint16Array)).toEqual(Array.from(pixels.subarray(640, 832)));
    const ext = await readFitsRows(plain, { hdu: 1, start: 4, count: 1 });
    expect(Array.from(ext.hdus[1]!.image!.pixels as Float32Array)).toEqual(Array.from(floats.subarray(24, 30)));
    const fromGz = await readFitsRows(gz, { hdu: 1, start: 4, count: 1 });
    expect(Array.from(fromGz.hdus[1]!.image!.pixels as Float32Array)).toEqual(Array.from(floats.subarray(24, 30)));
    // Rows before a missing tail are still readable: nothing past them is read.
    const cut = join(dir, 'cut.fits');
    writeFileSync(cut, fileBytes.subarray(0, 2880 + 20 * width * 2));
    const early = await readFitsRows(cut, { start: 2, count: 5 });
    expect(Array.from(early.hdus[0]!.image!.pixels as Uint16Array)).toEqual(Array.from(pixels.subarray(128, 448)));
    expect(await rejection(readFitsRows(cut, { start: 25, count: 5 }))).toMatchObject({ code: 'FITS_TRUNCATED', where: { file: cut } });
    expect(await rejection(readFitsRows(plain, { start: 48, count: 5 }))).toMatchObject({ code: 'INPUT_OUT_OF_BOUNDS', where: { file: plain } });
  });

  it('writeFileAtomic(path, bytes) writes the whole file and leaves no temporary file', async () => {
    const out = join(dir, 'out', 'written.fits');
    mkdirSync(join(dir, 'out'));
    writeFileSync(out, 'old contents');
    await writeFileAtomic(out, fileBytes);
    expect(Buffer.compare(readFileSync(out), Buffer.from(fileBytes))).toBe(0);
    expect(readdirSync(join(dir, 'out'))).toEqual(['written.fits']);
    const bad = join(dir, 'no-such-folder', 'x.fits');
    expect(await rejection(writeFileAtomic(bad, fileBytes))).toMatchObject({ code: 'OUTPUT_WRITE_FAILED', where: { file: bad } });
    // A destination that is a folder: the rename fails, the temporary file is removed.
    mkdirSync(join(dir, 'out', 'taken'));
    expect(await rejection(writeFileAtomic(join(dir, 'out', 'taken'), fileBytes))).toMatchObject({ code: 'OUTPUT_WRITE_FAILED' });
    expect(readdirSync(join(dir, 'out')).sort()).toEqual(['taken', 'written.fits']);
  });
});

describe('node file access under damaged input (fast-check)', () => {
  it('readFitsHeaders / readFitsRows / readFitsFile on damaged plain and gzip files give only CoreErrors (150 cases)', async () => {
    const { default: fc } = await import('fast-check');
    const target = join(dir, 'fuzz.fits');
    await fc.assert(
      fc.asyncProperty(
        fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 255 })), { maxLength: 6 }),
        fc.nat(),
        fc.boolean(),
        async (flips, cut, zipped) => {
          const bytes = fileBytes.slice(0, 1 + (cut % fileBytes.length));
          for (const [at, v] of flips) bytes[at % Math.min(bytes.length, 5760)] = v;
          const out = zipped ? gzipSync(bytes) : bytes;
          if (zipped && flips.length > 3) out[Math.min(out.length - 1, 20 + (cut % 40))] ^= 0x55;
          writeFileSync(target, out);
          for (const call of [() => readFitsHeaders(target), () => readFitsRows(target, { start: 1, count: 2 }), () => readFitsFile(target)]) {
            try {
              await call();
            } catch (e) {
              if (!(e instanceof CoreError)) throw e;
              expect(e.where.file).toBe(target);
            }
          }
        },
      ),
      { numRuns: 150, seed: 7 },
    );
  }, 60_000);
});

describe('readFitsFile(path, { reuseBuffer })', () => {
  const path = join(dir, 'reuse.fits');
  writeFileSync(path, fileBytes);

  it('reads the first image into the spare buffer when it is large enough, with the same pixels and checksums', async () => {
    const fresh = await readFitsFile(path);
    const spare = new ArrayBuffer(1 << 20);
    new Uint8Array(spare).fill(0xa5); // stale contents of an earlier frame
    const reused = await readFitsFile(path, { reuseBuffer: spare });
    expect(reused.hdus[0]!.image!.pixels.buffer).toBe(spare);
    expect(Array.from(reused.hdus[0]!.image!.pixels as Uint16Array)).toEqual(Array.from(pixels));
    expect(reused.hdus.map((h) => h.checksum)).toEqual(fresh.hdus.map((h) => h.checksum));
    // only the first decoded image takes it; the second HDU gets its own memory
    expect(reused.hdus[1]!.image!.pixels.buffer).not.toBe(spare);
    expect(Array.from(reused.hdus[1]!.image!.pixels as Float32Array)).toEqual(Array.from(floats));
  });

  it('allocates fresh memory when the spare buffer is too small', async () => {
    const small = new ArrayBuffer(16);
    const read = await readFitsFile(path, { reuseBuffer: small });
    expect(read.hdus[0]!.image!.pixels.buffer).not.toBe(small);
    expect(Array.from(read.hdus[0]!.image!.pixels as Uint16Array)).toEqual(Array.from(pixels));
  });
});
