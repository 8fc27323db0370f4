/** Plain aligned text tables for people. Cells are strings; numbers are formatted by the caller. */
export interface Column {
  header: string;
  align?: 'left' | 'right';
}

/** Width of a string on a terminal, ignoring ANSI colour sequences. */
export function visibleWidth(s: string): number {
  // eslint-disable-next-line no-control-regex
  return s.replace(/\x1b\[[0-9;]*m/g, '').length;
}

function pad(s: string, width: number, align: 'left' | 'right'): string {
  const fill = ' '.repeat(Math.max(0, width - visibleWidth(s)));
  return align === 'right' ? fill + s : s + fill;
}

export function renderTable(columns: readonly Column[], rows: readonly (readonly string[])[], indent = ''): string {
  const widths = columns.map((c, i) => Math.max(visibleWidth(c.header), ...rows.map((r) => visibleWidth(r[i] ?? ''))));
  const line = (cells: readonly string[]) =>
    indent +
    columns
      .map((c, i) => pad(cells[i] ?? '', widths[i] ?? 0, c.align ?? 'left'))
      .join('  ')
      .trimEnd();
  const out = [line(columns.map((c) => c.header)), indent + widths.map((w) => '-'.repeat(w)).join('  ')];
  for (const r of rows) out.push(line(r));
  return out.join('\n') + '\n';
}

/** Format a number for people: fixed decimals, '-' for missing, thousands kept plain. */
export function fmt(value: number | undefined | null, decimals = 2): string {
  if (value === undefined || value === null || Number.isNaN(value)) return '-';
  if (!Number.isFinite(value)) return value > 0 ? 'inf' : '-inf';
  return value.toFixed(decimals);
}

/** Significant-figure formatting for values of unknown magnitude. */
export function fmtSig(value: number | undefined | null, digits = 4): string {
  if (value === undefined || value === null || Number.isNaN(value)) return '-';
  if (!Number.isFinite(value)) return value > 0 ? 'inf' : '-inf';
  if (value === 0) return '0';
  const abs = Math.abs(value);
  if (abs >= 1e7 || abs < 1e-3) return value.toExponential(digits - 1);
  if (Number.isInteger(value) && abs < 1e7) return String(value);
  return Number(value.toPrecision(digits)).toString();
}

export function fmtPercent(fraction: number | undefined | null, decimals = 2): string {
  if (fraction === undefined || fraction === null || !Number.isFinite(fraction)) return '-';
  return `${(fraction * 100).toFixed(decimals)} %`;
}
