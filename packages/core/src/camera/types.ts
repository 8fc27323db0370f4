import type { Diagnostic } from '../diagnostics.js';
import type { FrameKind } from '../frame/observation.js';
import type { LineNoise } from './frameStatistics.js';
import type { PtcExclusion, PtcWindow, PtcWindowOptions } from './ptc.js';
import type { KindOverrides, LeftOutFrame } from './sortFrames.js';
import type { PixelRegion } from './view.js';

/** Settings of `characterizeCamera`; every default is stated. */
export interface CameraOptions {
  /** Kind by file glob, overriding the header (e.g. `{ flat: ['flats/*.fits'] }`). */
  kindOverrides?: KindOverrides;
  /** Temperature grouping step, °C (default 1). */
  temperatureStepCelsius?: number;
  /** Measure inside this rectangle only (default: the whole frame). Exclude overscan here. */
  region?: PixelRegion;
  /** Clip pair differences at this many σ about their median (default 5; null: no clipping). REFERENCE B.11. */
  clipSigma?: number | null;
  /** Photon-transfer fit window (default 10-70 % of the saturation signal). REFERENCE B.5. */
  fitWindow?: PtcWindowOptions;
  /** Tile grid for per-tile gains and PRNU (default 8 x 8). */
  tiles?: { x: number; y: number };
  /** The ADC maximum code in file ADU (default: detected as a pile-up at the highest value in the flats). */
  adcMaxAdu?: number;
  /** File units → ADU factor for scaled or normalised data (BSCALE ≠ 1, floats in 0..1); without it such data are refused. */
  dataScaleAduPerUnit?: number;
  /** A flat with more than this fraction of pixels at the ADC maximum is saturated (default 0.001, REFERENCE F.6). */
  saturatedFractionLimit?: number;
  /** Largest relative difference of the two bias-subtracted flat levels in a pair (default 0.01, REFERENCE B.2). */
  maxLevelMismatch?: number;
  /** A flat pair whose signal is below this many read-noise σ is too faint (default 10). */
  minimumSignalToReadNoise?: number;
  /** Hot pixel: more than this many σ above the dark median in both frames of the longest dark pair (default 5). */
  hotPixelSigma?: number;
  /** Measure each CFA channel when the flats carry BAYERPAT/COLORTYP (default true). */
  perChannel?: boolean;
}

/** Why a curve point is not in the fit. */
export type CurvePointExclusion = PtcExclusion | 'level-mismatch' | 'too-faint';

/** One flat pair on the photon-transfer curve (for plots and the per-level gains). */
export interface CurvePoint {
  files: [string, string];
  exposureSeconds: number | null;
  /** Bias- (or flat-dark-) subtracted mean signal (ADU). */
  signalAdu: number;
  /** Temporal variance Var(A − B)/2 (ADU²). */
  varianceAdu2: number;
  pixelCount: number;
  /** What was subtracted: the bias pairs or a flat-dark pair of the same exposure. */
  reference: 'bias' | 'flat-dark';
  /** Two-flat/two-bias gain at this level (Howell 2006 §4.3) and its B.11 standard error. */
  gainElectronsPerAdu: number;
  gainUncertaintyElectronsPerAdu: number;
  /** Relative difference of the two frames' signal levels. */
  levelMismatch: number;
  /** Fraction of pixels at or above the ADC maximum (larger of the two frames); null when the maximum is unknown. */
  adcMaxFraction: number | null;
  saturated: boolean;
  inFit: boolean;
  excludedBecause: CurvePointExclusion | null;
}

/** Spread of a set of gain estimates. */
export interface GainSpread {
  count: number;
  medianElectronsPerAdu: number;
  /** 1.4826·MAD of the estimates. */
  spreadElectronsPerAdu: number;
  /** Standard error of the median, ≈ 1.2533·spread/√count. */
  standardErrorElectronsPerAdu: number;
}

export interface TileGain {
  x: number;
  y: number;
  width: number;
  height: number;
  gainElectronsPerAdu: number;
}

export interface PtcFitSummary {
  gainElectronsPerAdu: number;
  gainUncertaintyElectronsPerAdu: number;
  slopeAduPerElectron: number;
  slopeUncertainty: number;
  interceptAdu2: number;
  interceptUncertaintyAdu2: number;
  /** g·√(a − Δ²/12): read noise implied by the intercept (cross-check of the bias-pair value). */
  readNoiseFromInterceptElectrons: number | null;
  reducedChiSquare: number | null;
  pointsUsed: number;
  window: PtcWindow;
  /** Weights (N−1)/(2ŷ²) = 1/Var(y), REFERENCE B.5/B.11. */
  weighting: 'inverse-variance';
}

export interface BiasMeasurement {
  pairCount: number;
  pixelCount: number;
  /** Median level of the first bias pair (ADU). */
  offsetAdu: number;
  /** Mean level over the bias pairs (what flats are corrected by). */
  meanAdu: number;
  /** √(Var(B1 − B2)/2 − Δ²/12): quantization removed (EMVA 1288 style [MEM], REFERENCE B.4/B.10). */
  readNoiseAdu: number;
  /** √(Var(B1 − B2)/2) as measured. */
  readNoiseMeasuredAdu: number;
  /** 1.4826·MAD(B1 − B2)/√2: a large gap to readNoiseMeasuredAdu flags tails (REFERENCE B.4); biased on quantized data (C.6). */
  readNoiseMadAdu: number;
  readNoiseElectrons: number;
  readNoiseUncertaintyElectrons: number;
  /** Δ²/12 subtracted (ADU²). */
  quantizationCorrectionAdu2: number;
  /** Var(B1 − B2), averaged over pairs (ADU²). */
  differenceVarianceAdu2: number;
  /** Row and column noise of the first pair (REFERENCE F.6). */
  lineNoise: LineNoise;
  minimumCodeAdu: number;
  /** Largest fraction of pixels at the minimum code over the bias frames (should be ~0, REFERENCE F.3). */
  minimumCodeFraction: number;
}

export interface FullWellMeasurement {
  /** The variance rolled off: the saturation point was seen. */
  reached: boolean;
  /** Signal at the variance maximum (EMVA 1288 saturation point [MEM], REFERENCE B.6); when not reached, the brightest signal. */
  saturationSignalAdu: number;
  /** g × saturation signal; a lower bound when not reached. */
  fullWellElectrons: number;
  limitedBy: 'adc' | 'pixel' | null;
  adcMaxAdu: number | null;
  /** g·(ADC max − bias mean): the most the ADC can represent. */
  adcLimitElectrons: number | null;
  /** g × the signal gap to the next brighter level: the saturation point lies within this of the value given. */
  resolutionElectrons: number | null;
  definition: string;
}

export interface LinearityMeasurement {
  /** LE = (max δ − min δ)/2 with δ relative to the fitted line (EMVA 1288 Release 3.1/4 style [MEM]), per cent. */
  linearityErrorPercent: number;
  /** Same deviations relative to 0.9 × the saturation signal (Release 3.0 style [MEM]); null when saturation was not seen. */
  rangeLinearityErrorPercent: number | null;
  definition: string;
  signalRangeAdu: { minimum: number; maximum: number };
  exposureRangeSeconds: { minimum: number; maximum: number };
  points: { exposureSeconds: number; signalAdu: number; deviationPercent: number }[];
}

export interface PrnuMeasurement {
  /** Median over tiles of the EMVA PRNU (definition recalled from memory), per cent. */
  prnuPercent: number;
  /** The same over the whole region (includes illumination gradients). */
  wholeRegionPercent: number;
  signalAdu: number;
  files: [string, string];
  tileCount: number;
  definition: string;
}

export interface DsnuMeasurement {
  /** From the longest dark pair when there are darks, else from the bias pair (e⁻). */
  dsnuElectrons: number;
  source: 'dark' | 'bias';
  exposureSeconds: number | null;
  biasDsnuElectrons: number;
  definition: string;
}

export interface DarkLevel {
  files: [string, string];
  exposureSeconds: number;
  /** Bias-subtracted clipped mean of the central region (ADU). */
  levelAdu: number;
  meanLevelAdu: number;
  medianLevelAdu: number;
  /** Var(D1 − D2)/2 − Var(B1 − B2)/2 (ADU²): the dark shot noise. */
  varianceExcessAdu2: number;
}

export interface DarkTemperatureMeasurement {
  temperatureCelsius: number | null;
  levels: DarkLevel[];
  /** g × slope of the clipped-mean level against exposure (e⁻/px/s). */
  darkCurrentElectronsPerSecond: number;
  darkCurrentUncertaintyElectronsPerSecond: number | null;
  /** From the plain mean (hot pixels pull it up, REFERENCE B.9). */
  meanDarkCurrentElectronsPerSecond: number;
  /** From the pair variances: g²·excess/t (REFERENCE B.9). */
  varianceDarkCurrentElectronsPerSecond: number;
  method: 'line-fit' | 'through-bias';
}

export interface HotPixelMeasurement {
  count: number;
  /** count / countedPixels. */
  fraction: number;
  countedPixels: number;
  /** Where they were counted (plane coordinates): the region minus glowing edge bands. */
  countedRegion: PixelRegion;
  thresholdSigma: number;
  exposureSeconds: number;
  temperatureCelsius: number | null;
  files: [string, string];
  rule: string;
}

export type FrameEdge = 'left' | 'right' | 'top' | 'bottom';

export interface AmpGlowMeasurement {
  detected: boolean;
  /** Edge with the largest excess. */
  edge: FrameEdge;
  /** Dark signal of each edge strip above the centre's (bias-subtracted, ADU). */
  edgeExcessAdu: Record<FrameEdge, number>;
  centreSignalAdu: number;
  exposureSeconds: number;
  rule: string;
}

export interface DarkMeasurement {
  temperatures: DarkTemperatureMeasurement[];
  referenceTemperatureCelsius: number | null;
  darkCurrentElectronsPerSecond: number;
  darkDoublingCelsius: number | null;
  hotPixels: HotPixelMeasurement;
  ampGlow: AmpGlowMeasurement;
  /** Dark levels are measured in the central half (x and y) of the region, away from edge glow (REFERENCE B.9). */
  levelRegion: 'central-half';
}

/** The measurements of one plane: the full frame, or one CFA channel. */
export interface CameraMeasurement {
  gainElectronsPerAdu: number;
  gainUncertaintyElectronsPerAdu: number;
  readNoiseElectrons: number;
  readNoiseAdu: number;
  offsetAdu: number;
  fullWellElectrons: number;
  fullWellLimitedBy: 'adc' | 'pixel' | null;
  darkCurrentElectronsPerSecond: number | null;
  linearityErrorPercent: number | null;
  prnuPercent: number | null;
  dsnuElectrons: number | null;
  hotPixelCount: number | null;
  bias: BiasMeasurement;
  curve: CurvePoint[];
  /** null only for the full-frame fit of a colour sensor when it failed (the channels carry the gain). */
  fit: PtcFitSummary | null;
  gainCrossChecks: { perLevel: GainSpread; perTile: GainSpread };
  tileGains: TileGain[];
  fullWell: FullWellMeasurement;
  linearity: LinearityMeasurement | null;
  prnu: PrnuMeasurement | null;
  dsnu: DsnuMeasurement;
  dark: DarkMeasurement | null;
}

export type CfaChannelName = 'R' | 'G1' | 'G2' | 'B';

export interface ChannelMeasurement extends CameraMeasurement {
  channel: CfaChannelName;
  /** Position of the channel in the 2x2 cell of the measured region. */
  planeOffset: { x: 0 | 1; y: 0 | 1 };
}

export interface CameraFrameUse {
  file: string;
  kind: FrameKind;
  pairedWith: string;
  exposureSeconds: number | null;
  temperatureCelsius: number | null;
}

export interface CameraSettings {
  gain: number | string | null;
  offset: number | string | null;
  binning: { x: number; y: number };
  width: number;
  height: number;
}

/** Result of `characterizeCamera`: plain data, JSON-serialisable, units in field names. */
export interface CameraResult extends CameraMeasurement {
  schema: 'subgauge.camera/1';
  /** g × Δ: the gain in the ADC's own units when the data were shifted (REFERENCE B.10). */
  nativeGainElectronsPerAdu: number;
  nativeReadNoiseAdu: number;
  quantization: { stepAdu: number | null; sigmaAdu: number; integerValued: boolean };
  data: { adcMaxAdu: number | null; adcMaxSource: 'option' | 'detected' | null; dataScaleAduPerUnit: number };
  settings: CameraSettings;
  region: PixelRegion;
  /** CFA pattern as stored, and how the top-level values were combined from the channels. */
  cfa: { pattern: string; combination: string; gainReducedChiSquare: number | null } | null;
  channels: Record<CfaChannelName, ChannelMeasurement> | null;
  frames: { used: CameraFrameUse[]; leftOut: LeftOutFrame[] };
  diagnostics: Diagnostic[];
}

/** A single bias frame measured without a partner (`measureBiasFrame`). */
export interface BiasFrameMeasurement {
  file: string;
  pixelCount: number;
  offsetAdu: number;
  meanAdu: number;
  clippedMeanAdu: number;
  /** Clipped spatial σ (read noise plus fixed pattern; a pair is needed to separate them). */
  spatialSigmaAdu: number;
  minimumCodeAdu: number;
  minimumCodeFraction: number;
  maximumAdu: number;
  quantizationStepAdu: number | null;
  /** Excess σ of row / column means over σ²/N (fixed and temporal together). */
  rowNoiseAdu: number;
  columnNoiseAdu: number;
}

/** Saturation screening of one flat frame (`screenFlatFrame`). */
export interface FlatFrameScreen {
  file: string;
  maximumAdu: number;
  /** Fraction at or above the ADC maximum (or, without one, at the frame's own maximum value). */
  fractionAtMaximum: number;
  adcMaxAdu: number;
  saturated: boolean;
}
