import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { characterizeCamera } from '../../src/camera/characterize.js';
import { cameraProfileFromResult, parseCameraProfile } from '../../src/camera/profile.js';
import { pythonWithAstropy, requireOutside, runPython } from '../../../../test/helpers/outside.js';
import { tempDir } from '../../../../test/helpers/cli.js';
import { loadFolder } from './loadFrames.js';

// Outside reference: scripts/reference/independent_camera.py draws the frames with numpy 1.24's Poisson and
// normal generators and writes them with astropy 5.2.1 (Debian python3-numpy, python3-astropy); it shares no code
// with the library. Tolerances are the DESIGN.md section 5 camera bars: gain within 1.5 % and within 3 reported σ,
// read noise within 3 % and 3 σ, full well and dark current within 10 %.
interface Truth {
  camera: string; gainElectronsPerAdu: number; readNoiseElectrons: number; offsetAdu: number; quantizationStepAdu: number;
  fullWellElectrons: number; fullWellLimitedBy: 'adc' | 'pixel'; adcMaxAdu: number; prnuPercent: number;
  darkCurrentElectronsPerSecond: number; darkCurrentByTemperature: Record<string, number>; referenceTemperatureCelsius: number;
  darkDoublingCelsius: number; hotPixelCount: number; ampGlow: boolean; bayerPattern: string | null; width: number; height: number;
}

const CASES = [
  { camera: 'mono14', seed: 11, lights: 0 },
  { camera: 'mono14', seed: 12, lights: 0 },
  { camera: 'mono14', seed: 13, lights: 0 },
  { camera: 'colour12', seed: 21, lights: 2 },
  { camera: 'colour12', seed: 22, lights: 0 },
];

const within = (value: number, truth: number, relative: number) =>
  expect(Math.abs(value - truth) / truth, `${value} vs truth ${truth}`).toBeLessThan(relative);

describe('characterizeCamera on frames from the independent numpy/astropy generator', () => {
  it.for(CASES)('characterizeCamera($camera frames, seed $seed) recovers the generator truth', async (c, ctx) => {
    if (!requireOutside('python3 with numpy and astropy', () => pythonWithAstropy() !== undefined, ctx)) return;
    const { dir, cleanup } = tempDir('subgauge-camera-');
    try {
      runPython('scripts/reference/independent_camera.py', ['--out', dir, '--camera', c.camera, '--seed', String(c.seed), '--lights', String(c.lights)]);
      const truth = JSON.parse(readFileSync(join(dir, 'truth.json'), 'utf8')) as Truth;
      const r = characterizeCamera(await loadFolder(dir));

      within(r.gainElectronsPerAdu, truth.gainElectronsPerAdu, 0.015);
      expect(Math.abs(r.gainElectronsPerAdu - truth.gainElectronsPerAdu)).toBeLessThan(3 * r.gainUncertaintyElectronsPerAdu);
      within(r.readNoiseElectrons, truth.readNoiseElectrons, 0.03);
      expect(Math.abs(r.readNoiseElectrons - truth.readNoiseElectrons)).toBeLessThan(3 * r.bias.readNoiseUncertaintyElectrons);
      within(r.fullWellElectrons, truth.fullWellElectrons, 0.1);
      expect(r.fullWell.reached).toBe(true);
      expect(r.fullWellLimitedBy).toBe(truth.fullWellLimitedBy);
      within(r.darkCurrentElectronsPerSecond!, truth.darkCurrentElectronsPerSecond, 0.1);
      for (const t of r.dark!.temperatures) within(t.darkCurrentElectronsPerSecond, truth.darkCurrentByTemperature[t.temperatureCelsius!.toFixed(1)]!, 0.1);
      expect(r.dark!.referenceTemperatureCelsius).toBe(truth.referenceTemperatureCelsius);
      within(r.dark!.darkDoublingCelsius!, truth.darkDoublingCelsius, 0.1);
      within(r.prnuPercent!, truth.prnuPercent, 0.15);
      expect(r.linearityErrorPercent!).toBeLessThan(0.5); // the generator is exactly linear below full well
      expect(r.quantization.stepAdu).toBe(truth.quantizationStepAdu);
      within(r.nativeGainElectronsPerAdu, truth.gainElectronsPerAdu * truth.quantizationStepAdu, 0.015);
      expect(Math.abs(r.offsetAdu - truth.offsetAdu)).toBeLessThanOrEqual(truth.quantizationStepAdu);
      // hot pixels: the injected ones, scaled to the area counted (glowing edges are left out)
      const expected = truth.hotPixelCount * r.dark!.hotPixels.countedPixels / (truth.width * truth.height);
      expect(Math.abs(r.hotPixelCount! - expected)).toBeLessThanOrEqual(Math.max(3, 0.2 * expected));
      expect(r.dark!.ampGlow.detected).toBe(truth.ampGlow);
      if (truth.fullWellLimitedBy === 'adc') {
        expect(r.data).toMatchObject({ adcMaxAdu: truth.adcMaxAdu, adcMaxSource: 'detected' });
        expect(r.frames.leftOut.some((l) => l.reason === 'saturated')).toBe(true);
      }
      if (c.lights > 0) expect(r.frames.leftOut.filter((l) => l.reason === 'light-frame')).toHaveLength(c.lights);
      if (truth.bayerPattern) {
        expect(r.cfa!.pattern).toBe(truth.bayerPattern);
        for (const ch of Object.values(r.channels!)) {
          within(ch.gainElectronsPerAdu, truth.gainElectronsPerAdu, 0.03);
          expect(Math.abs(ch.gainElectronsPerAdu - truth.gainElectronsPerAdu)).toBeLessThan(4 * ch.gainUncertaintyElectronsPerAdu);
        }
        // green reaches the ADC first; red and blue (0.6 and 0.5 of green) never saturate
        expect(r.channels!.G1.fullWell.reached && r.channels!.G2.fullWell.reached).toBe(true);
        expect(r.channels!.R.fullWell.reached || r.channels!.B.fullWell.reached).toBe(false);
      } else {
        expect(r.channels).toBeNull();
      }
      const profile = parseCameraProfile(JSON.parse(JSON.stringify(cameraProfileFromResult(r))));
      expect(profile.quantizationStepAdu).toBe(truth.quantizationStepAdu);
      expect(profile.settings).toEqual({ gain: 100, offset: 50, binning: { x: 1, y: 1 } });
    } finally {
      cleanup();
    }
  });
});
