import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { FitsFormatError, InvalidInputError } from '../../src/errors.js';
import { encodeFits, imageHdus, paddedLength, parseFits } from '../../src/fits/index.js';
import { astropyReadAll, astropyValues, firstDifference, haveAstropy } from './astropyRef.js';
import { concat, dataBytes, headerBytes, imageFile, seededBytes, thrown } from './helpers.js';

const dir = mkdtempSync(join(tmpdir(), 'subgauge-fits-parse-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const image = (bytes: Uint8Array) => parseFits(bytes).hdus[0]!.image!;
const values = (bytes: Uint8Array) => Array.from(image(bytes).pixels as ArrayLike<number>);

describe('data layout (FITS 3.0 §3.3.2, eq. 4.1)', () => {
  it('paddedLength(20000) is 7 blocks with 160 pad bytes for 100x100 BITPIX 16 (G row 2)', () => {
    expect(paddedLength(100 * 100 * 2)).toBe(7 * 2880);
    expect(paddedLength(20000) - 20000).toBe(160);
  });

  it('paddedLength(4144 x 2822 x 2) is 8122 blocks with 2624 pad bytes (G row 3)', () => {
    const n = 4144 * 2822 * 2;
    expect(paddedLength(n) / 2880).toBe(8122);
    expect(paddedLength(n) - n).toBe(2624);
  });

  it('parseFits(bytes) lays out a 100x100 BITPIX 16 image with dataBytes 20000 and padded 20160 (REFERENCE A.1)', () => {
    const fits = parseFits(imageFile(16, [100, 100], new Uint8Array(20000)));
    expect(fits.hdus[0]!.layout).toMatchObject({ dataOffset: 2880, dataBytes: 20000, paddedDataBytes: 20160, axes: [100, 100] });
  });
});

describe('parseFits pixel decoding (FITS 3.0 §5, Table 4.9; astropy 5.2.1 image.py)', () => {
  it('parseFits(bytes) decodes uint16 8000/83e8/0000/7fff with BZERO 32768 to 0/1000/32768/65535 in a Uint16Array (G row 11)', () => {
    const img = image(imageFile(16, [4], '800083e800007fff', ['BSCALE  =                    1', 'BZERO   =                32768']));
    expect(img.pixels).toBeInstanceOf(Uint16Array);
    expect(img.elementType).toBe('uint16');
    expect(Array.from(img.pixels as Uint16Array)).toEqual([0, 1000, 32768, 65535]);
  });

  it('parseFits(bytes) decodes uint32 80000000/7fffffff with BZERO 2147483648 to 0/4294967295 (G row 12)', () => {
    const img = image(imageFile(32, [3], '800000007fffffff00000000', ['BZERO   =           2147483648']));
    expect(img.pixels).toBeInstanceOf(Uint32Array);
    expect(Array.from(img.pixels as Uint32Array)).toEqual([0, 4294967295, 2147483648]);
  });

  it('parseFits(bytes) decodes float32 7fc00000 as NaN and keeps Inf (IEEE-754; G row 13)', () => {
    const img = image(imageFile(-32, [4], '7fc000003f8000007f800000ff800000'));
    expect(img.pixels).toBeInstanceOf(Float32Array);
    expect(Array.from(img.pixels as Float32Array)).toEqual([NaN, 1, Infinity, -Infinity]);
    expect(Array.from(image(imageFile(-64, [1], 'c004000000000000')).pixels as Float64Array)).toEqual([-2.5]);
  });

  it('parseFits(bytes) reads int16 [[0,1,2],[3,4,5]] with NAXIS1 = 3 as width (FITS 3.0 §3.3.2; astropy 5.2.1; G row 14)', () => {
    const img = image(imageFile(16, [3, 2], '000000010002000300040005'));
    expect(img.pixels).toBeInstanceOf(Int16Array);
    expect([img.width, img.height, img.planes]).toEqual([3, 2, 1]);
    expect(Array.from(img.pixels as Int16Array)).toEqual([0, 1, 2, 3, 4, 5]);
  });

  it('parseFits(bytes) picks the typed array for each BITPIX and convention (FITS 3.0 Table 4.9; astropy 5.2.1 _dtype_for_bitpix)', () => {
    const cases: [number, string[], string, unknown[]][] = [
      [8, [], '00ff', [0, 255]],
      [8, ['BZERO   =                 -128'], '00ff80', [-128, 127, 0]],
      [16, [], '8000ffff', [-32768, -1]],
      [32, [], '80000000ffffffff', [-2147483648, -1]],
      [64, [], '8000000000000000ffffffffffffffff', [-(2n ** 63n), -1n]],
      [64, ['BZERO   =  9223372036854775808'], '80000000000000007fffffffffffffff', [0n, 2n ** 64n - 1n]],
    ];
    const types = ['Uint8Array', 'Int8Array', 'Int16Array', 'Int32Array', 'BigInt64Array', 'BigUint64Array'];
    cases.forEach(([bitpix, extra, data, expected], i) => {
      const img = image(imageFile(bitpix, [expected.length], data, extra));
      expect(img.pixels.constructor.name).toBe(types[i]);
      expect(Array.from(img.pixels as ArrayLike<unknown>)).toEqual(expected);
    });
  });

  it('parseFits(bytes) scales BITPIX 16 with BSCALE 0.5 into float32 and BITPIX 32 into float64 (astropy 5.2.1)', () => {
    const s16 = image(imageFile(16, [2], '0003fffd', ['BSCALE  =                  0.5', 'BZERO   =                 10.0']));
    expect(s16.pixels).toBeInstanceOf(Float32Array);
    expect(Array.from(s16.pixels as Float32Array)).toEqual([11.5, 8.5]);
    const s32 = image(imageFile(32, [1], '00000003', ['BSCALE  =                  0.1']));
    expect(s32.pixels).toBeInstanceOf(Float64Array);
    expect((s32.pixels as Float64Array)[0]).toBe(3 * 0.1);
  });

  it('parseFits(bytes) maps BLANK to NaN with scaling and keeps raw values with a count without (FITS 3.0 §4.4.2.5)', () => {
    const scaled = image(imageFile(16, [3], '0001ffff0002', ['BSCALE  =                  2.0', 'BLANK   =                   -1']));
    expect(Array.from(scaled.pixels as Float32Array)).toEqual([2, NaN, 4]);
    expect(scaled.blankCount).toBe(1);
    const raw = image(imageFile(16, [3], '0001ffffffff', ['BLANK   =                   -1']));
    expect(raw.pixels).toBeInstanceOf(Int16Array);
    expect(Array.from(raw.pixels as Int16Array)).toEqual([1, -1, -1]);
    expect([raw.blankCount, raw.blankValue]).toEqual([2, -1]);
    // Unsigned convention: BLANK compares with the stored value; its physical value is BLANK + 32768.
    const u = image(imageFile(16, [2], '80000000', ['BZERO   =                32768', 'BLANK   =               -32768']));
    expect(Array.from(u.pixels as Uint16Array)).toEqual([0, 32768]);
    expect([u.blankCount, u.blankValue]).toEqual([1, 0]);
  });

  it('parseFits(bytes) ignores BLANK on float data with FITS_BLANK_IN_FLOAT (FITS 3.0 §5.3)', () => {
    const fits = parseFits(imageFile(-32, [1], '3f800000', ['BLANK   =                   -1']));
    expect(fits.diagnostics.map((d) => d.code)).toEqual(['FITS_BLANK_IN_FLOAT']);
    expect(Array.from(fits.hdus[0]!.image!.pixels as Float32Array)).toEqual([1]);
  });

  it('parseFits(bytes) decodes a cube with planes = NAXIS3 x NAXIS4 (FITS 3.0 §3.3.2)', () => {
    const n = 3 * 2 * 2 * 2;
    const data = Array.from({ length: n }, (_, i) => i.toString(16).padStart(2, '0')).join('');
    const img = image(imageFile(8, [3, 2, 2, 2], data));
    expect([img.width, img.height, img.planes]).toEqual([3, 2, 4]);
    expect(Array.from(img.pixels as Uint8Array)).toEqual(Array.from({ length: n }, (_, i) => i));
  });

  it('parseFits(bytes, { rows }) decodes only the asked rows of the image', () => {
    const px = Uint16Array.from({ length: 5 * 4 }, (_, i) => i * 1000);
    const fits = parseFits(encodeFits([{ pixels: px, width: 5, height: 4 }]), { rows: { start: 1, count: 2 } });
    const img = fits.hdus[0]!.image!;
    expect([img.rowStart, img.height, img.width]).toEqual([1, 2, 5]);
    expect(Array.from(img.pixels as Uint16Array)).toEqual(Array.from(px.subarray(5, 15)));
    const e = thrown(() => parseFits(encodeFits([{ pixels: px, width: 5, height: 4 }]), { rows: { start: 3, count: 2 }, file: 'r.fits' }));
    expect(e).toBeInstanceOf(InvalidInputError);
    expect(e).toMatchObject({ code: 'INPUT_OUT_OF_BOUNDS', where: { file: 'r.fits', hdu: 0 } });
  });

  it('parseFits(bytes, { hdu }) decodes only that HDU and imageHdus(file) lists the images with pixels', () => {
    const bytes = encodeFits([
      { pixels: new Uint8Array(0), width: 0, height: 0 },
      { pixels: Uint16Array.from([1, 2]), width: 2, height: 1 },
      { pixels: Float32Array.from([3, 4]), width: 1, height: 2 },
    ]);
    const fits = parseFits(bytes, { hdu: 2 });
    expect(fits.hdus.map((h) => h.image !== undefined)).toEqual([false, false, true]);
    expect(imageHdus(parseFits(bytes)).map((h) => h.layout.index)).toEqual([1, 2]);
    expect(thrown(() => parseFits(bytes, { hdu: 7 }))).toMatchObject({ code: 'FITS_NO_IMAGE' });
  });

  it('parseFits(bytes, { decode: false }) lists HDUs without pixels or checksum checks', () => {
    const fits = parseFits(encodeFits([{ pixels: Uint16Array.from([1, 2]), width: 2, height: 1 }]), { decode: false });
    expect(fits.hdus[0]!.image).toBeUndefined();
    expect(fits.hdus[0]!.checksum).toEqual({ checksum: 'not-checked', datasum: 'not-checked' });
  });

  it('parseFits(bytes) agrees with astropy 5.2.1 on every BITPIX with and without scaling, BLANK, NaN and Inf', () => {
    if (!haveAstropy()) return;
    const n = 24;
    const cases: { name: string; bitpix: number; extra: string[] }[] = [];
    for (const bitpix of [8, 16, 32, 64, -32, -64]) {
      cases.push({ name: `raw${bitpix}`, bitpix, extra: [] });
      cases.push({ name: `scaled${bitpix}`, bitpix, extra: ['BSCALE  =                 0.37', 'BZERO   =               -12.25'] });
      cases.push({ name: `offset${bitpix}`, bitpix, extra: ['BZERO   =                 1000'] });
      if (bitpix > 0) {
        cases.push({ name: `blankscaled${bitpix}`, bitpix, extra: ['BSCALE  =                  3.0', 'BLANK   =                    7'] });
      }
    }
    cases.push({ name: 'uint16', bitpix: 16, extra: ['BSCALE  =                  1.0', 'BZERO   =              32768.0'] });
    cases.push({ name: 'uint32', bitpix: 32, extra: ['BZERO   =           2147483648'] });
    cases.push({ name: 'uint64', bitpix: 64, extra: ['BZERO   =  9223372036854775808'] });
    cases.push({ name: 'int8', bitpix: 8, extra: ['BZERO   =                 -128'] });
    const files = cases.map((c, k) => {
      const bytesPer = Math.abs(c.bitpix) / 8;
      const data = seededBytes(n * bytesPer, 17 + k);
      if (c.bitpix > 0) data[(k % n) * bytesPer + bytesPer - 1] = 7; // a value that can equal BLANK = 7
      if (c.bitpix > 0) data.fill(0, (k % n) * bytesPer, (k % n) * bytesPer + bytesPer - 1);
      if (c.bitpix === -32) data.set([0x7f, 0xc0, 0, 0, 0x7f, 0x80, 0, 0, 0xff, 0x80, 0, 0], 0);
      if (c.bitpix === -64) data.set([0x7f, 0xf8, 0, 0, 0, 0, 0, 0, 0x7f, 0xf0, 0, 0, 0, 0, 0, 0], 0);
      const bytes = imageFile(c.bitpix, [6, 4], data, c.extra);
      const path = join(dir, `${c.name}.fits`);
      writeFileSync(path, bytes);
      return { c, bytes, path };
    });
    const refs = astropyReadAll(files.map((f) => f.path));
    files.forEach(({ c, bytes }, k) => {
      const file = refs[k];
      if (!Array.isArray(file)) throw new Error(`astropy could not read ${c.name}`);
      const ref = file[0]!;
      const ours = parseFits(bytes).hdus[0]!.image!;
      expect(`${c.name}: ${ours.elementType}`).toBe(`${c.name}: ${ref.dtype}`);
      const diff = firstDifference(ours.pixels, astropyValues(ref));
      expect(diff, `${c.name}: first difference at pixel ${diff}`).toBe(-1);
    });
  });
});

describe('parseFits HDU structure (FITS 3.0 §4.4.1, §7; REFERENCE A.4)', () => {
  const primary = headerBytes(['SIMPLE  =                    T', 'BITPIX  =                    8', 'NAXIS   =                    0', 'EXTEND  =                    T']);
  const ext = (xtension: string, cards: string[], data: Uint8Array) =>
    concat(headerBytes([`XTENSION= '${xtension.padEnd(8)}'`, ...cards]), data);

  it('parseFits(bytes) skips BINTABLE, TABLE and unknown extensions by PCOUNT/GCOUNT and lists their kinds', () => {
    const bintable = ext(
      'BINTABLE',
      ['BITPIX  =                    8', 'NAXIS   =                    2', 'NAXIS1  =                   10', 'NAXIS2  =                  300', 'PCOUNT  =                  100', 'GCOUNT  =                    1', 'TFIELDS =                    0'],
      dataBytes(new Uint8Array(3100)),
    );
    const table = ext(
      'TABLE',
      ['BITPIX  =                    8', 'NAXIS   =                    2', 'NAXIS1  =                    8', 'NAXIS2  =                    2', 'PCOUNT  =                    0', 'GCOUNT  =                    1', 'TFIELDS =                    0'],
      concat(new TextEncoder().encode('12345678abcdefgh'), new Uint8Array(2864).fill(0x20)),
    );
    const odd = ext('FOREIGN', ['BITPIX  =                   16', 'NAXIS   =                    1', 'NAXIS1  =                 3000', 'PCOUNT  =                    0', 'GCOUNT  =                    2'], dataBytes(new Uint8Array(12000)));
    const img = ext('IMAGE', ['BITPIX  =                   16', 'NAXIS   =                    1', 'NAXIS1  =                    2', 'PCOUNT  =                    0', 'GCOUNT  =                    1'], dataBytes('00070008'));
    const fits = parseFits(concat(primary, bintable, table, odd, img));
    expect(fits.hdus.map((h) => h.layout.kind)).toEqual(['image', 'binary-table', 'ascii-table', 'unknown', 'image']);
    expect(fits.hdus[1]!.layout.dataBytes).toBe(3100);
    expect(fits.hdus[3]!.layout.dataBytes).toBe(12000);
    expect(Array.from(fits.hdus[4]!.image!.pixels as Int16Array)).toEqual([7, 8]);
    expect(fits.diagnostics).toEqual([]);
  });

  it('parseFits(bytes) lists a ZIMAGE = T BINTABLE as compressed-image and refuses to decode it (tiled compression convention)', () => {
    const comp = ext(
      'BINTABLE',
      [
        'BITPIX  =                    8', 'NAXIS   =                    2', 'NAXIS1  =                    8', 'NAXIS2  =                    1',
        'PCOUNT  =                    0', 'GCOUNT  =                    1', 'TFIELDS =                    1', 'ZIMAGE  =                    T',
        'ZBITPIX =                   16', 'ZNAXIS  =                    2', 'ZNAXIS1 =                  100', 'ZNAXIS2 =                   50',
        "ZCMPTYPE= 'RICE_1  '",
      ],
      dataBytes(new Uint8Array(8)),
    );
    const bytes = concat(primary, comp);
    const fits = parseFits(bytes);
    expect(fits.hdus[1]!.layout).toMatchObject({ kind: 'compressed-image', compressed: { bitpix: 16, axes: [100, 50], algorithm: 'RICE_1' } });
    expect(fits.hdus[1]!.image).toBeUndefined();
    expect(thrown(() => parseFits(bytes, { hdu: 1 }))).toMatchObject({ code: 'FITS_COMPRESSED_NOT_DECODED', where: { hdu: 1 } });
  });

  it('parseFits(bytes) skips random groups (NAXIS1 = 0, GROUPS = T) by their size (FITS 3.0 §6)', () => {
    const bytes = concat(
      headerBytes([
        'SIMPLE  =                    T', 'BITPIX  =                  -32', 'NAXIS   =                    3', 'NAXIS1  =                    0',
        'NAXIS2  =                    3', 'NAXIS3  =                    2', 'EXTEND  =                    T', 'GROUPS  =                    T',
        'PCOUNT  =                    2', 'GCOUNT  =                   10',
      ]),
      dataBytes(new Uint8Array(4 * 10 * (2 + 6))),
      ext('IMAGE', ['BITPIX  =                    8', 'NAXIS   =                    1', 'NAXIS1  =                    1', 'PCOUNT  =                    0', 'GCOUNT  =                    1'], dataBytes('2a')),
    );
    const fits = parseFits(bytes);
    expect(fits.hdus[0]!.layout).toMatchObject({ kind: 'random-groups', dataBytes: 320, pcount: 2, gcount: 10 });
    expect(Array.from(fits.hdus[1]!.image!.pixels as Uint8Array)).toEqual([42]);
  });

  it('parseFits(bytes) checks the mandatory keyword order and values with their own codes (FITS 3.0 §4.4.1)', () => {
    const cases: [string[], string, number][] = [
      [['SIMPLE  =                    T', 'NAXIS   =                    0', 'BITPIX  =                    8'], 'FITS_KEYWORD_ORDER', 2],
      [['SIMPLE  =                    T', 'BITPIX  =                   12', 'NAXIS   =                    0'], 'FITS_BAD_BITPIX', 2],
      [['SIMPLE  =                    T', "BITPIX  = '16'", 'NAXIS   =                    0'], 'FITS_BAD_BITPIX', 2],
      [['SIMPLE  =                    T', 'BITPIX  =                    8', 'NAXIS   =                 1000'], 'FITS_BAD_NAXIS', 3],
      [['SIMPLE  =                    T', 'BITPIX  =                    8', 'NAXIS   =                    1', 'NAXIS1  =                   -4'], 'FITS_BAD_NAXIS', 4],
      [['SIMPLE  =                    T', 'BITPIX  =                    8', 'NAXIS   =                    2', 'NAXIS1  =                    4', 'OBJECT  = \'x\''], 'FITS_KEYWORD_ORDER', 5],
      [['SIMPLE  =                    F', 'BITPIX  =                    8', 'NAXIS   =                    0'], 'FITS_NOT_FITS', 1],
    ];
    for (const [cards, code, card] of cases) {
      const e = thrown(() => parseFits(headerBytes(cards), { file: 'bad.fits' }));
      expect(e).toBeInstanceOf(FitsFormatError);
      expect(e).toMatchObject({ code, where: { file: 'bad.fits', hdu: 0, card } });
    }
    expect(thrown(() => parseFits(new TextEncoder().encode('hello world'.padEnd(2880))))).toMatchObject({ code: 'FITS_NOT_FITS' });
    expect(thrown(() => parseFits(headerBytes(['SIMPLE  =                    T'], false)))).toMatchObject({ code: 'FITS_NO_END' });
    expect(thrown(() => parseFits(Uint8Array.from([0x1f, 0x8b, 8, 0])))).toMatchObject({ code: 'FITS_NOT_FITS' });
  });

  it('parseFits(bytes) throws FITS_TRUNCATED when image data end early, and FITS_TOO_LARGE first for huge headers', () => {
    const full = imageFile(16, [100, 100], new Uint8Array(20000));
    expect(thrown(() => parseFits(full.subarray(0, 2880 + 19998)))).toMatchObject({ code: 'FITS_TRUNCATED', where: { hdu: 0 } });
    // 100000 x 100000 = 1e10 pixels: refused from the header alone, before any allocation.
    const huge = headerBytes(['SIMPLE  =                    T', 'BITPIX  =                   16', 'NAXIS   =                    2', 'NAXIS1  =               100000', 'NAXIS2  =               100000']);
    expect(thrown(() => parseFits(huge))).toMatchObject({ code: 'FITS_TOO_LARGE', where: { hdu: 0 } });
    // Products beyond 2^53 (or Infinity) are refused the same way.
    const absurd = headerBytes([
      'SIMPLE  =                    T', 'BITPIX  =                   16', 'NAXIS   =                    3',
      'NAXIS1  = 99999999999999999999', 'NAXIS2  =         999999999999', 'NAXIS3  =         999999999999',
    ]);
    expect(thrown(() => parseFits(absurd))).toMatchObject({ code: 'FITS_TOO_LARGE' });
    expect(thrown(() => parseFits(full, { maxPixels: 9999 }))).toMatchObject({ code: 'FITS_TOO_LARGE' });
    expect(parseFits(huge, { decode: false }).diagnostics.map((d) => d.code)).toEqual(['FITS_TRUNCATED']);
  });

  it('parseFits(bytes) accepts a short last block with FITS_SHORT_LAST_BLOCK (REFERENCE A.10)', () => {
    const full = imageFile(16, [100, 100], seededBytes(20000, 3));
    const fits = parseFits(full.subarray(0, 2880 + 20000));
    expect(fits.diagnostics.map((d) => d.code)).toEqual(['FITS_SHORT_LAST_BLOCK']);
    expect(fits.hdus[0]!.image!.pixels.length).toBe(10000);
    expect(thrown(() => parseFits(full.subarray(0, 2880 + 20000), { strict: true }))).toMatchObject({ code: 'FITS_SHORT_LAST_BLOCK' });
  });

  it('parseFits(bytes) reports bytes after the last HDU as a diagnostic, not an error', () => {
    const bytes = concat(imageFile(8, [1], '01'), new TextEncoder().encode('garbage that is not an HDU'.padEnd(2880)));
    const fits = parseFits(bytes);
    expect(fits.hdus).toHaveLength(1);
    expect(fits.diagnostics).toMatchObject([{ code: 'FITS_TRAILING_BYTES', severity: 'warning' }]);
    expect(parseFits(concat(imageFile(8, [1], '01'), new Uint8Array(2880))).diagnostics).toMatchObject([{ code: 'FITS_TRAILING_BYTES', severity: 'info' }]);
  });

  it('parseFits(bytes) reports non-zero data padding with FITS_NONZERO_PADDING (FITS 3.0 §3.3.2)', () => {
    const bytes = imageFile(8, [1], '01');
    bytes[2880 + 100] = 0x20;
    expect(parseFits(bytes).diagnostics.map((d) => d.code)).toEqual(['FITS_NONZERO_PADDING']);
  });
});
