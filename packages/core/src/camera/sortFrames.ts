import type { Header, ImageData } from '../fits/types.js';
import type { FrameKind } from '../frame/observation.js';
import { cameraFrameKind, cameraFrameSettings } from './frameHeader.js';
import type { FrameSettings } from './frameHeader.js';
import { globMatch } from './glob.js';

/** One input frame: the path as given, its header and its decoded image (plane 0 is used). */
export interface CameraFrame {
  file: string;
  header: Header;
  image: ImageData;
}

/** Kind by file glob, e.g. `{ bias: ['bias*\/*.fits'] }`; the first kind whose pattern matches wins. */
export type KindOverrides = Partial<Record<FrameKind, readonly string[]>>;

/** Stable reasons (kebab-case) for a frame left out of the measurement. */
export type LeftOutReason =
  | 'unknown-kind'
  | 'light-frame'
  | 'unpaired'
  | 'no-exposure'
  | 'other-setting'
  | 'saturated'
  | 'too-faint'
  | 'level-mismatch'
  | 'empty-image';

export interface LeftOutFrame {
  file: string;
  kind: FrameKind;
  reason: LeftOutReason;
  detail?: string;
}

/** A frame as sorted: kind, where it came from, and its grouping values. */
export interface SortedFrame {
  file: string;
  /** Position in the input list. */
  index: number;
  kind: FrameKind;
  kindSource: 'override' | 'header' | 'none';
  /** Header keyword that gave the kind (null for overrides and unknown kinds). */
  kindKeyword: string | null;
  settings: FrameSettings;
  width: number;
  height: number;
  /** Temperature rounded to the grouping step (null when absent). */
  temperatureGroupCelsius: number | null;
}

/** Frames that share kind, exposure, gain and offset setting, binning, rounded temperature, size and filter. */
export interface FrameGroup {
  key: string;
  kind: FrameKind;
  exposureSeconds: number | null;
  gainSetting: number | string | null;
  offsetSetting: number | string | null;
  binning: { x: number; y: number };
  temperatureCelsius: number | null;
  width: number;
  height: number;
  filter: string | null;
  /** Input indices in pairing order (time, else input order). */
  frames: number[];
  /** 'time' when every frame had a usable DATE-OBS/MJD-OBS, else 'input-order'. */
  orderedBy: 'time' | 'input-order';
}

/** Two consecutive frames of one group. */
export interface FramePair {
  groupKey: string;
  kind: FrameKind;
  a: number;
  b: number;
}

export interface SortedCameraFrames {
  frames: SortedFrame[];
  groups: FrameGroup[];
  pairs: FramePair[];
  leftOut: LeftOutFrame[];
}

export interface SortOptions {
  kindOverrides?: KindOverrides;
  /** Temperature grouping step in °C (default 1). */
  temperatureStepCelsius?: number;
}

const KIND_ORDER: readonly FrameKind[] = ['bias', 'dark', 'flat', 'flat-dark', 'light', 'unknown'];

function overrideKind(file: string, overrides: KindOverrides | undefined): FrameKind | null {
  if (!overrides) return null;
  for (const kind of KIND_ORDER) {
    const patterns = overrides[kind];
    if (patterns && patterns.some((p) => globMatch(file, p))) return kind;
  }
  return null;
}

function exposureKey(t: number | null): string {
  return t === null ? 'none' : Number(t.toPrecision(6)).toString();
}

/**
 * Sort frames for characterization: kind (override, else header), groups of equal settings, and pairs of
 * consecutive frames within each group (in DATE-OBS order when every frame has one, else input order).
 * Lights, unknown kinds, odd frames out and darks without exposure are reported in `leftOut`.
 * @example sortCameraFrames(frames, { kindOverrides: { bias: ['bias*\/*.fits'] } }).pairs
 */
export function sortCameraFrames(frames: readonly CameraFrame[], options: SortOptions = {}): SortedCameraFrames {
  const step = options.temperatureStepCelsius ?? 1;
  const sorted: SortedFrame[] = frames.map((f, index) => {
    const settings = cameraFrameSettings(f.header);
    const forced = overrideKind(f.file, options.kindOverrides);
    const fromHeader = forced ? null : cameraFrameKind(f.header);
    const t = settings.temperatureCelsius;
    return {
      file: f.file,
      index,
      kind: forced ?? fromHeader!.kind,
      kindSource: forced ? 'override' : fromHeader!.kind === 'unknown' ? 'none' : 'header',
      kindKeyword: fromHeader?.keyword ?? null,
      settings,
      width: f.image.width,
      height: f.image.height,
      temperatureGroupCelsius: t === null ? null : Math.round(t / step) * step + 0,
    };
  });
  const leftOut: LeftOutFrame[] = [];
  const byKey = new Map<string, FrameGroup>();
  for (const f of sorted) {
    if (f.width < 1 || f.height < 1) { leftOut.push({ file: f.file, kind: f.kind, reason: 'empty-image' }); continue; }
    if (f.kind === 'unknown') { leftOut.push({ file: f.file, kind: f.kind, reason: 'unknown-kind' }); continue; }
    if (f.kind === 'light') { leftOut.push({ file: f.file, kind: f.kind, reason: 'light-frame' }); continue; }
    const s = f.settings;
    if (f.kind === 'dark' && !(s.exposureSeconds !== null && s.exposureSeconds > 0)) {
      leftOut.push({ file: f.file, kind: f.kind, reason: 'no-exposure' });
      continue;
    }
    const filter = s.filter === null ? null : s.filter.trim().toLowerCase();
    const key = JSON.stringify([f.kind, exposureKey(s.exposureSeconds), s.gainSetting, s.offsetSetting, s.binning.x,
      s.binning.y, f.temperatureGroupCelsius, f.width, f.height, filter]);
    let g = byKey.get(key);
    if (!g) {
      g = {
        key, kind: f.kind, exposureSeconds: s.exposureSeconds, gainSetting: s.gainSetting, offsetSetting: s.offsetSetting,
        binning: s.binning, temperatureCelsius: f.temperatureGroupCelsius, width: f.width, height: f.height, filter,
        frames: [], orderedBy: 'time',
      };
      byKey.set(key, g);
    }
    g.frames.push(f.index);
  }
  const pairs: FramePair[] = [];
  for (const g of byKey.values()) {
    const timed = g.frames.every((i) => sorted[i]!.settings.timeMs !== null);
    g.orderedBy = timed ? 'time' : 'input-order';
    if (timed) g.frames.sort((i, j) => sorted[i]!.settings.timeMs! - sorted[j]!.settings.timeMs! || i - j);
    for (let k = 0; k + 1 < g.frames.length; k += 2) pairs.push({ groupKey: g.key, kind: g.kind, a: g.frames[k]!, b: g.frames[k + 1]! });
    if (g.frames.length % 2 === 1) {
      const last = sorted[g.frames[g.frames.length - 1]!]!;
      leftOut.push({ file: last.file, kind: last.kind, reason: 'unpaired' });
    }
  }
  return { frames: sorted, groups: [...byKey.values()], pairs, leftOut };
}
