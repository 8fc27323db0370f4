/**
 * HTML escaping for every string that reaches the report. Header values, file names and reason codes come from
 * files the user hands in, so they are treated as untrusted text (OWASP XSS prevention cheat sheet, rule 1: escape
 * & < > " ' in element content and quoted attribute values).
 */
const ENTITIES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/** Escape text for element content or a double-quoted attribute value. Non-strings are converted first. */
export function esc(value: unknown): string {
  const s = value === undefined || value === null ? '' : String(value);
  // Control characters other than tab/newline have no place in a report and some break XML parsers of the SVG.
  // eslint-disable-next-line no-control-regex
  return s.replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/g, '\ufffd').replace(/[&<>"']/g, (c) => ENTITIES[c]!);
}

/** `name="value"` pairs for an element, escaped; undefined and null values are left out. */
export function attrs(values: Readonly<Record<string, string | number | boolean | null | undefined>>): string {
  let out = '';
  for (const [name, v] of Object.entries(values)) {
    if (v === undefined || v === null || v === false) continue;
    if (!/^[a-zA-Z_:][-a-zA-Z0-9_:.]*$/.test(name)) throw new Error(`attrs: bad attribute name ${JSON.stringify(name)}`);
    out += v === true ? ` ${name}` : ` ${name}="${esc(typeof v === 'number' ? numberAttr(v) : v)}"`;
  }
  return out;
}

/** A number as an attribute value: full precision (so tests can compare), non-finite as the empty string. */
export function numberAttr(v: number): string {
  return Number.isFinite(v) ? String(v) : '';
}

/** A slug safe for ids: lower case letters, digits and hyphens. */
export function slug(text: string): string {
  return (
    text
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, '-')
      .replace(/^-+|-+$/g, '') || 'x'
  );
}
