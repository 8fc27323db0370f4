/**
 * Sensor model of the simulator: a plain object holding every true camera parameter, its fixed
 * patterns (PRNU, DSNU, hot pixels, amp glow), the exposure kernel that turns an electron-rate map into
 * 16-bit pixel codes, and the analytic expectation of flat/bias statistics for tests.
 *
 * Signal and noise model: REFERENCE.md B.1 (linear model, Howell/EMVA), B.6 (full well / ADC limit),
 * B.9 (dark current doubling), B.10 (quantization and left shift), F.4 (CFA), F.5 (charge binning).
 */
import { InvalidInputError } from '../errors.js';
import { Rng, mixSeed } from './rng.js';
import { logFactorial, normalCdf, normalQuantile } from './special.js';

/** CFA pattern of the 2x2 cell whose first pixel is array pixel (0, 0) (the first pixel in file order). */
export type BayerPattern = 'RGGB' | 'GRBG' | 'GBRG' | 'BGGR';
/** Sensor edge; `top` is row 0 (the first row in file order, ROWORDER = 'TOP-DOWN'). */
export type SensorEdge = 'left' | 'right' | 'top' | 'bottom';
export type BayerChannel = 'R' | 'G' | 'B';

export interface BayerModel {
  pattern: BayerPattern;
  /** Relative photo-response of each channel (QE-like factor); gain is the same for all channels. */
  redResponse: number;
  greenResponse: number;
  blueResponse: number;
}

export interface HotPixelModel {
  /** Number of hot pixels on the full (unbinned) sensor. */
  count: number;
  /** Extra dark current of a hot pixel at the reference temperature, drawn log-uniform in [min, max] (e-/s). */
  minRateElectronsPerSecond: number;
  maxRateElectronsPerSecond: number;
}

export interface AmpGlowModel {
  edge: SensorEdge;
  /** Glow rate in the pixels touching the edge (e-/s); falls as exp(-distance / scaleLengthPixels). */
  peakElectronsPerSecond: number;
  scaleLengthPixels: number;
}

/** Every true parameter of a simulated camera. Units in names; ADU are file ADU (after the left shift). */
export interface CameraModel {
  /** Written as INSTRUME. */
  name: string;
  /** Unbinned sensor size in pixels. */
  width: number;
  height: number;
  pixelSizeMicrons: number;
  /** ADC resolution (8..16). Codes are left-shifted to 16 bits: step = 2^(16 - adcBits) file ADU. */
  adcBits: number;
  /** Conversion gain in e- per file ADU (native gain = this x step). */
  gainElectronsPerAdu: number;
  /** Temporal read noise (Gaussian), e- rms. */
  readNoiseElectrons: number;
  /** Mean bias level in file ADU (an offset of offsetAdu x gain electrons ahead of the ADC). */
  offsetAdu: number;
  /** Charge capacity of one unbinned pixel, e-; the asymptote of the soft roll-off. */
  fullWellElectrons: number;
  /** Roll-off starts at this fraction of the full well (0 < knee < 1). */
  fullWellKneeFraction: number;
  /** PRNU: rms of the per-pixel photo-response factor around 1 (fraction). */
  prnuFraction: number;
  /** DSNU: rms of a fixed per-pixel offset pattern in the readout chain, e- (same in every frame). */
  dsnuElectrons: number;
  /** Mean dark current at the reference temperature, e-/px/s. */
  darkCurrentElectronsPerSecond: number;
  darkReferenceTemperatureC: number;
  /** Dark current doubles every this many °C: D(T) = D0 2^((T - T0)/Td) (REFERENCE.md B.9). */
  darkDoublingTemperatureC: number;
  hotPixels: HotPixelModel;
  ampGlow: AmpGlowModel | null;
  bayer: BayerModel | null;
  /** Camera gain setting written as GAIN (an index, not e-/ADU). */
  gainSetting: number;
  /** Camera offset setting written as OFFSET. */
  offsetSetting: number;
  /** e-/ADU claimed by the camera, written as EGAIN (null: no EGAIN card). A claim, not the truth. */
  claimedGainElectronsPerAdu: number | null;
  /** Seed of the fixed patterns (PRNU, DSNU, hot pixels): a property of the sensor, not of a frame. */
  fixedPatternSeed: number;
}

/** Quantization step of the file codes in file ADU: 2^(16 - adcBits) (16 for 12-bit, 4 for 14-bit). */
export function quantizationStepAdu(camera: CameraModel): number {
  return 2 ** (16 - camera.adcBits);
}

/** Largest native ADC code, 2^adcBits - 1. */
export function adcMaxCode(camera: CameraModel): number {
  return 2 ** camera.adcBits - 1;
}

/** Largest file value: (2^adcBits - 1) x step (65520 for 12-bit, 65532 for 14-bit). */
export function adcMaxAdu(camera: CameraModel): number {
  return adcMaxCode(camera) * quantizationStepAdu(camera);
}

/** Native gain, e- per ADC code: gainElectronsPerAdu x step. */
export function nativeGainElectronsPerAdu(camera: CameraModel, gainElectronsPerAdu = camera.gainElectronsPerAdu): number {
  return gainElectronsPerAdu * quantizationStepAdu(camera);
}

/** Dark current at `temperatureC`: D0 2^((T - T0)/Td), e-/px/s (REFERENCE.md B.9). */
export function darkCurrentAt(camera: CameraModel, temperatureC: number): number {
  return camera.darkCurrentElectronsPerSecond * darkTemperatureFactor(camera, temperatureC);
}

/** The factor 2^((T - T0)/Td) that scales all dark current (uniform and hot pixels; not amp glow). */
export function darkTemperatureFactor(camera: CameraModel, temperatureC: number): number {
  return 2 ** ((temperatureC - camera.darkReferenceTemperatureC) / camera.darkDoublingTemperatureC);
}

/**
 * Soft full-well roll-off applied to the collected charge n (e-):
 * c(n) = n for n <= K, c(n) = K + (W - K) tanh((n - K)/(W - K)) above, with W = binning² x full well and
 * K = knee x W. c is continuous with a continuous slope (1 at the knee), tends to W, and compresses the
 * shot-noise variance near full well by about c'(n)² = sech⁴((n - K)/(W - K)).
 */
export function collectedElectrons(camera: CameraModel, electrons: number, binning = 1): number {
  const w = camera.fullWellElectrons * binning * binning;
  const k = camera.fullWellKneeFraction * w;
  if (electrons <= k) return electrons;
  const span = w - k;
  return k + span * Math.tanh((electrons - k) / span);
}

export interface SensorSaturation {
  /** Largest mean signal above bias, e-: min(binned full well, ADC limit). */
  electrons: number;
  /** Which limit comes first (REFERENCE.md B.6). */
  limit: 'full-well' | 'adc';
  fullWellElectrons: number;
  /** (adcMaxAdu - offsetAdu) x gain: the signal at which the ADC clips. */
  adcLimitElectrons: number;
}

/** Saturation signal of the camera (at a binning and optionally another gain). */
export function sensorSaturation(camera: CameraModel, binning = 1, gainElectronsPerAdu = camera.gainElectronsPerAdu): SensorSaturation {
  const fullWellElectrons = camera.fullWellElectrons * binning * binning;
  const adcLimitElectrons = (adcMaxAdu(camera) - camera.offsetAdu) * gainElectronsPerAdu;
  return adcLimitElectrons < fullWellElectrons
    ? { electrons: adcLimitElectrons, limit: 'adc', fullWellElectrons, adcLimitElectrons }
    : { electrons: fullWellElectrons, limit: 'full-well', fullWellElectrons, adcLimitElectrons };
}

/** CFA channel of array pixel (x, y) for `pattern` (origin = first pixel in file order). */
export function bayerChannelAt(pattern: BayerPattern, x: number, y: number): BayerChannel {
  return pattern[(y & 1) * 2 + (x & 1)] as BayerChannel;
}

/** Channel response of pixel (x, y): 1 for monochrome cameras. */
export function channelResponse(camera: CameraModel, x: number, y: number): number {
  const bayer = camera.bayer;
  if (!bayer) return 1;
  const c = bayerChannelAt(bayer.pattern, x, y);
  return c === 'R' ? bayer.redResponse : c === 'G' ? bayer.greenResponse : bayer.blueResponse;
}

/** Throw `InvalidInputError('INPUT_BAD_PARAMETER')` when a camera parameter is out of range. */
export function validateCamera(camera: CameraModel): void {
  const bad = (field: string, expected: string, found: unknown): never => {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `camera.${field}: expected ${expected}; found ${String(found)}`, {
      keyword: field,
    });
  };
  const positiveInt = (field: keyof CameraModel) => {
    const v = camera[field];
    if (typeof v !== 'number' || !Number.isInteger(v) || v < 1) bad(field, 'a positive integer', v);
  };
  positiveInt('width');
  positiveInt('height');
  if (!Number.isInteger(camera.adcBits) || camera.adcBits < 8 || camera.adcBits > 16) bad('adcBits', 'an integer 8..16', camera.adcBits);
  if (!(camera.gainElectronsPerAdu > 0)) bad('gainElectronsPerAdu', '> 0', camera.gainElectronsPerAdu);
  if (!(camera.readNoiseElectrons >= 0)) bad('readNoiseElectrons', '>= 0', camera.readNoiseElectrons);
  if (!(camera.offsetAdu >= 0 && camera.offsetAdu < adcMaxAdu(camera))) bad('offsetAdu', 'in [0, ADC max)', camera.offsetAdu);
  if (!(camera.fullWellElectrons > 0)) bad('fullWellElectrons', '> 0', camera.fullWellElectrons);
  if (!(camera.fullWellKneeFraction > 0 && camera.fullWellKneeFraction < 1)) bad('fullWellKneeFraction', 'in (0, 1)', camera.fullWellKneeFraction);
  if (!(camera.prnuFraction >= 0 && camera.prnuFraction < 0.2)) bad('prnuFraction', 'in [0, 0.2)', camera.prnuFraction);
  if (!(camera.dsnuElectrons >= 0)) bad('dsnuElectrons', '>= 0', camera.dsnuElectrons);
  if (!(camera.darkCurrentElectronsPerSecond >= 0)) bad('darkCurrentElectronsPerSecond', '>= 0', camera.darkCurrentElectronsPerSecond);
  if (!(camera.darkDoublingTemperatureC > 0)) bad('darkDoublingTemperatureC', '> 0', camera.darkDoublingTemperatureC);
  const hp = camera.hotPixels;
  if (!Number.isInteger(hp.count) || hp.count < 0 || hp.count > camera.width * camera.height) bad('hotPixels.count', 'an integer in [0, pixels]', hp.count);
  if (!(hp.minRateElectronsPerSecond > 0 && hp.maxRateElectronsPerSecond >= hp.minRateElectronsPerSecond))
    bad('hotPixels.minRateElectronsPerSecond', '0 < min <= max', hp.minRateElectronsPerSecond);
  if (camera.ampGlow && !(camera.ampGlow.scaleLengthPixels > 0 && camera.ampGlow.peakElectronsPerSecond >= 0))
    bad('ampGlow', 'scaleLengthPixels > 0 and peakElectronsPerSecond >= 0', JSON.stringify(camera.ampGlow));
  if (camera.bayer) {
    const b = camera.bayer;
    if (!['RGGB', 'GRBG', 'GBRG', 'BGGR'].includes(b.pattern)) bad('bayer.pattern', 'RGGB, GRBG, GBRG or BGGR', b.pattern);
    if (!(b.redResponse > 0 && b.greenResponse > 0 && b.blueResponse > 0)) bad('bayer', 'positive channel responses', JSON.stringify(b));
  }
}

/** One hot pixel: unbinned sensor coordinates and its extra dark current at the reference temperature. */
export interface SimulatedHotPixel {
  x: number;
  y: number;
  rateElectronsPerSecond: number;
}

/**
 * Fixed patterns of the sensor at one binning. Maps are per output pixel (row-major, width x height);
 * with binning b each value is the sum over the b x b unbinned pixels of the block (charge binning).
 */
export interface FixedPattern {
  binning: number;
  width: number;
  height: number;
  /** Channel response x (1 + PRNU), summed over the block (so about b² for mono). */
  response: Float32Array;
  /** Dark current at the reference temperature (uniform + hot pixels), e-/s, summed over the block. */
  darkRateAtReference: Float32Array;
  /** Amp glow, e-/s (temperature-independent), or null. */
  glowRate: Float32Array | null;
  /** DSNU offsets, e-, summed over the block. */
  dsnuElectrons: Float32Array;
  /** Hot pixels in unbinned coordinates. */
  hotPixels: SimulatedHotPixel[];
  /** Capacity of one output pixel, e- (b² x full well). */
  fullWellElectrons: number;
}

/**
 * Build the fixed patterns of `camera` at `binning` (deterministic from `camera.fixedPatternSeed`; the
 * unbinned patterns are the same for every binning, so binned maps are block sums of the same sensor).
 * Output size: floor(width / b) x floor(height / b); remainder rows/columns are dropped.
 *
 * Method: PRNU p ~ N(0, prnuFraction²) per pixel, response = channel factor x max(0, 1 + p);
 * DSNU d ~ N(0, dsnuElectrons²); hot pixel positions uniform without repetition, rates log-uniform;
 * glow = peak exp(-distance / L), distance in pixels from the glowing edge's first row/column.
 */
export function buildFixedPattern(camera: CameraModel, binning = 1): FixedPattern {
  validateCamera(camera);
  if (!Number.isInteger(binning) || binning < 1 || binning > Math.min(camera.width, camera.height))
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `binning: expected a positive integer up to the sensor size; found ${binning}`);
  const W = camera.width;
  const H = camera.height;
  const n = W * H;
  const prnu = new Float32Array(n);
  new Rng(mixSeed(camera.fixedPatternSeed, 1)).addNormal(prnu, camera.prnuFraction);
  const dsnu = new Float32Array(n);
  new Rng(mixSeed(camera.fixedPatternSeed, 2)).addNormal(dsnu, camera.dsnuElectrons);
  const hotPixels = drawHotPixels(camera);
  const b = binning;
  const w = Math.floor(W / b);
  const h = Math.floor(H / b);
  const response = new Float32Array(w * h);
  const dark = new Float32Array(w * h);
  const dsnuOut = new Float32Array(w * h);
  const glow = camera.ampGlow ? new Float32Array(w * h) : null;
  const D0 = camera.darkCurrentElectronsPerSecond;
  const bayer = camera.bayer;
  const resp = bayer ? [channelResponse(camera, 0, 0), channelResponse(camera, 1, 0), channelResponse(camera, 0, 1), channelResponse(camera, 1, 1)] : [1, 1, 1, 1];
  const r00 = resp[0] ?? 1;
  const r10 = resp[1] ?? 1;
  const r01 = resp[2] ?? 1;
  const r11 = resp[3] ?? 1;
  const glowModel = camera.ampGlow;
  for (let Y = 0; Y < h * b; Y++) {
    const oy = Math.floor(Y / b) * w;
    const rowEven = (Y & 1) === 0;
    for (let X = 0; X < w * b; X++) {
      const src = Y * W + X;
      const dst = oy + Math.floor(X / b);
      const cfa = rowEven ? ((X & 1) === 0 ? r00 : r10) : (X & 1) === 0 ? r01 : r11;
      const p = 1 + (prnu[src] ?? 0);
      response[dst] = (response[dst] ?? 0) + cfa * (p > 0 ? p : 0);
      dark[dst] = (dark[dst] ?? 0) + D0;
      dsnuOut[dst] = (dsnuOut[dst] ?? 0) + (dsnu[src] ?? 0);
      if (glow && glowModel) {
        const dist =
          glowModel.edge === 'left' ? X : glowModel.edge === 'right' ? W - 1 - X : glowModel.edge === 'top' ? Y : H - 1 - Y;
        glow[dst] = (glow[dst] ?? 0) + glowModel.peakElectronsPerSecond * Math.exp(-dist / glowModel.scaleLengthPixels);
      }
    }
  }
  for (const hp of hotPixels) {
    const bx = Math.floor(hp.x / b);
    const by = Math.floor(hp.y / b);
    if (bx < w && by < h) dark[by * w + bx] = (dark[by * w + bx] ?? 0) + hp.rateElectronsPerSecond;
  }
  return {
    binning: b,
    width: w,
    height: h,
    response,
    darkRateAtReference: dark,
    glowRate: glow,
    dsnuElectrons: dsnuOut,
    hotPixels,
    fullWellElectrons: camera.fullWellElectrons * b * b,
  };
}

/** The camera's hot pixels (unbinned coordinates, sorted by row then column), deterministic per seed. */
export function drawHotPixels(camera: CameraModel): SimulatedHotPixel[] {
  const rng = new Rng(mixSeed(camera.fixedPatternSeed, 3));
  const n = camera.width * camera.height;
  const seen = new Set<number>();
  const out: SimulatedHotPixel[] = [];
  const lo = Math.log(camera.hotPixels.minRateElectronsPerSecond);
  const hi = Math.log(camera.hotPixels.maxRateElectronsPerSecond);
  while (out.length < camera.hotPixels.count) {
    const idx = rng.integer(n);
    const rate = Math.exp(lo + (hi - lo) * rng.uniform());
    if (seen.has(idx)) continue;
    seen.add(idx);
    out.push({ x: idx % camera.width, y: Math.floor(idx / camera.width), rateElectronsPerSecond: rate });
  }
  out.sort((a, b) => a.y - b.y || a.x - b.x);
  return out;
}

/** Conditions of one exposure. */
export interface SensorExposure {
  exposureSeconds: number;
  /** True sensor temperature (sets the dark current). */
  temperatureC: number;
  /** Conversion gain for this frame (default camera.gainElectronsPerAdu); the offset stays offsetAdu. */
  gainElectronsPerAdu?: number;
}

/**
 * Expose the sensor: electron-rate map → 16-bit file codes. `rate` (length pattern.width x height, e-/s per
 * output pixel before channel response and PRNU, or null for bias/dark) is overwritten as scratch.
 *
 * Order of operations for output pixel i (b = binning, t = exposure, g = gain e-/file ADU, s = step):
 * 1. λ_i = (rate_i · response_i + darkRef_i · 2^((T - T0)/Td) + glow_i) · t   (expected electrons)
 * 2. n_i ~ Poisson(λ_i)                                                    (shot noise of signal + dark)
 * 3. c_i = collectedElectrons(n_i)  (soft roll-off to b²·W, see `collectedElectrons`)
 * 4. e_i = offsetAdu · g + dsnu_i + c_i + σ_R · z_i,  z_i ~ N(0, 1)          (read noise once per output pixel)
 * 5. q_i = clamp(round(e_i / (g · s)), 0, 2^bits - 1)                       (ADC: native code, saturates at max)
 * 6. out_i = q_i · s                                                        (left shift to 16 bits)
 * Random draws: all Poisson draws (pixel order), then all normals (pixel order), from `rng`.
 *
 * @returns a new Uint16Array of pattern.width x pattern.height codes.
 * @throws InvalidInputError INPUT_SHAPE_MISMATCH when `rate` has the wrong length.
 */
export function exposeSensor(
  camera: CameraModel,
  pattern: FixedPattern,
  exposure: SensorExposure,
  rate: Float64Array | null,
  rng: Rng,
): Uint16Array {
  const n = pattern.width * pattern.height;
  if (rate && rate.length !== n)
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `rate: expected ${n} values; found ${rate.length}`);
  const buf = rate ?? new Float64Array(n);
  const t = exposure.exposureSeconds;
  const gain = exposure.gainElectronsPerAdu ?? camera.gainElectronsPerAdu;
  const darkFactor = darkTemperatureFactor(camera, exposure.temperatureC);
  const response = pattern.response;
  const dark = pattern.darkRateAtReference;
  const glow = pattern.glowRate;
  if (glow) {
    for (let i = 0; i < n; i++) buf[i] = ((buf[i] ?? 0) * (response[i] ?? 0) + (dark[i] ?? 0) * darkFactor + (glow[i] ?? 0)) * t;
  } else {
    for (let i = 0; i < n; i++) buf[i] = ((buf[i] ?? 0) * (response[i] ?? 0) + (dark[i] ?? 0) * darkFactor) * t;
  }
  rng.poissonInPlace(buf);
  const wFull = pattern.fullWellElectrons;
  const knee = camera.fullWellKneeFraction * wFull;
  const span = wFull - knee;
  const offsetElectrons = camera.offsetAdu * gain;
  const dsnu = pattern.dsnuElectrons;
  for (let i = 0; i < n; i++) {
    const e = buf[i] ?? 0;
    buf[i] = offsetElectrons + (dsnu[i] ?? 0) + (e <= knee ? e : knee + span * Math.tanh((e - knee) / span));
  }
  rng.addNormal(buf, camera.readNoiseElectrons);
  const step = quantizationStepAdu(camera);
  const invNative = 1 / (gain * step);
  const maxCode = adcMaxCode(camera);
  const out = new Uint16Array(n);
  for (let i = 0; i < n; i++) {
    const q = Math.round((buf[i] ?? 0) * invNative);
    out[i] = (q < 0 ? 0 : q > maxCode ? maxCode : q) * step;
  }
  return out;
}

export interface ExpectedStatsOptions {
  /** Dark electrons (dark current + glow) per pixel, not affected by PRNU (default 0). */
  darkElectrons?: number;
  binning?: number;
  gainElectronsPerAdu?: number;
  /** Average over the PRNU distribution (default true). */
  prnu?: boolean;
  /** Average over the DSNU distribution (default true). */
  dsnu?: boolean;
  /** Always sum over the distributions, even where the closed form holds (for verification; slower). */
  forceSummation?: boolean;
}

/** Expected statistics of a uniformly lit frame (or a pair of them), in file ADU. */
export interface ExpectedFlatStats {
  /** Expected frame mean over pixels, file ADU (includes the offset). */
  meanAdu: number;
  /** Expected mean over pixels of the temporal variance = E[Var(A - B)/2] for a pair, ADU². */
  temporalVarianceAdu2: number;
  /** REFERENCE.md B.1 linear model: offsetAdu + S/g (S = signal + dark electrons). */
  linearMeanAdu: number;
  /** REFERENCE.md B.1 linear model without PRNU (pairs): S/g² + σ_R²/g² + s²/12, ADU². */
  linearVarianceAdu2: number;
  /** Expected fraction of pixels at the ADC maximum. */
  saturatedFraction: number;
}

// Equal-probability normal nodes, rescaled so their second moment is exactly 1 (mean is 0 by symmetry).
function equalProbabilityNodes(count: number): Float64Array {
  const z = new Float64Array(count);
  let m2 = 0;
  for (let j = 0; j < count; j++) {
    const v = normalQuantile((j + 0.5) / count);
    z[j] = v;
    m2 += v * v;
  }
  const scale = Math.sqrt(count / m2);
  for (let j = 0; j < count; j++) z[j] = (z[j] ?? 0) * scale;
  return z;
}
const PRNU_NODES = equalProbabilityNodes(24);
const DSNU_NODES = equalProbabilityNodes(5);

/**
 * Exact expectation (by summation over the model's distributions) of the frame mean and of the pair
 * temporal variance for pixels receiving `signalElectrons` photo-electrons on average (before PRNU; for a
 * colour camera pass the channel's electrons) plus `darkElectrons`, through steps 2-6 of `exposeSensor`.
 *
 * Method: for each pixel class (24 equal-probability PRNU nodes x 5 DSNU nodes, nodes rescaled to unit
 * variance), sum over the Poisson count n (exact pmf, λ ± 10√λ) of the moments of the quantized, clipped
 * Gaussian read-out. Where the read-out is at least 9σ from both ADC ends and σ >= 1 native code,
 * Sheppard's result E[Q] = μ, Var[Q] = σ² + 1/12 is used (its error is below 2e^(-2π²σ²) ≈ 5e-9 of a code²);
 * otherwise the code probabilities Φ((k ± ½ - μ)/σ) are summed. Node averaging is accurate to ~1e-4
 * relative in roll-off and clipping. When every class is in the linear regime (all likely counts below the
 * knee, read-out well inside the ADC range) the result is the closed form of REFERENCE.md B.1 directly.
 */
export function expectedFlatStats(camera: CameraModel, signalElectrons: number, options: ExpectedStatsOptions = {}): ExpectedFlatStats {
  const binning = options.binning ?? 1;
  const gain = options.gainElectronsPerAdu ?? camera.gainElectronsPerAdu;
  const darkE = options.darkElectrons ?? 0;
  const step = quantizationStepAdu(camera);
  const gN = gain * step;
  const sigma = camera.readNoiseElectrons / gN;
  const maxCode = adcMaxCode(camera);
  const prnuNodes = options.prnu === false || camera.prnuFraction === 0 ? new Float64Array(1) : PRNU_NODES;
  const dsnuSigma = camera.dsnuElectrons * binning; // block sum of b² independent offsets: σ·b
  const dsnuNodes = options.dsnu === false || dsnuSigma === 0 ? new Float64Array(1) : DSNU_NODES;
  const offsetE = camera.offsetAdu * gain;
  const S = signalElectrons + darkE;
  const linearMeanAdu = camera.offsetAdu + S / gain;
  const linearVarianceAdu2 = S / (gain * gain) + (camera.readNoiseElectrons / gain) ** 2 + (step * step) / 12;
  // Linear regime (every pixel class and every likely count below the knee, read-out ≥ 9σ inside the ADC
  // range, σ ≥ 1 code): mean and variance are linear in λ, so the class average is the closed form.
  const lamMax = Math.max(0, signalElectrons * (1 + 8 * camera.prnuFraction)) + darkE;
  const nMax = lamMax + 10 * Math.sqrt(lamMax) + 10;
  const knee = camera.fullWellKneeFraction * camera.fullWellElectrons * binning * binning;
  const muLo = (offsetE - 8 * dsnuSigma) / gN;
  const muHi = (offsetE + 8 * dsnuSigma + nMax) / gN;
  if (!options.forceSummation && sigma >= 1 && nMax <= knee && muLo - 9 * sigma > 0.5 && muHi + 9 * sigma < maxCode - 0.5) {
    return { meanAdu: linearMeanAdu, temporalVarianceAdu2: linearVarianceAdu2, linearMeanAdu, linearVarianceAdu2, saturatedFraction: 0 };
  }
  const mu0 = (offsetE + collectedElectrons(camera, S, binning)) / gN;
  let m1 = 0;
  let m2 = 0;
  let tVar = 0;
  let sat = 0;
  const classes = prnuNodes.length * dsnuNodes.length;
  for (const zp of prnuNodes) {
    const lambda = Math.max(0, signalElectrons * (1 + camera.prnuFraction * zp)) + darkE;
    const pmf = poissonPmf(lambda);
    for (const zd of dsnuNodes) {
      const r = pixelMoments(camera, pmf, offsetE + dsnuSigma * zd, gN, sigma, maxCode, binning, mu0);
      m1 += r.mean;
      m2 += r.second;
      tVar += r.second - r.mean * r.mean;
      sat += r.saturated;
    }
  }
  m1 /= classes;
  m2 /= classes;
  tVar /= classes;
  return {
    meanAdu: (mu0 + m1) * step,
    temporalVarianceAdu2: tVar * step * step,
    linearMeanAdu,
    linearVarianceAdu2,
    saturatedFraction: sat / classes,
  };
}

interface PoissonPmf {
  first: number;
  p: Float64Array;
}

// Poisson pmf over λ ± (10√λ + 10), normalised, by the recurrence p(n) = p(n - 1) λ / n from the mode.
function poissonPmf(lambda: number): PoissonPmf {
  if (!(lambda > 0)) return { first: 0, p: Float64Array.of(1) };
  const sd = Math.sqrt(lambda);
  const lo = Math.max(0, Math.floor(lambda - 10 * sd - 10));
  const hi = Math.ceil(lambda + 10 * sd + 10);
  const p = new Float64Array(hi - lo + 1);
  const mode = Math.floor(lambda);
  const m = mode - lo;
  p[m] = Math.exp(mode * Math.log(lambda) - lambda - logFactorial(mode));
  for (let i = m + 1; i < p.length; i++) p[i] = ((p[i - 1] ?? 0) * lambda) / (lo + i);
  for (let i = m - 1; i >= 0; i--) p[i] = ((p[i + 1] ?? 0) * (lo + i + 1)) / lambda;
  let sum = 0;
  for (const v of p) sum += v;
  for (let i = 0; i < p.length; i++) p[i] = (p[i] ?? 0) / sum;
  return { first: lo, p };
}

// Moments of (Q - mu0) for one pixel class: Q = clamp(round((offset + c(n) + σ_R z)/gN)), n ~ pmf.
function pixelMoments(
  camera: CameraModel,
  pmf: PoissonPmf,
  offsetE: number,
  gN: number,
  sigma: number,
  maxCode: number,
  binning: number,
  mu0: number,
): { mean: number; second: number; saturated: number } {
  const w = camera.fullWellElectrons * binning * binning;
  const knee = camera.fullWellKneeFraction * w;
  const span = w - knee;
  const sheppardLo = 9 * sigma + 0.5;
  const sheppardHi = maxCode - 0.5 - 9 * sigma;
  const quantVar = sigma * sigma + 1 / 12;
  const fast = sigma >= 1;
  let s1 = 0;
  let s2 = 0;
  let sSat = 0;
  const p = pmf.p;
  for (let i = 0; i < p.length; i++) {
    const pi = p[i] ?? 0;
    if (pi < 1e-300) continue;
    const n = pmf.first + i;
    const c = n <= knee ? n : knee + span * Math.tanh((n - knee) / span);
    const mu = (offsetE + c) / gN;
    if (fast && mu > sheppardLo && mu < sheppardHi) {
      const d = mu - mu0;
      s1 += pi * d;
      s2 += pi * (d * d + quantVar);
      continue;
    }
    const q = quantizedMoments(mu, sigma, maxCode, mu0);
    s1 += pi * q.mean;
    s2 += pi * q.second;
    sSat += pi * q.saturated;
  }
  return { mean: s1, second: s2, saturated: sSat };
}

// Moments of (Q - c) for Q = clamp(round(mu + sigma Z), 0, M).
function quantizedMoments(mu: number, sigma: number, M: number, c: number): { mean: number; second: number; saturated: number } {
  if (sigma >= 1 && mu - 9 * sigma > 0.5 && mu + 9 * sigma < M - 0.5) {
    const d = mu - c;
    return { mean: d, second: d * d + sigma * sigma + 1 / 12, saturated: 0 };
  }
  if (mu - 9 * sigma - 1 > M) return { mean: M - c, second: (M - c) ** 2, saturated: 1 };
  if (mu + 9 * sigma + 1 < 0) return { mean: -c, second: c * c, saturated: 0 };
  if (sigma === 0) {
    const q = Math.min(M, Math.max(0, Math.round(mu)));
    return { mean: q - c, second: (q - c) ** 2, saturated: q === M ? 1 : 0 };
  }
  const kLo = Math.max(0, Math.floor(mu - 10 * sigma));
  const kHi = Math.min(M, Math.ceil(mu + 10 * sigma));
  let mean = 0;
  let second = 0;
  let saturated = 0;
  let below = kLo === 0 ? 0 : normalCdf((kLo - 0.5 - mu) / sigma);
  // Mass below kLo (negligible unless kLo = 0) is assigned to kLo; likewise above kHi to kHi.
  for (let k = kLo; k <= kHi; k++) {
    const upper = k === kHi ? 1 : normalCdf((k + 0.5 - mu) / sigma);
    const pk = upper - (k === kLo ? 0 : below);
    below = upper;
    const d = k - c;
    mean += pk * d;
    second += pk * d * d;
    if (k === M) saturated = pk;
  }
  return { mean, second, saturated };
}
