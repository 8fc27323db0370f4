import { describe, expect, it } from 'vitest';
import { frameKindFromText, parseFitsDate } from '../../src/frame/observation.js';

describe('frameKindFromText', () => {
  // Spellings: REFERENCE.md A.9 (common practice, no single authority).
  it.each([
    ['Light Frame', 'light'], ['OBJECT', 'light'], ['science', 'light'],
    ['Bias Frame', 'bias'], ['zero', 'bias'], ['Offset', 'bias'],
    ['Dark Frame', 'dark'], ['DARK', 'dark'],
    ['Flat Field', 'flat'], ['sky flat', 'flat'], ['Dome Flat', 'flat'], ['FLAT', 'flat'],
    ['Dark Flat', 'flat-dark'], ['flat dark', 'flat-dark'], ['FLAT_DARK', 'flat-dark'], ['DarkFlat', 'flat-dark'],
    ['focus', 'unknown'], ['', 'unknown'],
  ])('frameKindFromText(%j) is %s', (text, kind) => {
    expect(frameKindFromText(text)).toBe(kind);
  });
  it('frameKindFromText(undefined) is unknown', () => expect(frameKindFromText(undefined)).toBe('unknown'));
});

describe('parseFitsDate', () => {
  // FITS 3.0 §4.4.2.1 date form; epoch values checked against Date.UTC by hand.
  it('parseFitsDate(ISO with fraction) keeps milliseconds', () => {
    expect(parseFitsDate('2024-03-01T21:05:33.123')).toBe(Date.UTC(2024, 2, 1, 21, 5, 33) + 123);
  });
  it('parseFitsDate(date only) is midnight UTC', () => expect(parseFitsDate('2000-01-01')).toBe(Date.UTC(2000, 0, 1)));
  it('parseFitsDate(old DD/MM/YY form) is undefined', () => expect(parseFitsDate('01/03/98')).toBeUndefined());
  it('parseFitsDate(MJD 51544.5 epoch) maps to 2000-01-01T12:00 (REFERENCE G row 20 epoch)', () => {
    const mjd = (ms: number) => ms / 86400000 + 40587;
    expect(mjd(parseFitsDate('2000-01-01T12:00:00')!)).toBe(51544.5);
    expect(mjd(parseFitsDate('2024-03-01T21:05:33.123')!)).toBeCloseTo(60370.87885559028, 9);
  });
});
