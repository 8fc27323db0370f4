import { readFitsDate } from '../fits/dates.js';
import type { Header } from '../fits/types.js';

/** Frame kinds (DESIGN section 2 vocabulary). */
export type FrameKind = 'bias' | 'dark' | 'flat' | 'flat-dark' | 'light' | 'unknown';

export const FRAME_KINDS: readonly FrameKind[] = ['bias', 'dark', 'flat', 'flat-dark', 'light', 'unknown'];

/** Keywords that name the frame kind, in the order they are consulted (REFERENCE A.9, common practice). */
export const FRAME_KIND_KEYWORDS = ['IMAGETYP', 'OBSTYPE', 'FRAMETYP', 'FRAME'] as const;

/**
 * Map a frame-type string to a kind, case-insensitively, after stripping a trailing " frame" / " field".
 * Spellings follow REFERENCE.md A.9 (common practice; no single authority defines them).
 */
export function frameKindFromText(text: string | undefined): FrameKind {
  if (text === undefined) return 'unknown';
  const t = text
    .trim()
    .toLowerCase()
    .replace(/[_-]+/g, ' ')
    .replace(/\s+/g, ' ')
    .replace(/ (frame|field|image)$/, '')
    .trim();
  switch (t) {
    case 'light':
    case 'object':
    case 'science':
    case 'sky':
    case 'target':
      return 'light';
    case 'bias':
    case 'zero':
    case 'offset':
      return 'bias';
    case 'dark':
    case 'thermal':
      return 'dark';
    case 'flat':
    case 'flatfield':
    case 'flat field':
    case 'sky flat':
    case 'skyflat':
    case 'dome flat':
    case 'domeflat':
    case 'twilight flat':
    case 'lamp flat':
    case 'panel flat':
      return 'flat';
    case 'dark flat':
    case 'darkflat':
    case 'flat dark':
    case 'flatdark':
      return 'flat-dark';
    default:
      return 'unknown';
  }
}

/** The frame kind a header declares, from the first frame-type keyword present. */
export function frameKindOf(header: Header): FrameKind {
  for (const k of FRAME_KIND_KEYWORDS) {
    const v = header.string(k);
    if (v !== undefined) return frameKindFromText(v);
  }
  return 'unknown';
}

/** Observation values a measurement or audit needs, normalised from the usual keywords (REFERENCE A.9). */
export interface Observation {
  frameKind: FrameKind;
  /** EXPTIME, else EXPOSURE, else XPOSURE. */
  exposureSeconds: number | undefined;
  /** DATE-OBS as written (start of exposure by the Y2K agreement suggestion). */
  dateObs: string | undefined;
  /** DATE-OBS as milliseconds since 1970 UTC, when it parses as ISO-8601. */
  startTimeMs: number | undefined;
  filter: string | undefined;
  sensorTemperatureCelsius: number | undefined;
  setTemperatureCelsius: number | undefined;
  /** GAIN as a camera setting: never assumed to be e-/ADU (REFERENCE A.9). */
  gainSetting: number | string | undefined;
  /** EGAIN: e-/ADU as claimed by the writer; unverified. */
  claimedGainElectronsPerAdu: number | undefined;
  offsetSetting: number | string | undefined;
  binningX: number;
  binningY: number;
  pixelSizeMicrons: number | undefined;
  focalLengthMm: number | undefined;
  object: string | undefined;
  instrument: string | undefined;
  telescope: string | undefined;
  bayerPattern: string | undefined;
}

function settingOf(header: Header, keyword: string): number | string | undefined {
  const v = header.get(keyword);
  if (typeof v === 'number') return v;
  if (typeof v === 'bigint') return Number(v);
  if (typeof v === 'string') {
    const t = v.trim();
    return t === '' ? undefined : t;
  }
  return undefined;
}

/**
 * DATE-OBS as epoch milliseconds for time ordering: ISO-8601 dates only (FITS 3.0 §4.4.2.1, read by
 * `readFitsDate`); the old `DD/MM/YY` form gives no time of day and returns undefined.
 */
export function parseFitsDate(text: string | undefined): number | undefined {
  if (!text) return undefined;
  const d = readFitsDate(text);
  return d && !d.legacy ? d.unixMs : undefined;
}

/** Read the observation values of one HDU's header. */
export function observationOf(header: Header): Observation {
  const dateObs = header.string('DATE-OBS');
  const binX = header.number('XBINNING');
  const binY = header.number('YBINNING');
  let binningX = binX ?? 1;
  let binningY = binY ?? binX ?? 1;
  const ccdsum = header.string('CCDSUM');
  if (binX === undefined && ccdsum) {
    const m = /^\s*(\d+)\s+(\d+)\s*$/.exec(ccdsum);
    if (m) {
      binningX = Number(m[1]);
      binningY = Number(m[2]);
    }
  }
  return {
    frameKind: frameKindOf(header),
    exposureSeconds: header.number('EXPTIME') ?? header.number('EXPOSURE') ?? header.number('XPOSURE'),
    dateObs,
    startTimeMs: parseFitsDate(dateObs),
    filter: header.string('FILTER') || undefined,
    sensorTemperatureCelsius: header.number('CCD-TEMP') ?? header.number('CCDTEMP') ?? header.number('SENSTEMP'),
    setTemperatureCelsius: header.number('SET-TEMP') ?? header.number('SETTEMP'),
    gainSetting: settingOf(header, 'GAIN'),
    claimedGainElectronsPerAdu: header.number('EGAIN'),
    offsetSetting: settingOf(header, 'OFFSET') ?? settingOf(header, 'BLKLEVEL') ?? settingOf(header, 'PEDESTAL'),
    binningX,
    binningY,
    pixelSizeMicrons: header.number('XPIXSZ') ?? header.number('PIXSIZE1'),
    focalLengthMm: header.number('FOCALLEN'),
    object: header.string('OBJECT') || undefined,
    instrument: header.string('INSTRUME') || undefined,
    telescope: header.string('TELESCOP') || undefined,
    bayerPattern: (header.string('BAYERPAT') ?? header.string('COLORTYP'))?.toUpperCase() || undefined,
  };
}
