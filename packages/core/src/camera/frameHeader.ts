import type { Header } from '../fits/types.js';
import { frameKindFromText } from '../frame/observation.js';
import type { FrameKind } from '../frame/observation.js';

/** Keywords read for the frame kind, in order: REFERENCE A.9's four, then the ESO HIERARCH ones (that observatory's practice). */
export const CAMERA_KIND_KEYWORDS = ['IMAGETYP', 'OBSTYPE', 'FRAME', 'FRAMETYP', 'ESO DPR TYPE', 'ESO OBS TYPE'] as const;

/**
 * Kind from the header: the first keyword of CAMERA_KIND_KEYWORDS whose value maps to a known kind (values mapped by
 * the frame area's `frameKindFromText`, REFERENCE A.9), and the keyword used.
 * @example cameraFrameKind(header) // { kind: 'flat', keyword: 'IMAGETYP' }
 */
export function cameraFrameKind(header: Header): { kind: FrameKind; keyword: string | null } {
  for (const k of CAMERA_KIND_KEYWORDS) {
    const kind = frameKindFromText(header.string(k));
    if (kind !== 'unknown') return { kind, keyword: k };
  }
  return { kind: 'unknown', keyword: null };
}

/** The observation values that group frames, read from one header. */
export interface FrameSettings {
  exposureSeconds: number | null;
  /** GAIN as a setting (never assumed to be e⁻/ADU, REFERENCE A.9), number or text. */
  gainSetting: number | string | null;
  offsetSetting: number | string | null;
  binning: { x: number; y: number };
  temperatureCelsius: number | null;
  filter: string | null;
  /** CFA pattern (RGGB, GRBG, GBRG, BGGR) or null for monochrome data. */
  bayerPattern: string | null;
  bayerOffset: { x: number; y: number };
  rowOrder: string | null;
  /** DATE-OBS as milliseconds since 1970 (UTC assumed when no zone is given), else MJD-OBS; null when absent or unreadable. */
  timeMs: number | null;
}

function firstNumber(h: Header, keys: readonly string[]): number | null {
  for (const k of keys) {
    const v = h.number(k);
    if (v !== undefined) return v;
  }
  return null;
}

function setting(h: Header, key: string): number | string | null {
  const n = h.number(key);
  if (n !== undefined) return n;
  const s = h.string(key);
  return s !== undefined && s !== '' ? s : null;
}

/** Parse an ISO-8601 DATE-OBS (missing seconds fraction or zone allowed; zone-less means UTC). */
export function parseDateObs(value: string): number | null {
  const m = /^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2})(\.\d+)?)?)?(Z|[+-]\d{2}:?\d{2})?$/.exec(value.trim());
  if (!m) return null;
  const [, y, mo, d, hh, mi, ss, frac, zone] = m;
  let t = Date.UTC(Number(y), Number(mo) - 1, Number(d), Number(hh ?? 0), Number(mi ?? 0), Number(ss ?? 0));
  if (frac) t += Number(frac) * 1000;
  if (zone && zone !== 'Z') {
    const sign = zone[0] === '-' ? -1 : 1;
    const digits = zone.slice(1).replace(':', '');
    t -= sign * (Number(digits.slice(0, 2)) * 60 + Number(digits.slice(2, 4))) * 60000;
  }
  return Number.isFinite(t) ? t : null;
}

/** Read the grouping values of a frame (what `sortCameraFrames` groups by) (REFERENCE A.9 keyword table). */
export function cameraFrameSettings(h: Header): FrameSettings {
  let bx = firstNumber(h, ['XBINNING', 'ESO DET BINX']);
  let by = firstNumber(h, ['YBINNING', 'ESO DET BINY']);
  const ccdsum = h.string('CCDSUM');
  if ((bx === null || by === null) && ccdsum) {
    const parts = ccdsum.trim().split(/\s+/).map(Number);
    if (parts.length === 2 && parts.every((p) => Number.isInteger(p) && p > 0)) { bx ??= parts[0]!; by ??= parts[1]!; }
  }
  const pattern = (h.string('BAYERPAT') ?? h.string('COLORTYP'))?.trim().toUpperCase();
  const bayerPattern = pattern && /^[RGB]{4}$/.test(pattern) ? pattern : null;
  const dateObs = h.string('DATE-OBS');
  let timeMs = dateObs ? parseDateObs(dateObs) : null;
  if (timeMs === null) {
    const mjd = h.number('MJD-OBS');
    if (mjd !== undefined) timeMs = (mjd - 40587) * 86400000;
  }
  const filter = h.string('FILTER');
  return {
    exposureSeconds: firstNumber(h, ['EXPTIME', 'EXPOSURE', 'XPOSURE']),
    gainSetting: setting(h, 'GAIN'),
    offsetSetting: setting(h, 'OFFSET'),
    binning: { x: bx ?? 1, y: by ?? 1 },
    temperatureCelsius: firstNumber(h, ['CCD-TEMP', 'CCDTEMP', 'SET-TEMP']),
    filter: filter !== undefined && filter !== '' ? filter : null,
    bayerPattern,
    bayerOffset: { x: firstNumber(h, ['XBAYROFF']) ?? 0, y: firstNumber(h, ['YBAYROFF']) ?? 0 },
    rowOrder: h.string('ROWORDER')?.toUpperCase() ?? null,
    timeMs,
  };
}
