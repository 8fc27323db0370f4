// Tests of the shared outside-reference helpers (test/helpers/outside.ts).
import { readFileSync } from 'node:fs';
import { afterEach, describe, expect, it } from 'vitest';
import {
  REPO_ROOT,
  datasetRoot,
  fitsverify,
  hasDataset,
  hasFitsverify,
  listFitsFiles,
  pythonWithAstropy,
  requireOutside,
  runPython,
} from '../helpers/outside.js';

const savedCi = process.env.CI;
afterEach(() => {
  if (savedCi === undefined) delete process.env.CI;
  else process.env.CI = savedCi;
});

describe('requireOutside(name, check, ctx)', () => {
  it('requireOutside(name, true) returns true whatever CI says', () => {
    process.env.CI = 'true';
    expect(requireOutside('thing', true)).toBe(true);
    expect(requireOutside('thing', () => true)).toBe(true);
  });

  it('requireOutside(name, false) throws under CI=true, naming the reference', () => {
    process.env.CI = 'true';
    expect(() => requireOutside('fitsverify', false)).toThrow(/fitsverify/);
  });

  it('requireOutside(name, false, ctx) outside CI skips through ctx.skip and returns false without ctx', () => {
    delete process.env.CI;
    const notes: (string | undefined)[] = [];
    expect(requireOutside('python3 with astropy', false, { skip: (note) => void notes.push(note) })).toBe(false);
    expect(notes).toHaveLength(1);
    expect(notes[0]).toMatch(/python3 with astropy/);
    expect(requireOutside('python3 with astropy', () => false)).toBe(false);
  });
});

describe('outside references', () => {
  it('runPython("-c", [code]) returns what python3 prints', (ctx) => {
    requireOutside('python3 with astropy, numpy, scipy', () => pythonWithAstropy() !== undefined, ctx);
    // numpy 1.24 (Debian python3-numpy): median of an even-length list is the mean of the middle pair.
    const { stdout } = runPython('-c', ['import sys, numpy; print(numpy.median([float(a) for a in sys.argv[1:]]))', '4', '1', '3', '2']);
    expect(stdout.trim()).toBe('2.5');
    expect(() => runPython('-c', ['raise SystemExit(3)'])).toThrow(/exited with 3/);
  });

  it('fitsverify(path) reads the summary counts of a clean and of a faulty file', (ctx) => {
    requireOutside('fitsverify', hasFitsverify, ctx);
    requireOutside('astropy test data', hasDataset('astropy-test-data'), ctx);
    requireOutside('eso-midas-testdata', hasDataset('eso-midas-testdata'), ctx);
    // Source: fitsverify 4.20 (Debian) on astropy 5.2.1's arange.fits (clean) and eso-midas-testdata
    // prim/dss_test2.fits (deprecated EPOCH, 2-digit-year DATE, an unparsable SKEW card, bad fill).
    const clean = fitsverify(`${datasetRoot('astropy-test-data')}/arange.fits`);
    expect(clean).toMatchObject({ ok: true, errors: 0, warnings: 0 });
    expect(clean.hdus).toEqual([{ hdu: 1, label: 'Primary Array', warnings: 0, errors: 0 }]);
    const faulty = fitsverify(`${datasetRoot('eso-midas-testdata')}/prim/dss_test2.fits`);
    expect(faulty).toMatchObject({ ok: false, errors: 3, warnings: 2 });
    expect(faulty.hdus).toEqual([{ hdu: 1, label: 'Primary Array', warnings: 2, errors: 3 }]);
    expect(faulty.messages.filter((m) => m.includes('SKEW'))).toHaveLength(2);
  });

  it('listFitsFiles(dataset) finds the same files as the astropy golden script', (ctx) => {
    requireOutside('astropy test data', hasDataset('astropy-test-data'), ctx);
    requireOutside('eso-midas-testdata', hasDataset('eso-midas-testdata'), ctx);
    const golden = JSON.parse(readFileSync(`${REPO_ROOT}/fixtures/reference/astropy-fits.json`, 'utf8')) as {
      files: { dataset: string; path: string }[];
    };
    const listed = [...listFitsFiles('astropy-test-data'), ...listFitsFiles('eso-midas-testdata')].map(
      (f) => `${f.dataset}:${f.path}`,
    );
    expect(listed).toEqual(golden.files.map((f) => `${f.dataset}:${f.path}`));
    expect(listed).toContain('eso-midas-testdata:fits/tst0001.mt');
    expect(listed).toContain('astropy-test-data:arange.fits');
  });
});
