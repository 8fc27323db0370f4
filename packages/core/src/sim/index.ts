// Public API of the sim area; re-exports only (owned by the sim work).
export { Rng, mixSeed, POISSON_INVERSION_LIMIT } from './rng.js';
export {
  adcMaxAdu,
  adcMaxCode,
  buildFixedPattern,
  bayerChannelAt,
  channelResponse,
  collectedElectrons,
  darkCurrentAt,
  darkTemperatureFactor,
  drawHotPixels,
  expectedFlatStats,
  exposeSensor,
  nativeGainElectronsPerAdu,
  quantizationStepAdu,
  sensorSaturation,
  validateCamera,
} from './camera.js';
export type {
  AmpGlowModel,
  BayerModel,
  BayerPattern,
  CameraModel,
  BayerChannel,
  ExpectedFlatStats,
  ExpectedStatsOptions,
  FixedPattern,
  SimulatedHotPixel,
  HotPixelModel,
  SensorSaturation,
  SensorEdge,
  SensorExposure,
} from './camera.js';
export { KESTREL_M14, WREN_C12 } from './presets.js';
export {
  addSky,
  addStar,
  addStars,
  addTrail,
  distanceFromTrail,
  drawStarField,
  moffatAlpha,
  moffatFluxOutside,
  psfBoxRadius,
  validatePsf,
} from './scene.js';
export type { PsfModel, PsfProfile, SatelliteTrail, SkyModel, Star, StarFieldOptions, StarRenderOptions } from './scene.js';
export { KESTREL_SESSION, WREN_SESSION, SESSION_PRESETS } from './presets.js';
export type { DefectKind, DefectSpec, ImageTypeNames, LightSetSpec, SessionPreset, SiteModel } from './presets.js';
export { simulateSession, DEFAULT_FLAT_LEVELS, DEFECT_REASONS } from './session.js';
export type {
  Defect,
  ExpectedPairLevel,
  FrameTruth,
  RenderedFrame,
  SessionOptions,
  SessionTruth,
  SimulatedFrame,
  SimulatedFrameKind,
  SimulatedSession,
} from './session.js';
