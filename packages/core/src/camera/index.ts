// Public API of the camera area; re-exports only (owned by the camera work).
export type { PixelView, PixelRegion } from './view.js';
export { pixelViewOf, pixelViewFromFrameView } from './view.js';
export type { PairMoments, ClippedPairMoments, PairStatistics, PairStatisticsOptions } from './pairStatistics.js';
export { pairStatistics, pairStatisticsTiles } from './pairStatistics.js';
export type { FrameFacts, FrameLevel, LineNoise } from './frameStatistics.js';
export { frameFacts, frameLevel, lineNoise } from './frameStatistics.js';
export type { QuantizationStep } from './quantization.js';
export { detectQuantizationStep, combineQuantizationSteps } from './quantization.js';
export type { TwoPairInput, LinearityDefinition, LinearityErrorResult } from './formulas.js';
export {
  howellGain, howellReadNoise, gainRelativeUncertainty, varianceRelativeUncertainty, sigmaRelativeUncertainty,
  quantizationSigma, systemGainFromGain, readNoiseFromIntercept, dynamicRange, correctedSpatialVariance, prnuEmva,
  dsnuEmva, darkCurrentFromLevel, doublingTemperature, fitDoublingTemperature, linearityError,
} from './formulas.js';
export type { LineFit } from './lineFit.js';
export { fitLine } from './lineFit.js';
export type { PtcInputPoint, PtcExclusion, PtcWindowOptions, PtcWindow, VariancePeak, PtcFitResult } from './ptc.js';
export { fitPhotonTransfer, findVariancePeak } from './ptc.js';
export type { FrameSettings } from './frameHeader.js';
export { CAMERA_KIND_KEYWORDS, cameraFrameKind, cameraFrameSettings } from './frameHeader.js';
export { globMatch, globToRegExp } from './glob.js';
export type {
  CameraFrame, KindOverrides, LeftOutReason, LeftOutFrame, SortedFrame, FrameGroup, FramePair, SortedCameraFrames, SortOptions,
} from './sortFrames.js';
export { sortCameraFrames } from './sortFrames.js';
export type {
  CameraOptions, CurvePointExclusion, CurvePoint, GainSpread, TileGain, PtcFitSummary, BiasMeasurement, FullWellMeasurement,
  LinearityMeasurement, PrnuMeasurement, DsnuMeasurement, DarkLevel, DarkTemperatureMeasurement, HotPixelMeasurement,
  FrameEdge, AmpGlowMeasurement, DarkMeasurement, CameraMeasurement, CfaChannelName, ChannelMeasurement, CameraFrameUse,
  CameraSettings, CameraResult, BiasFrameMeasurement, FlatFrameScreen,
} from './types.js';
export type { CameraFrameScreen } from './characterize.js';
export { characterizeCamera, measureBiasFrame, screenFlatFrame, screenCameraFrames } from './characterize.js';
export type { CameraProfile, CameraProfileChannel } from './profile.js';
export { cameraProfileFromResult, parseCameraProfile } from './profile.js';
