import { mkdirSync, writeFileSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeFits, formatCard } from '@subgauge/core';
import { runCli, tempDir } from '../helpers/cli.js';

function frame(width: number, height: number, value: (i: number) => number, cards: { keyword: string; value: string | number }[] = []) {
  const px = new Uint16Array(width * height);
  for (let i = 0; i < px.length; i++) px[i] = value(i);
  return encodeFits([{ pixels: px, width, height, cards }]);
}

/** A header that declares 100000 x 100000 16-bit pixels followed by no data at all. */
function hugeHeader(): Uint8Array {
  const cards = [
    formatCard({ keyword: 'SIMPLE', value: true }),
    formatCard({ keyword: 'BITPIX', value: 16 }),
    formatCard({ keyword: 'NAXIS', value: 2 }),
    formatCard({ keyword: 'NAXIS1', value: 100000 }),
    formatCard({ keyword: 'NAXIS2', value: 100000 }),
    'END'.padEnd(80),
  ].join('');
  return new TextEncoder().encode(cards.padEnd(2880));
}

describe('subgauge inspect on a folder with good and bad files', () => {
  const t = tempDir();
  const dir = path.join(t.dir, 'night');
  beforeAll(() => {
    mkdirSync(path.join(dir, 'lights'), { recursive: true });
    writeFileSync(
      path.join(dir, 'lights', 'good_1.fits'),
      frame(64, 48, (i) => 1000 + (i % 7), [
        { keyword: 'IMAGETYP', value: 'Light Frame' },
        { keyword: 'EXPTIME', value: 120 },
        { keyword: 'FILTER', value: 'Ha' },
        { keyword: 'CCD-TEMP', value: -10 },
      ]),
    );
    writeFileSync(path.join(dir, 'lights', 'good_2.fits'), frame(32, 32, (i) => i));
    const whole = frame(64, 64, (i) => i);
    writeFileSync(path.join(dir, 'truncated.fits'), whole.subarray(0, 2880 + 1000));
    writeFileSync(path.join(dir, 'notes.fits'), 'this is a text file, not FITS\n');
    writeFileSync(path.join(dir, 'huge.fits'), hugeHeader());
  });
  afterAll(() => t.cleanup());

  it('inspect <folder> reports each bad file with its code, finishes the good ones and exits 1', async () => {
    const r = await runCli(['inspect', dir]);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/good_1\.fits\s+0\s+64x48\s+16\s+unsigned via BZERO 32768\s+light\s+120\s+Ha\s+-10\.0/);
    expect(r.stdout).toMatch(/good_2\.fits\s+0\s+32x32/);
    expect(r.stdout).toMatch(/truncated\.fits: FITS_TRUNCATED: /);
    expect(r.stdout).toMatch(/notes\.fits: FITS_NOT_FITS: /);
    expect(r.stdout).toMatch(/huge\.fits: FITS_TOO_LARGE: .*HDU 0/);
  });

  it('inspect --json gives one record per file with stats named min/max/mean/median/madSigma', async () => {
    const r = await runCli(['inspect', dir, '--json']);
    expect(r.code).toBe(1);
    const doc = JSON.parse(r.stdout);
    expect(doc.schema).toBe('subgauge.inspect/1');
    const byName = Object.fromEntries(doc.files.map((f: { file: string }) => [path.basename(f.file), f]));
    expect(Object.keys(byName).sort()).toEqual(['good_1.fits', 'good_2.fits', 'huge.fits', 'notes.fits', 'truncated.fits']);
    const g2 = byName['good_2.fits'].hdus[0].measurements;
    // 0..1023: exact values by hand — min 0, max 1023, mean 511.5, median 511.5, MAD 256 → 1.482602218505602·256
    expect(g2).toMatchObject({ min: 0, max: 1023, mean: 511.5, median: 511.5, nanCount: 0, blankCount: 0 });
    expect(g2.madSigma).toBeCloseTo(1.482602218505602 * 256, 9);
    expect(byName['huge.fits']).toMatchObject({ ok: false, error: { code: 'FITS_TOO_LARGE' } });
    expect(byName['truncated.fits'].error.where.file).toContain('truncated.fits');
  });

  it('inspect --header prints every card and reads no pixels (works on the truncated file)', async () => {
    const r = await runCli(['inspect', '--header', path.join(dir, 'truncated.fits')]);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('NAXIS1  =                   64');
    expect(r.stdout).toMatch(/^END\s*$/m);
  });

  it('inspect --region x,y,w,h measures only that rectangle', async () => {
    const r = await runCli(['inspect', path.join(dir, 'lights', 'good_2.fits'), '--region', '0,0,2,2', '--json']);
    const m = JSON.parse(r.stdout).files[0].hdus[0].measurements;
    // pixels (0,0),(1,0),(0,1),(1,1) of a 32-wide ramp: 0, 1, 32, 33
    expect(m).toMatchObject({ min: 0, max: 33, mean: 16.5, median: 16.5, validCount: 4 });
  });

  it('inspect reports the quantization step, the minimum-code fraction and, for --region, the region SNR', async () => {
    const r = await runCli(['inspect', path.join(dir, 'lights', 'good_2.fits'), '--region', '8,8,4,4', '--json']);
    const m = JSON.parse(r.stdout).files[0].hdus[0].measurements;
    // 4x4 block of a 32-wide ramp starting at (8,8): distinct values differ by 1 → step 1; min code 264 once in 16
    expect(m.quantizationStepAdu).toBe(1);
    expect(m.atMinimumFraction).toBeCloseTo(1 / 16, 12);
    expect(m.regionSnr.pixelCount).toBe(16);
    expect(Number.isFinite(m.regionSnr.backgroundAdu)).toBe(true);
  });

  it('inspect with a bad --region is a usage error (exit 2)', async () => {
    const r = await runCli(['inspect', dir, '--region', '1,2,3']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/x,y,w,h/);
  });

  it('inspect --out writes the JSON document atomically', async () => {
    const out = path.join(t.dir, 'inspect.json');
    const r = await runCli(['inspect', path.join(dir, 'lights'), '--out', out]);
    expect(r.code).toBe(0);
    expect(JSON.parse(readFileSync(out, 'utf8')).files).toHaveLength(2);
  });
});
