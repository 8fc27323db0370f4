import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InvalidInputError } from '../../src/errors.js';
import { encodeFits, formatCard, formatCards, parseFits } from '../../src/fits/index.js';
import type { WriteImage } from '../../src/fits/index.js';
import { hex, thrown } from './helpers.js';

const FITSVERIFY = '/usr/bin/fitsverify';
const haveFitsverify = existsSync(FITSVERIFY);
const dir = mkdtempSync(join(tmpdir(), 'subgauge-fits-write-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Run fitsverify on bytes; returns its output. Missing fitsverify fails under CI (project rule). */
function fitsverify(name: string, bytes: Uint8Array): string {
  const path = join(dir, name);
  writeFileSync(path, bytes);
  const r = spawnSync(FITSVERIFY, ['-e', path], { encoding: 'utf8' });
  return `${r.stdout}${r.stderr}`;
}

describe('formatCard (FITS 3.0 §4.2 fixed format; astropy 5.2.1 output in REFERENCE A.3)', () => {
  it('formatCard(card) writes the REFERENCE A.3 check cards column for column', () => {
    expect(formatCard({ keyword: 'SIMPLE', value: true, comment: 'conforms to FITS standard' })).toBe(
      'SIMPLE  =                    T / conforms to FITS standard'.padEnd(80),
    );
    expect(formatCard({ keyword: 'BITPIX', value: 16 })).toBe('BITPIX  =                   16'.padEnd(80));
    expect(formatCard({ keyword: 'EXPTIME', value: 300, real: true, comment: '[s] exposure time' })).toBe(
      'EXPTIME =                300.0 / [s] exposure time'.padEnd(80),
    );
    expect(formatCard({ keyword: 'OBJECT', value: "O'HARA" })).toBe("OBJECT  = 'O''HARA '".padEnd(80));
    expect(formatCard({ keyword: 'BZERO', value: 32768 })).toBe('BZERO   =                32768'.padEnd(80));
    expect(formatCard({ keyword: 'CCD-TEMP', value: -10.5 })).toBe('CCD-TEMP=                -10.5'.padEnd(80));
    expect(formatCard({ keyword: 'DATE-OBS', value: '2024-03-01T21:05:33.123' })).toBe(
      "DATE-OBS= '2024-03-01T21:05:33.123'".padEnd(80),
    );
  });

  it('formatCard(card) puts T in byte 30, ends numbers in byte 30 and opens strings in byte 11 (FITS 3.0 §4.2)', () => {
    expect(formatCard({ keyword: 'FLAG', value: false }).indexOf('F', 10)).toBe(29);
    expect(formatCard({ keyword: 'N', value: 2n ** 62n }).slice(10, 30).trimStart()).toBe('4611686018427387904');
    expect(formatCard({ keyword: 'S', value: 'x' }).indexOf("'")).toBe(10);
    expect(formatCard({ keyword: 'R', value: 1e21 }).slice(10, 32).trim()).toBe('1000000000000000000000');
    expect(formatCard({ keyword: 'R', value: 1e-7 }).slice(10, 30).trim()).toBe('1E-7');
    expect(formatCard({ keyword: 'R', value: 2, real: true }).slice(10, 30).trim()).toBe('2.0');
    expect(formatCard({ keyword: 'U', comment: 'not known' })).toBe('U       =                      / not known'.padEnd(80));
  });

  it('formatCard(card) throws INPUT_BAD_PARAMETER for impossible cards', () => {
    for (const c of [
      { keyword: 'exptime', value: 1 },
      { keyword: 'TOO LONG!', value: 1 },
      { keyword: 'NAN', value: NaN },
      { keyword: 'INF', value: Infinity },
      { keyword: 'S', value: 'tab\there' },
      { keyword: 'S', value: 'x'.repeat(100) },
    ]) {
      const e = thrown(() => formatCard(c));
      expect(e).toBeInstanceOf(InvalidInputError);
      expect(e).toMatchObject({ code: 'INPUT_BAD_PARAMETER' });
    }
  });

  it('formatCards(card) splits a long string with CONTINUE and a long HISTORY over cards (CONTINUE convention)', () => {
    const long = 'a'.repeat(100) + "'" + 'b'.repeat(50);
    const cards = formatCards({ keyword: 'LONG', value: long, comment: 'c' });
    expect(cards.length).toBe(3);
    expect(cards.every((c) => c.length === 80)).toBe(true);
    expect(cards[1]?.startsWith("CONTINUE  '")).toBe(true);
    expect(formatCards({ keyword: 'HISTORY', value: 'h'.repeat(100) })).toHaveLength(2);
    expect(formatCards({ keyword: 'HIERARCH ESO DET DIT', value: 10.5 })).toEqual(['HIERARCH ESO DET DIT = 10.5'.padEnd(80)]);
  });
});

describe('encodeFits (writer)', () => {
  it('encodeFits(int16 [[0,1,2],[3,4,5]]) stores NAXIS1 = 3, NAXIS2 = 2 and big-endian bytes (FITS 3.0 §3.3.2; astropy 5.2.1; G row 14)', () => {
    const bytes = encodeFits([{ pixels: Int16Array.from([0, 1, 2, 3, 4, 5]), width: 3, height: 2 }]);
    const fits = parseFits(bytes);
    const layout = fits.hdus[0]!.layout;
    expect(layout.axes).toEqual([3, 2]);
    expect(hex(bytes.subarray(layout.dataOffset, layout.dataOffset + 12))).toBe('000000010002000300040005');
    expect(bytes.length % 2880).toBe(0);
  });

  it('encodeFits(uint16 [[0,1000],[32768,65535]]) writes BZERO 32768 and 800083e800007fff (FITS 3.0 Table 4.9; astropy 5.2.1)', () => {
    const bytes = encodeFits([{ pixels: Uint16Array.from([0, 1000, 32768, 65535]), width: 2, height: 2 }]);
    const fits = parseFits(bytes);
    const { layout, header, image } = fits.hdus[0]!;
    expect(header.number('BZERO')).toBe(32768);
    expect(header.number('BSCALE')).toBe(1);
    expect(hex(bytes.subarray(layout.dataOffset, layout.dataOffset + 8))).toBe('800083e800007fff');
    expect(image?.pixels).toBeInstanceOf(Uint16Array);
    expect(Array.from(image!.pixels as Uint16Array)).toEqual([0, 1000, 32768, 65535]);
    expect(fits.hdus[0]!.checksum).toEqual({ checksum: 'valid', datasum: 'valid' });
  });

  it('encodeFits(images) round-trips every pixel type exactly, with extensions and EXTEND = T', () => {
    const images: WriteImage[] = [
      { pixels: Uint8Array.from([0, 1, 255, 128, 7, 9]), width: 3, height: 2 },
      { pixels: Int16Array.from([-32768, -1, 0, 32767]), width: 2, height: 2 },
      { pixels: Uint16Array.from([0, 1, 32767, 32768, 65534, 65535]), width: 2, height: 3 },
      { pixels: Int32Array.from([-2147483648, -1, 0, 2147483647]), width: 4, height: 1 },
      { pixels: Uint32Array.from([0, 1, 2147483648, 4294967295]), width: 1, height: 4 },
      { pixels: Float32Array.from([1.5, -0, NaN, Infinity, -Infinity, 1e-40]), width: 3, height: 2 },
      { pixels: Float64Array.from([Math.PI, -0, NaN, Infinity, -Infinity, 5e-324, 1, 2]), width: 2, height: 2, planes: 2 },
    ];
    const bytes = encodeFits(images);
    const fits = parseFits(bytes, { strict: true });
    expect(fits.diagnostics).toEqual([]);
    expect(fits.hdus[0]!.header.boolean('EXTEND')).toBe(true);
    expect(fits.hdus.map((h) => h.layout.xtension)).toEqual([undefined, 'IMAGE', 'IMAGE', 'IMAGE', 'IMAGE', 'IMAGE', 'IMAGE']);
    fits.hdus.forEach((h, i) => {
      const src = images[i]!;
      expect(h.image!.pixels.constructor).toBe(src.pixels.constructor);
      expect(Array.from(h.image!.pixels as Float64Array)).toEqual(Array.from(src.pixels as Float64Array));
      expect([h.image!.width, h.image!.height, h.image!.planes]).toEqual([src.width, src.height, src.planes ?? 1]);
      expect(h.checksum).toEqual({ checksum: 'valid', datasum: 'valid' });
    });
  });

  it('encodeFits(images) writes header cards that parse back to the same values', () => {
    const bytes = encodeFits([
      {
        pixels: new Float32Array(4),
        width: 2,
        height: 2,
        cards: [
          { keyword: 'EXPTIME', value: 300, real: true, comment: '[s] exposure time' },
          { keyword: 'OBJECT', value: "O'HARA" },
          { keyword: 'LONGSTR', value: 'This is a very long string value that certainly will not fit within the sixty-eight character limit of one card' },
          { keyword: 'BIG', value: 2n ** 70n },
          { keyword: 'FLAG', value: false },
          { keyword: 'UNDEF', value: null },
          { keyword: 'HISTORY', value: 'made by a test' },
          { keyword: 'HIERARCH OBS SITE ALT', value: 2400.5 },
        ],
      },
    ]);
    const h = parseFits(bytes).hdus[0]!.header;
    expect(h.number('EXPTIME')).toBe(300);
    expect(h.comment('EXPTIME')).toBe('[s] exposure time');
    expect(h.string('OBJECT')).toBe("O'HARA");
    expect(h.string('LONGSTR')).toHaveLength(111);
    expect(h.get('BIG')).toBe(2n ** 70n);
    expect(h.boolean('FLAG')).toBe(false);
    expect(h.get('UNDEF')).toBeNull();
    expect(h.commentary('HISTORY')).toEqual(['made by a test']);
    expect(h.number('OBS SITE ALT')).toBe(2400.5);
  });

  it('encodeFits([{ checksum: false }]) writes no CHECKSUM/DATASUM and pads data with zeros', () => {
    const bytes = encodeFits([{ pixels: Int16Array.from([1, 2, 3]), width: 3, height: 1, checksum: false }]);
    const fits = parseFits(bytes);
    expect(fits.hdus[0]!.header.has('CHECKSUM')).toBe(false);
    expect(fits.hdus[0]!.checksum).toEqual({ checksum: 'absent', datasum: 'absent' });
    expect(bytes.subarray(2880 + 6).every((b) => b === 0)).toBe(true);
    expect(bytes.subarray(0, 2880).every((b) => b >= 0x20 && b <= 0x7e)).toBe(true);
  });

  it('encodeFits(images) refuses shape mismatches, reserved keywords and empty input', () => {
    expect(thrown(() => encodeFits([{ pixels: new Uint16Array(5), width: 2, height: 2 }]))).toMatchObject({ code: 'INPUT_SHAPE_MISMATCH' });
    expect(thrown(() => encodeFits([{ pixels: new Uint16Array(4), width: 2, height: 2, cards: [{ keyword: 'BZERO', value: 0 }] }]))).toMatchObject({
      code: 'INPUT_BAD_PARAMETER',
    });
    expect(thrown(() => encodeFits([]))).toMatchObject({ code: 'INPUT_BAD_PARAMETER' });
  });

  it('encodeFits(images) output passes fitsverify with no errors and no warnings (HEASARC fitsverify 4.20)', () => {
    if (!haveFitsverify) {
      if (process.env.CI === 'true') throw new Error(`${FITSVERIFY} is missing (install the fitsverify package)`);
      return;
    }
    const bytes = encodeFits([
      { pixels: new Uint8Array(0), width: 0, height: 0, cards: [{ keyword: 'OBSERVER', value: 'A. Tester' }] },
      {
        pixels: Uint16Array.from({ length: 35 * 21 }, (_, i) => (i * 977) % 65536),
        width: 35,
        height: 21,
        cards: [
          { keyword: 'EXPTIME', value: 120, real: true, comment: '[s] exposure time' },
          { keyword: 'LONGSTR', value: 'x'.repeat(200), comment: 'long' },
          { keyword: 'HISTORY', value: 'h'.repeat(150) },
          { keyword: 'HIERARCH OBS SITE ALT', value: 2400.5, comment: 'metres' },
          { keyword: 'DATE-OBS', value: '2024-03-01T21:05:33.123', comment: 'start of exposure' },
          { keyword: 'BIGINT', value: 2n ** 62n },
          { keyword: 'TINY', value: 1e-300 },
        ],
      },
      { pixels: Float32Array.from({ length: 12 }, (_, i) => i / 3), width: 4, height: 3 },
      { pixels: Float64Array.from({ length: 24 }, (_, i) => -i * 1e10), width: 4, height: 3, planes: 2 },
      { pixels: Int32Array.from([1, -2, 3]), width: 3, height: 1 },
      { pixels: Uint32Array.from([1, 4294967295, 3]), width: 3, height: 1 },
      { pixels: Int16Array.from([1, -2, 3]), width: 3, height: 1 },
      { pixels: Uint8Array.from([1, 2, 3]), width: 3, height: 1 },
    ]);
    const out = fitsverify('all-types.fits', bytes);
    expect(out).toContain('Verification found 0 warning(s) and 0 error(s)');
  });
});
