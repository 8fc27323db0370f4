import { describe, expect, it } from 'vitest';
import { readFitsDate, tileDitherRandoms } from '../../src/fits/index.js';

describe('readFitsDate (FITS 3.0 §4.4.2.1; IAU FWG Y2K agreement)', () => {
  it("readFitsDate('2024-03-01T21:05:33.123') is MJD 60370.87885559028 (astropy 5.2.1 Time; G row 20)", () => {
    expect(readFitsDate('2024-03-01T21:05:33.123')!.mjd).toBeCloseTo(60370.87885559028, 9);
    // More values from astropy 5.2.1 Time(..., scale='utc').mjd.
    expect(readFitsDate('2000-01-01T12:00:00')!.mjd).toBe(51544.5);
    expect(readFitsDate('2024-02-29')!.mjd).toBe(60369);
    expect(readFitsDate('1999-12-31T23:59:59.999999')!.mjd).toBeCloseTo(51543.999999999985, 9);
  });

  it("readFitsDate(text) keeps milliseconds in unixMs and reads 'DD/MM/YY' as 1900-1999", () => {
    expect(readFitsDate(' 2024-03-01T21:05:33.123 ')!.unixMs).toBe(Date.UTC(2024, 2, 1, 21, 5, 33, 123));
    expect(readFitsDate('31/12/98')).toMatchObject({ legacy: true, unixMs: Date.UTC(1998, 11, 31) });
  });

  it('readFitsDate(text) returns undefined for dates FITS does not allow', () => {
    for (const t of ['2024-3-01', '2024-02-30', '2024-13-01', '2024-03-01T25:00:00', '2024-03-01 21:05:33', 'yesterday', '']) {
      expect(readFitsDate(t), t).toBeUndefined();
    }
  });
});

describe('tileDitherRandoms (tiled image compression; cfitsio fits_init_randoms)', () => {
  it('tileDitherRandoms() ends on seed 1043618065 with RN[1] = 0.1315378 (G row 19)', () => {
    const { values, lastSeed } = tileDitherRandoms();
    expect(lastSeed).toBe(1043618065);
    expect(values).toHaveLength(10000);
    expect(values[0]).toBeCloseTo(7.826369e-6, 12);
    expect(values[1]).toBeCloseTo(0.1315378, 7);
    expect(values[2]).toBeCloseTo(0.75560534, 7);
    expect(values[9999]).toBeCloseTo(0.48597252, 7);
  });
});
