import { InvalidInputError } from '../errors.js';
import type { CameraResult, CfaChannelName, ChannelMeasurement } from './types.js';

/** Per-channel values of a colour camera profile. */
export interface CameraProfileChannel {
  gainElectronsPerAdu: number;
  readNoiseElectrons: number;
  offsetAdu: number;
  fullWellElectrons: number | null;
}

/** What `sky` and `audit` read: a camera at one gain/offset/binning setting. */
export interface CameraProfile {
  schema: 'subgauge.camera-profile/1';
  gainElectronsPerAdu: number;
  readNoiseElectrons: number;
  offsetAdu: number;
  /** null when the saturation point was not seen. */
  fullWellElectrons: number | null;
  /** null when no darks were measured. */
  darkCurrentElectronsPerSecond: number | null;
  darkDoublingCelsius?: number;
  referenceTemperatureCelsius?: number;
  quantizationStepAdu: number;
  settings: { gain: number | string | null; offset: number | string | null; binning: { x: number; y: number } };
  channels?: Partial<Record<CfaChannelName, CameraProfileChannel>>;
}

/**
 * The profile of a characterization result. Full well is given only when the variance roll-off was seen.
 * @example JSON.stringify(cameraProfileFromResult(characterizeCamera(frames)))
 */
export function cameraProfileFromResult(result: CameraResult): CameraProfile {
  const profile: CameraProfile = {
    schema: 'subgauge.camera-profile/1',
    gainElectronsPerAdu: result.gainElectronsPerAdu,
    readNoiseElectrons: result.readNoiseElectrons,
    offsetAdu: result.offsetAdu,
    fullWellElectrons: result.fullWell.reached ? result.fullWellElectrons : null,
    darkCurrentElectronsPerSecond: result.darkCurrentElectronsPerSecond,
    quantizationStepAdu: result.quantization.stepAdu ?? 1,
    settings: { gain: result.settings.gain, offset: result.settings.offset, binning: { ...result.settings.binning } },
  };
  if (result.dark?.darkDoublingCelsius != null) profile.darkDoublingCelsius = result.dark.darkDoublingCelsius;
  if (result.dark?.referenceTemperatureCelsius != null) profile.referenceTemperatureCelsius = result.dark.referenceTemperatureCelsius;
  if (result.channels) {
    profile.channels = {};
    for (const [name, c] of Object.entries(result.channels) as [CfaChannelName, ChannelMeasurement][]) {
      profile.channels[name] = {
        gainElectronsPerAdu: c.gainElectronsPerAdu, readNoiseElectrons: c.readNoiseElectrons, offsetAdu: c.offsetAdu,
        fullWellElectrons: c.fullWell.reached ? c.fullWellElectrons : null,
      };
    }
  }
  return profile;
}

function fail(field: string, expected: string, found: unknown): never {
  const shown = JSON.stringify(found);
  throw new InvalidInputError('INPUT_BAD_PROFILE', `camera profile field ${field}: expected ${expected}; found ${shown === undefined ? 'nothing' : shown.slice(0, 60)}`, { keyword: field });
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function positive(o: Record<string, unknown>, field: string, path: string): number {
  const v = o[field];
  if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) fail(path + field, 'a positive number', v);
  return v;
}

function nonNegative(o: Record<string, unknown>, field: string, path: string): number {
  const v = o[field];
  if (typeof v !== 'number' || !Number.isFinite(v) || v < 0) fail(path + field, 'a number ≥ 0', v);
  return v;
}

function finite(o: Record<string, unknown>, field: string, path: string): number {
  const v = o[field];
  if (typeof v !== 'number' || !Number.isFinite(v)) fail(path + field, 'a finite number', v);
  return v;
}

function nullable(o: Record<string, unknown>, field: string, path: string, check: typeof positive): number | null {
  return o[field] === null ? null : check(o, field, path);
}

function settingValue(o: Record<string, unknown>, field: string): number | string | null {
  const v = o[field];
  if (v === undefined || v === null) return null;
  if ((typeof v === 'number' && Number.isFinite(v)) || typeof v === 'string') return v;
  return fail(`settings.${field}`, 'a number, a string or null', v);
}

/**
 * Validate a parsed camera-profile JSON document (plain checks; the CLI adds its own schema validation).
 * Unknown fields are ignored; the returned object holds only the known ones.
 * @throws InvalidInputError `INPUT_BAD_PROFILE` with `where.keyword` naming the first bad field.
 * @example parseCameraProfile(JSON.parse(text)).gainElectronsPerAdu
 */
export function parseCameraProfile(json: unknown): CameraProfile {
  if (!isRecord(json)) fail('(document)', 'an object', json);
  if (json.schema !== 'subgauge.camera-profile/1') fail('schema', "'subgauge.camera-profile/1'", json.schema);
  const s = json.settings;
  if (!isRecord(s)) fail('settings', 'an object', s);
  const b = s.binning;
  if (!isRecord(b)) fail('settings.binning', 'an object {x, y}', b);
  const binning = { x: positive(b, 'x', 'settings.binning.'), y: positive(b, 'y', 'settings.binning.') };
  if (!Number.isInteger(binning.x) || !Number.isInteger(binning.y)) fail('settings.binning', 'whole numbers', b);
  const profile: CameraProfile = {
    schema: 'subgauge.camera-profile/1',
    gainElectronsPerAdu: positive(json, 'gainElectronsPerAdu', ''),
    readNoiseElectrons: nonNegative(json, 'readNoiseElectrons', ''),
    offsetAdu: finite(json, 'offsetAdu', ''),
    fullWellElectrons: nullable(json, 'fullWellElectrons', '', positive),
    darkCurrentElectronsPerSecond: json.darkCurrentElectronsPerSecond === null ? null : finite(json, 'darkCurrentElectronsPerSecond', ''),
    quantizationStepAdu: positive(json, 'quantizationStepAdu', ''),
    settings: { gain: settingValue(s, 'gain'), offset: settingValue(s, 'offset'), binning },
  };
  if (json.darkDoublingCelsius !== undefined) profile.darkDoublingCelsius = finite(json, 'darkDoublingCelsius', '');
  if (json.referenceTemperatureCelsius !== undefined) profile.referenceTemperatureCelsius = finite(json, 'referenceTemperatureCelsius', '');
  if (json.channels !== undefined) {
    const c = json.channels;
    if (!isRecord(c)) fail('channels', 'an object keyed R, G1, G2, B', c);
    profile.channels = {};
    for (const [name, v] of Object.entries(c)) {
      if (!['R', 'G1', 'G2', 'B'].includes(name)) fail(`channels.${name}`, 'one of R, G1, G2, B', name);
      if (!isRecord(v)) fail(`channels.${name}`, 'an object', v);
      const path = `channels.${name}.`;
      profile.channels[name as CfaChannelName] = {
        gainElectronsPerAdu: positive(v, 'gainElectronsPerAdu', path),
        readNoiseElectrons: nonNegative(v, 'readNoiseElectrons', path),
        offsetAdu: finite(v, 'offsetAdu', path),
        fullWellElectrons: v.fullWellElectrons === undefined ? null : nullable(v, 'fullWellElectrons', path, positive),
      };
    }
  }
  return profile;
}
