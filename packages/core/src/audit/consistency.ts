import type { AuditLimits } from './limits.js';
import { medianOf } from './robust.js';
import type { FrameMetrics, ReasonDetail } from './types.js';
import type { ValueCount } from './values.js';
import {
  binningText,
  compareText,
  distinctValues,
  exposureKey,
  filterKey,
  finite,
  settingKey,
  sizeText,
} from './values.js';

/** Attributes whose most common value per filter every frame should share. */
export type ConsistencyAttribute = 'exposureSeconds' | 'gainSetting' | 'offsetSetting' | 'binning' | 'size';

/** One attribute of one filter: its most common value, the other values and the frames that differ. */
export interface ConsistencyCheck {
  attribute: ConsistencyAttribute;
  /** Most common value (ties: the smallest); null when no frame records it. */
  reference: number | string | null;
  /** Distinct values, most common first. */
  values: ValueCount<number | string>[];
  /** Frames that do not record the attribute (not compared). */
  missingFrameCount: number;
  /** Frames that differ from the reference, in input order. */
  mismatchedFiles: string[];
}

/** Consistency of the frames of one filter. */
export interface FilterConsistency {
  /** Filter as written (the smallest spelling among equal names); null for frames without FILTER. */
  filter: string | null;
  frameCount: number;
  checks: ConsistencyCheck[];
}

/** Sensor temperatures over the session (all filters: the same darks serve every filter). */
export interface TemperatureSummary {
  /** Median measured sensor temperature (deg C); null when no frame records it. */
  sensorMedianCelsius: number | null;
  sensorMinCelsius: number | null;
  sensorMaxCelsius: number | null;
  /** Distinct set points, most common first. */
  setpoints: ValueCount<number>[];
  /** Largest |sensor - set point| (deg C); null when no frame records both. */
  maxSetpointDeviationCelsius: number | null;
  framesWithoutSensorTemperature: number;
  /** Frames with `temperature-drift`, in input order. */
  driftFiles: string[];
}

/** Per-frame outcome of the consistency checks. */
export interface FrameConsistency {
  details: ReasonDetail[];
  /** Exposure key of the frame's comparison set: the filter's reference when within tolerance. */
  exposureSetKey: string;
  notes: string[];
}

function detail(
  reason: ReasonDetail['reason'],
  metric: string,
  test: ReasonDetail['test'],
  value: number | string | null,
  reference: number | string | null,
  limit: number | string | null,
): ReasonDetail {
  return { reason, metric, test, value, reference, limit, ratio: null, zScore: null, zLimit: null };
}

/**
 * Compare every frame's exposure, gain and offset settings, binning and size with its filter's most common
 * value, and its sensor temperature with its set point and with the session median.
 * @param frames readable light frames (input order)
 * @returns per-frame details (`exposure-mismatch`, `gain-mismatch` for gain and offset settings,
 *   `binning-mismatch`, `size-mismatch`, `temperature-drift`) and the per-filter and temperature summaries
 */
export function checkConsistency(
  frames: readonly FrameMetrics[],
  limits: AuditLimits,
): { perFrame: FrameConsistency[]; filters: FilterConsistency[]; temperature: TemperatureSummary } {
  const perFrame: FrameConsistency[] = frames.map(() => ({ details: [], exposureSetKey: '', notes: [] }));
  const byFilter = new Map<string, number[]>();
  frames.forEach((f, i) => {
    const k = filterKey(f.filter);
    const list = byFilter.get(k);
    if (list) list.push(i);
    else byFilter.set(k, [i]);
  });

  const filters: FilterConsistency[] = [];
  for (const [fk, idx] of [...byFilter.entries()].sort((a, b) => compareText(a[0], b[0]))) {
    const spellings = idx.map((i) => (frames[i]?.filter ?? '').trim()).sort(compareText);
    const checks: ConsistencyCheck[] = [];

    // Exposure: equal within a relative tolerance of the most common value.
    const exposures = idx.flatMap((i) => {
      const e = finite(frames[i]?.exposureSeconds);
      return e === undefined ? [] : [{ key: exposureKey(e), value: Math.round(e * 1000) / 1000 }];
    });
    const exposureValues = distinctValues(exposures);
    const exposureRef = exposureValues[0]?.value as number | undefined;
    const expCheck: ConsistencyCheck = {
      attribute: 'exposureSeconds',
      reference: exposureRef ?? null,
      values: exposureValues,
      missingFrameCount: idx.length - exposures.length,
      mismatchedFiles: [],
    };
    for (const i of idx) {
      const f = frames[i] as FrameMetrics;
      const out = perFrame[i] as FrameConsistency;
      const e = finite(f.exposureSeconds);
      if (e === undefined || exposureRef === undefined) {
        out.exposureSetKey = exposureKey(e);
        if (e === undefined) out.notes.push('no-exposure');
        continue;
      }
      const tolerance = limits.exposure.relativeTolerance * exposureRef;
      if (Math.abs(e - exposureRef) > tolerance) {
        out.exposureSetKey = exposureKey(e);
        expCheck.mismatchedFiles.push(f.file);
        out.details.push(detail('exposure-mismatch', 'exposureSeconds', 'differs', e, exposureRef, tolerance));
      } else out.exposureSetKey = exposureKey(exposureRef);
    }
    checks.push(expCheck);

    // Settings, binning and size: equal to the most common value (gain and offset both give gain-mismatch).
    const exact: [ConsistencyAttribute, ReasonDetail['reason'], (f: FrameMetrics) => { key: string; value: number | string } | undefined][] = [
      ['gainSetting', 'gain-mismatch', (f) => (settingKey(f.gainSetting) === '' ? undefined : { key: settingKey(f.gainSetting), value: f.gainSetting as number | string })],
      ['offsetSetting', 'gain-mismatch', (f) => (settingKey(f.offsetSetting) === '' ? undefined : { key: settingKey(f.offsetSetting), value: f.offsetSetting as number | string })],
      ['binning', 'binning-mismatch', (f) => ({ key: binningText(f), value: binningText(f) })],
      ['size', 'size-mismatch', (f) => ({ key: sizeText(f), value: sizeText(f) })],
    ];
    for (const [attribute, reason, get] of exact) {
      const items = idx.flatMap((i) => {
        const v = get(frames[i] as FrameMetrics);
        return v === undefined ? [] : [v];
      });
      const values = distinctValues(items);
      const refValue = values[0]?.value;
      const refKey = items.find((it) => it.value === refValue)?.key;
      const check: ConsistencyCheck = {
        attribute,
        reference: refValue ?? null,
        values,
        missingFrameCount: idx.length - items.length,
        mismatchedFiles: [],
      };
      for (const i of idx) {
        const f = frames[i] as FrameMetrics;
        const v = get(f);
        if (v === undefined || refKey === undefined || v.key === refKey) continue;
        check.mismatchedFiles.push(f.file);
        (perFrame[i] as FrameConsistency).details.push(detail(reason, attribute, 'differs', v.value, refValue ?? null, null));
      }
      checks.push(check);
    }
    filters.push({ filter: fk === '' ? null : (spellings[0] as string), frameCount: idx.length, checks });
  }

  // Temperature: against the set point and against the session median (REFERENCE F.8).
  const sensors = frames.map((f) => finite(f.sensorTemperatureCelsius));
  const measured = sensors.filter((t): t is number => t !== undefined);
  const sessionMedian = measured.length > 0 ? medianOf(measured) : undefined;
  let maxSetDev: number | undefined;
  const driftFiles: string[] = [];
  frames.forEach((f, i) => {
    const out = perFrame[i] as FrameConsistency;
    const t = sensors[i];
    if (t === undefined) {
      out.notes.push('no-sensor-temperature');
      return;
    }
    let drift = false;
    const set = finite(f.setTemperatureCelsius);
    if (set !== undefined) {
      const dev = Math.abs(t - set);
      maxSetDev = maxSetDev === undefined ? dev : Math.max(maxSetDev, dev);
      if (dev > limits.temperature.setpointToleranceCelsius) {
        out.details.push(
          detail('temperature-drift', 'setpointDeviationCelsius', 'deviation-above', t, set, limits.temperature.setpointToleranceCelsius),
        );
        drift = true;
      }
    }
    if (sessionMedian !== undefined && Math.abs(t - sessionMedian) > limits.temperature.sessionToleranceCelsius) {
      out.details.push(
        detail('temperature-drift', 'sessionDeviationCelsius', 'deviation-above', t, sessionMedian, limits.temperature.sessionToleranceCelsius),
      );
      drift = true;
    }
    if (drift) driftFiles.push(f.file);
  });
  const setpoints = distinctValues(
    frames.flatMap((f) => {
      const s = finite(f.setTemperatureCelsius);
      return s === undefined ? [] : [{ key: String(s), value: s }];
    }),
  );
  const temperature: TemperatureSummary = {
    sensorMedianCelsius: sessionMedian ?? null,
    sensorMinCelsius: measured.length > 0 ? Math.min(...measured) : null,
    sensorMaxCelsius: measured.length > 0 ? Math.max(...measured) : null,
    setpoints,
    maxSetpointDeviationCelsius: maxSetDev ?? null,
    framesWithoutSensorTemperature: frames.length - measured.length,
    driftFiles,
  };
  return { perFrame, filters, temperature };
}

/** A pause between two consecutive frames (by start time) well beyond the cadence. */
export interface TimeGap {
  afterFile: string;
  beforeFile: string;
  afterStartMs: number;
  beforeStartMs: number;
  /** Start-to-start step (s). */
  stepSeconds: number;
  /** Step minus the earlier frame's exposure (s); null when its exposure is unknown. */
  idleSeconds: number | null;
}

/** Two frames whose start times are closer than the earlier one's exposure (REFERENCE F.8). */
export interface TimeOverlap {
  file: string;
  nextFile: string;
  stepSeconds: number;
  exposureSeconds: number;
}

/** Timing of the session. */
export interface SessionTiming {
  timedFrameCount: number;
  /** Frames without a start time, in input order. */
  untimedFiles: string[];
  firstStartMs: number | null;
  lastStartMs: number | null;
  /** Median start-to-start step (s); null with fewer than 3 timed frames. */
  cadenceSeconds: number | null;
  /** A step is a gap above this (s): max(cadenceFactor x cadence, cadence + minimumExtraSeconds). */
  gapLimitSeconds: number | null;
  gaps: TimeGap[];
  overlaps: TimeOverlap[];
}

/** DATE-OBS often has whole seconds only; steps shorter than the exposure by less than this are not overlaps. */
const OVERLAP_SLACK_SECONDS = 1;

/**
 * Find gaps in time: frames are sorted by start time (then file), the cadence is the median step, and a step
 * longer than both cadenceFactor x cadence and cadence + minimumExtraSeconds is a gap (limits `gaps`).
 * Steps shorter than the earlier frame's exposure are listed as overlaps: the times are then not start times,
 * or the clock is off (REFERENCE F.8).
 */
export function findGaps(frames: readonly FrameMetrics[], limits: AuditLimits): SessionTiming {
  const timed = frames
    .filter((f) => finite(f.startTimeMs) !== undefined)
    .sort((a, b) => (a.startTimeMs as number) - (b.startTimeMs as number) || compareText(a.file, b.file));
  const untimedFiles = frames.filter((f) => finite(f.startTimeMs) === undefined).map((f) => f.file);
  const steps: number[] = [];
  for (let i = 1; i < timed.length; i++) {
    steps.push(((timed[i]?.startTimeMs as number) - (timed[i - 1]?.startTimeMs as number)) / 1000);
  }
  const cadence = steps.length >= 2 ? medianOf(steps) : undefined;
  const gapLimit =
    cadence === undefined
      ? undefined
      : Math.max(limits.gaps.cadenceFactor * cadence, cadence + limits.gaps.minimumExtraSeconds);
  const gaps: TimeGap[] = [];
  const overlaps: TimeOverlap[] = [];
  for (let i = 1; i < timed.length; i++) {
    const a = timed[i - 1] as FrameMetrics;
    const b = timed[i] as FrameMetrics;
    const step = steps[i - 1] as number;
    const exp = finite(a.exposureSeconds);
    if (gapLimit !== undefined && step > gapLimit) {
      gaps.push({
        afterFile: a.file,
        beforeFile: b.file,
        afterStartMs: a.startTimeMs as number,
        beforeStartMs: b.startTimeMs as number,
        stepSeconds: step,
        idleSeconds: exp === undefined ? null : step - exp,
      });
    }
    if (exp !== undefined && step < exp - OVERLAP_SLACK_SECONDS) {
      overlaps.push({ file: a.file, nextFile: b.file, stepSeconds: step, exposureSeconds: exp });
    }
  }
  return {
    timedFrameCount: timed.length,
    untimedFiles,
    firstStartMs: timed[0]?.startTimeMs ?? null,
    lastStartMs: timed[timed.length - 1]?.startTimeMs ?? null,
    cadenceSeconds: cadence ?? null,
    gapLimitSeconds: gapLimit ?? null,
    gaps,
    overlaps,
  };
}
