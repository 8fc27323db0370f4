import { existsSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { datasumOf, encodeChecksum, onesComplementAdd, onesComplementSum, parseFits } from '../../src/fits/index.js';
import { concat, dataBytes, headerBytes, thrown } from './helpers.js';

const ASTROPY_DATA = '/usr/lib/python3/dist-packages/astropy/io/fits/tests/data';

/** 10 x 10 int16 arange(100), big-endian, padded (REFERENCE A.8.3). */
function arangeData(): Uint8Array {
  const raw = new Uint8Array(200);
  for (let i = 0; i < 100; i++) raw[2 * i + 1] = i;
  return dataBytes(raw);
}

/** The 8-card header of REFERENCE A.8.3 with the given CHECKSUM value. */
function eightCards(checksum: string): Uint8Array {
  return headerBytes([
    'SIMPLE  =                    T',
    'BITPIX  =                   16',
    'NAXIS   =                    2',
    'NAXIS1  =                   10',
    'NAXIS2  =                   10',
    `CHECKSUM= '${checksum}'`,
    "DATASUM = '160565700'",
  ]);
}

/** Astropy's test files: fail under CI when missing (project rule), skip otherwise. */
function astropyFile(name: string): Uint8Array | undefined {
  const path = `${ASTROPY_DATA}/${name}`;
  if (!existsSync(path)) {
    if (process.env.CI === 'true') throw new Error(`${path} is missing (python3-astropy test data)`);
    return undefined;
  }
  return readFileSync(path);
}

describe('ones-complement checksum (FITS Checksum Proposal, Seaman, Pence & Rots; REFERENCE A.8.3)', () => {
  it('onesComplementSum(bytes) is 0 / 0xFFFFFFFF / 3230885421 for 2880 zeros / 0xFF bytes / i % 256 (G row 16)', () => {
    expect(onesComplementSum(new Uint8Array(2880))).toBe(0);
    expect(onesComplementSum(new Uint8Array(2880).fill(0xff))).toBe(0xffffffff);
    expect(onesComplementSum(Uint8Array.from({ length: 2880 }, (_, i) => i % 256))).toBe(3230885421);
  });

  it('onesComplementSum(bytes) gives the same sum on unaligned views and when chained with initialSum', () => {
    const bytes = Uint8Array.from({ length: 2880 * 3 }, (_, i) => (i * 31 + 7) % 256);
    const whole = onesComplementSum(bytes);
    const shifted = new Uint8Array(bytes.length + 1);
    shifted.set(bytes, 1);
    expect(onesComplementSum(shifted.subarray(1))).toBe(whole);
    expect(onesComplementSum(bytes.subarray(2880), onesComplementSum(bytes.subarray(0, 2880)))).toBe(whole);
    // Reference: the carry-folding loop of REFERENCE A.8.3 step 1, word by word.
    let s = 0;
    for (let i = 0; i < bytes.length; i += 4) {
      s += ((bytes[i]! << 24) | (bytes[i + 1]! << 16) | (bytes[i + 2]! << 8) | bytes[i + 3]!) >>> 0;
      while (s > 0xffffffff) s = (s % 0x100000000) + Math.floor(s / 0x100000000);
    }
    expect(whole).toBe(s);
    expect(onesComplementAdd(0xffffffff, 1)).toBe(1);
  });

  it("encodeChecksum(868229149) is 'hcHjjc9ghcEghc9g' (the proposal's encoding example; G row 15)", () => {
    expect(encodeChecksum(868229149)).toBe('hcHjjc9ghcEghc9g');
    expect(encodeChecksum(0xcc3fdfe2, false)).toBe('hcHjjc9ghcEghc9g');
    expect(encodeChecksum(0)).toBe('orrrrooooooooooo');
    expect(encodeChecksum(0xffffffff)).toBe('0000000000000000');
  });

  it("datasumOf(10x10 int16 arange) is '160565700' (REFERENCE A.8.3, astropy 5.2.1 agrees; G row 17)", () => {
    expect(datasumOf(arangeData())).toBe('160565700');
  });

  it("the 8-card header of REFERENCE A.8.3 gets CHECKSUM '4V8H7T694T6E4T69' and the HDU sums to 0xFFFFFFFF (G row 18)", () => {
    const header = eightCards('0000000000000000');
    expect(onesComplementSum(header)).toBe(1683207976);
    const total = onesComplementSum(header, 160565700);
    expect(total).toBe(1843773676);
    expect(encodeChecksum(total)).toBe('4V8H7T694T6E4T69');
    const hdu = concat(eightCards('4V8H7T694T6E4T69'), arangeData());
    expect(onesComplementSum(hdu)).toBe(0xffffffff);
    expect(parseFits(hdu).hdus[0]!.checksum).toEqual({ checksum: 'valid', datasum: 'valid' });
  });

  it('parseFits(bytes) reports a flipped data bit as invalid CHECKSUM and DATASUM, an error only when strict', () => {
    const hdu = concat(eightCards('4V8H7T694T6E4T69'), arangeData());
    hdu[2880 + 51] = hdu[2880 + 51]! ^ 0x04;
    const fits = parseFits(hdu);
    expect(fits.hdus[0]!.checksum).toEqual({ checksum: 'invalid', datasum: 'invalid' });
    expect(fits.diagnostics.map((d) => d.code).sort()).toEqual(['FITS_CHECKSUM_MISMATCH', 'FITS_DATASUM_MISMATCH']);
    expect(thrown(() => parseFits(hdu, { strict: true }))).toMatchObject({ code: 'FITS_DATASUM_MISMATCH' });
    expect(parseFits(hdu, { verifyChecksums: false }).hdus[0]!.checksum.checksum).toBe('not-checked');
    expect(parseFits(concat(headerBytes(['SIMPLE  =                    T', 'BITPIX  =                    8', 'NAXIS   =                    0']))).hdus[0]!.checksum).toEqual({
      checksum: 'absent',
      datasum: 'absent',
    });
  });

  it("parseFits(astropy's checksum.fits) verifies valid and checksum_false.fits invalid (astropy 5.2.1 test data)", () => {
    const good = astropyFile('checksum.fits');
    const bad = astropyFile('checksum_false.fits');
    if (good === undefined || bad === undefined) return;
    const g = parseFits(good);
    expect(g.hdus.length).toBeGreaterThan(0);
    for (const h of g.hdus) expect(h.checksum).toEqual({ checksum: 'valid', datasum: 'valid' });
    const b = parseFits(bad);
    expect(b.hdus.some((h) => h.checksum.checksum === 'invalid' || h.checksum.datasum === 'invalid')).toBe(true);
    expect(b.diagnostics.some((d) => d.code === 'FITS_CHECKSUM_MISMATCH' || d.code === 'FITS_DATASUM_MISMATCH')).toBe(true);
  });
});
