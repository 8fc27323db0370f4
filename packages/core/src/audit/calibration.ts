import type { AuditLimits } from './limits.js';
import { medianOf } from './robust.js';
import type { CalibrationFrameInfo, CalibrationKind, FrameMetrics, SettingValue } from './types.js';
import {
  binningText,
  compareAcquisition,
  compareOptional,
  compareText,
  distinctValues,
  exposureKey,
  filterKey,
  finite,
  frameTemperature,
  settingKey,
  sizeText,
} from './values.js';

/** Criteria a calibration frame is compared on. */
export type MatchCriterion =
  | 'exposure'
  | 'temperature'
  | 'gain'
  | 'offset'
  | 'binning'
  | 'size'
  | 'filter'
  | 'flat-exposure';

/**
 * Which rule matched:
 * - `dark-equal-exposure`: darks of the lights' exposure (within `darkExposureTolerance`), temperature, gain,
 *   offset, binning and size;
 * - `dark-scaled`: no such darks, but darks equal in everything except exposure, with a matching bias to
 *   remove the pedestal before scaling dark current by exposure (dark current is linear in time; REFERENCE B.9);
 * - `bias-same-settings`: biases of the same gain, offset, binning and size;
 * - `flat-same-filter`: flats of the same filter, binning and size;
 * - `flat-dark-flat-exposure`: flat-darks of the matched flats' exposure, gain, offset, binning and size;
 * - `none`: nothing matched; `not-applicable`: flat-darks when no flat matched.
 */
export type MatchRule =
  | 'dark-equal-exposure'
  | 'dark-scaled'
  | 'bias-same-settings'
  | 'flat-same-filter'
  | 'flat-dark-flat-exposure'
  | 'none'
  | 'not-applicable';

/** The calibration frames of one kind that serve a light group. */
export interface CalibrationMatch {
  kind: CalibrationKind;
  status: 'matched' | 'scaled' | 'missing' | 'not-applicable';
  rule: MatchRule;
  /** Criteria the rule compared. */
  criteria: MatchCriterion[];
  /** Criteria that could not be checked for some matched frame (a value missing on either side). */
  uncheckedCriteria: MatchCriterion[];
  /** Matched files, sorted by name. */
  files: string[];
  /** Exposure of the matched frames (most common), s. */
  exposureSeconds: number | null;
  /** Median temperature of the matched frames (deg C). */
  temperatureCelsius: number | null;
  /** Frames of this kind handed in. */
  candidateCount: number;
  /** How many candidates fail each criterion (a candidate may fail several). */
  failedCounts: Partial<Record<MatchCriterion, number>>;
}

/** Lights that share filter, exposure, gain, offset, binning, size and temperature (within tolerance). */
export interface LightGroup {
  /** 1-based, in the sorted order of the groups. */
  index: number;
  filter: string | null;
  exposureSeconds: number | null;
  gainSetting: SettingValue | null;
  offsetSetting: SettingValue | null;
  binning: string;
  size: string;
  /** Median temperature of the lights (sensor, else set point; deg C); null when none is recorded. */
  temperatureCelsius: number | null;
  temperatureMinCelsius: number | null;
  temperatureMaxCelsius: number | null;
  lightCount: number;
  /** Light files in input order. */
  lightFiles: string[];
  bias: CalibrationMatch;
  dark: CalibrationMatch;
  flat: CalibrationMatch;
  flatDark: CalibrationMatch;
  /** Kinds with status `missing`. */
  missing: CalibrationKind[];
  /** The lights get `no-calibration` (per `requireDarks`/`requireFlats`/`flagWithoutCalibrationFrames`). */
  flagged: boolean;
  /** Median bias level (ADU) of the matched biases, when they give one. */
  biasLevelAdu: number | null;
}

/** Calibration frames by kind and those that serve no light group. */
export interface CalibrationSummary {
  frameCounts: Record<CalibrationKind, number>;
  /** Calibration files matched to no group, sorted by name. */
  unusedFiles: string[];
}

type Check = (c: CalibrationFrameInfo) => boolean | 'unchecked';

const setting = (a: SettingValue | undefined, b: SettingValue | undefined): boolean | 'unchecked' => {
  const ka = settingKey(a);
  const kb = settingKey(b);
  return ka === '' || kb === '' ? 'unchecked' : ka === kb;
};

const relEqual = (a: number | undefined, b: number | undefined, tol: number): boolean | 'unchecked' =>
  a === undefined || b === undefined ? 'unchecked' : Math.abs(a - b) <= tol * Math.max(Math.abs(a), Math.abs(b));

/** Evaluate criteria on candidates: those passing all, and failure counts. */
function evaluate(
  candidates: readonly CalibrationFrameInfo[],
  checks: readonly [MatchCriterion, Check][],
): { passing: CalibrationFrameInfo[]; unchecked: Set<MatchCriterion>; failed: Partial<Record<MatchCriterion, number>> } {
  const passing: CalibrationFrameInfo[] = [];
  const unchecked = new Set<MatchCriterion>();
  const failed: Partial<Record<MatchCriterion, number>> = {};
  for (const c of candidates) {
    let ok = true;
    const un: MatchCriterion[] = [];
    for (const [name, check] of checks) {
      const r = check(c);
      if (r === 'unchecked') un.push(name);
      else if (!r) {
        ok = false;
        failed[name] = (failed[name] ?? 0) + 1;
      }
    }
    if (ok) {
      passing.push(c);
      for (const u of un) unchecked.add(u);
    }
  }
  return { passing, unchecked, failed };
}

function matchOf(
  kind: CalibrationKind,
  status: CalibrationMatch['status'],
  rule: MatchRule,
  criteria: MatchCriterion[],
  files: readonly CalibrationFrameInfo[],
  unchecked: Set<MatchCriterion>,
  candidateCount: number,
  failed: Partial<Record<MatchCriterion, number>>,
): CalibrationMatch {
  const exposures = distinctValues(
    files.flatMap((f) => {
      const e = finite(f.exposureSeconds);
      return e === undefined ? [] : [{ key: exposureKey(e), value: e }];
    }),
  );
  const temps = files.map(frameTemperature).filter((t): t is number => t !== undefined);
  return {
    kind,
    status,
    rule,
    criteria,
    uncheckedCriteria: criteria.filter((c) => unchecked.has(c)),
    files: files.map((f) => f.file).sort(compareText),
    exposureSeconds: exposures[0]?.value ?? null,
    temperatureCelsius: temps.length > 0 ? medianOf(temps) : null,
    candidateCount,
    failedCounts: failed,
  };
}

/** Group key of a light without temperature. */
function lightKey(f: FrameMetrics): string {
  return [
    filterKey(f.filter),
    exposureKey(f.exposureSeconds),
    settingKey(f.gainSetting),
    settingKey(f.offsetSetting),
    binningText(f),
    sizeText(f),
  ].join('|');
}

/**
 * Group the lights and match calibration frames to each group (rules: {@link MatchRule}).
 *
 * Lights group by filter, exposure, gain, offset, binning and size, then by temperature: sorted temperatures
 * are cut into runs no wider than `groupTemperatureToleranceCelsius` from their coldest member (frames without
 * a temperature form their own run). A criterion is unchecked, not failed, when either side lacks the value.
 * @param lights readable lights (input order)
 * @returns the groups (sorted by filter, exposure, gain, offset, binning, size, temperature), the group index
 *   of each light (same order as `lights`) and a summary of the calibration frames
 */
export function matchCalibration(
  lights: readonly FrameMetrics[],
  calibration: readonly CalibrationFrameInfo[],
  limits: AuditLimits,
): { groups: LightGroup[]; groupOfLight: number[]; summary: CalibrationSummary } {
  const lim = limits.calibration;
  const byKey = new Map<string, number[]>();
  lights.forEach((f, i) => {
    const k = lightKey(f);
    const list = byKey.get(k);
    if (list) list.push(i);
    else byKey.set(k, [i]);
  });

  // Split each key by temperature runs.
  const rawGroups: number[][] = [];
  for (const idx of byKey.values()) {
    const sorted = [...idx].sort(
      (a, b) =>
        compareOptional(frameTemperature(lights[a] as FrameMetrics), frameTemperature(lights[b] as FrameMetrics)) ||
        compareText((lights[a] as FrameMetrics).file, (lights[b] as FrameMetrics).file),
    );
    let run: number[] = [];
    let start: number | undefined;
    for (const i of sorted) {
      const t = frameTemperature(lights[i] as FrameMetrics);
      const fits =
        run.length > 0 &&
        (t === undefined ? start === undefined : start !== undefined && t - start <= lim.groupTemperatureToleranceCelsius);
      if (!fits && run.length > 0) {
        rawGroups.push(run);
        run = [];
      }
      if (run.length === 0) start = t;
      run.push(i);
    }
    if (run.length > 0) rawGroups.push(run);
  }

  const first = (g: number[]) => lights[g[0] as number] as FrameMetrics;
  const groupTemp = (g: number[]) => {
    const ts = g.map((i) => frameTemperature(lights[i] as FrameMetrics)).filter((t): t is number => t !== undefined);
    return ts.length > 0 ? medianOf(ts) : undefined;
  };
  rawGroups.sort((a, b) => compareAcquisition(first(a), first(b)) || compareOptional(groupTemp(a), groupTemp(b)));

  const ofKind = (k: CalibrationKind) => calibration.filter((c) => c.kind === k);
  const biases = ofKind('bias');
  const darks = ofKind('dark');
  const flats = ofKind('flat');
  const flatDarks = ofKind('flat-dark');
  const used = new Set<CalibrationFrameInfo>();
  const noneGiven = calibration.length === 0;

  const groupOfLight = lights.map(() => 0);
  const groups: LightGroup[] = rawGroups.map((g, gi) => {
    for (const i of g) groupOfLight[i] = gi + 1;
    const f = first(g);
    const temps = g.map((i) => frameTemperature(lights[i] as FrameMetrics)).filter((t): t is number => t !== undefined);
    const temp = temps.length > 0 ? medianOf(temps) : undefined;
    const exposure = finite(f.exposureSeconds);
    const sameCamera: [MatchCriterion, Check][] = [
      ['gain', (c) => setting(c.gainSetting, f.gainSetting)],
      ['offset', (c) => setting(c.offsetSetting, f.offsetSetting)],
      ['binning', (c) => c.binningX === f.binningX && c.binningY === f.binningY],
      ['size', (c) => c.width === f.width && c.height === f.height],
    ];
    const tempCheck: [MatchCriterion, Check] = [
      'temperature',
      (c) => {
        const t = frameTemperature(c);
        return t === undefined || temp === undefined ? 'unchecked' : Math.abs(t - temp) <= lim.darkTemperatureToleranceCelsius;
      },
    ];

    // Biases.
    const b = evaluate(biases, sameCamera);
    const bias =
      b.passing.length > 0
        ? matchOf('bias', 'matched', 'bias-same-settings', ['gain', 'offset', 'binning', 'size'], b.passing, b.unchecked, biases.length, b.failed)
        : matchOf('bias', 'missing', 'none', ['gain', 'offset', 'binning', 'size'], [], new Set(), biases.length, b.failed);

    // Darks: equal exposure first, else scaled with a bias.
    const darkCriteria: MatchCriterion[] = ['exposure', 'temperature', 'gain', 'offset', 'binning', 'size'];
    const d = evaluate(darks, [
      ['exposure', (c) => relEqual(finite(c.exposureSeconds), exposure, lim.darkExposureTolerance)],
      tempCheck,
      ...sameCamera,
    ]);
    let dark: CalibrationMatch;
    if (d.passing.length > 0) {
      dark = matchOf('dark', 'matched', 'dark-equal-exposure', darkCriteria, d.passing, d.unchecked, darks.length, d.failed);
    } else {
      const s = evaluate(darks, [tempCheck, ...sameCamera]);
      const scalable = s.passing.filter((c) => finite(c.exposureSeconds) !== undefined);
      if (lim.allowScaledDarks && bias.status === 'matched' && scalable.length > 0 && exposure !== undefined) {
        // The nearest exposure (ties: the longer, whose scaled noise is lower).
        let best = scalable[0] as CalibrationFrameInfo;
        for (const c of scalable) {
          const dc = Math.abs((c.exposureSeconds as number) - exposure);
          const db = Math.abs((best.exposureSeconds as number) - exposure);
          if (dc < db || (dc === db && (c.exposureSeconds as number) > (best.exposureSeconds as number))) best = c;
        }
        const chosen = scalable.filter(
          (c) => relEqual(c.exposureSeconds, best.exposureSeconds, lim.darkExposureTolerance) === true,
        );
        dark = matchOf('dark', 'scaled', 'dark-scaled', ['temperature', 'gain', 'offset', 'binning', 'size'], chosen, s.unchecked, darks.length, d.failed);
      } else {
        dark = matchOf('dark', 'missing', 'none', darkCriteria, [], new Set(), darks.length, d.failed);
      }
    }

    // Flats.
    const flatCriteria: MatchCriterion[] = ['filter', 'binning', 'size'];
    const fl = evaluate(flats, [
      ['filter', (c) => (filterKey(c.filter) === '' || filterKey(f.filter) === '' ? (filterKey(c.filter) === filterKey(f.filter) ? true : 'unchecked') : filterKey(c.filter) === filterKey(f.filter))],
      ['binning', (c) => c.binningX === f.binningX && c.binningY === f.binningY],
      ['size', (c) => c.width === f.width && c.height === f.height],
    ]);
    const flat =
      fl.passing.length > 0
        ? matchOf('flat', 'matched', 'flat-same-filter', flatCriteria, fl.passing, fl.unchecked, flats.length, fl.failed)
        : matchOf('flat', 'missing', 'none', flatCriteria, [], new Set(), flats.length, fl.failed);

    // Flat-darks: the exposure of the matched flats and the flats' camera settings.
    const fdCriteria: MatchCriterion[] = ['flat-exposure', 'gain', 'offset', 'binning', 'size'];
    let flatDark: CalibrationMatch;
    if (fl.passing.length === 0) {
      flatDark = matchOf('flat-dark', 'not-applicable', 'not-applicable', fdCriteria, [], new Set(), flatDarks.length, {});
    } else {
      const flatExposures = fl.passing.map((c) => finite(c.exposureSeconds));
      const ref = fl.passing[0] as CalibrationFrameInfo;
      const fd = evaluate(flatDarks, [
        [
          'flat-exposure',
          (c) => {
            const e = finite(c.exposureSeconds);
            if (e === undefined || flatExposures.every((x) => x === undefined)) return 'unchecked';
            return flatExposures.some((x) => relEqual(e, x, lim.flatDarkExposureTolerance) === true);
          },
        ],
        ['gain', (c) => setting(c.gainSetting, ref.gainSetting)],
        ['offset', (c) => setting(c.offsetSetting, ref.offsetSetting)],
        ['binning', (c) => c.binningX === ref.binningX && c.binningY === ref.binningY],
        ['size', (c) => c.width === ref.width && c.height === ref.height],
      ]);
      flatDark =
        fd.passing.length > 0
          ? matchOf('flat-dark', 'matched', 'flat-dark-flat-exposure', fdCriteria, fd.passing, fd.unchecked, flatDarks.length, fd.failed)
          : matchOf('flat-dark', 'missing', 'none', fdCriteria, [], new Set(), flatDarks.length, fd.failed);
      for (const c of fd.passing) used.add(c);
    }
    for (const c of b.passing) used.add(c);
    for (const c of fl.passing) used.add(c);
    if (dark.status !== 'missing') for (const c of darks) if (dark.files.includes(c.file)) used.add(c);

    const missing = [bias, dark, flat, flatDark].filter((m) => m.status === 'missing').map((m) => m.kind);
    const flagged =
      (!noneGiven || lim.flagWithoutCalibrationFrames) &&
      ((lim.requireDarks && dark.status === 'missing') || (lim.requireFlats && flat.status === 'missing'));
    const levels = b.passing.map((c) => finite(c.medianAdu)).filter((v): v is number => v !== undefined);
    const filterSpellings = g.map((i) => (lights[i]?.filter ?? '').trim()).sort(compareText);
    return {
      index: gi + 1,
      filter: filterKey(f.filter) === '' ? null : (filterSpellings[0] as string),
      exposureSeconds: exposure ?? null,
      gainSetting: f.gainSetting ?? null,
      offsetSetting: f.offsetSetting ?? null,
      binning: binningText(f),
      size: sizeText(f),
      temperatureCelsius: temp ?? null,
      temperatureMinCelsius: temps.length > 0 ? Math.min(...temps) : null,
      temperatureMaxCelsius: temps.length > 0 ? Math.max(...temps) : null,
      lightCount: g.length,
      lightFiles: [...g].sort((x, y) => x - y).map((i) => (lights[i] as FrameMetrics).file),
      bias,
      dark,
      flat,
      flatDark,
      missing,
      flagged,
      biasLevelAdu: levels.length > 0 ? medianOf(levels) : null,
    };
  });

  const frameCounts: Record<CalibrationKind, number> = {
    bias: biases.length,
    dark: darks.length,
    flat: flats.length,
    'flat-dark': flatDarks.length,
  };
  const unusedFiles = calibration.filter((c) => !used.has(c)).map((c) => c.file).sort(compareText);
  return { groups, groupOfLight, summary: { frameCounts, unusedFiles } };
}
