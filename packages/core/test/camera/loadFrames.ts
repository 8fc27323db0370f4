// Test-only: read generated or real frames through the library's own reader (@subgauge/core/node).
import { readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { readFitsFile } from '@subgauge/core/node';
import type { CameraFrame } from '../../src/camera/sortFrames.js';

/** Read the first image HDU of a FITS file as a camera frame. */
export async function loadFrame(path: string): Promise<CameraFrame> {
  const f = await readFitsFile(path);
  const hdu = f.hdus.find((h) => h.image !== undefined);
  if (!hdu?.image) throw new Error(`${path}: no image HDU`);
  return { file: path, header: hdu.header, image: hdu.image };
}

/** Every .fits file under a folder (recursively), sorted by path, read as camera frames. */
export async function loadFolder(dir: string, skip: (path: string) => boolean = () => false): Promise<CameraFrame[]> {
  const paths: string[] = [];
  const walk = (d: string) => {
    for (const name of readdirSync(d).sort()) {
      const p = join(d, name);
      if (statSync(p).isDirectory()) walk(p);
      else if (name.endsWith('.fits') && !skip(p)) paths.push(p);
    }
  };
  walk(dir);
  return Promise.all(paths.map(loadFrame));
}
