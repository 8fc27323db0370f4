import { InvalidInputError } from '../errors.js';
import { minimumExposureSeconds, readNoisePenalty, subLengthTable, type SubLengthRow } from './penalty.js';

/** The camera numbers the sky check needs. */
export interface SkyCamera {
  gainElectronsPerAdu: number;
  readNoiseElectrons: number;
  /** Bias level in ADU (the offset), subtracted from the background. */
  offsetAdu: number;
  /** Dark current at `referenceTemperatureCelsius`, e-/pixel/s (optional). */
  darkCurrentElectronsPerSecond?: number;
  referenceTemperatureCelsius?: number;
  /** Temperature step that doubles the dark current (REFERENCE B.9); when absent the dark current is not scaled. */
  darkDoublingCelsius?: number;
  /** Where these numbers came from, for the report. */
  source: 'profile' | 'options' | 'bias-frames' | 'header-claim';
}

/** One sub's measured background (star-free sky level, e.g. the mesh median). */
export interface SkySubInput {
  file: string;
  exposureSeconds: number;
  /** Star-free background level in ADU (offset not subtracted), with its uncertainty when known. */
  backgroundAdu: number;
  backgroundUncertaintyAdu?: number;
  filter?: string;
  channel?: string;
  startTimeMs?: number;
  sensorTemperatureCelsius?: number;
}

export type SkyStatus = 'sky-limited' | 'read-noise-limited';

export interface SkySubRecord {
  file: string;
  filter: string;
  channel?: string;
  exposureSeconds: number;
  startTimeMs?: number;
  backgroundAdu: number;
  skyAdu: number;
  skyElectrons: number;
  skyRateElectronsPerSecond: number;
  darkElectrons: number;
  /** (sky + dark electrons) / σ_R². */
  backgroundToReadNoiseSquared: number;
  readNoisePenaltyPercent: number;
  status: SkyStatus;
  minimumExposureSeconds: number;
}

/** Dark current at temperature T: D(T0) · 2^((T − T0)/T_d) when a doubling temperature is known (REFERENCE B.9). */
export function darkRateAt(camera: SkyCamera, temperatureCelsius: number | undefined): number {
  const d0 = camera.darkCurrentElectronsPerSecond ?? 0;
  if (d0 === 0) return 0;
  if (temperatureCelsius === undefined || camera.referenceTemperatureCelsius === undefined || camera.darkDoublingCelsius === undefined) return d0;
  return d0 * 2 ** ((temperatureCelsius - camera.referenceTemperatureCelsius) / camera.darkDoublingCelsius);
}

/**
 * Sky check of one sub: sky = (background − offset − dark) in ADU, electrons = ADU × gain, penalty from sky + dark
 * electrons, status against `maxPenaltyPercent`, and the shortest sub meeting the limit under this sky (REFERENCE D.3:
 * b = g·(background − bias)/t, dark counted in b).
 */
export function evaluateSub(sub: SkySubInput, camera: SkyCamera, maxPenaltyPercent: number): SkySubRecord {
  if (!(sub.exposureSeconds > 0)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `${sub.file}: exposure time must be positive (found ${sub.exposureSeconds})`, { file: sub.file, keyword: 'EXPTIME' });
  }
  const g = camera.gainElectronsPerAdu;
  const darkRate = darkRateAt(camera, sub.sensorTemperatureCelsius);
  const darkElectrons = darkRate * sub.exposureSeconds;
  const aboveOffsetElectrons = Math.max(0, (sub.backgroundAdu - camera.offsetAdu) * g);
  const skyElectrons = Math.max(0, aboveOffsetElectrons - darkElectrons);
  const background = skyElectrons + darkElectrons;
  const penalty = readNoisePenalty(background, camera.readNoiseElectrons);
  const rn2 = camera.readNoiseElectrons ** 2;
  const rate = background / sub.exposureSeconds;
  return {
    file: sub.file,
    filter: sub.filter ?? 'none',
    ...(sub.channel !== undefined ? { channel: sub.channel } : {}),
    exposureSeconds: sub.exposureSeconds,
    ...(sub.startTimeMs !== undefined ? { startTimeMs: sub.startTimeMs } : {}),
    backgroundAdu: sub.backgroundAdu,
    skyAdu: skyElectrons / g,
    skyElectrons,
    skyRateElectronsPerSecond: skyElectrons / sub.exposureSeconds,
    darkElectrons,
    backgroundToReadNoiseSquared: rn2 > 0 ? background / rn2 : Infinity,
    readNoisePenaltyPercent: 100 * penalty,
    status: 100 * penalty <= maxPenaltyPercent ? 'sky-limited' : 'read-noise-limited',
    minimumExposureSeconds: minimumExposureSeconds(camera.readNoiseElectrons, rate, maxPenaltyPercent / 100),
  };
}

/** How the recommended sub length picks the sky rate among a filter's subs. */
export type SkyRateRule = 'darker-half' | 'median' | 'darkest';

/** Median of a sorted copy (mean of the middle two for even counts). */
function medianOf(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const n = s.length;
  if (n === 0) return NaN;
  return n % 2 ? s[(n - 1) / 2]! : (s[n / 2 - 1]! + s[n / 2]!) / 2;
}

/**
 * The sky rate a recommendation uses. `darker-half` (default): the median of the subs at or below the median rate,
 * so twilight or moonlit subs do not shorten the advice for the dark part of the night; `median`: all subs;
 * `darkest`: the lowest rate (the longest, most cautious sub).
 */
export function recommendationRate(rates: readonly number[], rule: SkyRateRule): number {
  if (rates.length === 0) return NaN;
  if (rule === 'median') return medianOf(rates);
  const sorted = [...rates].sort((a, b) => a - b);
  if (rule === 'darkest') return sorted[0]!;
  return medianOf(sorted.slice(0, Math.ceil(sorted.length / 2)));
}

export interface SkyFilterSummary {
  filter: string;
  subs: number;
  skyLimitedSubs: number;
  medianSkyRateElectronsPerSecond: number;
  /** Sky rate the recommendation uses (see `rule`), including dark current. */
  recommendationRateElectronsPerSecond: number;
  rule: SkyRateRule;
  /** Channel whose sky decides (the darkest one) for colour sensors. */
  limitingChannel?: string;
  recommendedMinimumExposureSeconds: number;
  medianExposureSeconds: number;
  /** Relative SNR against sub length for the given total time, when asked. */
  subLengthTable?: SubLengthRow[];
}

export interface SkySummaryOptions {
  maxPenaltyPercent: number;
  rule?: SkyRateRule;
  totalSeconds?: number;
  /** Sub lengths for the table (default: a ladder around the recommendation). */
  subSeconds?: readonly number[];
}

/** Sub-length ladder for the table: common lengths plus the recommendation, within [1 s, total]. */
export function defaultSubLadder(recommended: number, totalSeconds: number): number[] {
  const base = [5, 10, 15, 30, 60, 90, 120, 180, 240, 300, 420, 600, 900, 1200, 1800];
  const set = new Set(base.filter((t) => t <= totalSeconds));
  if (Number.isFinite(recommended) && recommended > 0 && recommended <= totalSeconds) set.add(Math.ceil(recommended));
  return [...set].sort((a, b) => a - b);
}

/** Group sub records per filter; for CFA data (records with `channel`), the darkest channel decides. */
export function summarizeSky(records: readonly SkySubRecord[], camera: SkyCamera, opts: SkySummaryOptions): SkyFilterSummary[] {
  const rule = opts.rule ?? 'darker-half';
  const byFilter = new Map<string, SkySubRecord[]>();
  for (const r of records) {
    const list = byFilter.get(r.filter) ?? [];
    list.push(r);
    byFilter.set(r.filter, list);
  }
  const out: SkyFilterSummary[] = [];
  for (const [filter, list] of [...byFilter].sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))) {
    const channels = [...new Set(list.map((r) => r.channel ?? ''))];
    let limitingChannel: string | undefined;
    let rate = Infinity;
    for (const ch of channels) {
      const rs = list.filter((r) => (r.channel ?? '') === ch).map((r) => (r.skyElectrons + r.darkElectrons) / r.exposureSeconds);
      const chRate = recommendationRate(rs, rule);
      if (chRate < rate) {
        rate = chRate;
        limitingChannel = ch || undefined;
      }
    }
    const files = new Set(list.map((r) => r.file));
    const perFile = [...files].map((f) => list.filter((r) => r.file === f));
    const skyLimited = perFile.filter((rs) => rs.every((r) => r.status === 'sky-limited')).length;
    const recommended = minimumExposureSeconds(camera.readNoiseElectrons, rate, opts.maxPenaltyPercent / 100);
    const summary: SkyFilterSummary = {
      filter,
      subs: files.size,
      skyLimitedSubs: skyLimited,
      medianSkyRateElectronsPerSecond: medianOf(list.map((r) => r.skyRateElectronsPerSecond)),
      recommendationRateElectronsPerSecond: rate,
      rule,
      ...(limitingChannel ? { limitingChannel } : {}),
      recommendedMinimumExposureSeconds: recommended,
      medianExposureSeconds: medianOf(perFile.map((rs) => rs[0]!.exposureSeconds)),
    };
    if (opts.totalSeconds !== undefined) {
      const ladder = opts.subSeconds ?? defaultSubLadder(recommended, opts.totalSeconds);
      summary.subLengthTable = subLengthTable(opts.totalSeconds, rate, camera.readNoiseElectrons, ladder);
    }
    out.push(summary);
  }
  return out;
}
