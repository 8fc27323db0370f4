/**
 * CSV (RFC 4180 quoting) with spreadsheet-formula neutralisation: a cell starting with = + - @ (or tab/CR) that is
 * not a plain number gets a leading apostrophe, so header strings cannot run as formulas (OWASP CSV injection advice).
 */
export function csvCell(value: unknown): string {
  if (value === undefined || value === null) return '';
  let s = typeof value === 'number' ? (Number.isFinite(value) ? String(value) : '') : String(value);
  if (/^[=+\-@\t\r]/.test(s) && !/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s)) s = `'${s}`;
  if (/[",\n\r]/.test(s)) s = `"${s.replace(/"/g, '""')}"`;
  return s;
}

export function toCsv(header: readonly string[], rows: readonly (readonly unknown[])[]): string {
  return [header, ...rows].map((r) => r.map(csvCell).join(',')).join('\r\n') + '\r\n';
}
