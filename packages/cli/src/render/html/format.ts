/** Number wording for the report: significant figures, SI-free plain digits with thin grouping, units after a space. */

const SUPERSCRIPT: Record<string, string> = {
  '-': '\u207b',
  '0': '\u2070',
  '1': '\u00b9',
  '2': '\u00b2',
  '3': '\u00b3',
  '4': '\u2074',
  '5': '\u2075',
  '6': '\u2076',
  '7': '\u2077',
  '8': '\u2078',
  '9': '\u2079',
};

/** `10^n` written with superscript digits, e.g. 10⁴. */
export function powerOfTen(n: number): string {
  return `10${String(n)
    .split('')
    .map((c) => SUPERSCRIPT[c] ?? c)
    .join('')}`;
}

/** Group the integer part of a decimal string in threes with a thin space (SI brochure 5.4.4 style). */
function group(s: string): string {
  const m = /^(-?)(\d+)(.*)$/.exec(s);
  if (!m) return s;
  const [, sign, int, rest] = m;
  if (int!.length <= 4) return s;
  return `${sign}${int!.replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009')}${rest}`;
}

/**
 * A number with `digits` significant figures: plain decimals from 1e-3 to 1e7, else mantissa × 10ⁿ.
 * Missing or non-finite values give an en dash.
 */
export function num(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '\u2013';
  if (!Number.isFinite(value)) return value > 0 ? '\u221e' : '\u2212\u221e';
  if (value === 0) return '0';
  const a = Math.abs(value);
  // Counts and whole-number settings read best without decimals (2000 ADU, 120 s, 7 hot pixels).
  if (Number.isInteger(value) && a < 1e7) return minus(group(String(value)));
  if (a >= 1e7 || a < 1e-3) {
    const e = Math.floor(Math.log10(a));
    const m = value / 10 ** e;
    return `${minus(m.toPrecision(digits))}\u00d7${powerOfTen(e)}`;
  }
  const decimals = Math.max(0, digits - 1 - Math.floor(Math.log10(a)));
  return minus(group(value.toFixed(Math.min(decimals, 20))));
}

/** Fixed decimals (for percentages, temperatures). */
export function fixed(value: number | null | undefined, decimals: number): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return num(value);
  return minus(group(value.toFixed(decimals)));
}

/**
 * An axis tick: the shortest exact text (0.5, 2000, 20 000), powers of ten beyond 10⁵ or below 10⁻³ as 10ⁿ and
 * other large or small values as m×10ⁿ.
 */
export function tickText(value: number): string {
  if (!Number.isFinite(value)) return '';
  if (value === 0) return '0';
  const a = Math.abs(value);
  if (a >= 1e5 || a < 1e-3) {
    const e = Math.floor(Math.log10(a) + 1e-9);
    const m = Number((value / 10 ** e).toPrecision(6));
    return m === 1 ? powerOfTen(e) : `${minus(String(m))}\u00d7${powerOfTen(e)}`;
  }
  return minus(group(String(Number(value.toPrecision(10)))));
}

/** Typographic minus sign. */
function minus(s: string): string {
  return s.replace(/^-/, '\u2212');
}

/** `value unit` with a no-break space; the unit is left off for missing values. */
export function withUnit(text: string, unit: string): string {
  return text === '\u2013' || unit === '' ? text : `${text}\u00a0${unit}`;
}

/** `value ± uncertainty unit`, the uncertainty to two significant figures and the value to the same decimal place. */
export function plusMinus(value: number | null | undefined, uncertainty: number | null | undefined, unit: string): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return num(value);
  if (uncertainty === null || uncertainty === undefined || !Number.isFinite(uncertainty) || uncertainty <= 0) {
    return withUnit(num(value, 4), unit);
  }
  const place = Math.floor(Math.log10(uncertainty)) - 1;
  const decimals = Math.max(0, -place);
  const scale = 10 ** place;
  const v = decimals > 0 ? value.toFixed(decimals) : String(Math.round(value / scale) * scale);
  const u = decimals > 0 ? uncertainty.toFixed(decimals) : String(Math.round(uncertainty / scale) * scale);
  return withUnit(`${minus(group(v))}\u00a0\u00b1\u00a0${group(u)}`, unit);
}

/** Seconds as a duration: 45 s, 3.5 min, 2 h 05 min. */
export function duration(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return num(seconds);
  if (seconds < 120) return withUnit(num(seconds, 3), 's');
  if (seconds < 3600) return withUnit(num(seconds / 60, 3), 'min');
  const h = Math.floor(seconds / 3600);
  const m = Math.round((seconds - 3600 * h) / 60);
  return `${h}\u00a0h ${String(m).padStart(2, '0')}\u00a0min`;
}

/** Epoch milliseconds as UTC `YYYY-MM-DD HH:MM:SS`. */
export function utcTime(ms: number | null | undefined): string {
  if (ms === null || ms === undefined || !Number.isFinite(ms)) return '\u2013';
  return new Date(ms).toISOString().replace('T', ' ').replace(/\.\d+Z$/, '');
}

/** A kebab-case code in plain words: `soft-focus` → `soft focus`. */
export function codeWords(code: string): string {
  return code.replace(/-/g, ' ');
}
