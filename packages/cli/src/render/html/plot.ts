/**
 * Small SVG plot renderer for the HTML report, run in Node: d3-scale for scales and ticks, d3-shape for paths.
 * Output is a string of SVG markup with every plotted number also written as a data attribute (`data-x`, `data-y`
 * on points, `data-points` on lines, `data-value` on rules), so tests can compare plots with the results they show.
 * Styling comes from the page's CSS classes (`c-<colour>` sets `color`; marks use currentColor).
 */
import { scaleLinear, scaleLog, scaleUtc } from 'd3-scale';
import {
  area,
  line,
  symbol,
  symbolCircle,
  symbolCross,
  symbolDiamond,
  symbolSquare,
  symbolStar,
  symbolTimes,
  symbolTriangle,
  symbolWye,
  type SymbolType,
} from 'd3-shape';
import { attrs, esc, numberAttr, slug } from './escape.js';
import { tickText } from './format.js';
import type { ColorName, MarkerShape } from './palette.js';

/** One axis. `log` drops values ≤ 0; `time` takes epoch milliseconds and labels UTC. */
export interface AxisSpec {
  label: string;
  scale?: 'linear' | 'log' | 'time';
  /** Fixed domain; otherwise from the data (linear axes are rounded with `nice`). */
  domain?: readonly [number, number];
  /** Include zero in a linear domain taken from the data. */
  includeZero?: boolean;
  /** Tick text (default: shortest exact text, UTC HH:MM for time). */
  tickFormat?: (value: number) => string;
}

/** Extra data attributes of a point or series (names without the `data-` prefix). */
export type DataAttributes = Readonly<Record<string, string | number | null | undefined>>;

export interface PlotPoint {
  x: number;
  y: number;
  /** Error bar: symmetric half-width, or explicit low and high ends. */
  yError?: number | readonly [number, number];
  /** Tooltip text (SVG `<title>`). */
  label?: string;
  data?: DataAttributes;
}

interface SeriesBase {
  name: string;
  color: ColorName;
  /** Shown in the legend (default true). */
  legend?: boolean;
  data?: DataAttributes;
}

export interface PointSeries extends SeriesBase {
  kind: 'points';
  marker: MarkerShape;
  /** Outline only (e.g. points left out of a fit). */
  hollow?: boolean;
  points: readonly PlotPoint[];
}

export interface LineSeries extends SeriesBase {
  kind: 'line';
  dash?: boolean;
  /** Draw markers at the vertices too (with each point's label and data). */
  marker?: MarkerShape;
  points: readonly { x: number; y: number; label?: string; data?: DataAttributes }[];
}

export interface BandSeries extends SeriesBase {
  kind: 'band';
  points: readonly { x: number; y0: number; y1: number }[];
}

/** A horizontal (`axis: 'y'`) or vertical (`axis: 'x'`) reference line at `value`. */
export interface RuleSeries extends SeriesBase {
  kind: 'rule';
  axis: 'x' | 'y';
  value: number;
  dash?: boolean;
  /** Text written beside the line in the plot. */
  label?: string;
  /** Where along the line the label sits: `end` (right end, or top for a vertical line; default) or `start`. */
  labelAt?: 'start' | 'end';
}

export type Series = PointSeries | LineSeries | BandSeries | RuleSeries;

export interface PlotSpec {
  /** Names the plot: `data-plot` attribute and id prefix (slugged). */
  id: string;
  /** Short title (SVG `<title>` and aria-label). */
  title: string;
  /** What the plot shows, for screen readers (SVG `<desc>`). */
  description: string;
  x: AxisSpec;
  y: AxisSpec;
  series: readonly Series[];
  width?: number;
  height?: number;
}

type Scale = ((v: number) => number) & {
  domain(): number[];
  ticks(count?: number): (number | Date)[];
};

const SYMBOLS: Record<MarkerShape, SymbolType> = {
  circle: symbolCircle,
  square: symbolSquare,
  triangle: symbolTriangle,
  diamond: symbolDiamond,
  cross: symbolCross,
  times: symbolTimes,
  star: symbolStar,
  wye: symbolWye,
};
/** Symbols drawn as strokes (no area to fill). */
const STROKE_MARKERS = new Set<MarkerShape>(['times']);
const MARKER_AREA = 44;
// Legend layout assumes ~7 user units per character (12-13 px sans-serif text, generous).
const CHAR_WIDTH = 7;
const LEGEND_ROW = 18;

/** SVG path of a marker centred on (0, 0). */
export function markerPath(shape: MarkerShape, size = MARKER_AREA): string {
  return symbol(SYMBOLS[shape], size)() ?? '';
}

function usable(v: number, log: boolean): boolean {
  return Number.isFinite(v) && (!log || v > 0);
}

function dataValues(spec: PlotSpec, axis: 'x' | 'y'): number[] {
  const log = spec[axis].scale === 'log';
  const out: number[] = [];
  const push = (v: number) => {
    if (usable(v, log)) out.push(v);
  };
  for (const s of spec.series) {
    if (s.kind === 'rule') {
      if (s.axis === axis) push(s.value);
    } else if (s.kind === 'band') {
      for (const p of s.points) {
        if (axis === 'x') push(p.x);
        else {
          push(p.y0);
          push(p.y1);
        }
      }
    } else {
      for (const p of s.points) {
        if (!usable(p.x, spec.x.scale === 'log') || !usable(p.y, spec.y.scale === 'log')) continue;
        push(axis === 'x' ? p.x : p.y);
        const e = axis === 'y' && s.kind === 'points' ? (p as PlotPoint).yError : undefined;
        if (e !== undefined) {
          const [lo, hi] = typeof e === 'number' ? [p.y - e, p.y + e] : e;
          push(lo);
          push(hi);
        }
      }
    }
  }
  return out;
}

function domainOf(spec: PlotSpec, axis: 'x' | 'y'): [number, number] {
  const a = spec[axis];
  if (a.domain) return [a.domain[0], a.domain[1]];
  const values = dataValues(spec, axis);
  if (a.includeZero && a.scale !== 'log') values.push(0);
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!(lo <= hi)) return a.scale === 'log' ? [1, 10] : a.scale === 'time' ? [0, 3.6e6] : [0, 1];
  if (a.scale === 'log') {
    if (hi / lo < 1.5) return [lo / 1.5, hi * 1.5];
    return [lo / 10 ** 0.05, hi * 10 ** 0.05];
  }
  if (lo === hi) {
    const d = a.scale === 'time' ? 60_000 : Math.abs(lo) * 0.1 || 1;
    return [lo - d, hi + d];
  }
  const pad = (hi - lo) * (a.scale === 'time' ? 0.03 : 0.05);
  if (a.scale === 'time') return [lo - pad, hi + pad];
  // A little room so markers do not sit on the frame; zero stays the edge when it was asked for.
  return [a.includeZero && lo === 0 ? 0 : lo - pad, a.includeZero && hi === 0 ? 0 : hi + pad];
}

function makeScale(a: AxisSpec, domain: [number, number], range: [number, number]): Scale {
  if (a.scale === 'log') {
    const s = scaleLog().domain(domain).range(range);
    return s as unknown as Scale;
  }
  if (a.scale === 'time') {
    const s = scaleUtc().domain([new Date(domain[0]), new Date(domain[1])]).range(range);
    const f = ((v: number) => s(new Date(v))) as Scale;
    f.domain = () => s.domain().map((d) => d.getTime());
    f.ticks = (n?: number) => s.ticks(n ?? 6);
    return f;
  }
  const s = scaleLinear().domain(domain).range(range);
  if (!a.domain) s.nice(6);
  return s as unknown as Scale;
}

interface Tick {
  value: number;
  text: string;
  major: boolean;
}

function ticksOf(a: AxisSpec, scale: Scale, count: number): Tick[] {
  const raw = scale.ticks(count).map((t) => (t instanceof Date ? t.getTime() : t));
  if (a.scale === 'time') {
    const fmt = a.tickFormat ?? ((v: number) => new Date(v).toISOString().slice(11, 16));
    return raw.map((v) => ({ value: v, text: fmt(v), major: true }));
  }
  const fmt = a.tickFormat ?? tickText;
  if (a.scale !== 'log') return raw.map((v) => ({ value: v, text: fmt(v), major: true }));
  const [d0, d1] = scale.domain() as [number, number];
  const decades = Math.log10(d1 / d0);
  const mantissas = decades <= 1 ? null : decades <= 2.5 ? [1, 2, 5] : [1];
  const step = decades > 8 ? 2 : 1;
  return raw.map((v) => {
    const e = Math.floor(Math.log10(v) + 1e-9);
    const m = Math.round(v / 10 ** e);
    const major = mantissas === null || (mantissas.includes(m) && (m !== 1 || e % step === 0));
    return { value: v, text: major ? fmt(v) : '', major };
  });
}

interface LegendItem {
  name: string;
  series: Series;
}

function legendItems(spec: PlotSpec): LegendItem[] {
  return spec.series.filter((s) => s.legend !== false && s.name !== '').map((s) => ({ name: s.name, series: s }));
}

/** Lay out legend items in rows within `width`; returns positions and the rows used. */
function layoutLegend(items: readonly LegendItem[], x0: number, width: number): { x: number; row: number }[] {
  const out: { x: number; row: number }[] = [];
  let x = x0;
  let row = 0;
  for (const it of items) {
    const w = 22 + it.name.length * CHAR_WIDTH + 16;
    if (x > x0 && x + w > x0 + width) {
      row++;
      x = x0;
    }
    out.push({ x, row });
    x += w;
  }
  return out;
}

function swatch(s: Series): string {
  if (s.kind === 'points') return markerMark(s.marker, 9, 0, s.hollow ?? false, {});
  if (s.kind === 'band') return '<rect class="band" x="0" y="-5" width="18" height="10"/>';
  if (s.kind === 'line') {
    const m = s.marker ? markerMark(s.marker, 9, 0, false, {}) : '';
    return `<path class="line${s.dash ? ' dash' : ''}" d="M0,0H18"/>${m}`;
  }
  return `<path class="rule${s.dash !== false ? ' dash' : ''}" d="M0,0H18"/>`;
}

function markerMark(shape: MarkerShape, px: number, py: number, hollow: boolean, data: DataAttributes, title?: string, outside = false): string {
  const cls = (STROKE_MARKERS.has(shape) ? 'pt stroke' : hollow ? 'pt hollow' : 'pt') + (outside ? ' outside' : '');
  const a = attrs({
    class: cls,
    d: markerPath(shape),
    transform: `translate(${r(px)},${r(py)})`,
    ...prefixed(data),
  });
  return title ? `<path${a}><title>${esc(title)}</title></path>` : `<path${a}/>`;
}

function prefixed(data: DataAttributes | undefined): Record<string, string | number | null | undefined> {
  const out: Record<string, string | number | null | undefined> = {};
  if (!data) return out;
  for (const [k, v] of Object.entries(data)) out[`data-${k}`] = v;
  return out;
}

/** Round a pixel coordinate to 0.01 to keep the markup short. */
function r(v: number): string {
  return String(Math.round(v * 100) / 100);
}

/**
 * Render a plot as an SVG string: axes with ticks and labels, grid, series (points with optional error bars,
 * lines, bands, reference lines) and a legend. Non-finite values (and values ≤ 0 on log axes) are left out and
 * counted in the series' `data-skipped` attribute.
 * @returns SVG markup with `role="img"`, `<title>`, `<desc>` and `data-plot="<id>"`
 */
export function renderPlot(spec: PlotSpec): string {
  const width = spec.width ?? 540;
  const height = spec.height ?? 320;
  const id = `plot-${slug(spec.id)}`;
  const items = legendItems(spec);
  const margin = { left: 72, right: 28, top: 12, bottom: 46 };
  const legendPos = layoutLegend(items, margin.left, width - margin.left - margin.right);
  const legendRows = items.length ? Math.max(...legendPos.map((p) => p.row)) + 1 : 0;
  margin.top += legendRows * LEGEND_ROW + (legendRows ? 6 : 0);
  const plotW = width - margin.left - margin.right;
  const plotH = height - margin.top - margin.bottom;
  const xDomain = domainOf(spec, 'x');
  const yDomain = domainOf(spec, 'y');
  const xs = makeScale(spec.x, xDomain, [margin.left, margin.left + plotW]);
  const ys = makeScale(spec.y, yDomain, [margin.top + plotH, margin.top]);
  const xLog = spec.x.scale === 'log';
  const yLog = spec.y.scale === 'log';
  const xTicks = ticksOf(spec.x, xs, Math.max(3, Math.round(plotW / 90)));
  const yTicks = ticksOf(spec.y, ys, Math.max(3, Math.round(plotH / 50)));
  const [xd0, xd1] = xs.domain() as [number, number];
  const [yd0, yd1] = ys.domain() as [number, number];
  const inX = (v: number) => v >= Math.min(xd0, xd1) && v <= Math.max(xd0, xd1);
  const inY = (v: number) => v >= Math.min(yd0, yd1) && v <= Math.max(yd0, yd1);

  const parts: string[] = [];
  parts.push(
    `<svg xmlns="http://www.w3.org/2000/svg"${attrs({
      class: 'plot',
      viewBox: `0 0 ${width} ${height}`,
      role: 'img',
      'aria-label': spec.title,
      'aria-describedby': `${id}-desc`,
      'data-plot': spec.id,
      'data-x-scale': spec.x.scale ?? 'linear',
      'data-y-scale': spec.y.scale ?? 'linear',
      'data-x-domain': `${numberAttr(xd0)},${numberAttr(xd1)}`,
      'data-y-domain': `${numberAttr(yd0)},${numberAttr(yd1)}`,
    })}>`,
    `<title>${esc(spec.title)}</title><desc id="${id}-desc">${esc(spec.description)}</desc>`,
    `<defs><clipPath id="${id}-clip"><rect x="${margin.left}" y="${margin.top}" width="${plotW}" height="${plotH}"/></clipPath></defs>`,
  );

  // Grid and axes.
  const grid: string[] = [];
  const axisX: string[] = [];
  const axisY: string[] = [];
  const bottom = margin.top + plotH;
  for (const t of xTicks) {
    const px = xs(t.value);
    if (!Number.isFinite(px)) continue;
    if (t.major) grid.push(`M${r(px)},${margin.top}V${bottom}`);
    axisX.push(
      `<path class="tick" d="M${r(px)},${bottom}v${t.major ? 5 : 3}"/>` +
        (t.text ? `<text x="${r(px)}" y="${bottom + 17}" text-anchor="middle">${esc(t.text)}</text>` : ''),
    );
  }
  for (const t of yTicks) {
    const py = ys(t.value);
    if (!Number.isFinite(py)) continue;
    if (t.major) grid.push(`M${margin.left},${r(py)}H${margin.left + plotW}`);
    axisY.push(
      `<path class="tick" d="M${margin.left},${r(py)}h-${t.major ? 5 : 3}"/>` +
        (t.text ? `<text x="${margin.left - 8}" y="${r(py)}" dy="0.32em" text-anchor="end">${esc(t.text)}</text>` : ''),
    );
  }
  parts.push(`<path class="grid" d="${grid.join('')}"/>`);
  parts.push(`<rect class="frame" x="${margin.left}" y="${margin.top}" width="${plotW}" height="${plotH}"/>`);
  parts.push(
    `<g class="axis x-axis">${axisX.join('')}<text class="axis-label" x="${margin.left + plotW / 2}" y="${height - 8}" text-anchor="middle">${esc(spec.x.label)}</text></g>`,
  );
  parts.push(
    `<g class="axis y-axis">${axisY.join('')}<text class="axis-label" transform="translate(14,${r(margin.top + plotH / 2)}) rotate(-90)" text-anchor="middle">${esc(spec.y.label)}</text></g>`,
  );

  // Series: bands first, then lines and rules, points on top.
  const order: Record<Series['kind'], number> = { band: 0, rule: 1, line: 2, points: 3 };
  const sorted = [...spec.series].sort((a, b) => order[a.kind] - order[b.kind]);
  const data: string[] = [];
  for (const s of sorted) data.push(renderSeries(s));
  parts.push(`<g class="data" clip-path="url(#${id}-clip)">${data.join('')}</g>`);

  // Rule labels sit outside the clip so they stay readable at the edge.
  for (const s of spec.series) {
    if (s.kind !== 'rule' || !s.label) continue;
    const atStart = s.labelAt === 'start';
    if (s.axis === 'y' && inY(s.value) && usable(s.value, yLog)) {
      const x = atStart ? margin.left + 4 : margin.left + plotW - 4;
      parts.push(
        `<text class="rule-label c-${s.color}" x="${x}" y="${r(ys(s.value) - 5)}" text-anchor="${atStart ? 'start' : 'end'}">${esc(s.label)}</text>`,
      );
    } else if (s.axis === 'x' && inX(s.value) && usable(s.value, xLog)) {
      const px = xs(s.value);
      const right = px > margin.left + plotW * 0.7;
      const y = atStart ? margin.top + plotH - 22 : margin.top + 14;
      parts.push(
        `<text class="rule-label c-${s.color}" x="${r(px + (right ? -5 : 5))}" y="${y}" text-anchor="${right ? 'end' : 'start'}">${esc(s.label)}</text>`,
      );
    }
  }

  // Legend.
  if (items.length) {
    const legend = items.map((it, i) => {
      const p = legendPos[i]!;
      const y = 12 + p.row * LEGEND_ROW;
      return `<g class="legend-item c-${it.series.color}" transform="translate(${r(p.x)},${y})">${swatch(it.series)}<text x="24" y="0" dy="0.32em">${esc(it.name)}</text></g>`;
    });
    parts.push(`<g class="legend">${legend.join('')}</g>`);
  }
  parts.push('</svg>');
  return parts.join('');

  function renderSeries(s: Series): string {
    let skipped = 0;
    const body: string[] = [];
    const extra: Record<string, string | number | null | undefined> = {};
    if (s.kind === 'points') {
      for (const p of s.points) {
        if (!usable(p.x, xLog) || !usable(p.y, yLog)) {
          skipped++;
          continue;
        }
        const px = xs(p.x);
        const py = ys(p.y);
        // Points beyond a fixed domain stay in the markup (with their data) but are not drawn (CSS `.outside`).
        const outside = !inX(p.x) || !inY(p.y);
        if (p.yError !== undefined) {
          const [lo, hi] = typeof p.yError === 'number' ? [p.y - p.yError, p.y + p.yError] : p.yError;
          const a = ys(usable(lo, yLog) ? lo : yd0);
          const b = ys(usable(hi, yLog) ? hi : yd1);
          body.push(
            `<path${attrs({ class: outside ? 'err outside' : 'err', d: `M${r(px)},${r(a)}V${r(b)}M${r(px - 3)},${r(a)}h6M${r(px - 3)},${r(b)}h6`, 'data-x': p.x, 'data-low': lo, 'data-high': hi })}/>`,
          );
        }
        body.push(markerMark(s.marker, px, py, s.hollow ?? false, { x: numberAttr(p.x), y: numberAttr(p.y), ...p.data }, p.label, outside));
      }
    } else if (s.kind === 'line') {
      const pts = s.points.filter((p) => usable(p.x, xLog) && usable(p.y, yLog));
      skipped = s.points.length - pts.length;
      const d = line<{ x: number; y: number }>()
        .x((p) => xs(p.x))
        .y((p) => ys(p.y))(pts);
      extra['data-points'] = pts.map((p) => `${numberAttr(p.x)},${numberAttr(p.y)}`).join(';');
      body.push(`<path${attrs({ class: `line${s.dash ? ' dash' : ''}`, d: d ?? '' })}/>`);
      if (s.marker) {
        for (const p of pts) body.push(markerMark(s.marker, xs(p.x), ys(p.y), false, { x: numberAttr(p.x), y: numberAttr(p.y), ...p.data }, p.label));
      }
    } else if (s.kind === 'band') {
      const pts = s.points.filter((p) => usable(p.x, xLog) && usable(p.y0, yLog) && usable(p.y1, yLog));
      skipped = s.points.length - pts.length;
      const d = area<{ x: number; y0: number; y1: number }>()
        .x((p) => xs(p.x))
        .y0((p) => ys(p.y0))
        .y1((p) => ys(p.y1))(pts);
      extra['data-points'] = pts.map((p) => `${numberAttr(p.x)},${numberAttr(p.y0)},${numberAttr(p.y1)}`).join(';');
      body.push(`<path${attrs({ class: 'band', d: d ?? '' })}/>`);
    } else {
      const ok = usable(s.value, s.axis === 'x' ? xLog : yLog);
      if (!ok) skipped = 1;
      else {
        const d = s.axis === 'y' ? `M${margin.left},${r(ys(s.value))}H${margin.left + plotW}` : `M${r(xs(s.value))},${margin.top}V${bottom}`;
        body.push(`<path${attrs({ class: `rule${s.dash !== false ? ' dash' : ''}`, d })}/>`);
      }
      extra['data-axis'] = s.axis;
      extra['data-value'] = numberAttr(s.value);
    }
    return `<g${attrs({
      class: `series c-${s.color}`,
      'data-series': s.name,
      'data-kind': s.kind,
      'data-skipped': skipped || undefined,
      ...extra,
      ...prefixed(s.data),
    })}>${body.join('')}</g>`;
  }
}
