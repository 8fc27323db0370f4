/**
 * A whole simulated observing session with known truth: bias pairs, dark pairs (several exposures, an
 * optional second temperature), flat pairs from ~5 % to past saturation (exposure varied under constant
 * illumination), optional flat-darks, and light frames with defects injected on chosen frames.
 * Frames render lazily (`frame.render()`), one at a time, so memory stays bounded by one frame.
 */
import { InvalidInputError } from '../errors.js';
import type { WriteCard } from '../fits/types.js';
import {
  adcMaxAdu,
  buildFixedPattern,
  darkCurrentAt,
  expectedFlatStats,
  exposeSensor,
  nativeGainElectronsPerAdu,
  quantizationStepAdu,
  sensorSaturation,
  validateCamera,
  type CameraModel,
  type FixedPattern,
  type SensorSaturation,
  type SimulatedHotPixel,
} from './camera.js';
import {
  SESSION_PRESETS,
  type DefectKind,
  type DefectSpec,
  type ImageTypeNames,
  type LightSetSpec,
  type SessionPreset,
  type SiteModel,
} from './presets.js';
import { Rng, mixSeed } from './rng.js';
import { addSky, addStars, addTrail, drawStarField, type PsfModel, type SatelliteTrail, type SkyModel, type Star } from './scene.js';

export type SimulatedFrameKind = 'bias' | 'dark' | 'flat' | 'flat-dark' | 'light';

/** A defect with every parameter filled in (as applied). */
export type Defect =
  | ({ kind: 'trail' } & SatelliteTrail)
  | { kind: 'cloud'; skyFactor: number; starFactor: number }
  | { kind: 'bright-sky'; skyFactor: number }
  | { kind: 'soft-focus'; fwhmFactor: number }
  | { kind: 'trailed-stars'; elongation: number; angleDegrees: number }
  | { kind: 'warm-sensor'; deltaTemperatureC: number }
  | { kind: 'wrong-exposure'; exposureSeconds: number }
  | { kind: 'other-binning'; binning: number }
  | { kind: 'other-gain'; gainSetting: number; gainElectronsPerAdu: number };

/** Audit reason codes (DESIGN.md §2) each defect should trigger. */
export const DEFECT_REASONS: Readonly<Record<DefectKind, readonly string[]>> = {
  trail: ['trail'],
  cloud: ['cloud'],
  'bright-sky': ['bright-sky'],
  'soft-focus': ['soft-focus'],
  'trailed-stars': ['elongated-stars'],
  'warm-sensor': ['temperature-drift'],
  'wrong-exposure': ['exposure-mismatch'],
  'other-binning': ['binning-mismatch', 'size-mismatch'],
  'other-gain': ['gain-mismatch'],
};

/**
 * True parameters of one frame. The PSF is in the frame's own (binned) pixels; star, dither and trail
 * coordinates are unbinned sensor pixels (a binned frame maps X to (X + ½)/b - ½).
 */
export interface FrameTruth {
  /** Relative path, e.g. `bias/bias_001.fits`. */
  file: string;
  kind: SimulatedFrameKind;
  /** 0-based position in the session's frame list (chronological). */
  sequence: number;
  /** 1-based number within its kind (as in the file name). */
  number: number;
  /** 1-based pair number within its kind for calibration pairs (both members share it), else null. */
  pair: number | null;
  imageType: string;
  filter: string | null;
  object: string | null;
  dateObs: string;
  exposureSeconds: number;
  temperatureC: number;
  setTemperatureC: number;
  binning: number;
  width: number;
  height: number;
  gainSetting: number;
  gainElectronsPerAdu: number;
  offsetSetting: number;
  /** Seed of this frame's temporal noise. */
  noiseSeed: number;
  /** Uniform dark current at this frame's temperature, e-/s per unbinned pixel (hot pixels and glow extra). */
  darkCurrentElectronsPerSecond: number;
  /** Flats: panel electrons per unbinned pixel of unit response (rate x t); lights: sky electrons; else 0. */
  signalElectrons: number;
  /** Flats on colour sensors: electrons per channel (unit PRNU), else null. */
  channelSignalElectrons: { R: number; G: number; B: number } | null;
  /** Lights: the sky as rendered (after jitter and defects), per unbinned pixel. */
  sky: SkyModel | null;
  /** Lights: the PSF as rendered, in frame pixels. */
  psf: PsfModel | null;
  /** Lights: factor on every star's flux (cloud transmission). */
  starFluxFactor: number | null;
  /** Lights: shift of the star field, unbinned px (star at X is rendered at X + dx). */
  ditherPixels: { x: number; y: number } | null;
  defects: Defect[];
  /** Audit reason codes the defects should trigger (empty for a clean frame). */
  expectedReasons: string[];
}

export interface SessionTruth {
  schema: 'subgauge.sim-truth/1';
  presetId: string;
  seed: number;
  camera: CameraModel;
  derived: {
    quantizationStepAdu: number;
    nativeGainElectronsPerAdu: number;
    adcMaxAdu: number;
    saturation: SensorSaturation;
    readNoiseAdu: number;
    darkCurrentAtSetTemperatureElectronsPerSecond: number;
  };
  site: SiteModel;
  setTemperatureC: number;
  flat: {
    filter: string | null;
    illuminationElectronsPerSecond: number;
    levelsFractionOfSaturation: number[];
    exposuresSeconds: number[];
  };
  scene: {
    psf: PsfModel;
    stars: {
      seed: number;
      count: number;
      minFluxElectronsPerSecond: number;
      maxFluxElectronsPerSecond: number;
      powerLawIndex: number;
      totalFluxElectronsPerSecond: number;
      /** Unbinned sensor coordinates before dithering. */
      list: Star[];
    };
    skyGradientPercent: number;
    skyGradientAngleDegrees: number;
    seeingJitterFraction: number;
    skyJitterFraction: number;
    ditherPixels: number;
  };
  lights: LightSetSpec[];
  hotPixels: SimulatedHotPixel[];
  /**
   * Expected pair statistics from `expectedFlatStats` (file ADU; pixels without hot pixels and amp glow;
   * for colour sensors per CFA channel). Means include the offset; variances are E[Var(A - B)/2].
   */
  expected: {
    bias: ExpectedPairLevel;
    flatPairs: (ExpectedPairLevel & { pair: number; exposureSeconds: number; channel: 'mono' | 'R' | 'G' | 'B'; signalElectrons: number; darkElectrons: number })[];
    darkPairs: (ExpectedPairLevel & { pair: number; exposureSeconds: number; temperatureC: number; darkElectrons: number })[];
  };
  counts: Record<SimulatedFrameKind, number>;
  frames: FrameTruth[];
}

export interface ExpectedPairLevel {
  meanAdu: number;
  temporalVarianceAdu2: number;
  saturatedFraction: number;
}

/** Pixels and header cards of one rendered frame (ready for the FITS writer). */
export interface RenderedFrame {
  pixels: Uint16Array;
  width: number;
  height: number;
  cards: WriteCard[];
}

export interface SimulatedFrame {
  file: string;
  kind: SimulatedFrameKind;
  truth: FrameTruth;
  /** Render the frame (deterministic: same pixels every call). */
  render(): RenderedFrame;
}

export interface SimulatedSession {
  frames: SimulatedFrame[];
  /** JSON-serialisable truth (write it as truth.json). */
  truth: SessionTruth;
}

export interface SessionOptions {
  /** Preset id (default 'kestrel-m14'), see `SESSION_PRESETS`. */
  preset?: string;
  /** Session seed (default 1): star field, jitters, defect placement, temporal noise. */
  seed?: number;
  /** Sensor size (default the preset's 512 x 384); hot-pixel count scales with the area. */
  width?: number;
  height?: number;
  /** Camera overrides applied last. */
  camera?: Partial<CameraModel>;
  setTemperatureC?: number;
  biasPairs?: number;
  darkExposuresSeconds?: number[];
  darkPairsPerExposure?: number;
  secondDarkTemperatureC?: number | null;
  /** Flat levels as fractions of the saturation signal (default 12 levels, 0.05 ... 1.15). */
  flatLevels?: number[];
  flatElectronsPerSecond?: number;
  flatDarks?: boolean;
  /** Light sets (default the preset's, including its defect plan). */
  lights?: LightSetSpec[];
  /** Drop every defect of the light sets (a clean session). */
  noDefects?: boolean;
  psf?: Partial<PsfModel>;
  /** Number of stars (default the preset's count scaled with the sensor area). */
  starCount?: number;
  /** Star flux limits, e-/s (default the preset's). */
  starFluxRange?: { minElectronsPerSecond: number; maxElectronsPerSecond: number };
  skyGradientPercent?: number;
  skyGradientAngleDegrees?: number;
  /** rms fractional frame-to-frame change of the FWHM (default 0.04) and of the sky (default 0.03). */
  seeingJitterFraction?: number;
  skyJitterFraction?: number;
  /** rms of the sensor temperature around the set point, °C (default 0.05; reported to 0.1 °C). */
  temperatureJitterC?: number;
  /** Dither amplitude, unbinned px (uniform in ±value, default 6). */
  ditherPixels?: number;
  /** UTC start of the first light, ISO 8601 (default '2031-10-04T20:15:00'). */
  startTime?: string;
  site?: Partial<SiteModel>;
  imageTypeNames?: Partial<ImageTypeNames>;
}

/** Default flat levels, fractions of the saturation signal: 5 % to 115 % (past full well / ADC limit). */
export const DEFAULT_FLAT_LEVELS: readonly number[] = [0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0, 1.15];

const READOUT_SECONDS = 2.5;
const BLOCK_GAP_SECONDS = 300;

function bad(what: string, expected: string, found: unknown): never {
  throw new InvalidInputError('INPUT_BAD_PARAMETER', `${what}: expected ${expected}; found ${JSON.stringify(found)}`, { keyword: what });
}

function roundTo(v: number, step: number): number {
  return Math.round(v / step) * step;
}
// Round to a fixed number of decimals and clean binary noise (so JSON and headers agree).
function fixed(v: number, decimals: number): number {
  return Number(v.toFixed(decimals));
}

interface PlannedFrame {
  kind: SimulatedFrameKind;
  exposureSeconds: number;
  setTemperatureC: number;
  pair: number | null;
  filter: string | null;
  lightSet: LightSetSpec | null;
  lightIndex: number;
  flatLevel: number | null;
  pairKey: string | null;
}

/**
 * Plan a simulated session. Nothing is rendered until `frame.render()` is called.
 *
 * @example
 * const session = simulateSession({ preset: 'wren-c12', seed: 7 });
 * for (const frame of session.frames) {
 *   const { pixels, width, height, cards } = frame.render();
 *   // write `frame.file` with the FITS writer; save session.truth as truth.json
 * }
 * @throws InvalidInputError INPUT_BAD_PARAMETER for an unknown preset or out-of-range options.
 */
export function simulateSession(options: SessionOptions = {}): SimulatedSession {
  const presetId = options.preset ?? 'kestrel-m14';
  const preset: SessionPreset | undefined = SESSION_PRESETS[presetId];
  if (!preset) bad('preset', Object.keys(SESSION_PRESETS).join(' or '), presetId);
  const seed = options.seed ?? 1;
  if (!Number.isFinite(seed)) bad('seed', 'a finite number', seed);
  const base = preset.camera;
  const width = options.width ?? base.width;
  const height = options.height ?? base.height;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 64 || height < 64)
    bad('width/height', 'integers >= 64', [width, height]);
  const areaScale = (width * height) / (base.width * base.height);
  const camera: CameraModel = {
    ...base,
    width,
    height,
    hotPixels: { ...base.hotPixels, count: Math.round(base.hotPixels.count * areaScale) },
    ...options.camera,
  };
  validateCamera(camera);
  const setT = options.setTemperatureC ?? preset.setTemperatureC;
  const site: SiteModel = { ...preset.site, ...options.site };
  const names: ImageTypeNames = { ...preset.imageTypeNames, ...options.imageTypeNames };
  const biasPairs = options.biasPairs ?? 3;
  const darkExposures = options.darkExposuresSeconds ?? preset.darkExposuresSeconds;
  const darkPairs = options.darkPairsPerExposure ?? 1;
  const secondT = options.secondDarkTemperatureC === undefined ? preset.secondDarkTemperatureC : options.secondDarkTemperatureC;
  const flatLevels = options.flatLevels ?? [...DEFAULT_FLAT_LEVELS];
  const flatRate = options.flatElectronsPerSecond ?? preset.flatElectronsPerSecond;
  if (!Number.isInteger(biasPairs) || biasPairs < 0) bad('biasPairs', 'an integer >= 0', biasPairs);
  if (!Number.isInteger(darkPairs) || darkPairs < 0) bad('darkPairsPerExposure', 'an integer >= 0', darkPairs);
  if (!darkExposures.every((t) => t > 0)) bad('darkExposuresSeconds', 'positive exposures', darkExposures);
  if (!flatLevels.every((f) => f > 0)) bad('flatLevels', 'positive fractions', flatLevels);
  if (!(flatRate > 0)) bad('flatElectronsPerSecond', '> 0', flatRate);
  const lightSets: LightSetSpec[] = (options.lights ?? preset.lights).map((s) => ({
    ...s,
    defects: options.noDefects ? {} : { ...(s.defects ?? {}) },
  }));
  for (const s of lightSets) {
    if (!Number.isInteger(s.count) || s.count < 0) bad('lights.count', 'an integer >= 0', s.count);
    if (!(s.exposureSeconds > 0)) bad('lights.exposureSeconds', '> 0', s.exposureSeconds);
    if (!(s.skyElectronsPerSecond >= 0)) bad('lights.skyElectronsPerSecond', '>= 0', s.skyElectronsPerSecond);
  }
  const psfBase: PsfModel = {
    profile: options.psf?.profile ?? preset.psf.profile,
    fwhmPixels: options.psf?.fwhmPixels ?? preset.psf.fwhmPixels,
    moffatBeta: options.psf?.moffatBeta ?? preset.psf.moffatBeta,
    elongation: options.psf?.elongation ?? 1,
    angleDegrees: options.psf?.angleDegrees ?? 0,
  };
  const seeingJitter = options.seeingJitterFraction ?? 0.04;
  const skyJitter = options.skyJitterFraction ?? 0.03;
  const tempJitter = options.temperatureJitterC ?? 0.05;
  const dither = options.ditherPixels ?? 6;
  const startMs = Date.parse(`${(options.startTime ?? '2031-10-04T20:15:00').replace(/Z$/, '')}Z`);
  if (!Number.isFinite(startMs)) bad('startTime', 'an ISO 8601 UTC time', options.startTime);

  const saturation = sensorSaturation(camera);
  const maxResponse = camera.bayer ? Math.max(camera.bayer.redResponse, camera.bayer.greenResponse, camera.bayer.blueResponse) : 1;
  const flatExposures = flatLevels.map((f) => fixed(roundTo((f * saturation.electrons) / (flatRate * maxResponse), 0.001), 3));

  // Star field over the unbinned sensor.
  const starSeed = mixSeed(seed, 11);
  const starOpts = {
    count: options.starCount ?? Math.round(preset.stars.count * areaScale),
    minFluxElectronsPerSecond: options.starFluxRange?.minElectronsPerSecond ?? preset.stars.minFluxElectronsPerSecond,
    maxFluxElectronsPerSecond: options.starFluxRange?.maxElectronsPerSecond ?? preset.stars.maxFluxElectronsPerSecond,
    powerLawIndex: preset.stars.powerLawIndex,
    marginPixels: 10,
  };
  const stars = drawStarField(new Rng(starSeed), width, height, starOpts).map((s) => ({
    x: fixed(s.x, 4),
    y: fixed(s.y, 4),
    fluxElectronsPerSecond: fixed(s.fluxElectronsPerSecond, 4),
  }));

  // Plan in chronological order: lights, flats, flat-darks, darks, biases.
  const plan: PlannedFrame[] = [];
  for (const set of lightSets) {
    for (let i = 0; i < set.count; i++)
      plan.push({ kind: 'light', exposureSeconds: set.exposureSeconds, setTemperatureC: setT, pair: null, filter: set.filter, lightSet: set, lightIndex: i, flatLevel: null, pairKey: null });
  }
  flatLevels.forEach((f, j) => {
    for (let m = 0; m < 2; m++)
      plan.push({ kind: 'flat', exposureSeconds: flatExposures[j] ?? 0, setTemperatureC: setT, pair: j + 1, filter: preset.flatFilter, lightSet: null, lightIndex: -1, flatLevel: f, pairKey: `flat${j}` });
  });
  if (options.flatDarks) {
    flatExposures.forEach((t, j) => {
      for (let m = 0; m < 2; m++)
        plan.push({ kind: 'flat-dark', exposureSeconds: t, setTemperatureC: setT, pair: j + 1, filter: null, lightSet: null, lightIndex: -1, flatLevel: null, pairKey: `fd${j}` });
    });
  }
  let darkPair = 0;
  for (const T of secondT === null ? [setT] : [setT, secondT]) {
    for (const t of darkExposures) {
      for (let p = 0; p < darkPairs; p++) {
        darkPair++;
        for (let m = 0; m < 2; m++)
          plan.push({ kind: 'dark', exposureSeconds: t, setTemperatureC: T, pair: darkPair, filter: null, lightSet: null, lightIndex: -1, flatLevel: null, pairKey: `dark${darkPair}` });
      }
    }
  }
  for (let p = 0; p < biasPairs; p++) {
    for (let m = 0; m < 2; m++)
      plan.push({ kind: 'bias', exposureSeconds: 0, setTemperatureC: setT, pair: p + 1, filter: null, lightSet: null, lightIndex: -1, flatLevel: null, pairKey: `bias${p}` });
  }

  const counters: Record<SimulatedFrameKind, number> = { bias: 0, dark: 0, flat: 0, 'flat-dark': 0, light: 0 };
  const pairTemperature = new Map<string, number>();
  const truths: FrameTruth[] = [];
  let clockMs = startMs;
  let previousKind: SimulatedFrameKind | null = null;
  plan.forEach((pf, sequence) => {
    if (previousKind !== null && previousKind !== pf.kind) clockMs += BLOCK_GAP_SECONDS * 1000;
    previousKind = pf.kind;
    const frameRng = new Rng(mixSeed(seed, 200, sequence));
    counters[pf.kind]++;
    const number = counters[pf.kind];
    // Temperature: pairs share one reading; reported and true temperature agree (0.1 °C).
    let temperatureC: number;
    const existing = pf.pairKey ? pairTemperature.get(pf.pairKey) : undefined;
    if (existing !== undefined) temperatureC = existing;
    else {
      temperatureC = fixed(roundTo(pf.setTemperatureC + tempJitter * frameRng.normal(), 0.1), 1);
      if (pf.pairKey) pairTemperature.set(pf.pairKey, temperatureC);
    }
    let exposureSeconds = pf.exposureSeconds;
    let binning = 1;
    let gainSetting = camera.gainSetting;
    let gainElectronsPerAdu = camera.gainElectronsPerAdu;
    const defects: Defect[] = [];
    let sky: SkyModel | null = null;
    let psf: PsfModel | null = null;
    let starFluxFactor: number | null = null;
    let ditherPixels: { x: number; y: number } | null = null;
    let signalElectrons = 0;
    if (pf.kind === 'light' && pf.lightSet) {
      const skyFactorJitter = 1 + skyJitter * frameRng.normal();
      const fwhmJitter = 1 + seeingJitter * frameRng.normal();
      const elongJitter = 1 + Math.abs(0.03 * frameRng.normal());
      const elongAngle = 180 * frameRng.uniform();
      const dx = pf.lightIndex === 0 ? 0 : fixed(dither * (2 * frameRng.uniform() - 1), 3);
      const dy = pf.lightIndex === 0 ? 0 : fixed(dither * (2 * frameRng.uniform() - 1), 3);
      let skyFactor = skyFactorJitter;
      let starFactor = 1;
      let fwhm = psfBase.fwhmPixels * fwhmJitter;
      let elongation = Math.max(psfBase.elongation, elongJitter);
      let angle = psfBase.elongation > 1 ? psfBase.angleDegrees : elongAngle;
      for (const spec of pf.lightSet.defects?.[pf.lightIndex] ?? []) {
        const d = fillDefect(spec, frameRng, camera, pf.lightSet.exposureSeconds);
        defects.push(d);
        switch (d.kind) {
          case 'cloud':
            skyFactor *= d.skyFactor;
            starFactor *= d.starFactor;
            break;
          case 'bright-sky':
            skyFactor *= d.skyFactor;
            break;
          case 'soft-focus':
            fwhm *= d.fwhmFactor;
            break;
          case 'trailed-stars':
            elongation = d.elongation;
            angle = d.angleDegrees;
            break;
          case 'warm-sensor':
            temperatureC = fixed(temperatureC + d.deltaTemperatureC, 1);
            break;
          case 'wrong-exposure':
            exposureSeconds = d.exposureSeconds;
            break;
          case 'other-binning':
            binning = d.binning;
            break;
          case 'other-gain':
            gainSetting = d.gainSetting;
            gainElectronsPerAdu = d.gainElectronsPerAdu;
            break;
          case 'trail':
            break;
        }
      }
      sky = {
        rateElectronsPerSecond: fixed(pf.lightSet.skyElectronsPerSecond * skyFactor, 6),
        gradientPercent: options.skyGradientPercent ?? preset.skyGradientPercent,
        gradientAngleDegrees: options.skyGradientAngleDegrees ?? preset.skyGradientAngleDegrees,
      };
      psf = { ...psfBase, fwhmPixels: fixed(fwhm / binning, 4), elongation: fixed(elongation, 4), angleDegrees: fixed(angle, 3) };
      starFluxFactor = fixed(starFactor, 6);
      ditherPixels = { x: dx, y: dy };
      signalElectrons = fixed(sky.rateElectronsPerSecond * exposureSeconds, 6);
    }
    let channelSignalElectrons: FrameTruth['channelSignalElectrons'] = null;
    if (pf.kind === 'flat') {
      signalElectrons = fixed(flatRate * exposureSeconds, 6);
      if (camera.bayer)
        channelSignalElectrons = {
          R: fixed(signalElectrons * camera.bayer.redResponse, 6),
          G: fixed(signalElectrons * camera.bayer.greenResponse, 6),
          B: fixed(signalElectrons * camera.bayer.blueResponse, 6),
        };
    }
    const dir = pf.kind;
    const file = `${dir}/${dir.replace('-', '_')}_${String(number).padStart(3, '0')}.fits`;
    truths.push({
      file,
      kind: pf.kind,
      sequence,
      number,
      pair: pf.pair,
      imageType: names[pf.kind],
      filter: pf.kind === 'light' || pf.kind === 'flat' ? pf.filter : null,
      object: pf.kind === 'light' ? site.target : null,
      dateObs: new Date(clockMs).toISOString().slice(0, 23),
      exposureSeconds,
      temperatureC,
      setTemperatureC: pf.setTemperatureC,
      binning,
      width: Math.floor(width / binning),
      height: Math.floor(height / binning),
      gainSetting,
      gainElectronsPerAdu,
      offsetSetting: camera.offsetSetting,
      noiseSeed: mixSeed(seed, 100, sequence),
      darkCurrentElectronsPerSecond: darkCurrentAt(camera, temperatureC),
      signalElectrons,
      channelSignalElectrons,
      sky,
      psf,
      starFluxFactor,
      ditherPixels,
      defects,
      expectedReasons: [...new Set(defects.flatMap((d) => DEFECT_REASONS[d.kind]))],
    });
    clockMs += Math.round((exposureSeconds + READOUT_SECONDS) * 1000);
  });

  const patterns = new Map<number, FixedPattern>();
  const patternFor = (b: number): FixedPattern => {
    let p = patterns.get(b);
    if (!p) {
      p = buildFixedPattern(camera, b);
      patterns.set(b, p);
    }
    return p;
  };
  const hotPixels = patternFor(1).hotPixels;

  const renderFrame = (ft: FrameTruth): RenderedFrame => {
    const pattern = patternFor(ft.binning);
    const w = pattern.width;
    const h = pattern.height;
    let rate: Float64Array | null = null;
    if (ft.kind === 'flat') {
      rate = new Float64Array(w * h).fill(flatRate);
    } else if (ft.kind === 'light' && ft.sky && ft.psf) {
      rate = new Float64Array(w * h);
      addSky(rate, w, h, ft.sky);
      const b = ft.binning;
      addStars(rate, w, h, stars, ft.psf, {
        fluxScale: (ft.starFluxFactor ?? 1) / (b * b),
        offsetX: ft.ditherPixels?.x ?? 0,
        offsetY: ft.ditherPixels?.y ?? 0,
        coordinateDivisor: b,
      });
      for (const d of ft.defects) {
        if (d.kind !== 'trail') continue;
        addTrail(
          rate,
          w,
          h,
          { ...d, x: (d.x + 0.5) / b - 0.5, y: (d.y + 0.5) / b - 0.5, widthFwhmPixels: d.widthFwhmPixels / b },
          ft.exposureSeconds,
        );
      }
    }
    const pixels = exposeSensor(
      camera,
      pattern,
      { exposureSeconds: ft.exposureSeconds, temperatureC: ft.temperatureC, gainElectronsPerAdu: ft.gainElectronsPerAdu },
      rate,
      new Rng(ft.noiseSeed),
    );
    return { pixels, width: w, height: h, cards: frameCards(ft, camera, site) };
  };

  const frames: SimulatedFrame[] = truths.map((ft) => ({ file: ft.file, kind: ft.kind, truth: ft, render: () => renderFrame(ft) }));
  const step = quantizationStepAdu(camera);
  const level = (signal: number, dark: number): ExpectedPairLevel => {
    const e = expectedFlatStats(camera, signal, { darkElectrons: dark });
    return { meanAdu: e.meanAdu, temporalVarianceAdu2: e.temporalVarianceAdu2, saturatedFraction: e.saturatedFraction };
  };
  const bayer = camera.bayer;
  const channels: { channel: 'mono' | 'R' | 'G' | 'B'; response: number }[] = bayer
    ? [
        { channel: 'R', response: bayer.redResponse },
        { channel: 'G', response: bayer.greenResponse },
        { channel: 'B', response: bayer.blueResponse },
      ]
    : [{ channel: 'mono', response: 1 }];
  const firstOfPair = (kind: SimulatedFrameKind) => truths.filter((f, i) => f.kind === kind && truths.findIndex((g) => g.kind === kind && g.pair === f.pair) === i);
  const expected: SessionTruth['expected'] = {
    bias: level(0, 0),
    flatPairs: firstOfPair('flat').flatMap((f) => {
      const dark = f.darkCurrentElectronsPerSecond * f.exposureSeconds;
      return channels.map((c) => ({
        pair: f.pair ?? 0,
        exposureSeconds: f.exposureSeconds,
        channel: c.channel,
        signalElectrons: f.signalElectrons * c.response,
        darkElectrons: dark,
        ...level(f.signalElectrons * c.response, dark),
      }));
    }),
    darkPairs: firstOfPair('dark').map((f) => {
      const dark = f.darkCurrentElectronsPerSecond * f.exposureSeconds;
      return { pair: f.pair ?? 0, exposureSeconds: f.exposureSeconds, temperatureC: f.temperatureC, darkElectrons: dark, ...level(0, dark) };
    }),
  };
  const truth: SessionTruth = {
    schema: 'subgauge.sim-truth/1',
    presetId,
    seed,
    camera,
    derived: {
      quantizationStepAdu: step,
      nativeGainElectronsPerAdu: nativeGainElectronsPerAdu(camera),
      adcMaxAdu: adcMaxAdu(camera),
      saturation,
      readNoiseAdu: camera.readNoiseElectrons / camera.gainElectronsPerAdu,
      darkCurrentAtSetTemperatureElectronsPerSecond: darkCurrentAt(camera, setT),
    },
    site,
    setTemperatureC: setT,
    flat: { filter: preset.flatFilter, illuminationElectronsPerSecond: flatRate, levelsFractionOfSaturation: flatLevels, exposuresSeconds: flatExposures },
    scene: {
      psf: psfBase,
      stars: {
        seed: starSeed,
        count: stars.length,
        minFluxElectronsPerSecond: starOpts.minFluxElectronsPerSecond,
        maxFluxElectronsPerSecond: starOpts.maxFluxElectronsPerSecond,
        powerLawIndex: starOpts.powerLawIndex,
        totalFluxElectronsPerSecond: stars.reduce((s, st) => s + st.fluxElectronsPerSecond, 0),
        list: stars,
      },
      skyGradientPercent: options.skyGradientPercent ?? preset.skyGradientPercent,
      skyGradientAngleDegrees: options.skyGradientAngleDegrees ?? preset.skyGradientAngleDegrees,
      seeingJitterFraction: seeingJitter,
      skyJitterFraction: skyJitter,
      ditherPixels: dither,
    },
    lights: lightSets,
    hotPixels,
    expected,
    counts: { ...counters },
    frames: truths,
  };
  return { frames, truth };
}

function fillDefect(spec: DefectSpec, rng: Rng, camera: CameraModel, setExposureSeconds: number): Defect {
  switch (spec.kind) {
    case 'trail':
      return {
        kind: 'trail',
        x: spec.x ?? fixed(camera.width * (0.3 + 0.4 * rng.uniform()), 3),
        y: spec.y ?? fixed(camera.height * (0.3 + 0.4 * rng.uniform()), 3),
        angleDegrees: spec.angleDegrees ?? fixed(10 + 160 * rng.uniform(), 3),
        peakElectrons: spec.peakElectrons ?? 800,
        widthFwhmPixels: spec.widthFwhmPixels ?? 2,
      };
    case 'cloud':
      return { kind: 'cloud', skyFactor: spec.skyFactor ?? 1.6, starFactor: spec.starFactor ?? 0.35 };
    case 'bright-sky':
      return { kind: 'bright-sky', skyFactor: spec.skyFactor ?? 3 };
    case 'soft-focus':
      return { kind: 'soft-focus', fwhmFactor: spec.fwhmFactor ?? 1.8 };
    case 'trailed-stars':
      return { kind: 'trailed-stars', elongation: spec.elongation ?? 2.2, angleDegrees: spec.angleDegrees ?? 35 };
    case 'warm-sensor':
      return { kind: 'warm-sensor', deltaTemperatureC: spec.deltaTemperatureC ?? 4 };
    case 'wrong-exposure':
      return { kind: 'wrong-exposure', exposureSeconds: spec.exposureSeconds ?? setExposureSeconds / 2 };
    case 'other-binning': {
      const b = spec.binning ?? 2;
      if (!Number.isInteger(b) || b < 2) bad('defect other-binning.binning', 'an integer >= 2', b);
      return { kind: 'other-binning', binning: b };
    }
    case 'other-gain':
      return {
        kind: 'other-gain',
        gainSetting: spec.gainSetting ?? camera.gainSetting + 100,
        gainElectronsPerAdu: spec.gainElectronsPerAdu ?? camera.gainElectronsPerAdu / 2,
      };
    default:
      return bad('defect.kind', 'a known defect kind', (spec as { kind: unknown }).kind);
  }
}

/** Header cards of a frame, in a usual order (REFERENCE.md A.9 keywords). */
function frameCards(ft: FrameTruth, camera: CameraModel, site: SiteModel): WriteCard[] {
  const b = ft.binning;
  const cards: WriteCard[] = [
    { keyword: 'IMAGETYP', value: ft.imageType, comment: 'frame type' },
    { keyword: 'DATE-OBS', value: ft.dateObs, comment: 'UTC start of exposure' },
    { keyword: 'EXPTIME', value: ft.exposureSeconds, comment: '[s] exposure time', real: true },
    { keyword: 'CCD-TEMP', value: ft.temperatureC, comment: '[degC] sensor temperature', real: true },
    { keyword: 'SET-TEMP', value: ft.setTemperatureC, comment: '[degC] cooler set point', real: true },
    { keyword: 'GAIN', value: ft.gainSetting, comment: 'camera gain setting' },
    { keyword: 'OFFSET', value: ft.offsetSetting, comment: 'camera offset setting' },
  ];
  if (camera.claimedGainElectronsPerAdu !== null)
    cards.push({ keyword: 'EGAIN', value: camera.claimedGainElectronsPerAdu, comment: '[e-/ADU] gain claimed by the camera', real: true });
  cards.push(
    { keyword: 'XBINNING', value: b, comment: 'binning factor in x' },
    { keyword: 'YBINNING', value: b, comment: 'binning factor in y' },
    { keyword: 'XPIXSZ', value: fixed(camera.pixelSizeMicrons * b, 4), comment: '[um] pixel size including binning', real: true },
    { keyword: 'YPIXSZ', value: fixed(camera.pixelSizeMicrons * b, 4), comment: '[um] pixel size including binning', real: true },
    { keyword: 'FOCALLEN', value: site.focalLengthMillimetres, comment: '[mm] focal length', real: true },
    { keyword: 'APTDIA', value: site.apertureMillimetres, comment: '[mm] aperture diameter', real: true },
  );
  if (ft.filter !== null) cards.push({ keyword: 'FILTER', value: ft.filter, comment: 'filter name' });
  if (ft.object !== null) cards.push({ keyword: 'OBJECT', value: ft.object, comment: 'target' });
  cards.push(
    { keyword: 'INSTRUME', value: camera.name, comment: 'camera' },
    { keyword: 'TELESCOP', value: site.telescope, comment: 'telescope' },
    { keyword: 'OBSERVER', value: site.observer },
    { keyword: 'OBSERVAT', value: site.observatory, comment: 'observatory' },
  );
  // A binned CFA frame mixes colours (REFERENCE.md F.4): no pattern is written then.
  if (camera.bayer && b === 1)
    cards.push(
      { keyword: 'BAYERPAT', value: camera.bayer.pattern, comment: 'CFA pattern from the first pixel' },
      { keyword: 'XBAYROFF', value: 0, comment: 'CFA x offset' },
      { keyword: 'YBAYROFF', value: 0, comment: 'CFA y offset' },
    );
  cards.push(
    { keyword: 'ROWORDER', value: 'TOP-DOWN', comment: 'first row is the top of the image' },
    { keyword: 'ORIGIN', value: 'subgauge simulate', comment: 'synthetic frame with known truth' },
    { keyword: 'SIMSEED', value: ft.noiseSeed, comment: 'temporal noise seed of this frame' },
  );
  return cards;
}
