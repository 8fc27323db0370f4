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

/** Frame-kind spellings written as IMAGETYP (REFERENCE.md A.9 lists the usual variants). */
export interface ImageTypeNames {
  bias: string;
  dark: string;
  flat: string;
  'flat-dark': string;
  light: string;
}

/** Invented site, optics and target written to headers. */
export interface SiteModel {
  observatory: string;
  telescope: string;
  focalLengthMillimetres: number;
  apertureMillimetres: number;
  /** Written as OBJECT on light frames. */
  target: string;
  observer: string;
}

/** Kinds of defect a light frame can carry (each maps to audit reason codes, see `DEFECT_REASONS`). */
export type DefectKind =
  | 'trail'
  | 'cloud'
  | 'bright-sky'
  | 'soft-focus'
  | 'trailed-stars'
  | 'warm-sensor'
  | 'wrong-exposure'
  | 'other-binning'
  | 'other-gain';

/** A defect request; omitted parameters get defaults (seeded where random), recorded in the truth. */
export type DefectSpec =
  | { kind: 'trail'; x?: number; y?: number; angleDegrees?: number; peakElectrons?: number; widthFwhmPixels?: number }
  | { kind: 'cloud'; skyFactor?: number; starFactor?: number }
  | { kind: 'bright-sky'; skyFactor?: number }
  | { kind: 'soft-focus'; fwhmFactor?: number }
  | { kind: 'trailed-stars'; elongation?: number; angleDegrees?: number }
  | { kind: 'warm-sensor'; deltaTemperatureC?: number }
  | { kind: 'wrong-exposure'; exposureSeconds?: number }
  | { kind: 'other-binning'; binning?: number }
  | { kind: 'other-gain'; gainSetting?: number; gainElectronsPerAdu?: number };

/** One set of light frames through one filter. */
export interface LightSetSpec {
  /** FILTER value, or null for no FILTER card. */
  filter: string | null;
  count: number;
  exposureSeconds: number;
  /** Mean sky rate in this filter, e-/px/s (unit response). */
  skyElectronsPerSecond: number;
  /** Defects by 0-based frame index within this set. */
  defects?: Record<number, DefectSpec[]>;
}

/** Everything a session preset fixes besides the frame counts. */
export interface SessionPreset {
  id: string;
  camera: CameraModel;
  site: SiteModel;
  imageTypeNames: ImageTypeNames;
  setTemperatureC: number;
  /** Second set point for an extra series of dark pairs (null: none). */
  secondDarkTemperatureC: number | null;
  darkExposuresSeconds: number[];
  flatFilter: string | null;
  /** Flat-panel rate for unit response, e-/px/s. */
  flatElectronsPerSecond: number;
  lights: LightSetSpec[];
  psf: { profile: 'gaussian' | 'moffat'; fwhmPixels: number; moffatBeta: number };
  stars: { count: number; minFluxElectronsPerSecond: number; maxFluxElectronsPerSecond: number; powerLawIndex: number };
  skyGradientPercent: number;
  skyGradientAngleDegrees: number;
}

export const KESTREL_SESSION: SessionPreset = {
  id: 'kestrel-m14',
  camera: KESTREL_M14,
  site: {
    observatory: 'Tarn Hill Observatory',
    telescope: 'Tarn Hill 200/800 reflector',
    focalLengthMillimetres: 800,
    apertureMillimetres: 200,
    target: 'Field 12',
    observer: 'Tarn Hill imaging group',
  },
  imageTypeNames: { bias: 'Bias Frame', dark: 'Dark Frame', flat: 'Flat Field', 'flat-dark': 'Dark Flat', light: 'Light Frame' },
  setTemperatureC: -10,
  secondDarkTemperatureC: 0,
  darkExposuresSeconds: [30, 120, 300],
  flatFilter: 'L',
  flatElectronsPerSecond: 6000,
  lights: [
    {
      filter: 'L',
      count: 20,
      exposureSeconds: 120,
      skyElectronsPerSecond: 1.2,
      defects: {
        2: [{ kind: 'trail' }],
        4: [{ kind: 'cloud' }],
        6: [{ kind: 'soft-focus' }],
        8: [{ kind: 'trailed-stars' }],
        10: [{ kind: 'warm-sensor' }],
        12: [{ kind: 'wrong-exposure' }],
        14: [{ kind: 'other-binning' }],
        16: [{ kind: 'other-gain' }],
        18: [{ kind: 'bright-sky' }],
      },
    },
  ],
  psf: { profile: 'gaussian', fwhmPixels: 3.0, moffatBeta: 3 },
  stars: { count: 150, minFluxElectronsPerSecond: 15, maxFluxElectronsPerSecond: 2500, powerLawIndex: 0.7 },
  skyGradientPercent: 4,
  skyGradientAngleDegrees: 60,
};

export const WREN_SESSION: SessionPreset = {
  id: 'wren-c12',
  camera: WREN_C12,
  site: {
    observatory: 'Cobble Lane Garden Observatory',
    telescope: 'Cobble Lane 72/430 refractor',
    focalLengthMillimetres: 430,
    apertureMillimetres: 72,
    target: 'Field 7',
    observer: 'Cobble Lane observers',
  },
  imageTypeNames: { bias: 'BIAS', dark: 'DARK', flat: 'FLAT', 'flat-dark': 'FLAT DARK', light: 'LIGHT' },
  setTemperatureC: -5,
  secondDarkTemperatureC: null,
  darkExposuresSeconds: [30, 90, 180],
  flatFilter: null,
  flatElectronsPerSecond: 4000,
  lights: [
    {
      filter: null,
      count: 16,
      exposureSeconds: 90,
      skyElectronsPerSecond: 3.5,
      defects: { 3: [{ kind: 'trail' }], 7: [{ kind: 'cloud' }], 11: [{ kind: 'soft-focus' }] },
    },
  ],
  psf: { profile: 'moffat', fwhmPixels: 2.8, moffatBeta: 3.5 },
  stars: { count: 200, minFluxElectronsPerSecond: 25, maxFluxElectronsPerSecond: 4000, powerLawIndex: 0.7 },
  skyGradientPercent: 8,
  skyGradientAngleDegrees: 200,
};

/** Session presets by id. */
export const SESSION_PRESETS: Readonly<Record<string, SessionPreset>> = {
  [KESTREL_SESSION.id]: KESTREL_SESSION,
  [WREN_SESSION.id]: WREN_SESSION,
};
