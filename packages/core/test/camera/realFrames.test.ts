import { existsSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { characterizeCamera, measureBiasFrame, screenCameraFrames, screenFlatFrame } from '../../src/camera/characterize.js';
import { MIDAS_TEST_DATA, pythonWithAstropy, requireOutside, runPython } from '../../../../test/helpers/outside.js';
import { loadFrame } from './loadFrames.js';

// Real frames from the Debian package eso-midas-testdata: test/prim/nttexample.mt is a 1124 x 1024 bias
// (HIERARCH ESO OBS TYPE = 'BIAS', EXPTIME 0) and test/prim/badfitskeys.mt a 2148 x 2102 sky flat
// (OBJECT = 'SKY_FLAT', no frame-type keyword) with 77 % of its pixels at 65535.
const BIAS = `${MIDAS_TEST_DATA}/prim/nttexample.mt`;
const FLAT = `${MIDAS_TEST_DATA}/prim/badfitskeys.mt`;

// numpy reference for the bias: astropy 5.2.1 cannot open nttexample.mt (trailing bytes after the data), so the
// script finds the END card and decodes the big-endian int16 + BZERO 32768 data itself.
const NUMPY_BIAS = `
import json, numpy as np
b = open(${JSON.stringify(BIAS)}, 'rb').read()
i = 0
while b[i:i + 8] != b'END     ':
    i += 80
start = (i // 2880 + 1) * 2880
d = (np.frombuffer(b, '>i2', 1124 * 1024, start).astype(np.float64) + 32768).reshape(1024, 1124)
print(json.dumps(dict(median=float(np.median(d)), mean=float(d.mean()), min=float(d.min()), fmin=float((d == d.min()).mean()), max=float(d.max()))))
`;
const ASTROPY_FLAT = `
import json, numpy as np
from astropy.io import fits
d = fits.getdata(${JSON.stringify(FLAT)}).astype(np.float64)
print(json.dumps(dict(max=float(d.max()), fmax=float((d == d.max()).mean()))))
`;

describe('camera measurements on real frames (eso-midas-testdata)', () => {
  it('screenCameraFrames([sky flat, bias]) leaves the flat out as saturated and takes the kind of the bias from ESO OBS TYPE', async (ctx) => {
    if (!requireOutside('eso-midas-testdata', existsSync(BIAS) && existsSync(FLAT), ctx)) return;
    const frames = [await loadFrame(FLAT), await loadFrame(BIAS)];
    const s = screenCameraFrames(frames, { kindOverrides: { flat: ['**/badfitskeys.mt'] } });
    expect(s.leftOut).toContainEqual({ file: FLAT, kind: 'flat', reason: 'saturated', detail: 'unpaired' });
    expect(s.sorted.frames[1]).toMatchObject({ kind: 'bias', kindSource: 'header', kindKeyword: 'ESO OBS TYPE' });
    expect(() => characterizeCamera(frames, { kindOverrides: { flat: ['**/badfitskeys.mt'] } }))
      .toThrowError(expect.objectContaining({ code: 'INPUT_TOO_FEW_FLAT_PAIRS' }));
  });
  it('screenFlatFrame(sky flat) gives the fraction at the maximum that astropy 5.2.1 gives', async (ctx) => {
    if (!requireOutside('eso-midas-testdata and python3 with astropy', () => existsSync(FLAT) && pythonWithAstropy() !== undefined, ctx)) return;
    const ref = JSON.parse(runPython('-c', [ASTROPY_FLAT]).stdout) as { max: number; fmax: number };
    const s = screenFlatFrame(await loadFrame(FLAT));
    expect(s.maximumAdu).toBe(ref.max);
    expect(Math.abs(s.fractionAtMaximum - ref.fmax)).toBeLessThan(1e-12);
    expect(s.saturated).toBe(true);
  });
  it('measureBiasFrame(real bias) gives numpy\'s median, mean and minimum-code fraction without error', async (ctx) => {
    if (!requireOutside('eso-midas-testdata and python3 with numpy', () => existsSync(BIAS) && pythonWithAstropy() !== undefined, ctx)) return;
    const ref = JSON.parse(runPython('-c', [NUMPY_BIAS]).stdout) as { median: number; mean: number; min: number; fmin: number; max: number };
    const m = measureBiasFrame(await loadFrame(BIAS));
    expect(m.offsetAdu).toBe(ref.median);
    expect(Math.abs(m.meanAdu - ref.mean) / ref.mean).toBeLessThan(1e-12);
    expect(m.minimumCodeAdu).toBe(ref.min);
    expect(m.maximumAdu).toBe(ref.max);
    expect(Math.abs(m.minimumCodeFraction - ref.fmin)).toBeLessThan(1e-15);
    expect(m.quantizationStepAdu).toBe(1);
    expect(Number.isFinite(m.rowNoiseAdu) && Number.isFinite(m.columnNoiseAdu) && m.spatialSigmaAdu > 0).toBe(true);
  });
});
