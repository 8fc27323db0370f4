import { existsSync, readFileSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readFitsFile } from '@subgauge/core/node';
import { FITSVERIFY, fitsverify, requireOutside } from '../helpers/outside.js';
import { runCli, tempDir } from '../helpers/cli.js';

function fitsFiles(dir: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...fitsFiles(p));
    else if (e.name.endsWith('.fits')) out.push(p);
  }
  return out.sort();
}

describe.each(['kestrel-m14', 'wren-c12'])('subgauge simulate --preset %s', (preset) => {
  const t = tempDir();
  afterAll(() => t.cleanup());
  const dir = path.join(t.dir, preset);

  it('writes bias, dark, flat and light frames plus truth.json, and says where', async () => {
    const r = await runCli(['simulate', dir, '--preset', preset, '--seed', '3', '--width', '160', '--height', '120']);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain(dir);
    const truth = JSON.parse(readFileSync(path.join(dir, 'truth.json'), 'utf8'));
    const files = fitsFiles(dir);
    expect(files.length).toBe(truth.frames.length);
    expect(truth.camera.gainElectronsPerAdu).toBeGreaterThan(0);
    expect(truth.camera.readNoiseElectrons).toBeGreaterThan(0);
    for (const kind of ['bias', 'dark', 'flat', 'light']) expect(truth.counts[kind]).toBeGreaterThan(0);
    // the flat series reaches past full well (DESIGN: 8 or more levels from 5 % to past full well)
    expect(truth.counts.flat).toBeGreaterThanOrEqual(16);
  });

  it('every file it writes passes fitsverify with no errors and no warnings (HEASARC fitsverify)', (ctx) => {
    if (!requireOutside('fitsverify', () => existsSync(FITSVERIFY), ctx)) return;
    const files = fitsFiles(dir);
    expect(files.length).toBeGreaterThan(10);
    for (const f of files) {
      const v = fitsverify(f);
      expect(v.ok, `${f}\n${v.output}`).toBe(true);
    }
  });

  it('every file reads back with a valid CHECKSUM and DATASUM and the header the truth describes', async () => {
    const truth = JSON.parse(readFileSync(path.join(dir, 'truth.json'), 'utf8'));
    for (const ft of truth.frames.slice(0, 12)) {
      const fits = await readFitsFile(path.join(dir, ft.file));
      const hdu = fits.hdus[0]!;
      expect(hdu.checksum).toEqual({ checksum: 'valid', datasum: 'valid' });
      expect(hdu.header.number('EXPTIME')).toBeCloseTo(ft.exposureSeconds, 6);
      expect(hdu.image!.elementType).toBe('uint16');
    }
  });
});
