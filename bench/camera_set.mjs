// Writes the camera benchmark set: 1024 x 1024, 2 biases, 16 flats (8 pairs), 4 darks (2 pairs), no lights.
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
const here = path.dirname(fileURLToPath(import.meta.url));
const core = await import(path.join(here, '../packages/core/dist/index.js'));
const dir = process.argv[2];
const session = core.simulateSession({
  width: 1024, height: 1024, seed: 3, biasPairs: 1, darkExposuresSeconds: [60, 300], darkPairsPerExposure: 1,
  secondDarkTemperatureC: null, flatLevels: [0.05, 0.15, 0.3, 0.45, 0.6, 0.75, 0.9, 1.1], lights: [],
});
for (const f of session.frames) {
  const { pixels, width, height, cards } = f.render();
  const target = path.join(dir, f.file);
  mkdirSync(path.dirname(target), { recursive: true });
  writeFileSync(target, core.encodeFits([{ pixels, width, height, cards }]));
}
process.stdout.write(`${session.frames.length} frames\n`);
