/** Test-only: read the data attributes the report writes into its SVG plots (plain string parsing, no DOM). */

/** Attributes of one start tag, unescaped. */
export function attributesOf(tag: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const m of tag.matchAll(/([a-zA-Z_:][-a-zA-Z0-9_:.]*)="([^"]*)"/g)) out[m[1]!] = unescapeHtml(m[2]!);
  return out;
}

export function unescapeHtml(s: string): string {
  return s
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&quot;/g, '"')
    .replace(/&#39;/g, "'")
    .replace(/&amp;/g, '&');
}

/** The `<svg …>…</svg>` whose data-plot is `id` (first one). */
export function plotSvg(html: string, id: string): string {
  const start = html.indexOf(`<svg xmlns="http://www.w3.org/2000/svg" class="plot"`, 0);
  for (let i = start; i >= 0; i = html.indexOf('<svg', i + 1)) {
    const end = html.indexOf('</svg>', i);
    const open = html.slice(i, html.indexOf('>', i) + 1);
    if (attributesOf(open)['data-plot'] === id) return html.slice(i, end + 6);
  }
  throw new Error(`no plot ${id}`);
}

export interface SeriesData {
  attrs: Record<string, string>;
  /** Markers (path.pt) with their data attributes. */
  points: Record<string, string>[];
  /** Error bars (path.err). */
  errors: Record<string, string>[];
}

/** Every `<g class="series …">` of a plot. */
export function seriesOf(svg: string): SeriesData[] {
  const out: SeriesData[] = [];
  for (const m of svg.matchAll(/<g (class="series[^>]*)>(.*?)<\/g>/g)) {
    const body = m[2]!;
    const points = [...body.matchAll(/<path [^>]*class="pt[^"]*"[^>]*>/g)].map((p) => attributesOf(p[0]));
    const errors = [...body.matchAll(/<path [^>]*class="err[^"]*"[^>]*>/g)].map((p) => attributesOf(p[0]));
    out.push({ attrs: attributesOf(`<g ${m[1]!}>`), points, errors });
  }
  return out;
}

/** `x,y;x,y` → numbers. */
export function linePoints(attr: string | undefined): number[][] {
  if (!attr) return [];
  return attr.split(';').map((p) => p.split(',').map(Number));
}
