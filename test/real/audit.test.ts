import { describe, expect, it } from 'vitest';
import { CoreError, observationOf } from '@subgauge/core';
import { readFitsFile, readFitsHeaders } from '@subgauge/core/node';
import { join } from 'node:path';
import { runCli, tempDir } from '../helpers/cli.js';
import {
  datasetRoot,
  debianPackageVersion,
  hasDataset,
  listFitsFiles,
  pythonWithAstropy,
  requireOutside,
  runPython,
  type OutsideDataset,
} from '../helpers/outside.js';

// Outside reference: real FITS files written by other programs: the Debian package eso-midas-testdata
// (22.02pl1.0-2, /usr/lib/eso-midas/22FEB/test) and the test data shipped with astropy 5.2.1 (Debian python3-astropy,
// astropy/io/fits/tests/data). Every file starting with `SIMPLE  =` is audited on its own, and two folders as a
// whole. The audit must never fail inside (exit 0 or 1, no "internal error"); every light gets a verdict, and
// every reason of a review or reject is explained by a detail or, for an unreadable file, by an error with a code.
// What the audit does with each file is checked against the library's own reader: an image it decodes is measured,
// a file it refuses is reported unreadable with the reader's error code.

interface Detail { reason: string }
interface FrameRecord {
  file: string;
  verdict: string;
  reasons: string[];
  details: Detail[];
  metrics: { width: number; height: number } | null;
  error: { code: string; message: string } | null;
}

const DATASETS: OutsideDataset[] = ['eso-midas-testdata', 'astropy-test-data'];
const VERDICTS = ['keep', 'review', 'reject'];

/** Run `audit --json --jobs 1` and check what holds for any input; returns the frame records. */
async function auditChecked(paths: string[]): Promise<FrameRecord[]> {
  const r = await runCli(['audit', ...paths, '--json', '--jobs', '1', '--no-progress']);
  const label = `${paths.join(' ')}: exit ${r.code}\n${r.stderr.slice(0, 2000)}`;
  expect(r.stderr, label).not.toContain('internal error');
  expect([0, 1], label).toContain(r.code);
  const doc = JSON.parse(r.stdout) as { schema: string; frames: FrameRecord[] };
  expect(doc.schema).toBe('subgauge.audit/1');
  for (const f of doc.frames) {
    const where = `${f.file}: ${f.verdict} ${f.reasons.join(',')}`;
    expect(VERDICTS, where).toContain(f.verdict);
    expect(f.verdict === 'keep', where).toBe(f.reasons.length === 0);
    for (const reason of f.reasons) {
      const explained = f.details.some((d) => d.reason === reason) || (reason === 'unreadable' && typeof f.error?.code === 'string' && f.error.code !== '');
      expect(explained, `${where}: reason ${reason} has no detail and no error code`).toBe(true);
    }
    if (f.reasons.includes('unreadable')) expect(f.error?.code, where).toMatch(/^[A-Z][A-Z0-9_]+$/);
  }
  // exit 1 only for an unreadable file (no --fail-on here)
  expect(r.code, label).toBe(doc.frames.some((f) => f.reasons.includes('unreadable')) ? 1 : 0);
  return doc.frames;
}

/** What the library's reader makes of a file: its error code, or the first 2-D image HDU it decodes. */
async function readerView(path: string): Promise<{ code: string } | { image: { width: number; height: number; bigint: boolean } | null; lightLike: boolean }> {
  let fits;
  try {
    fits = await readFitsFile(path, { verifyChecksums: false });
  } catch (err) {
    if (err instanceof CoreError) return { code: err.code };
    throw err;
  }
  const hdu = fits.hdus.find((h) => h.image !== undefined && h.layout.axes.length >= 2 && h.layout.axes.every((n) => n > 0));
  const headers = await readFitsHeaders(path);
  const first = hdu ? headers.hdus[hdu.layout.index] : undefined;
  const kind = first ? observationOf(first.header).frameKind : 'unknown';
  return {
    image: hdu?.image ? { width: hdu.image.width, height: hdu.layout.axes[1]!, bigint: hdu.image.pixels instanceof BigInt64Array || hdu.image.pixels instanceof BigUint64Array } : null,
    lightLike: kind === 'light' || kind === 'unknown',
  };
}

describe.each(DATASETS)('subgauge audit on the real FITS files of %s', (dataset) => {
  const files = listFitsFiles(dataset);

  it('the dataset is installed and holds FITS files', (ctx) => {
    if (!requireOutside(`${dataset} (${datasetRoot(dataset)})`, hasDataset(dataset) && files.length > 0, ctx)) return;
    expect(files.length).toBeGreaterThanOrEqual(dataset === 'eso-midas-testdata' ? 50 : 25);
    if (dataset === 'eso-midas-testdata') expect(debianPackageVersion('eso-midas-testdata')).toMatch(/^22\.02/);
  });

  it.for(files.map((f) => ({ path: f.path, absolutePath: f.absolutePath })))(
    'audit --json $path runs to a verdict that agrees with the reader',
    async ({ absolutePath }) => {
      const frames = await auditChecked([absolutePath]);
      const view = await readerView(absolutePath);
      if ('code' in view) {
        // the reader refuses the file: the audit says so with the same code
        expect(frames).toHaveLength(1);
        expect(frames[0]).toMatchObject({ verdict: 'reject', reasons: ['unreadable'] });
        expect(frames[0]!.error!.code).toBe(view.code);
        return;
      }
      if (view.image === null) {
        expect(frames).toHaveLength(1);
        expect(frames[0]).toMatchObject({ verdict: 'reject', reasons: ['unreadable'], error: { code: 'FITS_NO_IMAGE' } });
        return;
      }
      if (!view.lightLike) {
        // a bias, dark or flat by its header: calibration, not a light to judge
        expect(frames).toHaveLength(0);
        return;
      }
      expect(frames).toHaveLength(1);
      const rec = frames[0]!;
      if (view.image.bigint) {
        // 64-bit integers are refused by the audit on purpose (audit/frameMetrics.ts)
        expect(rec).toMatchObject({ verdict: 'reject', reasons: ['unreadable'], error: { code: 'INPUT_BAD_PARAMETER' } });
        return;
      }
      // an image the reader decodes is measured, at its size
      expect(rec.reasons, `${rec.file}: ${rec.error?.message}`).not.toContain('unreadable');
      expect(rec.metrics).toMatchObject({ width: view.image.width, height: view.image.height });
    },
  );
});

describe('subgauge audit on folders of real FITS files', () => {
  it('audit --json on the whole astropy 5.2.1 test-data folder and the eso-midas-testdata prim/ folder gives a record per light', async (ctx) => {
    const roots = [datasetRoot('astropy-test-data'), `${datasetRoot('eso-midas-testdata')}/prim`];
    if (!requireOutside('astropy test data and eso-midas-testdata', hasDataset('astropy-test-data') && hasDataset('eso-midas-testdata'), ctx)) return;
    for (const root of roots) {
      const frames = await auditChecked([root]);
      expect(frames.length, root).toBeGreaterThan(10);
      expect(frames.filter((f) => f.metrics !== null).length, root).toBeGreaterThan(5);
    }
  });
});

describe('subgauge audit on a folder of FITS files named in another convention', () => {
  // Was observation O1: the ESO-MIDAS test folder holds its FITS files as `.mt`; the scan passed over them silently.
  it('audit on eso-midas-testdata fits/ (FITS named .mt) says how many files it did not read and how to read them', async (ctx) => {
    if (!requireOutside('eso-midas-testdata', hasDataset('eso-midas-testdata'), ctx)) return;
    const folder = `${datasetRoot('eso-midas-testdata')}/fits`;
    const r = await runCli(['audit', folder, '--jobs', '1', '--no-progress']);
    expect(r.stderr).toMatch(/note: (\d+) file\(s\) in the folders not read: their names do not end in \.fits \.fit \.fts/);
    expect(Number(/note: (\d+) file/.exec(r.stderr)![1])).toBeGreaterThanOrEqual(13); // the 13 .mt files at least
    expect(r.stderr).toContain('give such files by name to read them');
    const quiet = await runCli(['audit', folder, '--jobs', '1', '--no-progress', '--quiet']);
    expect(quiet.stderr).not.toContain('note:');
    const byName = await auditChecked([join(folder, 'tst0001.mt')]);
    expect(byName).toHaveLength(1); // the same file given by name is read
  });
});

describe('subgauge audit on a file astropy writes with a 1-D primary image and a 2-D extension', () => {
  // Was finding F8: the header scan and the pixel loader picked different HDUs (the 1-D primary was measured).
  // Both now take the first 2-D image (packages/cli/src/io/load.ts).
  it('audit --json measures the 2-D extension (160 x 120, EXPTIME 60)', async (ctx) => {
    if (!requireOutside('python3 with numpy and astropy', () => pythonWithAstropy() !== undefined, ctx)) return;
    const t = tempDir('subgauge-real-1d-');
    try {
      const file = join(t.dir, 'spectrum_and_image.fits');
      // astropy 5.2.1 (Debian python3-astropy) writes the file: PrimaryHDU float32 [50], ImageHDU uint16 [120, 160]
      runPython('-c', [
        [
          'import sys, numpy as np',
          'from astropy.io import fits',
          'rng = np.random.default_rng(3)',
          "p = fits.PrimaryHDU(np.arange(50, dtype=np.float32)); p.header['IMAGETYP'] = 'LIGHT'",
          "e = fits.ImageHDU((300 + rng.normal(0, 5, (120, 160))).astype(np.uint16)); e.header['EXPTIME'] = 60.0",
          'fits.HDUList([p, e]).writeto(sys.argv[1], overwrite=True)',
        ].join('\n'),
        file,
      ]);
      const frames = await auditChecked([file]);
      expect(frames).toHaveLength(1);
      expect(frames[0]!.metrics).toMatchObject({ width: 160, height: 120, exposureSeconds: 60 });
    } finally {
      t.cleanup();
    }
  });
});
