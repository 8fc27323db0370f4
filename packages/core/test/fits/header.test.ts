import { describe, expect, it } from 'vitest';
import { FitsFormatError } from '../../src/errors.js';
import { BLOCK_BYTES, CARD_BYTES, parseCard, parseFits, parseHeaderBlocks } from '../../src/fits/index.js';
import { headerBytes, imageFile, thrown } from './helpers.js';

const card = (s: string) => parseCard(s.padEnd(80), 1).card;
const readCards = (cards: string[]) => parseHeaderBlocks(headerBytes(cards));

describe('parseCard (REFERENCE G rows 1, 4-8, 10)', () => {
  it('BLOCK_BYTES is 2880 = 36 x 80 (FITS 3.0 §3.1; G row 1)', () => {
    expect(BLOCK_BYTES).toBe(2880);
    expect(BLOCK_BYTES / CARD_BYTES).toBe(36);
  });

  it("parseCard('SIMPLE  =   ...T') reads T written in byte 30 (FITS 3.0 §4.2.2; G row 4)", () => {
    const raw = 'SIMPLE  =                    T';
    expect(raw.indexOf('T', 9)).toBe(29);
    expect(card(raw)).toMatchObject({ keyword: 'SIMPLE', kind: 'value', value: true });
    expect(card('FLAG    =                    F / off')).toMatchObject({ value: false, comment: 'off' });
  });

  it("parseCard('EXPTIME = 1.5D+02 / exposure') gives 150 and the comment (FITS 3.0 §4.2.4; astropy 5.2.1; G row 5)", () => {
    const c = card('EXPTIME =             1.5D+02 / exposure');
    expect(c.value).toBeCloseTo(150, 12);
    expect(c.comment).toBe('exposure');
    // Reader leniency: lower-case exponent letters (REFERENCE A.3, common practice).
    expect(card('A       = 2.5e-3').value).toBeCloseTo(0.0025, 15);
    expect(card('A       = 1.5d2').value).toBe(150);
    expect(card('A       = .5').value).toBe(0.5);
    expect(card('A       = 5./no space before slash')).toMatchObject({ value: 5, comment: 'no space before slash' });
  });

  it("parseCard(\"OBJECT  = 'O''HARA  '\") undoubles quotes and drops trailing spaces (FITS 3.0 §4.2.1; astropy 5.2.1; G row 6)", () => {
    expect(card("OBJECT  = 'O''HARA  '           / name")).toMatchObject({ value: "O'HARA", comment: 'name' });
    expect(card("S       = '  lead'").value).toBe('  lead');
    // astropy 5.2.1 gives '' for both the null string and one space (REFERENCE A.3); we do the same.
    expect(card("S       = ''").value).toBe('');
    expect(card("S       = '   '").value).toBe('');
    expect(card("S       =    'free format' / c")).toMatchObject({ value: 'free format', comment: 'c' });
  });

  it("parseCard('INTVAL  = -042') reads -42 (FITS 3.0 §4.2.3; astropy 5.2.1; G row 7)", () => {
    expect(card('INTVAL  =                 -042').value).toBe(-42);
    expect(card('BIG     = 123456789012345678901234').value).toBe(123456789012345678901234n);
    expect(card('SAFE    = 9007199254740991').value).toBe(9007199254740991);
    expect(card('UNSAFE  = 9007199254740993').value).toBe(9007199254740993n);
  });

  it("parseCard('CPLX = (1.5, -2.0)') reads a complex value (FITS 3.0 §4.2.6; astropy 5.2.1; G row 8)", () => {
    expect(card('CPLX    = (1.5, -2.0)').value).toEqual({ re: 1.5, im: -2 });
    expect(card('CPLX    = (1, 2) / int parts').value).toEqual({ re: 1, im: 2 });
  });

  it("parseCard('UNDEF   =') is an undefined value (FITS 3.0 §4.1.2.3; astropy 5.2.1)", () => {
    expect(card('UNDEF   =')).toMatchObject({ kind: 'undefined', value: null });
    expect(card('UNDEF   =                      / why')).toMatchObject({ kind: 'undefined', comment: 'why' });
  });

  it("parseCard('COMMENT   This is a comment = not a value') is commentary (FITS 3.0 §4.4.2.4; astropy 5.2.1)", () => {
    // astropy 5.2.1 keeps the text from byte 9 on: '  This is a comment = not a value'.
    expect(card('COMMENT   This is a comment = not a value')).toMatchObject({
      keyword: 'COMMENT',
      kind: 'commentary',
      value: null,
      comment: '  This is a comment = not a value',
    });
    expect(card('HISTORY hello  ').comment).toBe('hello');
    expect(card('        blank kw text')).toMatchObject({ keyword: '', kind: 'commentary', comment: 'blank kw text' });
  });

  it("parseCard('HIERARCH ESO DET DIT = 10.0 / integration time') joins the tokens (HIERARCH convention; astropy 5.2.1; G row 10)", () => {
    expect(card('HIERARCH ESO DET DIT = 10.0 / integration time')).toMatchObject({
      keyword: 'ESO DET DIT',
      kind: 'hierarch',
      value: 10,
      comment: 'integration time',
    });
    expect(card("HIERARCH  ESO   INS OPTI-3 ID = 'ESO#427 ' / Optical element identifier")).toMatchObject({
      keyword: 'ESO INS OPTI-3 ID',
      value: 'ESO#427',
    });
  });

  it('parseCard(raw) reports an unreadable value as a FITS_BAD_VALUE problem', () => {
    const p = parseCard('F       =     abc'.padEnd(80), 1);
    expect(p.card.kind).toBe('undefined');
    expect(p.problems.map((x) => x.code)).toEqual(['FITS_BAD_VALUE']);
    expect(parseCard("S       = 'unclosed".padEnd(80), 1).problems.map((x) => x.code)).toEqual(['FITS_BAD_VALUE']);
  });
});

describe('parseHeaderBlocks (headers)', () => {
  it('parseHeaderBlocks(bytes) merges the CONTINUE registry example (CONTINUE convention; astropy 5.2.1)', () => {
    const { header, diagnostics } = readCards([
      "SVALUE  = 'This is a long string value &' / c1",
      "CONTINUE  'extending& ' / c2",
      "CONTINUE  ' over 3 lines.' / c3",
      'NEXT    = 1',
    ]);
    expect(header.string('SVALUE')).toBe('This is a long string value extending over 3 lines.');
    // astropy 5.2.1 joins the comments of the parts with a space.
    expect(header.comment('SVALUE')).toBe('c1 c2 c3');
    expect(header.cards.map((c) => c.kind)).toEqual(['value', 'continue', 'continue', 'value']);
    expect(header.number('NEXT')).toBe(1);
    expect(diagnostics).toEqual([]);
  });

  it('parseHeaderBlocks(bytes) rebuilds the 111-character astropy long string (CONTINUE; astropy 5.2.1; G row 9)', () => {
    const { header } = readCards([
      "LONGSTR = 'This is a very long string value that certainly will not fit &'",
      "CONTINUE  'within the sixty-eight character limit of one card'",
    ]);
    const v = header.string('LONGSTR');
    expect(v).toBe('This is a very long string value that certainly will not fit within the sixty-eight character limit of one card');
    expect(v).toHaveLength(111);
  });

  it("parseHeaderBlocks(bytes) keeps a final '&' when no CONTINUE follows, and a lone CONTINUE is commentary (astropy 5.2.1)", () => {
    const { header } = readCards(["S2      = 'ends with amp&'", 'X       = 1', "CONTINUE  'orphan'"]);
    expect(header.string('S2')).toBe('ends with amp&');
    expect(header.cards[2]).toMatchObject({ keyword: 'CONTINUE', kind: 'commentary' });
  });

  it('header.commentary(keyword) keeps COMMENT, HISTORY and blank cards in order', () => {
    const { header } = readCards(['COMMENT first', 'HISTORY h1', 'COMMENT second', '        blank', 'HISTORY h2']);
    expect(header.commentary('COMMENT')).toEqual(['first', 'second']);
    expect(header.commentary('HISTORY')).toEqual(['h1', 'h2']);
    expect(header.commentary('')).toEqual(['blank']);
    expect(header.has('COMMENT')).toBe(false);
  });

  it('header.get/number/string/boolean(keyword) type the values and return undefined otherwise', () => {
    const { header } = readCards([
      "GAINSTR = '  2.5  '",
      'GAIN    =                  2.5',
      'FLAG    =                    T',
      'NAME    = \'cam\'',
      'HIERARCH ESO DET DIT = 10.0',
      'UNDEF   =',
    ]);
    expect(header.number('GAINSTR')).toBe(2.5);
    expect(header.string('GAIN')).toBeUndefined();
    expect(header.boolean('FLAG')).toBe(true);
    expect(header.number('FLAG')).toBeUndefined();
    expect(header.string('NAME')).toBe('cam');
    expect(header.number('ESO DET DIT')).toBe(10);
    expect(header.number('HIERARCH ESO DET DIT')).toBe(10);
    expect(header.has('UNDEF')).toBe(true);
    expect(header.get('UNDEF')).toBeNull();
    expect(header.get('MISSING')).toBeUndefined();
    expect(header.has('MISSING')).toBe(false);
  });

  it('parseHeaderBlocks(bytes) keeps the first of duplicate keywords with FITS_DUPLICATE_KEYWORD (FITS 3.0 §4.1.2.3; first wins by our rule)', () => {
    const { header, diagnostics } = readCards(['EXPTIME = 10', 'EXPTIME = 20']);
    expect(header.number('EXPTIME')).toBe(10);
    expect(diagnostics).toMatchObject([{ code: 'FITS_DUPLICATE_KEYWORD', severity: 'warning', where: { card: 2, keyword: 'EXPTIME' } }]);
  });

  it('parseHeaderBlocks(bytes) finds lower-case keywords case-insensitively with FITS_LOWERCASE_KEYWORD (REFERENCE A.10)', () => {
    const { header, diagnostics } = readCards(['exptime = 12.5']);
    expect(header.number('EXPTIME')).toBe(12.5);
    expect(header.number('ExpTime')).toBe(12.5);
    expect(header.cards[0]?.keyword).toBe('exptime');
    expect(diagnostics.map((d) => d.code)).toEqual(['FITS_LOWERCASE_KEYWORD']);
  });

  it('parseHeaderBlocks(bytes) reports bytes outside 0x20-0x7E with FITS_ILLEGAL_CHARACTER (FITS 3.0 §3.2)', () => {
    const bytes = headerBytes(["OBJECT  = 'M31'"]);
    bytes[12] = 0x09;
    const { diagnostics } = parseHeaderBlocks(bytes);
    expect(diagnostics).toMatchObject([{ code: 'FITS_ILLEGAL_CHARACTER', where: { card: 1, byte: 0 } }]);
  });

  it('parseHeaderBlocks(bytes, { strict: true }) turns a warning into FitsFormatError with the same code', () => {
    const e = thrown(() => parseHeaderBlocks(headerBytes(['A       = 1', 'A       = 2']), { strict: true, file: 'x.fits' }));
    expect(e).toBeInstanceOf(FitsFormatError);
    expect(e).toMatchObject({ code: 'FITS_DUPLICATE_KEYWORD', where: { file: 'x.fits', card: 2 } });
  });

  it('parseHeaderBlocks(bytes) without END throws FITS_NO_END', () => {
    expect(thrown(() => parseHeaderBlocks(headerBytes(['A       = 1'], false)))).toMatchObject({ code: 'FITS_NO_END' });
  });

  it('parseHeaderBlocks(bytes) sizes a 36-card header at one block and a 37-card header at two (FITS 3.0 §3.3.1; REFERENCE A.1)', () => {
    const cards = (n: number) => Array.from({ length: n }, (_, i) => `K${i}`.padEnd(8) + `= ${i}`);
    expect(parseHeaderBlocks(headerBytes(cards(35))).headerBytes).toBe(2880);
    expect(parseHeaderBlocks(headerBytes(cards(36))).headerBytes).toBe(5760);
  });

  it('parseFits(bytes) reads a header spread over two blocks', () => {
    const extra = Array.from({ length: 40 }, (_, i) => `KEY${i}`.padEnd(8) + `= ${i}`);
    const fits = parseFits(imageFile(8, [2, 1], '0102', extra));
    expect(fits.hdus[0]?.layout.headerBytes).toBe(5760);
    expect(fits.hdus[0]?.header.number('KEY39')).toBe(39);
    expect(Array.from(fits.hdus[0]?.image?.pixels ?? [])).toEqual([1, 2]);
  });
});
