/** A FITS date value read as a time. */
export interface FitsDate {
  /** Modified Julian Date (days since 1858-11-17T00:00 in the same time scale). */
  mjd: number;
  /** Milliseconds since 1970-01-01T00:00 (the JavaScript epoch), fraction kept. */
  unixMs: number;
  /** True for the old 'DD/MM/YY' form, which means 1900-1999 (IAU FWG Y2K agreement). */
  legacy: boolean;
}

// 1970-01-01 is MJD 40587 (MJD = JD - 2400000.5).
const MJD_UNIX_EPOCH = 40587;
const ISO = /^(\d{4})-(\d{2})-(\d{2})(?:T(\d{2}):(\d{2}):(\d{2}(?:\.\d*)?))?Z?$/;
const LEGACY = /^(\d{2})\/(\d{2})\/(\d{2})$/;

function valid(y: number, mo: number, d: number, h: number, mi: number, s: number): boolean {
  if (mo < 1 || mo > 12 || d < 1 || h > 23 || mi > 59 || s >= 61) return false;
  const days = new Date(Date.UTC(y, mo, 0)).getUTCDate();
  return d <= days;
}

/**
 * Read a FITS date string: 'YYYY-MM-DD', 'YYYY-MM-DDThh:mm:ss[.sss...]' (FITS 3.0 §4.4.2.1) or the
 * old 'DD/MM/YY' (years 1900-1999, IAU FWG Y2K agreement). No time zone is applied: the result is in
 * the file's time scale (UTC unless a time-system keyword says otherwise).
 *
 * @param text - the keyword value (surrounding spaces ignored; a trailing 'Z' accepted).
 * @returns the date, or undefined when the text is not a valid FITS date.
 * @example readFitsDate('2024-03-01T21:05:33.123')?.mjd // 60370.87885559028
 */
export function readFitsDate(text: string): FitsDate | undefined {
  const t = text.trim();
  let y: number, mo: number, d: number;
  let h = 0, mi = 0, s = 0;
  let legacy = false;
  const iso = ISO.exec(t);
  if (iso) {
    y = Number(iso[1]);
    mo = Number(iso[2]);
    d = Number(iso[3]);
    if (iso[4] !== undefined) {
      h = Number(iso[4]);
      mi = Number(iso[5]);
      s = Number(iso[6]);
    }
  } else {
    const old = LEGACY.exec(t);
    if (!old) return undefined;
    d = Number(old[1]);
    mo = Number(old[2]);
    y = 1900 + Number(old[3]);
    legacy = true;
  }
  if (!valid(y, mo, d, h, mi, s)) return undefined;
  // Whole days and the time of day are added separately so the fraction keeps full precision.
  const dayMs = Date.UTC(y, mo - 1, d);
  const secondsOfDay = h * 3600 + mi * 60 + s;
  const mjd = dayMs / 86400000 + MJD_UNIX_EPOCH + secondsOfDay / 86400;
  return { mjd, unixMs: dayMs + secondsOfDay * 1000, legacy };
}
