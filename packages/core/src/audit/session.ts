import { InvalidInputError } from '../errors.js';
import type { Where } from '../errors.js';
import type { CalibrationSummary, LightGroup } from './calibration.js';
import { matchCalibration } from './calibration.js';
import type { FilterConsistency, SessionTiming, TemperatureSummary } from './consistency.js';
import { checkConsistency, findGaps } from './consistency.js';
import type { StackForecast } from './forecast.js';
import { forecastStack } from './forecast.js';
import type { AuditLimits, AuditLimitsInput } from './limits.js';
import { parseAuditLimits } from './limits.js';
import type { FrameZScores, QualitySet } from './quality.js';
import { absoluteRules, emptyZScores, scoreSet, sessionRules, skyOf } from './quality.js';
import type {
  AuditReason,
  AuditVerdict,
  CalibrationFrameInfo,
  FrameMetrics,
  ReasonDetail,
  ReasonSeverity,
  UnreadableFrame,
} from './types.js';
import { AUDIT_REASONS, SCORED_METRICS } from './types.js';
import { binningText, compareAcquisition, compareText, filterKey, finite, settingKey, sizeText } from './values.js';

/** Input of {@link auditSession}. */
export interface AuditInput {
  /** Measured light frames and the files that could not be read, in the order to report them. */
  lights: readonly (FrameMetrics | UnreadableFrame)[];
  calibration: readonly CalibrationFrameInfo[];
  /** Partial limits (validated by {@link parseAuditLimits}); defaults otherwise. */
  limits?: AuditLimitsInput;
}

/** The audit of one light frame. */
export interface AuditFrameRecord {
  file: string;
  verdict: AuditVerdict;
  /** Reason codes in {@link AUDIT_REASONS} order, each once. */
  reasons: AuditReason[];
  /** The facts behind each reason (one or more per reason), in reason order. */
  details: ReasonDetail[];
  /** The measurements as handed in; null for an unreadable file. */
  metrics: FrameMetrics | null;
  /** Robust z-scores in the frame's comparison set; null where not computed. */
  zScores: FrameZScores;
  /** backgroundAdu - pedestalAdu (ADU); null when unreadable. */
  skyAdu: number | null;
  pedestalAdu: number | null;
  /** Where the pedestal came from: the frame's own value, the matched biases' median, or none (0). */
  pedestalSource: 'frame' | 'bias' | 'none' | null;
  /** Stack weight relative to the filter's typical frame (1); null where none. */
  weight: number | null;
  /** Index of the comparison set ({@link AuditResult.qualitySets}) and of the light group ({@link AuditResult.groups}). */
  qualitySet: number | null;
  calibrationGroup: number | null;
  /**
   * Neutral codes about values that could not be used: `quality-not-compared` (set too small), `no-fwhm`,
   * `no-elongation`, `no-star-signal`, `no-gradient`, `no-start-time`, `no-exposure`, `no-sensor-temperature`,
   * `no-weight`.
   */
  notes: string[];
  /** Why the file could not be read (unreadable frames only). */
  error: { code: string; message: string; where: Where } | null;
}

/** Frames per verdict and per reason. */
export interface AuditCounts {
  frames: number;
  keep: number;
  review: number;
  reject: number;
  byReason: Record<AuditReason, number>;
}

/** The result of {@link auditSession}: plain JSON (no NaN, no undefined values in arrays). */
export interface AuditResult {
  schema: 'subgauge.audit/1';
  /** One record per input light, in input order. */
  frames: AuditFrameRecord[];
  counts: AuditCounts;
  /** Comparison sets of the statistical rules. */
  qualitySets: QualitySet[];
  /** Light groups and the calibration frames matched to each. */
  groups: LightGroup[];
  calibration: CalibrationSummary;
  consistency: { filters: FilterConsistency[]; temperature: TemperatureSummary };
  gaps: SessionTiming;
  /** One stack forecast per filter. */
  forecast: StackForecast[];
  limits: AuditLimits;
  /** Neutral session-level codes: `no-calibration-frames-given`, `too-few-timed-frames`. */
  notes: string[];
}

/** Tell an unreadable entry from a measured one. */
export function isUnreadableFrame(entry: FrameMetrics | UnreadableFrame): entry is UnreadableFrame {
  return typeof (entry as UnreadableFrame).code === 'string' && typeof (entry as FrameMetrics).backgroundAdu !== 'number';
}

function severityOf(reason: AuditReason, limits: AuditLimits): ReasonSeverity {
  switch (reason) {
    case 'unreadable':
      return 'reject';
    case 'trail':
      return limits.trail.severity;
    case 'cloud':
      return limits.cloud.severity;
    case 'soft-focus':
      return limits.softFocus.severity;
    case 'elongated-stars':
      return limits.elongatedStars.severity;
    case 'bright-sky':
      return limits.brightSky.severity;
    case 'few-stars':
      return limits.fewStars.severity;
    case 'saturated':
      return limits.saturated.severity;
    case 'exposure-mismatch':
      return limits.exposure.severity;
    case 'gain-mismatch':
      return limits.gain.severity;
    case 'temperature-drift':
      return limits.temperature.severity;
    case 'binning-mismatch':
      return limits.binning.severity;
    case 'size-mismatch':
      return limits.size.severity;
    case 'no-calibration':
      return limits.calibration.severity;
  }
}

/** Verdict of a set of reasons: reject if any leads to reject, review if any leads to review, else keep. */
export function verdictOf(reasons: readonly AuditReason[], limits: AuditLimits): AuditVerdict {
  let v: AuditVerdict = 'keep';
  for (const r of reasons) {
    const s = severityOf(r, limits);
    if (s === 'reject') return 'reject';
    v = 'review';
  }
  return v;
}

const REASON_ORDER = new Map(AUDIT_REASONS.map((r, i) => [r, i]));

function validateLight(f: FrameMetrics, i: number): void {
  const where = { file: typeof f.file === 'string' ? f.file : `lights[${i}]` };
  const bad = (field: string, found: unknown) =>
    new InvalidInputError('INPUT_BAD_PARAMETER', `light ${where.file}: ${field}: expected a positive integer; found ${String(found)}`, {
      ...where,
      keyword: field,
    });
  if (typeof f.file !== 'string') {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `lights[${i}]: file: expected a string`, { keyword: 'file' });
  }
  for (const k of ['width', 'height', 'binningX', 'binningY'] as const) {
    const v = f[k];
    if (!(Number.isInteger(v) && v > 0)) throw bad(k, v);
  }
}

function validateCalibration(c: CalibrationFrameInfo, i: number): void {
  const file = typeof c.file === 'string' ? c.file : `calibration[${i}]`;
  const kinds = ['bias', 'dark', 'flat', 'flat-dark'];
  if (typeof c.file !== 'string' || !kinds.includes(c.kind)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `calibration ${file}: expected a file and a kind (${kinds.join(', ')})`, {
      file,
      keyword: typeof c.file !== 'string' ? 'file' : 'kind',
    });
  }
  for (const k of ['width', 'height', 'binningX', 'binningY'] as const) {
    const v = c[k];
    if (!(Number.isInteger(v) && v > 0)) {
      throw new InvalidInputError('INPUT_BAD_PARAMETER', `calibration ${file}: ${k}: expected a positive integer; found ${String(v)}`, {
        file,
        keyword: k,
      });
    }
  }
}

/**
 * Audit a session: verdicts with reasons for every light, consistency, gaps in time, calibration matching and
 * a stack forecast.
 *
 * Method: lights are compared within comparison sets (same filter, exposure, gain, offset, binning, size) by
 * robust z-scores (median and 1.482602 x MAD with a floor, REFERENCE C.1) and ratios to the set median
 * ({@link AuditLimits} documents every rule); settings against each filter's most common value; temperatures
 * against set points and the session median (REFERENCE F.8); calibration by the rules of
 * `matchCalibration`; the forecast by inverse-variance weights and Kish's effective count (REFERENCE D.4).
 * The result depends on the set of inputs only: reordering the inputs reorders `frames` and nothing else.
 * @param input lights (measured or unreadable), calibration frames and optional partial limits
 * @returns the plain-JSON {@link AuditResult}
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` for invalid limits (naming the field) or a light or
 *   calibration record without a file name or with a non-positive size or binning
 * @example auditSession({ lights, calibration: [] }).frames[0].verdict // 'keep'
 */
export function auditSession(input: AuditInput): AuditResult {
  const limits = parseAuditLimits(input.limits);
  input.calibration.forEach(validateCalibration);
  const readable: FrameMetrics[] = [];
  const readableOf: number[] = input.lights.map(() => -1);
  input.lights.forEach((entry, i) => {
    if (isUnreadableFrame(entry)) return;
    validateLight(entry, i);
    readableOf[i] = readable.length;
    readable.push(entry);
  });

  const consistency = checkConsistency(readable, limits);
  const timing = findGaps(readable, limits);
  const cal = matchCalibration(readable, input.calibration, limits);

  // Pedestal of each readable light.
  const pedestals: number[] = [];
  const pedestalSources: ('frame' | 'bias' | 'none')[] = [];
  readable.forEach((f, r) => {
    const own = finite(f.pedestalAdu);
    const bias = cal.groups[(cal.groupOfLight[r] as number) - 1]?.biasLevelAdu ?? null;
    if (own !== undefined) {
      pedestals.push(own);
      pedestalSources.push('frame');
    } else if (bias !== null) {
      pedestals.push(bias);
      pedestalSources.push('bias');
    } else {
      pedestals.push(0);
      pedestalSources.push('none');
    }
  });

  // Comparison sets.
  const setKeyOf = (f: FrameMetrics, r: number) =>
    [
      filterKey(f.filter),
      consistency.perFrame[r]?.exposureSetKey ?? '',
      settingKey(f.gainSetting),
      settingKey(f.offsetSetting),
      binningText(f),
      sizeText(f),
    ].join('|');
  const setMembers = new Map<string, number[]>();
  readable.forEach((f, r) => {
    const k = setKeyOf(f, r);
    const list = setMembers.get(k);
    if (list) list.push(r);
    else setMembers.set(k, [r]);
  });
  // A set is represented by its member with the smallest file name, so nothing depends on input order.
  const representative = (members: readonly number[]) =>
    members.map((r) => readable[r] as FrameMetrics).reduce((a, b) => (compareText(b.file, a.file) < 0 ? b : a));
  const setLists = [...setMembers.entries()]
    .sort((a, b) => compareAcquisition(representative(a[1]), representative(b[1])) || compareText(a[0], b[0]))
    .map((e) => e[1]);
  const setOf: number[] = readable.map(() => 0);
  const zOf: FrameZScores[] = readable.map(() => emptyZScores());
  const detailsOf: ReasonDetail[][] = readable.map(() => []);
  const notesOf: string[][] = readable.map((_, r) => [...(consistency.perFrame[r]?.notes ?? [])]);
  const qualitySets: QualitySet[] = setLists.map((members, si) => {
    const frames = members.map((r) => readable[r] as FrameMetrics);
    const compared = members.length >= limits.statistics.minFramesForStatistics;
    const scored = compared ? scoreSet(frames, members.map((r) => pedestals[r] as number), limits) : null;
    members.forEach((r, k) => {
      setOf[r] = si + 1;
      const f = readable[r] as FrameMetrics;
      const absolute = absoluteRules(f, limits);
      if (scored) {
        const z = scored.z[k] as FrameZScores;
        zOf[r] = z;
        detailsOf[r] = sessionRules(f, pedestals[r] as number, z, scored.references, absolute, limits);
      } else {
        detailsOf[r] = absolute;
        notesOf[r]?.push('quality-not-compared');
      }
    });
    const exposures = frames.map((f) => finite(f.exposureSeconds)).filter((e): e is number => e !== undefined);
    const f0 = representative(members);
    const spellings = frames.map((f) => (f.filter ?? '').trim()).sort(compareText);
    const references = {} as QualitySet['references'];
    for (const m of SCORED_METRICS) references[m] = scored ? scored.references[m] : null;
    return {
      index: si + 1,
      filter: filterKey(f0.filter) === '' ? null : (spellings[0] as string),
      exposureSeconds: exposures.length > 0 ? Math.min(...exposures) : null,
      gainSetting: f0.gainSetting ?? null,
      offsetSetting: f0.offsetSetting ?? null,
      binning: binningText(f0),
      size: sizeText(f0),
      frameCount: members.length,
      compared,
      references,
    };
  });

  // Consistency and calibration details; notes on missing values.
  readable.forEach((f, r) => {
    const list = detailsOf[r] as ReasonDetail[];
    list.push(...(consistency.perFrame[r]?.details ?? []));
    const group = cal.groups[(cal.groupOfLight[r] as number) - 1];
    if (group?.flagged) {
      const lim = limits.calibration;
      for (const m of [group.dark, group.flat]) {
        if (m.status !== 'missing') continue;
        if ((m.kind === 'dark' && !lim.requireDarks) || (m.kind === 'flat' && !lim.requireFlats)) continue;
        list.push({
          reason: 'no-calibration',
          metric: m.kind,
          test: 'missing-match',
          value: m.candidateCount,
          reference: null,
          limit: null,
          ratio: null,
          zScore: null,
          zLimit: null,
        });
      }
    }
    const notes = notesOf[r] as string[];
    if (finite(f.fwhmPixels) === undefined) notes.push('no-fwhm');
    if (finite(f.elongation) === undefined) notes.push('no-elongation');
    if (finite(f.starSignalAdu) === undefined) notes.push('no-star-signal');
    if (finite(f.gradientPercent) === undefined) notes.push('no-gradient');
    if (finite(f.startTimeMs) === undefined) notes.push('no-start-time');
  });

  // Verdicts.
  const reasonsOf = detailsOf.map((list) => {
    list.sort((a, b) => (REASON_ORDER.get(a.reason) as number) - (REASON_ORDER.get(b.reason) as number));
    return [...new Set(list.map((x) => x.reason))];
  });
  const verdictOfReadable = reasonsOf.map((reasons) => verdictOf(reasons, limits));

  // Forecast per filter.
  const byFilter = new Map<string, number[]>();
  readable.forEach((f, r) => {
    const k = filterKey(f.filter);
    const list = byFilter.get(k);
    if (list) list.push(r);
    else byFilter.set(k, [r]);
  });
  const weightOf: (number | null)[] = readable.map(() => null);
  const forecast: StackForecast[] = [...byFilter.entries()]
    .sort((a, b) => compareText(a[0], b[0]))
    .map(([fk, members]) => {
      const spellings = members.map((r) => (readable[r]?.filter ?? '').trim()).sort(compareText);
      const { forecast: fc, relativeWeights } = forecastStack(
        fk === '' ? null : (spellings[0] as string),
        members.map((r) => readable[r] as FrameMetrics),
        members.map((r) => verdictOfReadable[r] as AuditVerdict),
      );
      members.forEach((r, k) => {
        const w = relativeWeights[k] ?? null;
        weightOf[r] = w;
        if (w === null) notesOf[r]?.push('no-weight');
      });
      return fc;
    });

  // Frame records in input order.
  const frames: AuditFrameRecord[] = input.lights.map((entry, i) => {
    const r = readableOf[i] as number;
    if (r < 0) {
      const u = entry as UnreadableFrame;
      return {
        file: u.file,
        verdict: 'reject',
        reasons: ['unreadable'],
        details: [
          { reason: 'unreadable', metric: 'errorCode', test: 'present', value: u.code, reference: null, limit: null, ratio: null, zScore: null, zLimit: null },
        ],
        metrics: null,
        zScores: emptyZScores(),
        skyAdu: null,
        pedestalAdu: null,
        pedestalSource: null,
        weight: null,
        qualitySet: null,
        calibrationGroup: null,
        notes: [],
        error: { code: u.code, message: u.message, where: u.where ?? {} },
      };
    }
    const f = readable[r] as FrameMetrics;
    const sky = finite(f.backgroundAdu) === undefined ? null : skyOf(f, pedestals[r] as number);
    return {
      file: f.file,
      verdict: verdictOfReadable[r] as AuditVerdict,
      reasons: reasonsOf[r] as AuditReason[],
      details: detailsOf[r] as ReasonDetail[],
      metrics: f,
      zScores: zOf[r] as FrameZScores,
      skyAdu: sky,
      pedestalAdu: pedestals[r] as number,
      pedestalSource: pedestalSources[r] as 'frame' | 'bias' | 'none',
      weight: weightOf[r] ?? null,
      qualitySet: setOf[r] as number,
      calibrationGroup: cal.groupOfLight[r] as number,
      notes: notesOf[r] as string[],
      error: null,
    };
  });

  const byReason = Object.fromEntries(AUDIT_REASONS.map((r) => [r, 0])) as Record<AuditReason, number>;
  const counts: AuditCounts = { frames: frames.length, keep: 0, review: 0, reject: 0, byReason };
  for (const fr of frames) {
    counts[fr.verdict]++;
    for (const r of fr.reasons) byReason[r]++;
  }
  const notes: string[] = [];
  if (input.calibration.length === 0) notes.push('no-calibration-frames-given');
  if (timing.cadenceSeconds === null) notes.push('too-few-timed-frames');

  return {
    schema: 'subgauge.audit/1',
    frames,
    counts,
    qualitySets,
    groups: cal.groups,
    calibration: cal.summary,
    consistency: { filters: consistency.filters, temperature: consistency.temperature },
    gaps: timing,
    forecast,
    limits,
    notes,
  };
}
