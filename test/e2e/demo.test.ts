import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runCli, tempDir } from '../helpers/cli.js';

describe('subgauge demo', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());
  it('simulates a night, runs camera, sky and audit, prints measured beside true values and where the files are', async () => {
    const r = await runCli(['demo', '--dir', t.dir, '--jobs', '1', '--no-progress']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toContain(`Everything is in ${t.dir}`);
    expect(r.stdout).toMatch(/gain e-\/ADU\s+[\d.]+\s+[\d.]+\s+[+-][\d.]+ %/);
    expect(r.stdout).toMatch(/(\d+) of \1 injected defects caught/);
    for (const f of ['camera.json', 'sky.json', 'audit.json', 'camera-profile.json', 'session/truth.json', 'report.html']) expect(existsSync(path.join(t.dir, f)), f).toBe(true);
    expect(r.stdout).toContain(path.join(t.dir, 'report.html'));
    const html = readFileSync(path.join(t.dir, 'report.html'), 'utf8');
    for (const id of ['section-camera', 'section-sky', 'section-audit']) expect(html).toContain(`id="${id}"`);
    // thumbnails of the rejected/review frames are embedded as data URIs
    expect(html).toMatch(/data:image\/png;base64,/);
    const camera = JSON.parse(readFileSync(path.join(t.dir, 'camera.json'), 'utf8'));
    const truth = JSON.parse(readFileSync(path.join(t.dir, 'session/truth.json'), 'utf8'));
    // the demo's own numbers are the measured ones: gain within 1.5 % of the simulator's truth
    expect(Math.abs(camera.gainElectronsPerAdu / truth.camera.gainElectronsPerAdu - 1)).toBeLessThan(0.015);
  }, 180_000);
});
