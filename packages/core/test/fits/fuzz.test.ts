// Property and fuzz tests (fast-check 4.10.2). DESIGN §5: mutations of valid files give only the
// library's typed errors (CoreError subclasses) or diagnostics: no other exception, crash or hang.
// The hang bound is the per-test timeout; there are no timing assertions.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { CoreError } from '../../src/errors.js';
import { encodeFits, parseFits } from '../../src/fits/index.js';
import type { ParseOptions, WriteCard } from '../../src/fits/index.js';
import { concat, dataBytes, headerBytes } from './helpers.js';

const SEED = 20240301;

/** Small valid files that cover the reader's paths: scaling, extensions, tables, long strings, HIERARCH. */
const BASES: Uint8Array[] = [
  encodeFits([
    {
      pixels: Uint16Array.from({ length: 40 * 30 }, (_, i) => (i * 7919) % 65536),
      width: 40,
      height: 30,
      cards: [
        { keyword: 'EXPTIME', value: 30, real: true },
        { keyword: 'LONGSTR', value: 'a long string value '.repeat(6) },
        { keyword: 'HIERARCH CAM DET TEMP', value: -10.5 },
        { keyword: 'HISTORY', value: 'written for fuzzing' },
      ],
    },
    { pixels: Float32Array.from({ length: 100 }, (_, i) => (i % 9 === 0 ? NaN : i / 3)), width: 10, height: 10 },
    { pixels: Int32Array.from({ length: 24 }, (_, i) => i * -100000), width: 4, height: 3, planes: 2 },
  ]),
  concat(
    headerBytes(['SIMPLE  =                    T', 'BITPIX  =                   16', 'NAXIS   =                    2', 'NAXIS1  =                   20', 'NAXIS2  =                   10', 'BSCALE  =                  0.5', 'BZERO   =                  100', 'BLANK   =                   -1', 'EXTEND  =                    T']),
    dataBytes(Uint8Array.from({ length: 400 }, (_, i) => (i * 37) % 256)),
    headerBytes(["XTENSION= 'BINTABLE'", 'BITPIX  =                    8', 'NAXIS   =                    2', 'NAXIS1  =                    8', 'NAXIS2  =                   10', 'PCOUNT  =                   16', 'GCOUNT  =                    1', 'TFIELDS =                    1', "TFORM1  = '8A      '"]),
    dataBytes(new Uint8Array(96)),
    headerBytes(["XTENSION= 'IMAGE   '", 'BITPIX  =                   64', 'NAXIS   =                    1', 'NAXIS1  =                    5', 'PCOUNT  =                    0', 'GCOUNT  =                    1', 'BZERO   =  9223372036854775808']),
    dataBytes(Uint8Array.from({ length: 40 }, (_, i) => i * 5)),
  ),
];

/** Parse and require that any failure is one of our typed errors. */
function parsesOrTypedError(bytes: Uint8Array, opts: ParseOptions): boolean {
  try {
    const fits = parseFits(bytes, opts);
    for (const d of fits.diagnostics) if (typeof d.code !== 'string' || d.message === '') return false;
    return true;
  } catch (e) {
    if (e instanceof CoreError) return typeof e.code === 'string';
    throw e;
  }
}

const optionsArb: fc.Arbitrary<ParseOptions> = fc.record(
  {
    strict: fc.boolean(),
    decode: fc.boolean(),
    hdu: fc.integer({ min: 0, max: 3 }),
    rows: fc.record({ start: fc.integer({ min: -1, max: 12 }), count: fc.integer({ min: 0, max: 12 }) }),
    maxPixels: fc.constantFrom(10, 1000, 400e6),
  },
  { requiredKeys: [] },
);

/** Byte offsets of the cards holding a keyword in a file (bytes 1-8 match). */
function cardOffsets(bytes: Uint8Array, keywords: RegExp): number[] {
  const out: number[] = [];
  for (let p = 0; p + 80 <= bytes.length; p += 80) {
    const key = String.fromCharCode(...bytes.subarray(p, p + 8)).trimEnd();
    if (keywords.test(key)) out.push(p);
  }
  return out;
}

describe('fuzzing parseFits (fast-check)', () => {
  it('parseFits(bytes with random byte changes) returns or throws a CoreError (2500 cases)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: BASES.length - 1 }),
        fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 255 }), fc.boolean()), { minLength: 1, maxLength: 12 }),
        optionsArb,
        (b, flips, opts) => {
          const bytes = BASES[b]!.slice();
          for (const [where, value, inHeader] of flips) {
            // Half the changes land in the first header block, where parsing decisions are made.
            const span = inHeader ? 2880 : bytes.length;
            bytes[where % span] = value;
          }
          return parsesOrTypedError(bytes, opts);
        },
      ),
      { numRuns: 2500, seed: SEED },
    );
  }, 30_000);

  it('parseFits(truncated or extended bytes) returns or throws a CoreError (1200 cases)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: BASES.length - 1 }),
        fc.nat(),
        fc.uint8Array({ maxLength: 200 }),
        optionsArb,
        (b, cut, tail, opts) => {
          const base = BASES[b]!;
          const bytes = concat(base.subarray(0, cut % (base.length + 1)), tail);
          return parsesOrTypedError(bytes, opts);
        },
      ),
      { numRuns: 1200, seed: SEED + 1 },
    );
  }, 30_000);

  it('parseFits(bytes with inflated NAXISn, BITPIX, PCOUNT or GCOUNT) returns or throws a CoreError without huge allocations (1200 cases)', () => {
    const value = fc.oneof(
      fc.integer({ min: -5, max: 100_000 }).map(String),
      fc.bigInt({ min: 0n, max: 10n ** 40n }).map(String),
      fc.constantFrom('2147483647', '4294967296', '9007199254740993', '1e300', '-0', '0', "'12'", 'T'),
    );
    fc.assert(
      fc.property(fc.integer({ min: 0, max: BASES.length - 1 }), fc.nat(), value, optionsArb, (b, pick, v, opts) => {
        const bytes = BASES[b]!.slice();
        const offsets = cardOffsets(bytes, /^(NAXIS[0-9]*|BITPIX|PCOUNT|GCOUNT)$/);
        const at = offsets[pick % offsets.length]!;
        const text = v.padStart(20).slice(-20);
        for (let i = 0; i < 20; i++) bytes[at + 10 + i] = text.charCodeAt(i);
        return parsesOrTypedError(bytes, opts);
      }),
      { numRuns: 1200, seed: SEED + 2 },
    );
  }, 30_000);

  it('parseFits(random bytes after a SIMPLE card) returns or throws a CoreError (300 cases)', () => {
    const simple = new TextEncoder().encode('SIMPLE  =                    T'.padEnd(80));
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 6000 }), (rest) => parsesOrTypedError(concat(simple, rest), {})),
      { numRuns: 300, seed: SEED + 3 },
    );
  }, 30_000);
});

// Keywords the writer sets itself, conventions the reader interprets, or names the reader treats specially.
const AVOID = /^(SIMPLE|XTENSION|BITPIX|NAXIS[0-9]*|PCOUNT|GCOUNT|EXTEND|BZERO|BSCALE|BLANK|CHECKSUM|DATASUM|END|CONTINUE|COMMENT|HISTORY|HIERARCH|GROUPS|LONGSTRN)$/;
const keywordArb = fc.stringMatching(/^[A-Z][A-Z0-9_-]{0,7}$/).filter((k) => !AVOID.test(k));
const printable = (max: number) => fc.stringMatching(new RegExp(`^[\\x20-\\x7e]{0,${max}}$`));
// Strings keep leading spaces but lose trailing ones (FITS 3.0 §4.2.1), so generated values end in a non-space.
const stringValue = fc.oneof(printable(200), printable(20)).map((s) => s.replace(/ +$/, ''));
const commentArb = printable(40).map((s) => s.trim());
const valueArb: fc.Arbitrary<Pick<WriteCard, 'value' | 'real'>> = fc.oneof(
  fc.boolean().map((value) => ({ value })),
  fc.integer({ min: Number.MIN_SAFE_INTEGER, max: Number.MAX_SAFE_INTEGER }).map((value) => ({ value })),
  fc.bigInt({ min: -(10n ** 30n), max: 10n ** 30n }).filter((v) => v > 2n ** 53n || v < -(2n ** 53n)).map((value) => ({ value })),
  fc.double({ noNaN: true, noDefaultInfinity: true }).map((value) => ({ value, real: true })),
  stringValue.map((value) => ({ value })),
  fc.constant({ value: null }),
);

describe('header write-then-parse round trip (fast-check)', () => {
  it('parseFits(encodeFits(random cards)) gives back every value exactly and comments as written or cut (500 cases)', () => {
    const cardsArb = fc.uniqueArray(fc.record({ keyword: keywordArb, v: valueArb, comment: commentArb }), {
      selector: (c) => c.keyword,
      maxLength: 40,
    });
    const historyArb = fc.array(printable(72).map((s) => s.replace(/ +$/, '')), { maxLength: 3 });
    fc.assert(
      fc.property(cardsArb, historyArb, (cards, history) => {
        const writeCards: WriteCard[] = cards.map((c) => ({ keyword: c.keyword, ...c.v, ...(c.comment === '' ? {} : { comment: c.comment }) }));
        for (const h of history) writeCards.push({ keyword: 'HISTORY', value: h });
        const bytes = encodeFits([{ pixels: Uint16Array.from([1, 2, 3, 4]), width: 2, height: 2, cards: writeCards }]);
        const fits = parseFits(bytes, { strict: true });
        const header = fits.hdus[0]!.header;
        for (const c of cards) {
          const got = header.get(c.keyword);
          const want = c.v.value;
          if (typeof want === 'number') expect(Object.is(got, want), `${c.keyword}: ${String(got)} vs ${want}`).toBe(true);
          else expect(got).toEqual(want);
          expect(c.comment.startsWith(header.comment(c.keyword) ?? '<missing>')).toBe(true);
        }
        expect(header.commentary('HISTORY')).toEqual(history);
        expect(fits.hdus[0]!.checksum).toEqual({ checksum: 'valid', datasum: 'valid' });
      }),
      { numRuns: 500, seed: SEED + 4 },
    );
  }, 30_000);
});
