import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { encodeFits, parseFits } from '../../src/fits/index.js';
import { simulateSession, type SimulatedFrame } from '../../src/sim/index.js';

// Outside reference: HEASARC fitsverify (Debian package fitsverify). Missing → fail under CI, skip otherwise.
const FITSVERIFY = '/usr/bin/fitsverify';
const dir = mkdtempSync(join(tmpdir(), 'subgauge-sim-fits-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function oneOfEachKind(frames: SimulatedFrame[]): SimulatedFrame[] {
  const picked = new Map<string, SimulatedFrame>();
  for (const f of frames) if (!picked.has(f.kind)) picked.set(f.kind, f);
  const binned = frames.find((f) => f.truth.binning > 1);
  return [...picked.values(), ...(binned ? [binned] : [])];
}

describe('simulated frames through the FITS writer', () => {
  const sessions = [simulateSession({ seed: 5, flatDarks: true, width: 128, height: 96 }), simulateSession({ preset: 'wren-c12', seed: 5, width: 128, height: 96 })];

  it('encodeFits(frame.render()) parses back to the same pixels and header values', () => {
    for (const s of sessions) {
      for (const f of oneOfEachKind(s.frames)) {
        const r = f.render();
        const file = parseFits(encodeFits([{ pixels: r.pixels, width: r.width, height: r.height, cards: r.cards }]));
        const hdu = file.hdus[0];
        expect(hdu?.image?.elementType).toBe('uint16');
        expect(hdu?.image?.pixels).toEqual(r.pixels);
        for (const c of r.cards) expect(hdu?.header.get(c.keyword), `${f.file} ${c.keyword}`).toEqual(c.value);
      }
    }
  });

  it('encodeFits(frame.render()) output passes fitsverify with no warnings (HEASARC fitsverify)', () => {
    if (!existsSync(FITSVERIFY)) {
      if (process.env.CI === 'true') throw new Error(`${FITSVERIFY} is missing (install the fitsverify package)`);
      return;
    }
    for (const s of sessions) {
      for (const f of oneOfEachKind(s.frames)) {
        const r = f.render();
        const path = join(dir, f.file.replace(/\//g, '_'));
        writeFileSync(path, encodeFits([{ pixels: r.pixels, width: r.width, height: r.height, cards: r.cards }]));
        const out = spawnSync(FITSVERIFY, ['-e', path], { encoding: 'utf8' });
        expect(`${out.stdout}${out.stderr}`, f.file).toContain('Verification found 0 warning(s) and 0 error(s)');
      }
    }
  });
});
