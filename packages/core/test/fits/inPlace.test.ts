import { describe, expect, it } from 'vitest';
import { encodeFits, parseFits } from '../../src/fits/index.js';
import { concat, dataBytes, headerBytes, imageFile, seededBytes } from './helpers.js';

const conventions: { name: string; bitpix: number; extra: string[] }[] = [
  { name: 'uint8', bitpix: 8, extra: [] },
  { name: 'int8', bitpix: 8, extra: ['BZERO   =                 -128'] },
  { name: 'int16', bitpix: 16, extra: [] },
  { name: 'uint16', bitpix: 16, extra: ['BZERO   =                32768'] },
  { name: 'int32', bitpix: 32, extra: [] },
  { name: 'uint32', bitpix: 32, extra: ['BZERO   =           2147483648'] },
  { name: 'int64', bitpix: 64, extra: [] },
  { name: 'uint64', bitpix: 64, extra: ['BZERO   =  9223372036854775808'] },
  { name: 'float32', bitpix: -32, extra: [] },
  { name: 'float64', bitpix: -64, extra: [] },
  { name: 'scaled16', bitpix: 16, extra: ['BSCALE  =                 0.25', 'BZERO   =                 -3.5', 'BLANK   =                    7'] },
  { name: 'scaledfloat', bitpix: -32, extra: ['BSCALE  =                  2.0'] },
];

describe('parseFits(bytes, { inPlace: true }): decoding in the given bytes', () => {
  // Odd pixel counts leave a partial 32-bit word for 8- and 16-bit data; 7 x 3 = 21 pixels.
  for (const c of conventions) {
    it(`${c.name}: the same pixels as the copying decode, as a view over the input buffer, bytes after the data untouched`, () => {
      const n = 21;
      const file = imageFile(c.bitpix, [7, 3], seededBytes(n * (Math.abs(c.bitpix) / 8), 99 + c.bitpix), c.extra);
      const expected = parseFits(file.slice()).hdus[0]!.image!;
      const bytes = file.slice();
      const img = parseFits(bytes, { inPlace: true }).hdus[0]!.image!;
      expect(img.elementType).toBe(expected.elementType);
      expect(Array.from(img.pixels as ArrayLike<unknown>)).toEqual(Array.from(expected.pixels as ArrayLike<unknown>));
      expect(img.blankCount).toBe(expected.blankCount);
      const scaled = c.name.startsWith('scaled') && c.bitpix > 0;
      // Scaled integers get a fresh float array; everything else is the input's own memory.
      expect(img.pixels.buffer === bytes.buffer).toBe(!scaled || c.bitpix < 0);
      const dataEnd = 2880 + n * (Math.abs(c.bitpix) / 8);
      expect(Array.from(bytes.subarray(0, 2880))).toEqual(Array.from(file.subarray(0, 2880)));
      expect(Array.from(bytes.subarray(dataEnd))).toEqual(Array.from(file.subarray(dataEnd)));
    });
  }

  it('a short last block whose data end at the last byte (odd uint16 count) decodes without touching past the end', () => {
    const n = 5;
    const data = Uint8Array.from([0x80, 0x00, 0x83, 0xe8, 0x00, 0x00, 0x7f, 0xff, 0x80, 0x01]);
    const file = concat(headerBytes(['SIMPLE  =                    T', 'BITPIX  =                   16', 'NAXIS   =                    1', `NAXIS1  = ${String(n).padStart(20)}`, 'BZERO   =                32768']), dataBytes(data, false));
    const parsed = parseFits(file, { inPlace: true });
    expect(Array.from(parsed.hdus[0]!.image!.pixels as Uint16Array)).toEqual([0, 1000, 32768, 65535, 1]);
    expect(parsed.diagnostics.map((d) => d.code)).toContain('FITS_SHORT_LAST_BLOCK');
  });

  it('checksums are verified before the swap: a valid file stays valid, every HDU of a two-HDU file decodes', () => {
    const a = new Uint16Array(33).map((_, i) => i * 1000);
    const b = new Float32Array(10).map((_, i) => i - 4.5);
    const file = encodeFits([
      { pixels: a, width: 11, height: 3 },
      { pixels: b, width: 5, height: 2 },
    ]);
    const parsed = parseFits(file.slice(), { inPlace: true });
    expect(parsed.hdus.map((h) => h.checksum.datasum)).toEqual(['valid', 'valid']);
    expect(parsed.hdus.map((h) => h.checksum.checksum)).toEqual(['valid', 'valid']);
    expect(Array.from(parsed.hdus[0]!.image!.pixels as Uint16Array)).toEqual(Array.from(a));
    expect(Array.from(parsed.hdus[1]!.image!.pixels as Float32Array)).toEqual(Array.from(b));
  });

  it('data not aligned to the element size are copied and the input left as it was', () => {
    const file = imageFile(32, [4], '00000001fffffffe7fffffff80000000');
    const shifted = new Uint8Array(file.length + 1);
    shifted.set(file, 1);
    const bytes = shifted.subarray(1); // data start at buffer offset 2881: not a multiple of 4
    const before = bytes.slice();
    const img = parseFits(bytes, { inPlace: true }).hdus[0]!.image!;
    expect(Array.from(img.pixels as Int32Array)).toEqual([1, -2, 2147483647, -2147483648]);
    expect(img.pixels.buffer === bytes.buffer).toBe(false);
    expect(Array.from(bytes)).toEqual(Array.from(before));
  });

  it('without inPlace the input bytes are never modified', () => {
    const file = imageFile(16, [4], '8000ffff00017fff', ['BZERO   =                32768']);
    const before = file.slice();
    parseFits(file);
    expect(Array.from(file)).toEqual(Array.from(before));
  });
});
