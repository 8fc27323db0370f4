import type { Diagnostic } from '../diagnostics.js';
import { FitError, InvalidInputError } from '../errors.js';
import { cfaPattern, cfaPatternAt } from '../image/cfa.js';
import { countAtOrAbove, frameFacts, frameLevel, lineNoise } from './frameStatistics.js';
import type { FrameFacts } from './frameStatistics.js';
import {
  darkCurrentFromLevel, dsnuEmva, fitDoublingTemperature, gainRelativeUncertainty, howellGain, linearityError, prnuEmva,
  quantizationSigma,
} from './formulas.js';
import { fitLine } from './lineFit.js';
import { pairStatistics, pairStatisticsTiles } from './pairStatistics.js';
import type { PairMoments, PairStatistics } from './pairStatistics.js';
import { fitPhotonTransfer, weightedPtcFit } from './ptc.js';
import type { PtcFitResult, PtcInputPoint } from './ptc.js';
import { combineQuantizationSteps, detectQuantizationStep } from './quantization.js';
import { medianInPlace } from './select.js';
import { sortCameraFrames } from './sortFrames.js';
import type { CameraFrame, FramePair, LeftOutFrame, LeftOutReason, SortedCameraFrames } from './sortFrames.js';
import type {
  AmpGlowMeasurement, BiasFrameMeasurement, BiasMeasurement, CameraFrameUse, CameraMeasurement, CameraOptions,
  CameraResult, CfaChannelName, ChannelMeasurement, CurvePoint, DarkLevel, DarkMeasurement, DarkTemperatureMeasurement,
  DsnuMeasurement, FlatFrameScreen, FrameEdge, FullWellMeasurement, GainSpread, LinearityMeasurement, PrnuMeasurement,
  PtcFitSummary, TileGain,
} from './types.js';
import { cfaPlaneView, pixelViewOf, regionView, tileViews } from './view.js';
import type { PixelRegion, PixelView } from './view.js';

/** 1/Φ⁻¹(0.75): MAD → σ for Gaussian data (REFERENCE C.1, G row 33). */
const MAD_SIGMA = 1.482602218505602;
/** Standard error of a median relative to σ/√n for Gaussian data: √(π/2) (standard result [MEM]). */
const MEDIAN_EFFICIENCY = 1.2533141373155003;
/** Fraction of pixels at the ADC maximum above which a level counts as ADC-limited (chosen: a few pixels in 10⁴). */
const ADC_LIMIT_FRACTION = 1e-4;

const FULL_WELL_DEFINITION =
  'signal at the maximum of the temporal variance (EMVA 1288 saturation point, recalled from memory; REFERENCE B.6) times the gain';
const LINEARITY_DEFINITION =
  'ordinary least-squares line of bias-subtracted mean signal against exposure over 5-95 % of the saturation signal; ' +
  'δ = (y − fit)/fit (EMVA 1288 Release 3.1/4 style, recalled from memory; REFERENCE B.7); LE = (max δ − min δ)/2';
const PRNU_DEFINITION =
  'EMVA 1288 PRNU (recalled from memory, REFERENCE B.8): √(s²_y − s²_dark)/(μ_y − μ_dark) from a flat pair near 50 % of ' +
  'saturation and the bias pair, spatial variances corrected for temporal noise; median over tiles to limit illumination ' +
  'gradients (not the standard\'s highpass variant)';
const DSNU_DEFINITION =
  'EMVA 1288 DSNU (recalled from memory, REFERENCE B.8): spatial σ of the pair average corrected for temporal noise, times the gain';

type Select = (v: PixelView) => PixelView;

interface Prepared {
  frames: readonly CameraFrame[];
  sorted: SortedCameraFrames;
  views: Map<number, PixelView>;
  facts: Map<number, FrameFacts>;
  biasPairs: FramePair[];
  flatPairs: FramePair[];
  flatDarkPairs: FramePair[];
  darkPairs: FramePair[];
  adcMaxAdu: number | null;
  stepAdu: number | null;
  integerValued: boolean;
  clipSigma: number | null;
  tiles: { x: number; y: number };
  saturatedFractionLimit: number;
  maxLevelMismatch: number;
  minimumSignalToReadNoise: number;
  hotPixelSigma: number;
  options: CameraOptions;
  diagnostics: Diagnostic[];
}

function median(values: readonly number[]): number {
  const a = Float64Array.from(values.filter((v) => Number.isFinite(v)));
  return medianInPlace(a, a.length);
}

function spread(values: readonly number[]): GainSpread {
  const v = values.filter((x) => Number.isFinite(x));
  const m = median(v);
  const mad = median(v.map((x) => Math.abs(x - m)));
  const s = MAD_SIGMA * mad;
  return {
    count: v.length, medianElectronsPerAdu: m, spreadElectronsPerAdu: s,
    standardErrorElectronsPerAdu: v.length > 0 ? (MEDIAN_EFFICIENCY * s) / Math.sqrt(v.length) : NaN,
  };
}

function moments(s: PairStatistics): PairMoments {
  return s.clipped ?? s;
}

/** Spatial variance of one frame with the temporal part removed: (s²_A + s²_B)/2 − Var(A − B)/2 (REFERENCE B.8, L = 1). */
function fixedPatternVariance(m: PairMoments): number {
  return Math.max(0, (m.varianceA + m.varianceB) / 2 - m.differenceVariance / 2);
}

function centralRegion(v: PixelView): PixelView {
  const w = Math.max(1, Math.floor(v.width / 2)), h = Math.max(1, Math.floor(v.height / 2));
  return regionView(v, { x: Math.floor((v.width - w) / 2), y: Math.floor((v.height - h) / 2), width: w, height: h });
}

/** Band of `depth` pixels starting `inset` pixels in from an edge, over the central half of the other axis (so a glowing
 * side does not leak into the strips of the edges next to it). */
function edgeBand(v: PixelView, e: FrameEdge, inset: number, depth: number): PixelView {
  const qx = Math.floor(v.width / 4), qy = Math.floor(v.height / 4);
  const hw = Math.max(1, v.width - 2 * qx), hh = Math.max(1, v.height - 2 * qy);
  switch (e) {
    case 'left': return regionView(v, { x: inset, y: qy, width: depth, height: hh });
    case 'right': return regionView(v, { x: v.width - inset - depth, y: qy, width: depth, height: hh });
    case 'bottom': return regionView(v, { x: qx, y: inset, width: hw, height: depth });
    case 'top': return regionView(v, { x: qx, y: v.height - inset - depth, width: hw, height: depth });
  }
}

function stripDepth(v: PixelView, e: FrameEdge): number {
  return e === 'left' || e === 'right' ? Math.min(v.width, Math.max(2, Math.floor(v.width / 16)))
    : Math.min(v.height, Math.max(2, Math.floor(v.height / 16)));
}

function countJointlyAbove(a: PixelView, b: PixelView, ta: number, tb: number): number {
  const da = a.data, db = b.data;
  let c = 0;
  for (let y = 0; y < a.height; y++) {
    let ia = a.offset + y * a.strideY, ib = b.offset + y * b.strideY;
    for (let x = 0; x < a.width; x++) {
      if (da[ia]! > ta && db[ib]! > tb) c++;
      ia += a.strideX; ib += b.strideX;
    }
  }
  return c;
}

function differenceMadSigma(a: PixelView, b: PixelView): number {
  const buf = new Float32Array(a.width * a.height);
  let n = 0;
  for (let y = 0; y < a.height; y++) {
    let ia = a.offset + y * a.strideY, ib = b.offset + y * b.strideY;
    for (let x = 0; x < a.width; x++) {
      const d = a.data[ia]! - b.data[ib]!;
      ia += a.strideX; ib += b.strideX;
      if (d === d) buf[n++] = d;
    }
  }
  const m = medianInPlace(buf, n);
  for (let i = 0; i < n; i++) buf[i] = Math.abs(buf[i]! - m);
  return MAD_SIGMA * medianInPlace(buf, n);
}

function sameExposure(a: number | null, b: number | null): boolean {
  if (a === null || b === null) return a === b;
  return Math.abs(a - b) <= 1e-6 * Math.max(1, Math.abs(a), Math.abs(b));
}

interface ReferenceStats {
  meanAdu: number;
  differenceVarianceAdu2: number;
  pixelCount: number;
  fixedVarianceAdu2: number;
  tiles: { meanAdu: number; differenceVarianceAdu2: number; fixedVarianceAdu2: number; pixelCount: number }[];
}

function referenceFromPairs(stats: { full: PairStatistics; tiles: PairStatistics[] }[]): ReferenceStats {
  const k = stats.length;
  const avg = (f: (s: { full: PairStatistics; tiles: PairStatistics[] }) => number) => stats.reduce((s, x) => s + f(x), 0) / k;
  const tileCount = stats[0]!.tiles.length;
  const tiles = [];
  for (let t = 0; t < tileCount; t++) {
    tiles.push({
      meanAdu: avg((s) => { const m = moments(s.tiles[t]!); return (m.meanA + m.meanB) / 2; }),
      differenceVarianceAdu2: avg((s) => moments(s.tiles[t]!).differenceVariance),
      fixedVarianceAdu2: fixedPatternVariance(moments(stats[0]!.tiles[t]!)),
      pixelCount: stats.reduce((s, x) => s + moments(x.tiles[t]!).pixelCount, 0),
    });
  }
  return {
    meanAdu: avg((s) => { const m = moments(s.full); return (m.meanA + m.meanB) / 2; }),
    differenceVarianceAdu2: avg((s) => moments(s.full).differenceVariance),
    pixelCount: stats.reduce((s, x) => s + moments(x.full).pixelCount, 0),
    fixedVarianceAdu2: fixedPatternVariance(moments(stats[0]!.full)),
    tiles,
  };
}

interface PlaneOutcome {
  measurement: CameraMeasurement;
  /** Flat pairs (index into Prepared.flatPairs) left out at frame level, with the reason. */
  flatPairReasons: Map<number, LeftOutReason>;
}

function analyzePlane(
  p: Prepared, select: Select, label: string, gainOverride?: { gain: number; uncertainty: number },
): PlaneOutcome {
  const where = (file?: string) => (file ? { file } : {});
  const diag = (code: string, severity: 'info' | 'warning', message: string, file?: string) =>
    p.diagnostics.push({ code, severity, message: label ? `${label}: ${message}` : message, where: where(file) });
  const file = (i: number) => p.frames[i]!.file;
  const view = (i: number) => select(p.views.get(i)!);
  // one scratch buffer for every difference median of this plane (no per-pair allocation)
  const first = view(p.flatPairs[0]!.a);
  const pairOpts = { clipSigma: p.clipSigma, scratch: new Float32Array(first.width * first.height) };
  const measurePair = (pair: FramePair) => {
    const a = view(pair.a), b = view(pair.b);
    return { full: pairStatistics(a, b, pairOpts), tiles: pairStatisticsTiles(a, b, p.tiles.x, p.tiles.y, pairOpts) };
  };

  // --- bias pairs -------------------------------------------------------------------------------------------
  const biasStats = p.biasPairs.map(measurePair);
  const bias = referenceFromPairs(biasStats);
  const firstBias = p.biasPairs[0]!;
  const ba = view(firstBias.a), bb = view(firstBias.b);
  const levelA = frameLevel(ba), levelB = frameLevel(bb);
  const step = p.stepAdu ?? (p.integerValued ? 1 : 0);
  const quantCorrection = (step * step) / 12;
  const readVarianceMeasured = bias.differenceVarianceAdu2 / 2;
  const readNoiseMeasuredAdu = Math.sqrt(readVarianceMeasured);
  const readNoiseAdu = Math.sqrt(Math.max(0, readVarianceMeasured - quantCorrection));
  if (step > 0 && readNoiseMeasuredAdu < 0.5 * step) {
    diag('CAMERA_QUANTIZATION_DOMINATES', 'warning',
      `bias read noise ${readNoiseMeasuredAdu.toFixed(3)} ADU is below half the quantization step ${step}; the Δ²/12 correction dominates`);
  }
  // fraction of pixels at the lowest code found in any bias frame (a pile-up there means clipping, REFERENCE F.3)
  const biasFacts = p.biasPairs.flatMap((pr) => [pr.a, pr.b]).map((i) => frameFacts(view(i)));
  const minimumCodeAdu = Math.min(...biasFacts.map((f) => f.min));
  const minimumCodeFraction = Math.max(...biasFacts.map((f) => (f.min === minimumCodeAdu ? f.countAtMin / f.pixelCount : 0)));
  if (minimumCodeFraction > 1e-3) {
    diag('CAMERA_BIAS_CLIPPED', 'warning',
      `${(minimumCodeFraction * 100).toFixed(2)} % of bias pixels sit at the minimum code ${minimumCodeAdu}: the offset may be too low (REFERENCE F.3)`);
  }
  const firstBiasFull = biasStats[0]!.full;

  // --- flat-dark pairs --------------------------------------------------------------------------------------
  const flatDarks = p.flatDarkPairs.map((pr) => ({ exposure: p.sorted.frames[pr.a]!.settings.exposureSeconds, ref: referenceFromPairs([measurePair(pr)]) }));

  // --- flat pairs -> curve points ---------------------------------------------------------------------------
  const curve: CurvePoint[] = [];
  const flatTiles: PairStatistics[][] = [];
  const flatFull: PairStatistics[] = [];
  const refs: ReferenceStats[] = [];
  const flatPairReasons = new Map<number, LeftOutReason>();
  const readSigma = Math.sqrt(readVarianceMeasured);
  p.flatPairs.forEach((pr, k) => {
    const st = measurePair(pr);
    const m = moments(st.full);
    const exposure = p.sorted.frames[pr.a]!.settings.exposureSeconds;
    const fd = flatDarks.find((f) => sameExposure(f.exposure, exposure));
    const ref = fd ? fd.ref : bias;
    const signal = (m.meanA + m.meanB) / 2 - ref.meanAdu;
    const variance = m.differenceVariance / 2;
    const sa = m.meanA - ref.meanAdu, sb = m.meanB - ref.meanAdu;
    const levelMismatch = sb !== 0 ? Math.abs(sa / sb - 1) : Infinity;
    let adcMaxFraction: number | null = null;
    if (p.adcMaxAdu !== null) {
      const va = view(pr.a), vb = view(pr.b);
      adcMaxFraction = Math.max(countAtOrAbove(va, p.adcMaxAdu) / (va.width * va.height), countAtOrAbove(vb, p.adcMaxAdu) / (vb.width * vb.height));
    }
    const saturated = adcMaxFraction !== null && adcMaxFraction > p.saturatedFractionLimit;
    const g = howellGain({
      flatMeanA: m.meanA, flatMeanB: m.meanB, biasMeanA: ref.meanAdu, biasMeanB: ref.meanAdu,
      flatDifferenceVariance: m.differenceVariance, biasDifferenceVariance: ref.differenceVarianceAdu2,
    });
    const gu = Math.abs(g) * gainRelativeUncertainty(m.differenceVariance, ref.differenceVarianceAdu2, m.pixelCount, ref.pixelCount);
    let excluded: CurvePoint['excludedBecause'] = null;
    if (saturated) { excluded = 'saturated'; flatPairReasons.set(k, 'saturated'); }
    else if (!(signal >= p.minimumSignalToReadNoise * readSigma)) { excluded = 'too-faint'; flatPairReasons.set(k, 'too-faint'); }
    else if (levelMismatch > p.maxLevelMismatch) { excluded = 'level-mismatch'; flatPairReasons.set(k, 'level-mismatch'); }
    curve.push({
      files: [file(pr.a), file(pr.b)], exposureSeconds: exposure, signalAdu: signal, varianceAdu2: variance,
      pixelCount: m.pixelCount, reference: fd ? 'flat-dark' : 'bias', gainElectronsPerAdu: g,
      gainUncertaintyElectronsPerAdu: gu, levelMismatch, adcMaxFraction, saturated, inFit: false, excludedBecause: excluded,
    });
    flatTiles.push(st.tiles);
    flatFull.push(st.full);
    refs.push(ref);
  });

  // --- photon-transfer fit ----------------------------------------------------------------------------------
  // Level-mismatched and too-faint pairs are not curve points at all; saturated ones still locate the variance peak.
  const candidates = curve.flatMap((c, i) => (c.excludedBecause === 'level-mismatch' || c.excludedBecause === 'too-faint' ? [] : [i]));
  const inputs: PtcInputPoint[] = candidates.map((i) => ({
    signalAdu: curve[i]!.signalAdu, varianceAdu2: curve[i]!.varianceAdu2, pixelCount: curve[i]!.pixelCount, saturated: curve[i]!.saturated,
  }));
  let ptc: PtcFitResult | null = null;
  try {
    if (inputs.length === 1 && !inputs[0]!.saturated) {
      throw new FitError('FIT_TOO_FEW_POINTS', 'one flat level');
    }
    ptc = fitPhotonTransfer(inputs, p.options.fitWindow ?? {}, step > 0 ? step : 1);
  } catch (e) {
    if (!(e instanceof FitError)) throw e;
    if (!gainOverride) {
      const single = candidates.filter((i) => !curve[i]!.saturated);
      if (single.length !== 1) {
        throw new FitError(e.code, `${label ? `${label}: ` : ''}${e.message}`);
      }
    }
  }
  if (ptc) {
    ptc.exclusions.forEach((ex, j) => {
      const c = curve[candidates[j]!]!;
      c.excludedBecause = ex;
      c.inFit = ex === null;
    });
  }
  let gain: number, gainUncertainty: number;
  if (gainOverride) {
    gain = gainOverride.gain; gainUncertainty = gainOverride.uncertainty;
  } else if (ptc) {
    gain = ptc.gainElectronsPerAdu; gainUncertainty = ptc.gainUncertaintyElectronsPerAdu;
  } else {
    // exactly one usable flat level: the two-flat/two-bias formula alone (Howell 2006 §4.3) with its B.11 error
    const onlyIndex = candidates.find((i) => !curve[i]!.saturated);
    if (onlyIndex === undefined) throw new FitError('FIT_TOO_FEW_POINTS', `${label ? `${label}: ` : ''}every flat pair is saturated`);
    const only = curve[onlyIndex]!;
    only.inFit = true;
    gain = only.gainElectronsPerAdu; gainUncertainty = only.gainUncertaintyElectronsPerAdu;
    diag('CAMERA_SINGLE_FLAT_LEVEL', 'warning', 'one flat level: gain from the two-flat/two-bias formula, no photon-transfer fit, no full well');
  }
  const fit: PtcFitSummary | null = ptc ? {
    gainElectronsPerAdu: ptc.gainElectronsPerAdu, gainUncertaintyElectronsPerAdu: ptc.gainUncertaintyElectronsPerAdu,
    slopeAduPerElectron: ptc.slopeAduPerElectron, slopeUncertainty: ptc.slopeUncertainty, interceptAdu2: ptc.interceptAdu2,
    interceptUncertaintyAdu2: ptc.interceptUncertaintyAdu2, readNoiseFromInterceptElectrons: ptc.readNoiseFromInterceptElectrons,
    reducedChiSquare: ptc.reducedChiSquare, pointsUsed: ptc.pointsUsed, window: ptc.window, weighting: 'inverse-variance',
  } : null;
  if (ptc?.window.basis === 'relaxed') diag('CAMERA_FIT_WINDOW_RELAXED', 'warning', 'fewer than 3 levels in the fit window: every unsaturated level below the variance peak was fitted');
  const fitted = curve.flatMap((c, i) => (c.inFit ? [i] : []));

  // --- per-level and per-tile gains -------------------------------------------------------------------------
  const perLevel = spread(fitted.map((i) => curve[i]!.gainElectronsPerAdu));
  const tileGains: TileGain[] = [];
  const tileLayout = tileViews(view(p.flatPairs[0]!.a), p.tiles.x, p.tiles.y);
  const base = view(p.flatPairs[0]!.a);
  tileLayout.forEach((tv, t) => {
    const pts: PtcInputPoint[] = fitted.map((i) => {
      const m = moments(flatTiles[i]![t]!);
      return { signalAdu: (m.meanA + m.meanB) / 2 - refs[i]!.tiles[t]!.meanAdu, varianceAdu2: m.differenceVariance / 2, pixelCount: m.pixelCount };
    });
    let g = NaN;
    if (pts.length >= 2) {
      try {
        const f = weightedPtcFit(pts, pts.map((_, j) => j));
        if (f.slope > 0) g = 1 / f.slope;
      } catch (e) { if (!(e instanceof FitError)) throw e; }
    } else if (pts.length === 1) {
      const i = fitted[0]!;
      const m = moments(flatTiles[i]![t]!);
      g = howellGain({ flatMeanA: m.meanA, flatMeanB: m.meanB, biasMeanA: refs[i]!.tiles[t]!.meanAdu, biasMeanB: refs[i]!.tiles[t]!.meanAdu,
        flatDifferenceVariance: m.differenceVariance, biasDifferenceVariance: refs[i]!.tiles[t]!.differenceVarianceAdu2 });
    }
    const offset = tv.offset - base.offset;
    const ty = Math.floor(offset / base.strideY), tx = Math.round((offset - ty * base.strideY) / base.strideX);
    if (Number.isFinite(g)) tileGains.push({ x: tx, y: ty, width: tv.width, height: tv.height, gainElectronsPerAdu: g });
  });
  const perTile = spread(tileGains.map((t) => t.gainElectronsPerAdu));
  if (perTile.count >= 4 && Math.abs(perTile.medianElectronsPerAdu - gain) >
      3 * Math.hypot(gainUncertainty, perTile.standardErrorElectronsPerAdu) + 1e-3 * gain) {
    diag('CAMERA_TILE_GAIN_DISAGREES', 'warning',
      `median tile gain ${perTile.medianElectronsPerAdu.toPrecision(5)} differs from the fitted ${gain.toPrecision(5)} e-/ADU by more than 3 σ`);
  }

  // --- full well --------------------------------------------------------------------------------------------
  const usable = curve.filter((c) => c.excludedBecause !== 'level-mismatch' && c.excludedBecause !== 'too-faint');
  const order = [...usable].sort((x, y) => x.signalAdu - y.signalAdu);
  let fullWell: FullWellMeasurement;
  const adcLimitElectrons = p.adcMaxAdu !== null ? gain * (p.adcMaxAdu - bias.meanAdu) : null;
  if (ptc && ptc.peak.rolledOff) {
    const peakPoint = curve[candidates[ptc.peak.index]!]!;
    const at = order.indexOf(peakPoint);
    const next = order[at + 1];
    const adcHit = [peakPoint, next].some((c) => c !== undefined && c.adcMaxFraction !== null && c.adcMaxFraction > ADC_LIMIT_FRACTION);
    fullWell = {
      reached: true, saturationSignalAdu: peakPoint.signalAdu, fullWellElectrons: gain * peakPoint.signalAdu,
      limitedBy: adcHit ? 'adc' : 'pixel', adcMaxAdu: p.adcMaxAdu, adcLimitElectrons,
      resolutionElectrons: next ? gain * (next.signalAdu - peakPoint.signalAdu) : null, definition: FULL_WELL_DEFINITION,
    };
  } else {
    const brightest = Math.max(...usable.filter((c) => !c.saturated).map((c) => c.signalAdu));
    fullWell = {
      reached: false, saturationSignalAdu: brightest, fullWellElectrons: gain * brightest, limitedBy: null,
      adcMaxAdu: p.adcMaxAdu, adcLimitElectrons, resolutionElectrons: null, definition: FULL_WELL_DEFINITION,
    };
    diag('CAMERA_FULL_WELL_NOT_REACHED', 'info', 'the temporal variance did not roll off: full well is a lower bound (brightest level)');
  }

  // --- linearity --------------------------------------------------------------------------------------------
  let linearity: LinearityMeasurement | null = null;
  {
    const lo = fullWell.reached ? 0.05 * fullWell.saturationSignalAdu : 0;
    const hi = fullWell.reached ? 0.95 * fullWell.saturationSignalAdu : Infinity;
    const pts = usable.filter((c) => !c.saturated && c.exposureSeconds !== null && c.signalAdu >= lo && c.signalAdu <= hi);
    const exposures = new Set(pts.map((c) => c.exposureSeconds));
    if (pts.length >= 3 && exposures.size >= 3) {
      const t = pts.map((c) => c.exposureSeconds!), y = pts.map((c) => c.signalAdu);
      const rel = linearityError(t, y, 'relative');
      const range = fullWell.reached ? linearityError(t, y, 'range', fullWell.saturationSignalAdu) : null;
      linearity = {
        linearityErrorPercent: rel.linearityErrorPercent, rangeLinearityErrorPercent: range ? range.linearityErrorPercent : null,
        definition: LINEARITY_DEFINITION,
        signalRangeAdu: { minimum: Math.min(...y), maximum: Math.max(...y) },
        exposureRangeSeconds: { minimum: Math.min(...t), maximum: Math.max(...t) },
        points: pts.map((c, i) => ({ exposureSeconds: t[i]!, signalAdu: y[i]!, deviationPercent: rel.deviationsPercent[i]! })),
      };
    } else {
      diag('CAMERA_LINEARITY_UNAVAILABLE', 'info', 'linearity needs 3 or more unsaturated flat levels at 3 or more distinct exposures');
    }
  }

  // --- PRNU / DSNU ------------------------------------------------------------------------------------------
  let prnu: PrnuMeasurement | null = null;
  if (fitted.length > 0) {
    const targetSignal = 0.5 * (fullWell.reached ? fullWell.saturationSignalAdu : fullWell.saturationSignalAdu);
    let best = fitted[0]!;
    for (const i of fitted) if (Math.abs(curve[i]!.signalAdu - targetSignal) < Math.abs(curve[best]!.signalAdu - targetSignal)) best = i;
    const c = curve[best]!;
    const ref = refs[best]!;
    const whole = prnuEmva(Math.sqrt(fixedPatternVariance(moments(flatFull[best]!))), Math.sqrt(ref.fixedVarianceAdu2), c.signalAdu);
    const perTilePrnu = flatTiles[best]!.map((ts, t) => {
      const m = moments(ts);
      const rt = ref.tiles[t]!;
      return prnuEmva(Math.sqrt(fixedPatternVariance(m)), Math.sqrt(rt.fixedVarianceAdu2), (m.meanA + m.meanB) / 2 - rt.meanAdu);
    });
    prnu = {
      prnuPercent: 100 * median(perTilePrnu), wholeRegionPercent: 100 * whole, signalAdu: c.signalAdu, files: c.files,
      tileCount: perTilePrnu.filter((v) => Number.isFinite(v)).length, definition: PRNU_DEFINITION,
    };
  }
  const biasDsnu = dsnuEmva(Math.sqrt(fixedPatternVariance(moments(firstBiasFull))), gain);

  // --- darks ------------------------------------------------------------------------------------------------
  let dark: DarkMeasurement | null = null;
  let dsnu: DsnuMeasurement = { dsnuElectrons: biasDsnu, source: 'bias', exposureSeconds: null, biasDsnuElectrons: biasDsnu, definition: DSNU_DEFINITION };
  if (p.darkPairs.length > 0) {
    const bcA = frameLevel(centralRegion(ba)), bcB = frameLevel(centralRegion(bb));
    const biasCentre = {
      clipped: (bcA.clippedMean + bcB.clippedMean) / 2, mean: (bcA.mean + bcB.mean) / 2, median: (bcA.median + bcB.median) / 2,
      diffVar: moments(pairStatistics(centralRegion(ba), centralRegion(bb), pairOpts)).differenceVariance,
    };
    const byTemperature = new Map<string, { t: number | null; pairs: FramePair[] }>();
    for (const pr of p.darkPairs) {
      const t = p.sorted.frames[pr.a]!.temperatureGroupCelsius;
      const key = String(t);
      const g = byTemperature.get(key) ?? { t, pairs: [] };
      g.pairs.push(pr);
      byTemperature.set(key, g);
    }
    const temperatures: DarkTemperatureMeasurement[] = [];
    for (const g of byTemperature.values()) {
      const levels: DarkLevel[] = g.pairs.map((pr) => {
        const a = centralRegion(view(pr.a)), b = centralRegion(view(pr.b));
        const la = frameLevel(a), lb = frameLevel(b);
        const ps = moments(pairStatistics(a, b, pairOpts));
        return {
          files: [file(pr.a), file(pr.b)], exposureSeconds: p.sorted.frames[pr.a]!.settings.exposureSeconds!,
          levelAdu: (la.clippedMean + lb.clippedMean) / 2 - biasCentre.clipped,
          meanLevelAdu: (la.mean + lb.mean) / 2 - biasCentre.mean,
          medianLevelAdu: (la.median + lb.median) / 2 - biasCentre.median,
          varianceExcessAdu2: ps.differenceVariance / 2 - biasCentre.diffVar / 2,
        };
      });
      const t = levels.map((l) => l.exposureSeconds);
      const distinct = new Set(t).size;
      const slope = (y: number[]): { d: number; sd: number | null } => {
        if (distinct >= 2) {
          const f = fitLine(t, y);
          const sd = f.degreesOfFreedom > 0 ? Math.sqrt((f.covariance.slopeVariance * f.chiSquare) / f.degreesOfFreedom) : null;
          return { d: f.slope, sd };
        }
        // one exposure: the bias (t = 0) is the other point of the line (REFERENCE B.9)
        let num = 0, den = 0;
        for (let i = 0; i < t.length; i++) { num += y[i]! * t[i]!; den += t[i]! * t[i]!; }
        return { d: num / den, sd: null };
      };
      const robust = slope(levels.map((l) => l.levelAdu));
      const plain = slope(levels.map((l) => l.meanLevelAdu));
      let vn = 0, vd = 0;
      for (const l of levels) { vn += l.varianceExcessAdu2 * l.exposureSeconds; vd += l.exposureSeconds * l.exposureSeconds; }
      const rate = darkCurrentFromLevel(robust.d, 1, gain);
      temperatures.push({
        temperatureCelsius: g.t, levels, darkCurrentElectronsPerSecond: rate,
        darkCurrentUncertaintyElectronsPerSecond: robust.sd === null ? null
          : Math.hypot(gain * robust.sd, Math.abs(rate) * (gainUncertainty / gain)),
        meanDarkCurrentElectronsPerSecond: darkCurrentFromLevel(plain.d, 1, gain),
        varianceDarkCurrentElectronsPerSecond: (gain * gain * vn) / vd,
        method: distinct >= 2 ? 'line-fit' : 'through-bias',
      });
    }
    temperatures.sort((x, y) => (x.temperatureCelsius ?? Infinity) - (y.temperatureCelsius ?? Infinity));
    // reference temperature: the one with most dark frames, the coldest on a tie
    let ref = temperatures[0]!;
    for (const tm of temperatures) if (tm.levels.length > ref.levels.length) ref = tm;
    const withT = temperatures.filter((tm) => tm.temperatureCelsius !== null && tm.darkCurrentElectronsPerSecond > 0);
    let doubling: number | null = null;
    if (withT.length >= 2) {
      doubling = fitDoublingTemperature(withT.map((tm) => tm.temperatureCelsius!), withT.map((tm) => tm.darkCurrentElectronsPerSecond));
      if (!Number.isFinite(doubling)) doubling = null;
    }
    // hot pixels and glow on the longest dark pair at the reference temperature
    const refPairs = p.darkPairs.filter((pr) => String(p.sorted.frames[pr.a]!.temperatureGroupCelsius) === String(ref.temperatureCelsius));
    let longest = refPairs[0]!;
    for (const pr of refPairs) {
      if (p.sorted.frames[pr.a]!.settings.exposureSeconds! > p.sorted.frames[longest.a]!.settings.exposureSeconds!) longest = pr;
    }
    const da = view(longest.a), db = view(longest.b);
    const longestExposure = p.sorted.frames[longest.a]!.settings.exposureSeconds!;
    const centreDark = (frameLevel(centralRegion(da)).clippedMean + frameLevel(centralRegion(db)).clippedMean) / 2 - biasCentre.clipped;
    const glowThreshold = Math.max(0.1 * Math.max(centreDark, 0), 0.5 * readNoiseAdu);
    const excessAt = (e: FrameEdge, inset: number) => {
      const d = stripDepth(da, e);
      return (frameLevel(edgeBand(da, e, inset, d)).clippedMean + frameLevel(edgeBand(db, e, inset, d)).clippedMean) / 2 -
        frameLevel(edgeBand(ba, e, inset, d)).clippedMean - centreDark;
    };
    const edgeExcessAdu = {} as Record<FrameEdge, number>;
    let worst: FrameEdge = 'left';
    for (const e of ['left', 'right', 'top', 'bottom'] as const) {
      edgeExcessAdu[e] = excessAt(e, 0);
      if (edgeExcessAdu[e] > edgeExcessAdu[worst]) worst = e;
    }
    const ampGlow: AmpGlowMeasurement = {
      detected: edgeExcessAdu[worst] > glowThreshold, edge: worst, edgeExcessAdu, centreSignalAdu: centreDark,
      exposureSeconds: longestExposure,
      rule: 'an edge strip (1/16 of the width or height deep, over the central half of the edge) whose bias-subtracted dark ' +
        'level exceeds the centre\'s by more than max(10 % of the centre dark signal, 0.5 × read noise) in the longest dark ' +
        'pair (common practice, REFERENCE B.9)',
    };
    // Hot pixels are counted away from glowing edges: each glowing edge gives up strips inward until one falls
    // below the glow threshold (glow pixels would otherwise pass a global threshold).
    const margin: Record<FrameEdge, number> = { left: 0, right: 0, top: 0, bottom: 0 };
    for (const e of ['left', 'right', 'top', 'bottom'] as const) {
      if (!(edgeExcessAdu[e] > glowThreshold)) continue;
      const depth = stripDepth(da, e);
      const limit = Math.floor((e === 'left' || e === 'right' ? da.width : da.height) / 2);
      let m = depth;
      while (m + depth <= limit && excessAt(e, m) > glowThreshold) m += depth;
      margin[e] = m;
    }
    const counted: PixelRegion = {
      x: margin.left, y: margin.bottom,
      width: Math.max(1, da.width - margin.left - margin.right), height: Math.max(1, da.height - margin.top - margin.bottom),
    };
    const ca = regionView(da, counted), cb = regionView(db, counted);
    const la = frameLevel(ca), lb = frameLevel(cb);
    const k = p.hotPixelSigma;
    const hotCount = countJointlyAbove(ca, cb, la.median + k * la.clippedStd, lb.median + k * lb.clippedStd);
    const countedPixels = ca.width * ca.height;
    const hotPixels = {
      count: hotCount, fraction: hotCount / countedPixels, countedPixels, countedRegion: counted, thresholdSigma: k,
      exposureSeconds: longestExposure, temperatureCelsius: ref.temperatureCelsius, files: [file(longest.a), file(longest.b)] as [string, string],
      rule: `pixels more than ${k} σ above the frame median in both frames of the longest dark pair at the reference temperature ` +
        `(σ: ${k}σ-clipped standard deviation of each frame), counted away from glowing edges (common practice, REFERENCE F.6)`,
    };
    if (ampGlow.detected) {
      diag('CAMERA_AMP_GLOW', 'warning',
        `the ${worst} edge of the ${longestExposure} s dark is ${edgeExcessAdu[worst].toFixed(2)} ADU above the centre (centre dark ${centreDark.toFixed(2)} ADU): amp glow; dark current is measured in the central half`);
    }
    const darkFixed = fixedPatternVariance(moments(pairStatistics(da, db, pairOpts)));
    dsnu = {
      dsnuElectrons: dsnuEmva(Math.sqrt(darkFixed), gain), source: 'dark', exposureSeconds: longestExposure,
      biasDsnuElectrons: biasDsnu, definition: DSNU_DEFINITION,
    };
    dark = {
      temperatures, referenceTemperatureCelsius: ref.temperatureCelsius, darkCurrentElectronsPerSecond: ref.darkCurrentElectronsPerSecond,
      darkDoublingCelsius: doubling, hotPixels, ampGlow, levelRegion: 'central-half',
    };
  }

  // --- bias summary -----------------------------------------------------------------------------------------
  const readNoiseElectrons = gain * readNoiseAdu;
  const relVar = Math.sqrt(2 / Math.max(1, bias.pixelCount - 1)) / 2;
  const biasMeasurement: BiasMeasurement = {
    pairCount: p.biasPairs.length, pixelCount: bias.pixelCount, offsetAdu: (levelA.median + levelB.median) / 2, meanAdu: bias.meanAdu,
    readNoiseAdu, readNoiseMeasuredAdu, readNoiseMadAdu: differenceMadSigma(ba, bb) / Math.SQRT2, readNoiseElectrons,
    readNoiseUncertaintyElectrons: readNoiseElectrons * Math.hypot(gainUncertainty / gain, relVar),
    quantizationCorrectionAdu2: quantCorrection, differenceVarianceAdu2: bias.differenceVarianceAdu2,
    lineNoise: lineNoise(ba, bb, firstBiasFull), minimumCodeAdu, minimumCodeFraction,
  };

  const measurement: CameraMeasurement = {
    gainElectronsPerAdu: gain,
    gainUncertaintyElectronsPerAdu: gainUncertainty,
    readNoiseElectrons,
    readNoiseAdu,
    offsetAdu: biasMeasurement.offsetAdu,
    fullWellElectrons: fullWell.fullWellElectrons,
    fullWellLimitedBy: fullWell.limitedBy,
    darkCurrentElectronsPerSecond: dark ? dark.darkCurrentElectronsPerSecond : null,
    linearityErrorPercent: linearity ? linearity.linearityErrorPercent : null,
    prnuPercent: prnu ? prnu.prnuPercent : null,
    dsnuElectrons: dsnu.dsnuElectrons,
    hotPixelCount: dark ? dark.hotPixels.count : null,
    bias: biasMeasurement,
    curve,
    fit,
    gainCrossChecks: { perLevel, perTile },
    tileGains,
    fullWell,
    linearity,
    prnu,
    dsnu,
    dark,
  };
  return { measurement, flatPairReasons };
}

function settingKey(p: { gain: unknown; offset: unknown; bx: number; by: number; w: number; h: number }): string {
  return JSON.stringify([p.gain, p.offset, p.bx, p.by, p.w, p.h]);
}

function isScaled(frame: CameraFrame, facts: FrameFacts): string | null {
  const bscale = frame.header.number('BSCALE');
  if (bscale !== undefined && bscale !== 1) return `BSCALE = ${bscale}`;
  const t = frame.image.elementType;
  if ((t === 'float32' || t === 'float64') && facts.max <= 2 && facts.nonIntegerCount > 0) {
    return `floating-point data with maximum ${facts.max} (normalised)`;
  }
  return null;
}

/**
 * Screen one flat frame for saturation: the fraction of pixels at or above the ADC maximum (`adcMaxAdu`, else
 * the frame's own maximum value, which is the clip level when pixels pile up there). Saturated: more than
 * `saturatedFractionLimit` (default 0.1 %, REFERENCE F.6).
 * @example screenFlatFrame(frame).saturated
 */
export function screenFlatFrame(frame: CameraFrame, options: Pick<CameraOptions, 'adcMaxAdu' | 'saturatedFractionLimit' | 'region'> = {}): FlatFrameScreen {
  let v = pixelViewOf(frame.image, { file: frame.file });
  if (options.region) v = regionView(v, options.region);
  const f = frameFacts(v);
  const adc = options.adcMaxAdu ?? f.max;
  const fraction = (options.adcMaxAdu === undefined ? f.countAtMax : countAtOrAbove(v, adc)) / f.pixelCount;
  return { file: frame.file, maximumAdu: f.max, fractionAtMaximum: fraction, adcMaxAdu: adc, saturated: fraction > (options.saturatedFractionLimit ?? 1e-3) };
}

/**
 * Measure a single bias frame: offset (median), mean, clipped mean and σ, the minimum code and the fraction of
 * pixels at it (REFERENCE F.3), the quantization step (B.10), and row/column noise as the excess σ of line means
 * over σ²/N (F.6). Read noise proper needs a pair (`characterizeCamera`).
 * @example measureBiasFrame(frame).offsetAdu
 */
export function measureBiasFrame(frame: CameraFrame, options: Pick<CameraOptions, 'region' | 'clipSigma'> = {}): BiasFrameMeasurement {
  let v = pixelViewOf(frame.image, { file: frame.file });
  if (options.region) v = regionView(v, options.region);
  const f = frameFacts(v);
  const level = frameLevel(v, options.clipSigma ?? 5);
  const q = detectQuantizationStep(v);
  // single frame: line means against the frame's own clipped variance
  const rows = new Float64Array(v.height), cols = new Float64Array(v.width);
  for (let y = 0; y < v.height; y++) {
    let i = v.offset + y * v.strideY, s = 0;
    for (let x = 0; x < v.width; x++) {
      const d = v.data[i]! - level.median;
      s += d; cols[x] = cols[x]! + d;
      i += v.strideX;
    }
    rows[y] = s / v.width;
  }
  for (let x = 0; x < v.width; x++) cols[x] = cols[x]! / v.height;
  const excess = (lines: Float64Array, perLine: number) => {
    let m = 0;
    for (const l of lines) m += l;
    m /= lines.length;
    let s2 = 0;
    for (const l of lines) s2 += (l - m) * (l - m);
    const varLines = lines.length > 1 ? s2 / (lines.length - 1) : 0;
    return Math.sqrt(Math.max(0, varLines - (level.clippedStd * level.clippedStd) / perLine));
  };
  return {
    file: frame.file, pixelCount: f.pixelCount, offsetAdu: level.median, meanAdu: f.mean, clippedMeanAdu: level.clippedMean,
    spatialSigmaAdu: level.clippedStd, minimumCodeAdu: f.min, minimumCodeFraction: f.countAtMin / f.pixelCount, maximumAdu: f.max,
    quantizationStepAdu: q.stepAdu, rowNoiseAdu: excess(rows, v.width), columnNoiseAdu: excess(cols, v.height),
  };
}

/** Result of `screenCameraFrames`. */
export interface CameraFrameScreen {
  sorted: SortedCameraFrames;
  /** Left-out frames, with 'saturated' in place of the sorting reason for flats that pile up at the maximum code. */
  leftOut: LeftOutFrame[];
  flats: FlatFrameScreen[];
}

/**
 * Sort frames (`sortCameraFrames`) and screen every flat for saturation (`screenFlatFrame`), without measuring:
 * what `characterizeCamera` would leave out before it starts, also when it would refuse the set.
 * @example screenCameraFrames(frames).leftOut.filter((f) => f.reason === 'saturated')
 */
export function screenCameraFrames(
  frames: readonly CameraFrame[],
  options: Pick<CameraOptions, 'kindOverrides' | 'temperatureStepCelsius' | 'adcMaxAdu' | 'saturatedFractionLimit' | 'region'> = {},
): CameraFrameScreen {
  const sorted = sortCameraFrames(frames, {
    ...(options.kindOverrides ? { kindOverrides: options.kindOverrides } : {}),
    ...(options.temperatureStepCelsius !== undefined ? { temperatureStepCelsius: options.temperatureStepCelsius } : {}),
  });
  const flats = sorted.frames.filter((f) => f.kind === 'flat').map((f) => screenFlatFrame(frames[f.index]!, options));
  const saturated = new Set(flats.filter((f) => f.saturated).map((f) => f.file));
  const leftOut: LeftOutFrame[] = sorted.leftOut.map((l) => (saturated.has(l.file) ? { ...l, reason: 'saturated', detail: l.reason } : l));
  for (const pr of sorted.pairs) {
    for (const i of [pr.a, pr.b]) {
      const f = sorted.frames[i]!;
      if (saturated.has(f.file)) leftOut.push({ file: f.file, kind: f.kind, reason: 'saturated' });
    }
  }
  return { sorted, leftOut, flats };
}

function scaledView(v: PixelView, scale: number): PixelView {
  const out = new Float64Array(v.width * v.height);
  let k = 0;
  for (let y = 0; y < v.height; y++) {
    let i = v.offset + y * v.strideY;
    for (let x = 0; x < v.width; x++) { out[k++] = v.data[i]! * scale; i += v.strideX; }
  }
  return { data: out, width: v.width, height: v.height, strideX: 1, strideY: v.width, offset: 0 };
}

/**
 * Characterize a camera from bias, flat, dark (and flat-dark) frames by photon transfer.
 *
 * Method: frames are sorted into groups of equal settings and paired in time order (`sortCameraFrames`); the
 * setting with the most flat pairs is measured. Bias pairs give the offset and read noise (quantization removed,
 * REFERENCE B.4/B.10); each flat pair gives a curve point (bias-subtracted mean, Var(A − B)/2) and a two-flat/
 * two-bias gain (Howell 2006 §4.3, B.3); a weighted fit over the automatically found linear range gives the gain
 * (B.5); the variance peak gives full well (B.6); mean signal against exposure gives the linearity error (B.7);
 * PRNU/DSNU follow EMVA 1288 as recalled (B.8); dark pairs give dark current per temperature, the doubling
 * temperature, hot pixels and an amp-glow check (B.9). Colour data (BAYERPAT) are measured per CFA channel too
 * (F.4) and the top-level gain combines the channels.
 *
 * @throws InvalidInputError `INPUT_TOO_FEW_FLAT_PAIRS` (no flat pair), `INPUT_NO_BIAS_PAIR`, `INPUT_SHAPE_MISMATCH`
 *   (biases differ in size from the flats), `INPUT_SCALED_DATA` (BSCALE ≠ 1 or normalised floats without
 *   `dataScaleAduPerUnit`), `INPUT_OUT_OF_BOUNDS` (region); FitError when the flats cannot support a fit.
 * @example characterizeCamera(frames).gainElectronsPerAdu
 */
export function characterizeCamera(frames: readonly CameraFrame[], options: CameraOptions = {}): CameraResult {
  const diagnostics: Diagnostic[] = [];
  const sorted = sortCameraFrames(frames, {
    ...(options.kindOverrides ? { kindOverrides: options.kindOverrides } : {}),
    ...(options.temperatureStepCelsius !== undefined ? { temperatureStepCelsius: options.temperatureStepCelsius } : {}),
  });
  const leftOut: LeftOutFrame[] = [...sorted.leftOut];
  const sf = (i: number) => sorted.frames[i]!;
  const keyOf = (i: number) => {
    const f = sf(i);
    return settingKey({ gain: f.settings.gainSetting, offset: f.settings.offsetSetting, bx: f.settings.binning.x, by: f.settings.binning.y, w: f.width, h: f.height });
  };
  const flatPairsAll = sorted.pairs.filter((pr) => pr.kind === 'flat');
  if (flatPairsAll.length === 0) {
    throw new InvalidInputError('INPUT_TOO_FEW_FLAT_PAIRS',
      `no pair of flats with equal settings (flat frames found: ${sorted.frames.filter((f) => f.kind === 'flat').length})`);
  }
  const counts = new Map<string, number>();
  for (const pr of flatPairsAll) counts.set(keyOf(pr.a), (counts.get(keyOf(pr.a)) ?? 0) + 1);
  let mainKey = keyOf(flatPairsAll[0]!.a);
  for (const [k, c] of counts) if (c > counts.get(mainKey)!) mainKey = k;
  const main = sf(flatPairsAll.find((pr) => keyOf(pr.a) === mainKey)!.a);
  const compatible = (i: number) => {
    const f = sf(i);
    const sameOrUnknown = (x: unknown, y: unknown) => x === null || y === null || x === y;
    return f.width === main.width && f.height === main.height && f.settings.binning.x === main.settings.binning.x &&
      f.settings.binning.y === main.settings.binning.y && sameOrUnknown(f.settings.gainSetting, main.settings.gainSetting) &&
      sameOrUnknown(f.settings.offsetSetting, main.settings.offsetSetting);
  };
  const pick = (kind: string, strict: boolean) => {
    const chosen: FramePair[] = [];
    for (const pr of sorted.pairs.filter((x) => x.kind === kind)) {
      if (strict ? keyOf(pr.a) === mainKey : compatible(pr.a)) chosen.push(pr);
      else for (const i of [pr.a, pr.b]) leftOut.push({ file: sf(i).file, kind: sf(i).kind, reason: 'other-setting', detail: `differs from the flats' setting ${mainKey}` });
    }
    return chosen;
  };
  const flatPairs = pick('flat', true);
  const biasPairs = pick('bias', false);
  const flatDarkPairs = pick('flat-dark', false);
  const darkPairs = pick('dark', false);
  if (biasPairs.length === 0) {
    const anyBias = sorted.pairs.filter((x) => x.kind === 'bias');
    if (anyBias.some((pr) => sf(pr.a).width !== main.width || sf(pr.a).height !== main.height)) {
      throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `no bias pair of the flats' size ${main.width}x${main.height}`);
    }
    throw new InvalidInputError('INPUT_NO_BIAS_PAIR',
      `no pair of bias frames matching the flats (bias frames found: ${sorted.frames.filter((f) => f.kind === 'bias').length})`);
  }

  // views, facts and the data checks
  const scale = options.dataScaleAduPerUnit ?? 1;
  const region = options.region ?? { x: 0, y: 0, width: main.width, height: main.height };
  const used = [...flatPairs, ...biasPairs, ...flatDarkPairs, ...darkPairs];
  const views = new Map<number, PixelView>();
  const facts = new Map<number, FrameFacts>();
  for (const pr of used) {
    for (const i of [pr.a, pr.b]) {
      const frame = frames[i]!;
      let v = regionView(pixelViewOf(frame.image, { file: frame.file }), region);
      let f = frameFacts(v);
      const scaled = isScaled(frame, f);
      if (scaled && options.dataScaleAduPerUnit === undefined) {
        throw new InvalidInputError('INPUT_SCALED_DATA',
          `${scaled}: gain in ADU is meaningless on rescaled data; give the scale to ADU (REFERENCE F.1)`, { file: frame.file });
      }
      if (scale !== 1) { v = scaledView(v, scale); f = frameFacts(v); }
      views.set(i, v);
      facts.set(i, f);
    }
  }
  const integerValued = [...facts.values()].every((f) => f.nonIntegerCount === 0);
  if (!integerValued) diagnostics.push({ code: 'CAMERA_NON_INTEGER_DATA', severity: 'info', message: 'some frames hold non-integer values: no quantization step, no Δ²/12 correction', where: {} });
  // ADC maximum: given, else a pile-up at the highest value found in the flats
  let adcMaxAdu: number | null = options.adcMaxAdu ?? null;
  let adcMaxSource: 'option' | 'detected' | null = adcMaxAdu !== null ? 'option' : null;
  if (adcMaxAdu === null) {
    let top = -Infinity;
    for (const pr of flatPairs) for (const i of [pr.a, pr.b]) top = Math.max(top, facts.get(i)!.max);
    for (const pr of flatPairs) {
      for (const i of [pr.a, pr.b]) {
        const f = facts.get(i)!;
        if (f.max === top && f.countAtMax / f.pixelCount >= ADC_LIMIT_FRACTION) { adcMaxAdu = top; adcMaxSource = 'detected'; }
      }
    }
  }
  const stepAdu = integerValued ? combineQuantizationSteps([views.get(biasPairs[0]!.a)!, views.get(flatPairs[0]!.a)!].map((v) => detectQuantizationStep(v).stepAdu)) : null;

  const prepared: Prepared = {
    frames, sorted, views, facts, biasPairs, flatPairs, flatDarkPairs, darkPairs, adcMaxAdu, stepAdu, integerValued,
    clipSigma: options.clipSigma === undefined ? 5 : options.clipSigma,
    tiles: options.tiles ?? { x: 8, y: 8 },
    saturatedFractionLimit: options.saturatedFractionLimit ?? 1e-3,
    maxLevelMismatch: options.maxLevelMismatch ?? 0.01,
    minimumSignalToReadNoise: options.minimumSignalToReadNoise ?? 10,
    hotPixelSigma: options.hotPixelSigma ?? 5,
    options,
    diagnostics,
  };

  // colour sensors: the four CFA channels first, then the full frame with the combined gain
  const pattern = options.perChannel === false ? undefined : cfaPattern(frames[flatPairs[0]!.a]!.header);
  let channels: Record<CfaChannelName, ChannelMeasurement> | null = null;
  let cfa: CameraResult['cfa'] = null;
  let gainOverride: { gain: number; uncertainty: number } | undefined;
  if (pattern) {
    const local = cfaPatternAt(pattern, region.x, region.y);
    const planes: [CfaChannelName, { dx: 0 | 1; dy: 0 | 1 }][] = [['R', local.r], ['G1', local.g1], ['G2', local.g2], ['B', local.b]];
    const out = {} as Record<CfaChannelName, ChannelMeasurement>;
    for (const [name, o] of planes) {
      const r = analyzePlane(prepared, (v) => cfaPlaneView(v, o.dx, o.dy), name);
      out[name] = { ...r.measurement, channel: name, planeOffset: { x: o.dx, y: o.dy } };
    }
    channels = out;
    // inverse-variance weighted mean of the channel gains; the scatter inflates the error when it exceeds it
    const list = Object.values(out).filter((c) => c.gainUncertaintyElectronsPerAdu > 0);
    let sw = 0, swg = 0;
    for (const c of list) { const w = 1 / c.gainUncertaintyElectronsPerAdu ** 2; sw += w; swg += w * c.gainElectronsPerAdu; }
    const g = swg / sw;
    let chi = 0;
    for (const c of list) chi += ((c.gainElectronsPerAdu - g) / c.gainUncertaintyElectronsPerAdu) ** 2;
    const red = list.length > 1 ? chi / (list.length - 1) : NaN;
    gainOverride = { gain: g, uncertainty: Math.sqrt(1 / sw) * (red > 1 ? Math.sqrt(red) : 1) };
    if (red > 4) {
      diagnostics.push({ code: 'CAMERA_CFA_GAINS_DIFFER', severity: 'warning',
        message: `CFA channel gains disagree beyond their errors (χ²/dof = ${red.toFixed(1)}); channels may be scaled digitally (REFERENCE F.4)`, where: {} });
    }
    cfa = {
      pattern: local.name,
      combination: 'gain: inverse-variance weighted mean of the channel gains (error scaled by √(χ²/dof) when > 1); full well: ' +
        'the smallest channel full well that was reached; PRNU: mean of the channels; linearity: the worst channel; read noise, ' +
        'offset, dark current, DSNU and hot pixels: all pixels with the combined gain',
      gainReducedChiSquare: Number.isFinite(red) ? red : null,
    };
  }
  const full = analyzePlane(prepared, (v) => v, '', gainOverride);
  const top = full.measurement;
  if (channels) {
    const list = Object.values(channels);
    const reached = list.filter((c) => c.fullWell.reached);
    if (reached.length > 0) {
      const smallest = reached.reduce((a, b) => (b.fullWellElectrons < a.fullWellElectrons ? b : a));
      top.fullWellElectrons = smallest.fullWellElectrons;
      top.fullWellLimitedBy = smallest.fullWellLimitedBy;
      top.fullWell = { ...smallest.fullWell };
    }
    const prnus = list.map((c) => c.prnuPercent).filter((v): v is number => v !== null && Number.isFinite(v));
    top.prnuPercent = prnus.length ? prnus.reduce((a, b) => a + b, 0) / prnus.length : null;
    const les = list.map((c) => c.linearityErrorPercent).filter((v): v is number => v !== null);
    top.linearityErrorPercent = les.length ? Math.max(...les) : top.linearityErrorPercent;
  }

  // frames report
  full.flatPairReasons.forEach((reason, k) => {
    const pr = flatPairs[k]!;
    for (const i of [pr.a, pr.b]) leftOut.push({ file: sf(i).file, kind: 'flat', reason, ...(reason === 'saturated' ? { detail: 'in the curve for the full-well point only' } : {}) });
  });
  for (const lo of leftOut) {
    if (lo.kind === 'flat' && lo.reason === 'unpaired') {
      const frame = frames[sorted.frames.find((f) => f.file === lo.file)!.index]!;
      const screen = screenFlatFrame(frame, { ...(adcMaxAdu !== null ? { adcMaxAdu } : {}), saturatedFractionLimit: prepared.saturatedFractionLimit });
      if (screen.saturated) { lo.reason = 'saturated'; lo.detail = 'unpaired'; }
    }
  }
  const leftFiles = new Set(leftOut.map((l) => l.file));
  const usedFrames: CameraFrameUse[] = [];
  for (const pr of used) {
    for (const [i, j] of [[pr.a, pr.b], [pr.b, pr.a]] as const) {
      if (leftFiles.has(sf(i).file)) continue;
      usedFrames.push({ file: sf(i).file, kind: sf(i).kind, pairedWith: sf(j).file, exposureSeconds: sf(i).settings.exposureSeconds, temperatureCelsius: sf(i).settings.temperatureCelsius });
    }
  }
  const stepForNative = stepAdu ?? 1;
  return {
    schema: 'subgauge.camera/1',
    ...top,
    nativeGainElectronsPerAdu: top.gainElectronsPerAdu * stepForNative,
    nativeReadNoiseAdu: top.readNoiseAdu / stepForNative,
    quantization: { stepAdu, sigmaAdu: quantizationSigma(stepAdu ?? (integerValued ? 1 : 0)), integerValued },
    data: { adcMaxAdu, adcMaxSource, dataScaleAduPerUnit: scale },
    settings: { gain: main.settings.gainSetting, offset: main.settings.offsetSetting, binning: main.settings.binning, width: main.width, height: main.height },
    region,
    cfa,
    channels,
    frames: { used: usedFrames, leftOut },
    diagnostics,
  };
}
