/**
 * Invented cameras and sites for simulated sessions. Names and values are made up for this project
 * (plausible for cooled astronomy cameras; no real product is described).
 */
import type { CameraModel } from './camera.js';

/**
 * "Kestrel M14": monochrome 14-bit cooled CMOS. Native gain 1.3 e-/code → 0.325 e-/file ADU (×4 shift);
 * full-well-limited: the roll-off (knee 85 % of 20 000 e-) comes before the ADC clips at ≈ 20 650 e-.
 */
export const KESTREL_M14: CameraModel = {
  name: 'Kestrel M14',
  width: 512,
  height: 384,
  pixelSizeMicrons: 3.76,
  adcBits: 14,
  gainElectronsPerAdu: 0.325,
  readNoiseElectrons: 3.1,
  offsetAdu: 2000,
  fullWellElectrons: 20000,
  fullWellKneeFraction: 0.85,
  prnuFraction: 0.008,
  dsnuElectrons: 1.5,
  darkCurrentElectronsPerSecond: 0.02,
  darkReferenceTemperatureC: 0,
  darkDoublingTemperatureC: 6,
  hotPixels: { count: 60, minRateElectronsPerSecond: 0.5, maxRateElectronsPerSecond: 20 },
  ampGlow: null,
  bayer: null,
  gainSetting: 100,
  offsetSetting: 50,
  claimedGainElectronsPerAdu: 0.31,
  fixedPatternSeed: 140_011,
};

/**
 * "Wren C12": colour (RGGB) 12-bit CMOS with amp glow at the right edge. Native gain 2.4 e-/code →
 * 0.15 e-/file ADU (×16 shift); ADC-limited: the ADC clips at ≈ 9 590 e-, below the 14 000 e- full well.
 */
export const WREN_C12: CameraModel = {
  name: 'Wren C12',
  width: 512,
  height: 384,
  pixelSizeMicrons: 2.9,
  adcBits: 12,
  gainElectronsPerAdu: 0.15,
  readNoiseElectrons: 2.6,
  offsetAdu: 1600,
  fullWellElectrons: 14000,
  fullWellKneeFraction: 0.8,
  prnuFraction: 0.01,
  dsnuElectrons: 2,
  darkCurrentElectronsPerSecond: 0.03,
  darkReferenceTemperatureC: 0,
  darkDoublingTemperatureC: 6.3,
  hotPixels: { count: 120, minRateElectronsPerSecond: 0.3, maxRateElectronsPerSecond: 10 },
  ampGlow: { edge: 'right', peakElectronsPerSecond: 0.4, scaleLengthPixels: 25 },
  bayer: { pattern: 'RGGB', redResponse: 0.78, greenResponse: 1, blueResponse: 0.62 },
  gainSetting: 120,
  offsetSetting: 30,
  claimedGainElectronsPerAdu: 0.16,
  fixedPatternSeed: 120_077,
};
