import type { FrameObservationValues, SettingValue } from './types.js';

/** A finite number, or undefined. */
export function finite(v: number | null | undefined): number | undefined {
  return typeof v === 'number' && Number.isFinite(v) ? v : undefined;
}

/** Filter names compare trimmed and case-insensitively (REFERENCE A.9); no filter gives ''. */
export function filterKey(filter: string | undefined): string {
  return (filter ?? '').trim().toLowerCase();
}

/** Comparison key of a camera setting: numbers by value, text trimmed and case-insensitive; '' when missing. */
export function settingKey(v: SettingValue | undefined): string {
  if (v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? `n:${v}` : '';
  const t = v.trim();
  if (t === '') return '';
  const asNumber = Number(t);
  return Number.isFinite(asNumber) ? `n:${asNumber}` : `s:${t.toLowerCase()}`;
}

/** `'2x2'` from the binning factors. */
export function binningText(o: FrameObservationValues): string {
  return `${o.binningX}x${o.binningY}`;
}

/** `'6248x4176'` from width and height. */
export function sizeText(o: FrameObservationValues): string {
  return `${o.width}x${o.height}`;
}

/** Exposure as a key rounded to the millisecond, '' when missing. */
export function exposureKey(seconds: number | undefined): string {
  const s = finite(seconds);
  return s === undefined ? '' : (Math.round(s * 1000) / 1000).toString();
}

/** Measured sensor temperature, else the set point (for grouping and dark matching). */
export function frameTemperature(o: FrameObservationValues): number | undefined {
  return finite(o.sensorTemperatureCelsius) ?? finite(o.setTemperatureCelsius);
}

/** Total order on setting values used to break ties (numbers before text, then ascending). */
export function compareValues(a: number | string, b: number | string): number {
  if (typeof a === 'number' && typeof b === 'number') return a - b;
  if (typeof a === 'number') return -1;
  if (typeof b === 'number') return 1;
  return a < b ? -1 : a > b ? 1 : 0;
}

/** One distinct value of an attribute and how many frames have it. */
export interface ValueCount<T extends number | string> {
  value: T;
  frameCount: number;
}

/**
 * Distinct values by key with their counts, most common first; ties by {@link compareValues} on the value
 * shown (the smallest display value of each key), so the result does not depend on input order.
 */
export function distinctValues<T extends number | string>(
  items: readonly { key: string; value: T }[],
): ValueCount<T>[] {
  const byKey = new Map<string, ValueCount<T>>();
  for (const { key, value } of items) {
    const e = byKey.get(key);
    if (e === undefined) byKey.set(key, { value, frameCount: 1 });
    else {
      e.frameCount++;
      if (compareValues(value, e.value) < 0) e.value = value;
    }
  }
  return [...byKey.values()].sort((a, b) => b.frameCount - a.frameCount || compareValues(a.value, b.value));
}

/** Numeric comparison that treats undefined as the greatest (for sorting groups). */
export function compareOptional(a: number | undefined, b: number | undefined): number {
  if (a === undefined) return b === undefined ? 0 : 1;
  if (b === undefined) return -1;
  return a - b;
}

/** Text comparison for deterministic sorting (code-unit order, not locale). */
export function compareText(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/** Sort order of acquisition settings: filter, exposure, gain, offset, binning, size. */
export function compareAcquisition(a: FrameObservationValues, b: FrameObservationValues): number {
  return (
    compareText(filterKey(a.filter), filterKey(b.filter)) ||
    compareOptional(finite(a.exposureSeconds), finite(b.exposureSeconds)) ||
    compareText(settingKey(a.gainSetting), settingKey(b.gainSetting)) ||
    compareText(settingKey(a.offsetSetting), settingKey(b.offsetSetting)) ||
    compareOptional(a.binningX * 1000 + a.binningY, b.binningX * 1000 + b.binningY) ||
    compareOptional(a.width * 1e6 + a.height, b.width * 1e6 + b.height)
  );
}
