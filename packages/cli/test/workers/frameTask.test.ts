import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { encodeFits, measureLightFrame } from '@subgauge/core';
import { readFitsFile } from '@subgauge/core/node';
import { runFrameTask } from '../../src/workers/frameTask.js';

const dir = mkdtempSync(join(tmpdir(), 'subgauge-frame-task-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** A seeded noise frame with a few round stars (values known only to this test). */
function frame(seed: number, width: number, height: number): Uint16Array {
  const px = new Uint16Array(width * height);
  let s = seed >>> 0 || 1;
  for (let i = 0; i < px.length; i++) {
    s ^= s << 13;
    s >>>= 0;
    s ^= s >>> 17;
    s ^= s << 5;
    s >>>= 0;
    px[i] = 1000 + (s % 40);
  }
  for (let k = 0; k < 12; k++) {
    const cx = 20 + ((k * 37 + seed * 11) % (width - 40));
    const cy = 20 + ((k * 53 + seed * 7) % (height - 40));
    for (let y = cy - 8; y <= cy + 8; y++) {
      for (let x = cx - 8; x <= cx + 8; x++) px[y * width + x] += Math.round(3000 * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / (2 * 1.5 ** 2)));
    }
  }
  return px;
}

function write(name: string, seed: number, width: number, height: number): string {
  const path = join(dir, name);
  writeFileSync(path, encodeFits([{ pixels: frame(seed, width, height), width, height, cards: [{ keyword: 'IMAGETYP', value: 'Light Frame' }, { keyword: 'EXPTIME', value: 60, real: true }] }]));
  return path;
}

describe('runFrameTask: frames measured one after another in one thread', () => {
  it('gives each frame the metrics of a fresh read, whether its pixels land in the last frame\'s buffer or not', async () => {
    const files = [write('a.fits', 3, 300, 200), write('b.fits', 5, 300, 200), write('c.fits', 9, 200, 120), write('d.fits', 4, 320, 240)];
    for (const file of [...files, files[0]!]) {
      const got = await runFrameTask({ file, kind: 'light', maxPixels: 1e8 });
      const fits = await readFitsFile(file);
      const expected = measureLightFrame(file, fits.hdus[0]!.image!, fits.hdus[0]!.header).metrics;
      expect(got.ok).toBe(true);
      if (got.ok) expect(got.metrics).toEqual(expected);
      if (got.ok) expect(got.metrics!.starCount).toBeGreaterThan(5);
    }
  });
});
