import { mkdirSync, readFileSync, copyFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeFits, parseCameraProfile } from '@subgauge/core';
import { runCli, tempDir } from '../helpers/cli.js';

// Truth comes from the project's simulator (truth.json); the independent numpy generator checks live in
// packages/core/test/camera. Here: the command end to end, its outputs and its refusals.
describe('subgauge camera on a simulated session', () => {
  const t = tempDir();
  const session = path.join(t.dir, 'session');
  let truth: { camera: { gainElectronsPerAdu: number; readNoiseElectrons: number; offsetAdu: number } };
  beforeAll(async () => {
    const r = await runCli(['simulate', session, '--seed', '11', '--width', '256', '--height', '192', '--quiet']);
    expect(r.code).toBe(0);
    truth = JSON.parse(readFileSync(path.join(session, 'truth.json'), 'utf8'));
  }, 120_000);
  afterAll(() => t.cleanup());

  it('camera <folder> --json --save measures gain and read noise near the truth and writes a valid profile', async () => {
    const profile = path.join(t.dir, 'profile.json');
    const r = await runCli(['camera', path.join(session, 'bias'), path.join(session, 'flat'), path.join(session, 'dark'), '--json', '--save', profile]);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.schema).toBe('subgauge.camera/1');
    expect(Math.abs(doc.gainElectronsPerAdu / truth.camera.gainElectronsPerAdu - 1)).toBeLessThan(0.03);
    expect(Math.abs(doc.readNoiseElectrons / truth.camera.readNoiseElectrons - 1)).toBeLessThan(0.06);
    expect(doc.curve.length).toBeGreaterThanOrEqual(8);
    const p = parseCameraProfile(JSON.parse(readFileSync(profile, 'utf8')));
    expect(p.gainElectronsPerAdu).toBe(doc.gainElectronsPerAdu);
    expect(p.offsetAdu).toBeCloseTo(truth.camera.offsetAdu, -1);
  });

  it('camera prints a summary with gain, read noise, full well and dark current', async () => {
    const r = await runCli(['camera', session]);
    expect(r.code).toBe(0);
    for (const word of ['gain', 'read noise', 'full well', 'dark current', 'hot pixels', 'Photon transfer curve']) expect(r.stdout).toContain(word);
    expect(r.stdout).toMatch(/light-frame: 20 file/);
  });

  it('camera refuses a set with a single flat with a clear typed error', async () => {
    const one = path.join(t.dir, 'oneflat');
    mkdirSync(one, { recursive: true });
    for (const f of ['bias/bias_001.fits', 'bias/bias_002.fits', 'flat/flat_001.fits']) copyFileSync(path.join(session, f), path.join(one, path.basename(f)));
    const r = await runCli(['camera', one]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/INPUT_TOO_FEW_FLAT_PAIRS/);
  });

  it('camera refuses biases whose size differs from the flats (INPUT_SHAPE_MISMATCH)', async () => {
    const dir = path.join(t.dir, 'mixed-sizes');
    mkdirSync(dir, { recursive: true });
    const bias = (seed: number) => {
      const px = new Uint16Array(100 * 80);
      let s = seed;
      for (let i = 0; i < px.length; i++) {
        s = (s * 1103515245 + 12345) >>> 0;
        px[i] = 2000 + ((s >>> 16) % 40);
      }
      return encodeFits([{ pixels: px, width: 100, height: 80, cards: [{ keyword: 'IMAGETYP', value: 'Bias Frame' }, { keyword: 'EXPTIME', value: 0, real: true }] }]);
    };
    writeFileSync(path.join(dir, 'b1.fits'), bias(1));
    writeFileSync(path.join(dir, 'b2.fits'), bias(2));
    for (const f of ['flat/flat_001.fits', 'flat/flat_002.fits', 'flat/flat_003.fits', 'flat/flat_004.fits']) copyFileSync(path.join(session, f), path.join(dir, path.basename(f)));
    const r = await runCli(['camera', dir]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/INPUT_SHAPE_MISMATCH|INPUT_NO_BIAS_PAIR/);
  });

  it('camera refuses normalised float data unless --scale is given', async () => {
    const dir = path.join(t.dir, 'floats');
    mkdirSync(dir, { recursive: true });
    const mk = (kind: string, level: number, seed: number) => {
      const px = new Float32Array(64 * 64);
      let s = seed;
      for (let i = 0; i < px.length; i++) {
        s = (s * 1103515245 + 12345) >>> 0;
        px[i] = level + ((s >>> 16) / 65536 - 0.5) * 0.01;
      }
      return encodeFits([{ pixels: px, width: 64, height: 64, cards: [{ keyword: 'IMAGETYP', value: kind }, { keyword: 'EXPTIME', value: 1, real: true }] }]);
    };
    writeFileSync(path.join(dir, 'b1.fits'), mk('Bias Frame', 0.01, 1));
    writeFileSync(path.join(dir, 'b2.fits'), mk('Bias Frame', 0.01, 2));
    writeFileSync(path.join(dir, 'f1.fits'), mk('Flat Field', 0.5, 3));
    writeFileSync(path.join(dir, 'f2.fits'), mk('Flat Field', 0.5, 4));
    const r = await runCli(['camera', dir]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/INPUT_SCALED_DATA/);
  });
});
