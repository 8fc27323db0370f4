import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { encodeFits, formatCard, parseFits } from '../../src/index.js';
import { readFitsFile, readFitsHeaders } from '../../src/node.js';

/** A valid uint16 primary image followed by an IMAGE extension whose BITPIX is illegal (FITS 3.0 §4.4.1.1). */
function fileWithBrokenExtension(): Uint8Array {
  const primary = encodeFits([{ pixels: new Uint16Array([1, 2, 3, 4, 5, 6]), width: 3, height: 2 }]);
  const cards = [
    formatCard({ keyword: 'XTENSION', value: 'IMAGE' }),
    formatCard({ keyword: 'BITPIX', value: 12 }),
    formatCard({ keyword: 'NAXIS', value: 0 }),
    formatCard({ keyword: 'PCOUNT', value: 0 }),
    formatCard({ keyword: 'GCOUNT', value: 1 }),
    'END'.padEnd(80),
  ].join('');
  const ext = new TextEncoder().encode(cards.padEnd(2880));
  const out = new Uint8Array(primary.length + ext.length);
  out.set(primary, 0);
  out.set(ext, primary.length);
  return out;
}

describe('a broken extension header', () => {
  const dir = mkdtempSync(path.join(os.tmpdir(), 'subgauge-ext-'));
  const file = path.join(dir, 'broken-ext.fits');
  writeFileSync(file, fileWithBrokenExtension());
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('parseFits(bytes) keeps the primary image and warns FITS_BAD_EXTENSION', () => {
    const fits = parseFits(fileWithBrokenExtension());
    expect(fits.hdus).toHaveLength(1);
    expect(Array.from(fits.hdus[0]!.image!.pixels as Uint16Array)).toEqual([1, 2, 3, 4, 5, 6]);
    expect(fits.diagnostics.map((d) => d.code)).toContain('FITS_BAD_EXTENSION');
    expect(fits.diagnostics.find((d) => d.code === 'FITS_BAD_EXTENSION')!.where).toMatchObject({ hdu: 1, byte: 5760 });
  });

  it('parseFits(bytes, { strict: true }) refuses it with the fault itself (FITS_BAD_BITPIX in HDU 1)', () => {
    expect(() => parseFits(fileWithBrokenExtension(), { strict: true })).toThrowError(
      expect.objectContaining({ code: 'FITS_BAD_BITPIX', where: expect.objectContaining({ hdu: 1 }) }),
    );
  });

  it('readFitsFile and readFitsHeaders behave the same on the file', async () => {
    const whole = await readFitsFile(file);
    expect(whole.hdus).toHaveLength(1);
    expect(whole.diagnostics.map((d) => d.code)).toContain('FITS_BAD_EXTENSION');
    const headers = await readFitsHeaders(file);
    expect(headers.hdus).toHaveLength(1);
    expect(headers.diagnostics.map((d) => d.code)).toContain('FITS_BAD_EXTENSION');
  });
});
