import { readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { minimumExposureSeconds, readNoisePenalty } from '@subgauge/core';
import { runCli, tempDir } from '../helpers/cli.js';

interface FrameTruth { file: string; kind: string; exposureSeconds: number; defects: { kind: string }[]; sky: { rateElectronsPerSecond: number } | null; binning: number; gainElectronsPerAdu: number }

// Truth: the project's simulator (truth.json). The camera is given exactly (--gain/--read-noise/--offset from the
// truth), so the measured sky rate checks the star-free background estimate on a frame with a gradient and stars.
describe('subgauge sky on simulated lights', () => {
  const t = tempDir();
  const session = path.join(t.dir, 'session');
  let truth: { camera: { gainElectronsPerAdu: number; readNoiseElectrons: number; offsetAdu: number }; frames: FrameTruth[] };
  beforeAll(async () => {
    expect((await runCli(['simulate', session, '--seed', '5', '--width', '384', '--height', '256', '--quiet'])).code).toBe(0);
    truth = JSON.parse(readFileSync(path.join(session, 'truth.json'), 'utf8'));
  }, 120_000);
  afterAll(() => t.cleanup());

  it('sky --json measures each clean sub within 2 % of the true sky rate and the penalty within 3 %', async () => {
    const c = truth.camera;
    const r = await runCli(['sky', path.join(session, 'light'), '--gain', String(c.gainElectronsPerAdu), '--read-noise', String(c.readNoiseElectrons), '--offset', String(c.offsetAdu), '--json']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.schema).toBe('subgauge.sky/1');
    const clean = truth.frames.filter((f) => f.kind === 'light' && f.defects.length === 0);
    expect(clean.length).toBeGreaterThan(5);
    for (const f of clean) {
      const rec = doc.subs.find((s: { file: string }) => s.file.endsWith(f.file));
      const trueRate = f.sky!.rateElectronsPerSecond;
      // without a dark current given, the sensor's dark signal (about 0.5 % of the sky here) counts as sky
      expect(Math.abs(rec.skyRateElectronsPerSecond / trueRate - 1), f.file).toBeLessThan(0.02);
      const truePenalty = 100 * readNoisePenalty(trueRate * f.exposureSeconds, c.readNoiseElectrons);
      expect(Math.abs(rec.readNoisePenaltyPercent / truePenalty - 1), f.file).toBeLessThan(0.03);
      const trueMin = minimumExposureSeconds(c.readNoiseElectrons, trueRate, 0.05);
      expect(Math.abs(rec.minimumExposureSeconds / trueMin - 1), f.file).toBeLessThan(0.05);
    }
    expect(doc.filters[0].recommendedMinimumExposureSeconds).toBeGreaterThan(0);
  });

  it('sky with a profile from camera --save gives a per-filter recommendation and a sub-length table', async () => {
    const profile = path.join(t.dir, 'p.json');
    expect((await runCli(['camera', session, '--save', profile, '--quiet', '--json'])).code).toBe(0);
    const r = await runCli(['sky', path.join(session, 'light'), '--camera', profile, '--total', '2h']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/filter L: \d+ of \d+ subs sky-limited/);
    expect(r.stdout).toMatch(/shortest sub for at most 5 % read-noise penalty/);
    expect(r.stdout).toMatch(/relative SNR/);
  });

  it('sky without camera numbers says what to supply (exit 2)', async () => {
    const r = await runCli(['sky', path.join(session, 'light')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--camera profile\.json/);
    expect(r.stderr).toMatch(/--read-noise/);
  });

  it('sky with a broken profile names the problem and the file', async () => {
    const bad = path.join(t.dir, 'bad.json');
    writeFileSync(bad, JSON.stringify({ schema: 'subgauge.camera-profile/1', gainElectronsPerAdu: -1 }));
    const r = await runCli(['sky', path.join(session, 'light'), '--camera', bad]);
    expect(r.code).not.toBe(0);
    expect(r.stderr).toContain('bad.json');
  });

  it('sky with bias frames beside the lights uses the EGAIN header claim and warns that it is unverified', async () => {
    const r = await runCli(['sky', path.join(session, 'light'), path.join(session, 'bias'), '--json']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.camera.source).toBe('header-claim');
    expect(r.stderr).toMatch(/EGAIN header claim, not a measurement/);
    // offset from the bias median: the simulator's offset (truth.json)
    expect(doc.camera.offsetAdu).toBeCloseTo(truth.camera.offsetAdu, -1);
  });

  it('sky --csv writes one row per sub', async () => {
    const csv = path.join(t.dir, 'sky.csv');
    const c = truth.camera;
    await runCli(['sky', path.join(session, 'light'), '--gain', String(c.gainElectronsPerAdu), '--read-noise', String(c.readNoiseElectrons), '--offset', String(c.offsetAdu), '--csv', csv, '--quiet']);
    const lines = readFileSync(csv, 'utf8').trim().split(/\r\n/);
    expect(lines[0]).toMatch(/^file,filter,channel,exposureSeconds/);
    expect(lines.length - 1).toBe(truth.frames.filter((f) => f.kind === 'light').length);
  });
});
