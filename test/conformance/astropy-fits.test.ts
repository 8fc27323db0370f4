// Conformance of parseFits with astropy on real FITS files written by other programs.
//
// Sources: astropy 5.2.1 `astropy.io.fits` with numpy 1.24.2 (Debian python3-astropy 5.2.1-2+deb12u1),
// run by scripts/reference/astropy_fits_goldens.py into fixtures/reference/astropy-fits.json, over
// (1) the FITS files of astropy's own tests (astropy/io/fits/tests/data) and (2) the FITS files of the
// Debian package eso-midas-testdata 22.02pl1.0-2 (/usr/lib/eso-midas/22FEB/test). The versions the
// goldens were made with are recorded in the JSON ("sources") and checked below.
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { CoreError, parseFits } from '@subgauge/core';
import type { CardValue, ChecksumStatus, ElementType, FitsFile, Hdu, HduKind, ImageData, Pixels } from '@subgauge/core';
import {
  REPO_ROOT,
  datasetRoot,
  debianPackageVersion,
  hasDataset,
  pythonWithAstropy,
  requireOutside,
  runPython,
} from '../helpers/outside.js';
import type { OutsideDataset } from '../helpers/outside.js';

type GoldenNumber = number | 'NaN' | 'Infinity' | '-Infinity';

interface GoldenValue {
  type: 'bool' | 'int' | 'float' | 'str' | 'complex' | 'undefined' | 'astropy-error' | 'unknown';
  value: boolean | number | string | { re: GoldenNumber; im: GoldenNumber } | null;
  occurrences?: number;
  astropyError?: string;
}

interface GoldenImage {
  shape: number[];
  elementType: ElementType;
  pixelCount: number;
  sha256: string;
  nanCount: number;
  infCount: number;
  min: GoldenNumber | null;
  max: GoldenNumber | null;
  sum: GoldenNumber | null;
  sumAbs: GoldenNumber | null;
  blank?: { stored: string; storedCount: number; astropyMadeNaN: boolean; integerElementType?: ElementType };
}

interface GoldenHdu {
  index: number;
  kind: 'primary' | 'image' | 'bintable' | 'table' | 'compressed' | 'groups' | 'other';
  keywords: Record<string, GoldenValue>;
  absentKeywords: string[];
  /** CHECKSUM/DATASUM over the stored bytes (numpy, in the golden script). */
  checksum: ChecksumStatus;
  datasum: ChecksumStatus;
  /** astropy's verify_checksum/verify_datasum, recorded only where they differ from the above. */
  astropyChecksum?: string;
  astropyDatasum?: string;
  image?: GoldenImage;
  compressed?: { bitpix: number; axes: number[]; algorithm: string };
  emptyShape?: number[];
  astropyError?: string;
  astropyHeaderError?: string;
}

interface GoldenFile {
  dataset: OutsideDataset;
  path: string;
  bytes: number;
  hdus: GoldenHdu[];
  astropyError?: string;
  astropyStoppedAtHdu?: number;
  astropyWarnings: string[];
}

interface Golden {
  sources: Record<string, string | null>;
  files: GoldenFile[];
}

const GOLDEN_PATH = join(REPO_ROOT, 'fixtures/reference/astropy-fits.json');
const goldenText = readFileSync(GOLDEN_PATH, 'utf8');
const golden = JSON.parse(goldenText) as Golden;

/** astropy HDU classes → our HduKind (CompImageHDU is a BINTABLE with ZIMAGE = T; FITS tiled image convention). */
const KIND: Record<GoldenHdu['kind'], HduKind> = {
  primary: 'image',
  image: 'image',
  bintable: 'binary-table',
  table: 'ascii-table',
  compressed: 'compressed-image',
  groups: 'random-groups',
  other: 'unknown',
};

/**
 * Where astropy 5.2.1 itself departs from the standard, the expectation comes from the standard instead.
 * Keys: `dataset:path HDU n` (kind) or `dataset:path HDU n KEYWORD` (value).
 */
const ASTROPY_DEVIATIONS: Record<string, { kind?: HduKind; value?: CardValue; reason: string }> = {
  'eso-midas-testdata:prim/badMPE.fits HDU 0 XPROC0': {
    // The six stored cards: XPROC0  = 'epatplot set=''P0135746501PNS009PIEVLI0000.FIT'' withflag=yes sigma&'
    // then CONTINUE '=3 xaxisadu=no device=''/VCPS'' outdir=''./'' useplotfile=no plotf&',
    // 'ile=''events_pat.ps'' withqdp=no withoutputmask=yes outmaskname=''P&',
    // '0135746501PNS009FLGMAP00##.FIT'' withusermode=no usermode=0 withuse&',
    // 'rrawy=no userrawy=190 # (epatplot-1.1.8) [xmmsas_20030110_1802-5.4.&', '1]      '.
    value:
      "epatplot set='P0135746501PNS009PIEVLI0000.FIT' withflag=yes sigma=3 xaxisadu=no device='/VCPS' outdir='./' " +
      "useplotfile=no plotfile='events_pat.ps' withqdp=no withoutputmask=yes " +
      "outmaskname='P0135746501PNS009FLGMAP00##.FIT' withusermode=no usermode=0 withuserrawy=no userrawy=190 " +
      '# (epatplot-1.1.8) [xmmsas_20030110_1802-5.4.1]',
    reason:
      "astropy 5.2.1 loses text after a doubled quote in CONTINUE parts (astropy issue #14581, fixed by PR #14598 " +
      'for 5.2.2); value joined by hand from the stored cards per the CONTINUE convention (REFERENCE.md A.8.1)',
  },
  'astropy-test-data:invalid/group_invalid.fits HDU 0': {
    kind: 'image',
    reason:
      'GROUPS = T with NAXIS = 0 is not a random-groups header (random groups need NAXIS1 = 0, FITS 3.0 §6.1; ' +
      'astropy files it under tests/data/invalid); astropy picks GroupsHDU from GROUPS = T alone. With no data ' +
      'either kind reads the same; ours calls it an image without data',
  },
};

/**
 * Files where our reader disagrees with astropy and astropy is right, reported to the reader's owner.
 * Their tests keep asserting astropy's behaviour and run as `it.fails`, so they turn red once the
 * reader is fixed; then the entry is removed.
 */
const KNOWN_READER_FINDINGS: Record<string, string> = {
  'astropy-test-data:verify.fits':
    'BITPIX after NAXIS in the primary header: astropy reads it; parseFits throws FITS_KEYWORD_ORDER even when not strict',
};

/** The acceptance bar (task brief): at least 40 image HDUs from the two outside datasets, all agreeing. */
const MINIMUM_AGREEING_IMAGE_HDUS = 40;
const agreeingImageHdus = new Set<string>();
const listedCompressedHdus = new Set<string>();

function goldenNumber(x: GoldenNumber): number {
  return typeof x === 'number' ? x : x === 'NaN' ? Number.NaN : x === 'Infinity' ? Infinity : -Infinity;
}

/** Physical values as float64; BigInt data convert with Number() (round to nearest, as numpy's astype). */
function valueAt(pixels: Pixels, i: number): number {
  return Number(pixels[i]);
}

interface ValueSummary {
  sha256: string;
  nanCount: number;
  infCount: number;
  min: number | null;
  max: number | null;
  sum: number | null;
  blankCount: number;
}

/**
 * The golden's summary computed from our pixels: sha256 of little-endian float64 values in file order
 * with every NaN written as 0x7ff8000000000000, NaN/Inf counts, min, max and a Neumaier sum.
 * `blankAsNaN` maps pixels equal to the BLANK value to NaN first (what astropy does when it converts
 * integer data with BLANK to float).
 */
function summarize(image: ImageData, blankAsNaN: number | undefined): ValueSummary {
  const { pixels } = image;
  const hash = createHash('sha256');
  const chunk = 1 << 16;
  const buf = new ArrayBuffer(chunk * 8);
  const view = new DataView(buf);
  let nanCount = 0;
  let infCount = 0;
  let blankCount = 0;
  let min = Infinity;
  let max = -Infinity;
  let sum = 0;
  let compensation = 0;
  let seen = 0;
  for (let start = 0; start < pixels.length; start += chunk) {
    const end = Math.min(pixels.length, start + chunk);
    for (let i = start; i < end; i++) {
      let v = valueAt(pixels, i);
      if (blankAsNaN !== undefined && v === blankAsNaN) {
        v = Number.NaN;
        blankCount++;
      }
      const at = (i - start) * 8;
      if (Number.isNaN(v)) {
        nanCount++;
        view.setUint32(at, 0, true);
        view.setUint32(at + 4, 0x7ff80000, true);
        continue;
      }
      view.setFloat64(at, v, true);
      if (v === Infinity || v === -Infinity) infCount++;
      if (v < min) min = v;
      if (v > max) max = v;
      seen++;
      // Neumaier summation, so the comparison tests the pixels rather than a summation order.
      const t = sum + v;
      compensation += Math.abs(sum) >= Math.abs(v) ? sum - t + v : v - t + sum;
      sum = t;
    }
    hash.update(new Uint8Array(buf, 0, (end - start) * 8));
  }
  const total = infCount > 0 ? sum : sum + compensation;
  return {
    sha256: hash.digest('hex'),
    nanCount,
    infCount,
    min: seen ? min : null,
    max: seen ? max : null,
    sum: seen ? total : null,
    blankCount,
  };
}

function expectNumberLike(actual: number | null, expected: GoldenNumber | null, what: string): void {
  if (expected === null) {
    expect(actual, what).toBeNull();
    return;
  }
  expect(actual, what).not.toBeNull();
  expect(Object.is(actual, goldenNumber(expected)) || actual === goldenNumber(expected), `${what}: ${actual} vs ${expected}`).toBe(
    true,
  );
}

/** Compare one keyword's value with astropy's `header[keyword]` (first occurrence). */
function expectKeyword(hdu: Hdu, keyword: string, expected: GoldenValue, where: string): void {
  const actual: CardValue | undefined = hdu.header.get(keyword);
  const what = `${where} ${keyword}: ours ${String(actual)} (${typeof actual}), astropy ${JSON.stringify(expected.value)} (${expected.type})`;
  const deviation = ASTROPY_DEVIATIONS[`${where} ${keyword}`];
  if (deviation?.value !== undefined) {
    expect(actual, `${what}; expected per the standard: ${deviation.reason}`).toEqual(deviation.value);
    expect(actual, `${where} ${keyword}: the deviation entry must differ from astropy`).not.toEqual(expected.value);
    return;
  }
  switch (expected.type) {
    case 'bool':
      expect(actual, what).toBe(expected.value);
      break;
    case 'int':
      expect(typeof actual === 'number' || typeof actual === 'bigint', what).toBe(true);
      if (typeof expected.value === 'string') expect(BigInt(actual as number | bigint), what).toBe(BigInt(expected.value));
      else expect(Number(actual), what).toBe(expected.value);
      break;
    case 'float':
      expect(typeof actual, what).toBe('number');
      expectNumberLike(actual as number, expected.value as GoldenNumber, what);
      break;
    case 'str':
      expect(actual, what).toBe(expected.value);
      break;
    case 'complex': {
      const c = expected.value as { re: GoldenNumber; im: GoldenNumber };
      expect(actual, what).toEqual({ re: goldenNumber(c.re), im: goldenNumber(c.im) });
      break;
    }
    case 'undefined':
      expect(actual, what).toBeNull();
      break;
    case 'astropy-error':
    case 'unknown':
      // astropy refuses this card (FITS 3.0 §4.2 value syntax); ours must not crash reading it.
      break;
  }
}

function checkImage(hdu: Hdu, expected: GoldenImage, where: string): void {
  const image = hdu.image;
  expect(image, `${where}: astropy decodes this image; ours has no image`).toBeDefined();
  if (!image) return;
  const shape = expected.shape;
  expect(hdu.layout.axes, `${where} NAXISn`).toEqual(shape);
  expect(image.width, `${where} width`).toBe(shape[0]);
  expect(image.height, `${where} height`).toBe(shape[1] ?? 1);
  expect(image.planes, `${where} planes`).toBe(shape.slice(2).reduce((a, b) => a * b, 1));
  expect(image.rowStart, `${where} rowStart`).toBe(0);
  expect(image.pixels.length, `${where} pixel count`).toBe(expected.pixelCount);

  // astropy turns integer data with BLANK into float with NaN (astropy 5.2.1 ImageHDU._get_scaled_image_data);
  // our contract keeps unscaled integers and reports blankValue/blankCount (types.ts ImageData), so the
  // NaN mapping is applied here before the values are compared.
  const blank = expected.blank;
  let blankAsNaN: number | undefined;
  let expectedType = expected.elementType;
  if (blank?.astropyMadeNaN && blank.integerElementType && image.blankValue !== undefined) {
    expectedType = blank.integerElementType;
    blankAsNaN = Number(image.blankValue);
  }
  expect(image.elementType, `${where} element type`).toBe(expectedType);
  expect(hdu.layout.elementType, `${where} layout element type`).toBe(expectedType);
  if (blank) {
    expect(hdu.layout.blank, `${where} BLANK`).toBe(BigInt(blank.stored));
    if (image.blankValue !== undefined) expect(image.blankCount, `${where} blankCount`).toBe(blank.storedCount);
  }

  const ours = summarize(image, blankAsNaN);
  if (blankAsNaN !== undefined && blank) expect(ours.blankCount, `${where} pixels equal to BLANK`).toBe(blank.storedCount);
  expect(ours.nanCount, `${where} NaN count`).toBe(expected.nanCount);
  expect(ours.infCount, `${where} Inf count`).toBe(expected.infCount);
  expectNumberLike(ours.min, expected.min, `${where} min`);
  expectNumberLike(ours.max, expected.max, `${where} max`);
  if (expected.sum === null || typeof expected.sum === 'string') {
    expectNumberLike(ours.sum, expected.sum, `${where} sum`);
  } else {
    // Golden sum is math.fsum (exactly rounded); ours is compensated: 1e-9 relative, with a floor of
    // 1e-15 x sum|x| for sums that cancel to (near) zero.
    const scale = Math.max(Math.abs(expected.sum), 1e-6 * goldenNumber(expected.sumAbs ?? 0));
    expect(Math.abs((ours.sum ?? Number.NaN) - expected.sum), `${where} sum ${ours.sum} vs ${expected.sum}`).toBeLessThanOrEqual(
      1e-9 * scale,
    );
  }
  expect(ours.sha256, `${where} sha256 of the float64 physical values`).toBe(expected.sha256);
}

function checkHdu(file: GoldenFile, parsed: FitsFile, g: GoldenHdu): void {
  const where = `${file.dataset}:${file.path} HDU ${g.index}`;
  const hdu = parsed.hdus[g.index];
  expect(hdu, `${where}: missing`).toBeDefined();
  if (!hdu) return;
  expect(hdu.layout.index, `${where} index`).toBe(g.index);
  const kindDeviation = ASTROPY_DEVIATIONS[where]?.kind;
  expect(hdu.layout.kind, `${where} kind (astropy ${g.kind}) ${ASTROPY_DEVIATIONS[where]?.reason ?? ''}`).toBe(
    kindDeviation ?? KIND[g.kind],
  );

  for (const [keyword, value] of Object.entries(g.keywords)) expectKeyword(hdu, keyword, value, where);
  for (const keyword of g.absentKeywords) {
    expect(hdu.header.has(keyword), `${where} ${keyword} is absent in astropy's header`).toBe(false);
  }
  // Unparsable cards that astropy refuses: ours reads on but reports something about this HDU.
  const refused = Object.entries(g.keywords).filter(([, v]) => v.type === 'astropy-error');
  if (refused.length > 0) {
    expect(
      parsed.diagnostics.some((d) => d.where.hdu === g.index),
      `${where}: astropy refuses card(s) ${refused.map(([k]) => k).join(', ')}; ours gives no diagnostic for this HDU`,
    ).toBe(true);
  }

  // CHECKSUM/DATASUM over the stored bytes (checksum convention, FITS 4.0 App. J), computed with numpy by
  // the golden script. astropy 5.2.1's verify_checksum sums the header as astropy re-serialises it, so
  // where it rewrote a card it calls a correct CHECKSUM invalid (recorded as astropyChecksum).
  expect(hdu.checksum.checksum, `${where} CHECKSUM (astropy says ${g.astropyChecksum ?? g.checksum})`).toBe(g.checksum);
  expect(hdu.checksum.datasum, `${where} DATASUM (astropy says ${g.astropyDatasum ?? g.datasum})`).toBe(g.datasum);

  if (g.kind === 'compressed' && g.compressed) {
    expect(hdu.layout.compressed, `${where} compressed image layout`).toEqual(g.compressed);
    if (hdu.image && g.image) {
      checkImage(hdu, g.image, where);
      agreeingImageHdus.add(where);
    } else {
      listedCompressedHdus.add(where);
    }
    return;
  }
  if (g.image) {
    checkImage(hdu, g.image, where);
    agreeingImageHdus.add(where);
  } else if (g.emptyShape) {
    expect(hdu.layout.axes, `${where} NAXISn`).toEqual(g.emptyShape);
    expect(hdu.image?.pixels.length ?? 0, `${where} zero-size image`).toBe(0);
  } else if (g.kind === 'primary' || g.kind === 'image') {
    expect(hdu.image, `${where}: astropy has no data here`).toBeUndefined();
  }
}

describe('parseFits(bytes) on real files agrees with astropy 5.2.1 (fixtures/reference/astropy-fits.json)', () => {
  it('the goldens were made with astropy 5.2.1, numpy 1.24 and the installed eso-midas-testdata', () => {
    expect(golden.sources.astropy).toBe('5.2.1');
    expect(golden.sources.numpy).toMatch(/^1\.24\./);
    const installed = debianPackageVersion('eso-midas-testdata');
    if (installed !== undefined) expect(golden.sources['eso-midas-testdata']).toBe(installed);
    const imageHdus = golden.files.flatMap((f) => f.hdus.filter((h) => h.image && h.kind !== 'compressed'));
    expect(imageHdus.length).toBeGreaterThanOrEqual(MINIMUM_AGREEING_IMAGE_HDUS);
  });

  for (const file of golden.files) {
    const finding = KNOWN_READER_FINDINGS[`${file.dataset}:${file.path}`];
    const test = finding === undefined ? it : it.fails;
    const title = `parseFits(${file.dataset}:${file.path}) matches astropy in every HDU`;
    test(finding === undefined ? title : `${title} (known reader finding: ${finding})`, (ctx) => {
      requireOutside(file.dataset, hasDataset(file.dataset), ctx);
      const bytes = new Uint8Array(readFileSync(join(datasetRoot(file.dataset), file.path)));
      expect(bytes.length, 'file size (same dataset version as the goldens)').toBe(file.bytes);

      if (file.astropyError !== undefined && file.hdus.length === 0) {
        // astropy refuses the file; ours must give a typed error or a diagnostic, never crash.
        let parsed: FitsFile | undefined;
        try {
          parsed = parseFits(bytes, { file: file.path });
        } catch (error) {
          expect(error, `astropy: ${file.astropyError}; ours threw a non-typed error`).toBeInstanceOf(CoreError);
          return;
        }
        expect(parsed.diagnostics.length, `astropy: ${file.astropyError}; ours reports nothing`).toBeGreaterThan(0);
        return;
      }

      const parsed = parseFits(bytes, { file: file.path });
      expect(parsed.hdus.length, 'HDU count').toBe(file.hdus.length);
      for (const g of file.hdus) checkHdu(file, parsed, g);
    });
  }

  it(`covers at least ${MINIMUM_AGREEING_IMAGE_HDUS} agreeing image HDUs from the two outside datasets`, (ctx) => {
    requireOutside('astropy test data', hasDataset('astropy-test-data'), ctx);
    requireOutside('eso-midas-testdata', hasDataset('eso-midas-testdata'), ctx);
    expect(agreeingImageHdus.size, [...agreeingImageHdus].join('\n')).toBeGreaterThanOrEqual(MINIMUM_AGREEING_IMAGE_HDUS);
    const fromMidas = [...agreeingImageHdus].filter((k) => k.startsWith('eso-midas-testdata:')).length;
    const fromAstropy = [...agreeingImageHdus].filter((k) => k.startsWith('astropy-test-data:')).length;
    expect(fromMidas).toBeGreaterThan(0);
    expect(fromAstropy).toBeGreaterThan(0);
  });
});

describe('scripts/reference/astropy_fits_goldens.py', () => {
  it('astropy_fits_goldens.py --out <tmp> reproduces the committed goldens byte for byte', (ctx) => {
    requireOutside('python3 with astropy, numpy, scipy', () => pythonWithAstropy() !== undefined, ctx);
    requireOutside('astropy test data', hasDataset('astropy-test-data'), ctx);
    requireOutside('eso-midas-testdata', hasDataset('eso-midas-testdata'), ctx);
    const dir = mkdtempSync(join(tmpdir(), 'subgauge-goldens-'));
    try {
      const out = join(dir, 'astropy-fits.json');
      runPython('scripts/reference/astropy_fits_goldens.py', ['--out', out], { timeoutMs: 300_000 });
      const regenerated = readFileSync(out, 'utf8');
      if (regenerated !== goldenText) {
        const a = goldenText.split('\n');
        const b = regenerated.split('\n');
        const line = a.findIndex((l, i) => l !== b[i]);
        expect.fail(`regenerated goldens differ from the committed file at line ${line + 1}: ${a[line]} / ${b[line]}`);
      }
      expect(regenerated).toBe(goldenText);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
