import { describe, expect, it } from 'vitest';
import { backgroundMesh, detectStars, detectTrails, frameView, levelGridAt, levelGridRow, meshLevelGrid, renderMeshMap } from '@subgauge/core';
import type { ImageData } from '@subgauge/core';
import { XorShift32, addGaussian, addNoise, addTrail, newFrame, randomPositions, toUint16 } from './helpers.js';

/** A sky with a gradient, noise, stars and one faint trail, quantized to uint16. */
function skyFrame(seed: number, width: number, height: number): Uint16Array {
  const rng = new XorShift32(seed);
  const f = newFrame(width, height, 0);
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) f.data[y * width + x] = 900 + 0.08 * x + 0.05 * y + 30 * Math.sin(x / 150);
  for (const [x, y] of randomPositions(rng, 120, width, height, 3, 0)) addGaussian(f, x, y, 2 * Math.PI * 2 * (30 + 3000 * rng.uniform() ** 3), 1.4);
  addTrail(f, -50, 0.3 * height, width + 50, 0.8 * height, 25, 3);
  addNoise(f, rng, 10);
  return toUint16(f);
}

function meshOf(pixels: Uint16Array, width: number, height: number, boxSize: number) {
  const image = { pixels, width, height, elementType: 'uint16', shape: [height, width] } as unknown as ImageData;
  return backgroundMesh(frameView(image, 0), { boxSize });
}

describe('meshLevelGrid: the mesh level without a full-resolution map', () => {
  it('levelGridRow and levelGridAt equal renderMeshMap into a Float32Array bit for bit (partial boxes, one-column meshes)', () => {
    for (const [width, height, box] of [
      [700, 500, 64],
      [333, 257, 50],
      [40, 300, 64],
      [300, 30, 32],
    ] as const) {
      const mesh = meshOf(skyFrame(7, width, height), width, height, box);
      const map = renderMeshMap(mesh, 'level', new Float32Array(width * height));
      const grid = meshLevelGrid(mesh);
      const row = new Float32Array(width);
      const scratch = new Float64Array(grid.columns);
      let rowMismatches = 0;
      let pointMismatches = 0;
      for (let y = 0; y < height; y++) {
        levelGridRow(grid, y, row, scratch);
        for (let x = 0; x < width; x++) {
          if (row[x] !== map[y * width + x]) rowMismatches++;
          if (levelGridAt(grid, y * width + x) !== map[y * width + x]) pointMismatches++;
        }
      }
      expect([width, height, rowMismatches, pointMismatches]).toEqual([width, height, 0, 0]);
    }
  });

  it('detectStars and detectTrails(background: meshLevelGrid(mesh)) give exactly the results of the Float32 map', () => {
    const width = 900;
    const height = 700;
    const pixels = skyFrame(11, width, height);
    const mesh = meshOf(pixels, width, height, 64);
    const map = renderMeshMap(mesh, 'level', new Float32Array(width * height)) as Float32Array;
    const grid = meshLevelGrid(mesh);
    const img = { pixels, width, height };
    const noise = mesh.medianNoiseAdu;
    const withMap = detectStars(img, { background: map, noise });
    const withGrid = detectStars(img, { background: grid, noise });
    expect(withMap.sources.length).toBeGreaterThan(50);
    expect(withGrid).toEqual(withMap);
    const filteredMap = detectStars(img, { background: map, noise, filterFwhmPixels: 3, localBackground: true });
    expect(detectStars(img, { background: grid, noise, filterFwhmPixels: 3, localBackground: true })).toEqual(filteredMap);
    const trailsMap = detectTrails(img, { background: map, noise, sources: withMap.sources });
    expect(trailsMap.trails.length).toBe(1);
    expect(detectTrails(img, { background: grid, noise, sources: withGrid.sources })).toEqual(trailsMap);
  });

  it('detectStars(background grid of another frame size) throws INPUT_SHAPE_MISMATCH', () => {
    const pixels = skyFrame(3, 200, 150);
    const grid = meshLevelGrid(meshOf(pixels, 200, 150, 64));
    expect(() => detectStars({ pixels: pixels.subarray(0, 199 * 150), width: 199, height: 150 }, { background: grid, noise: 10 })).toThrow(
      expect.objectContaining({ code: 'INPUT_SHAPE_MISMATCH' }),
    );
  });
});
