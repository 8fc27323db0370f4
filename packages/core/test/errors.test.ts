import { describe, expect, it } from 'vitest';
import { CoreError, FitsFormatError, describeWhere } from '../src/errors.js';

describe('errors', () => {
  it('new FitsFormatError(code, …) keeps code, where and its class name', () => {
    const e = new FitsFormatError('FITS_BAD_BITPIX', 'bad', { hdu: 0, card: 2, keyword: 'BITPIX' });
    expect(e).toBeInstanceOf(CoreError);
    expect(e.name).toBe('FitsFormatError');
    expect(e.code).toBe('FITS_BAD_BITPIX');
    expect(JSON.parse(JSON.stringify(e))).toEqual({
      name: 'FitsFormatError', code: 'FITS_BAD_BITPIX', message: 'bad', where: { hdu: 0, card: 2, keyword: 'BITPIX' },
    });
  });
  it('describeWhere(where) names HDU, card and byte', () => {
    expect(describeWhere({ hdu: 1, card: 12, keyword: 'NAXIS1', byte: 3760 })).toBe('HDU 1, card 12 (NAXIS1), byte 3760');
    expect(describeWhere({})).toBe('');
  });
});
