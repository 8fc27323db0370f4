/** The audit section: verdicts, metrics over time, thumbnails and the background map of a `subgauge.audit/1` document. */
import type { AuditDocument, AuditFrameDocument, TrailDocument } from '../../schemas/results.js';
import { attrs, esc, numberAttr } from './escape.js';
import { codeWords, duration, fixed, num, utcTime } from './format.js';
import { VERDICT_STYLES, viridis } from './palette.js';
import { type Card, cardsHtml, figureHtml, notesHtml, sectionHtml, tableHtml } from './parts.js';
import { type AxisSpec, type Series, renderPlot } from './plot.js';
import { pngSize } from './thumbnail.js';

const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);
const VERDICTS = ['keep', 'review', 'reject'] as const;

/** A thumbnail the caller made (see `thumbnailPng`) for one frame, with trails to draw over it. */
export interface ReportThumbnail {
  file: string;
  /** PNG bytes. */
  png: Uint8Array;
  /** Size of the full frame (px) the trail coordinates refer to; default: the audit metrics, else the PNG size. */
  frameWidth?: number;
  frameHeight?: number;
  /** Trails in frame pixels (0-based x along NAXIS1, y along NAXIS2); default: the audit metrics' trails. */
  trails?: readonly Pick<TrailDocument, 'x0' | 'y0' | 'x1' | 'y1'>[];
  /** The PNG shows the first row at the bottom (FITS display convention; `thumbnailPng`'s default). Default true. */
  firstRowAtBottom?: boolean;
}

/** A background mesh (e.g. core's `BackgroundMesh`) of one frame to show as a map. */
export interface ReportBackgroundMap {
  file: string;
  columns: number;
  rows: number;
  /** Level per box (ADU), row-major, `rows × columns` values. */
  levelAdu: ArrayLike<number>;
  /** Frame size (px); default columns × rows. */
  width?: number;
  height?: number;
  /** Draw the first row at the bottom (default true, as the thumbnails). */
  firstRowAtBottom?: boolean;
}

export interface AuditSectionOptions {
  thumbnails?: readonly ReportThumbnail[];
  backgroundMap?: ReportBackgroundMap;
}

function timeAxis(frames: readonly AuditFrameDocument[]): { axis: AxisSpec; x: (f: AuditFrameDocument, i: number) => number; timed: boolean } {
  const readable = frames.filter((f) => f.metrics);
  const timed = readable.length > 0 && readable.every((f) => isNum(f.metrics?.startTimeMs));
  if (timed) return { axis: { label: 'start time (UTC)', scale: 'time' }, x: (f) => f.metrics!.startTimeMs!, timed };
  return { axis: { label: 'frame number' }, x: (_f, i) => i + 1, timed };
}

function metricFigure(
  doc: AuditDocument,
  id: string,
  title: string,
  yLabel: string,
  value: (f: AuditFrameDocument) => number | null | undefined,
  lead: string,
  caption: string,
): string {
  const { axis, x, timed } = timeAxis(doc.frames);
  const series: Series[] = VERDICTS.map((v) => {
    const style = VERDICT_STYLES[v];
    const points = doc.frames.flatMap((f, i) => {
      const y = value(f);
      if (f.verdict !== v || !isNum(y)) return [];
      const reasons = f.reasons.length ? ` (${f.reasons.map(codeWords).join(', ')})` : '';
      return [{ x: x(f, i), y, label: `${f.file}: ${v}${reasons}, ${num(y, 4)}`, data: { file: f.file, verdict: v } }];
    });
    return { kind: 'points' as const, name: `${v} (${points.length})`, color: style.color, marker: style.marker, points, data: { verdict: v } };
  }).filter((s) => s.points.length > 0);
  const svg = renderPlot({
    id,
    title,
    description: `${title} of every readable light frame against ${timed ? 'start time' : 'frame number'}; marker shape and colour give the verdict.`,
    x: axis,
    y: { label: yLabel, includeZero: id === 'audit-stars' || id === 'audit-weight' },
    series,
    height: 270,
  });
  return figureHtml(id, svg, lead, caption);
}

/** Words and units of the metrics named in reason details (field names of FrameMetrics and the audit). */
const METRIC_WORDS: Readonly<Record<string, [string, string]>> = {
  skyAdu: ['sky', 'ADU'],
  backgroundAdu: ['background', 'ADU'],
  noiseAdu: ['noise', 'ADU'],
  gradientPercent: ['gradient', '%'],
  starCount: ['stars', ''],
  fwhmPixels: ['FWHM', 'px'],
  fwhmArcsec: ['FWHM', '″'],
  elongation: ['elongation', ''],
  starSignalAdu: ['star signal', 'ADU'],
  trailCount: ['trails', ''],
  trailLengthPixels: ['trail length', 'px'],
  saturatedPixelFraction: ['saturated pixels', ''],
  saturatedStarFraction: ['saturated stars', ''],
  exposureSeconds: ['exposure', 's'],
  gainSetting: ['gain setting', ''],
  offsetSetting: ['offset setting', ''],
  sensorTemperatureCelsius: ['sensor', '°C'],
  binning: ['binning', ''],
  size: ['size', ''],
};

function detailText(d: NonNullable<AuditFrameDocument['details']>[number]): string {
  const [word, unit] = METRIC_WORDS[d.metric] ?? [d.metric, ''];
  const v = (x: unknown) => {
    const t = typeof x === 'number' ? num(x, 3) : x === null || x === undefined ? '\u2013' : String(x);
    return unit && typeof x === 'number' ? `${t}\u00a0${unit}` : t;
  };
  const parts = [`${word} ${v(d.value)}`];
  if (d.limit !== null && d.limit !== undefined) parts.push(`limit ${v(d.limit)}`);
  if (d.reference !== null && d.reference !== undefined) parts.push(`session ${v(d.reference)}`);
  return parts.join(', ');
}

function verdictHtml(v: AuditFrameDocument['verdict']): string {
  return `<span class="verdict ${v}">${VERDICT_STYLES[v].symbol} ${v}</span>`;
}

function clock(ms: number): string {
  return utcTime(ms).slice(11);
}

function frameTable(doc: AuditDocument): string {
  const days = new Set(doc.frames.flatMap((f) => (isNum(f.metrics?.startTimeMs) ? [utcTime(f.metrics.startTimeMs).slice(0, 10)] : [])));
  const oneDay = days.size <= 1;
  const rows = doc.frames.map((f) => {
    const m = f.metrics;
    const reasons = f.reasons.length
      ? esc(f.reasons.map(codeWords).join(', ')) + (f.details ?? []).map((d) => `<span class="detail">${esc(detailText(d))}</span>`).join('')
      : f.error
        ? esc(`${f.error.code}: ${f.error.message ?? ''}`)
        : '';
    const exposure = isNum(m?.exposureSeconds) ? `${num(m.exposureSeconds, 4)} s` : '';
    return [
      { html: esc(f.file) + (m?.object ? `<span class="detail">${esc(m.object)}</span>` : '') },
      isNum(m?.startTimeMs) ? (oneDay ? clock(m.startTimeMs) : utcTime(m.startTimeMs)) : '\u2013',
      [m?.filter ?? '', exposure].filter(Boolean).join(' \u00b7 ') || '\u2013',
      { html: verdictHtml(f.verdict) },
      { html: reasons },
      num(m?.backgroundAdu, 5),
      num(m?.noiseAdu, 3),
      num(m?.fwhmPixels, 3),
      num(m?.starCount, 4),
      num(f.weight, 3),
    ];
  });
  const day = oneDay && days.size === 1 ? ` (${[...days][0]})` : '';
  return tableHtml(
    'audit-frames',
    'Every light frame with its verdict and the facts behind each reason',
    [
      { header: 'file', className: 'file' },
      { header: `start, UTC${day}`, className: 'time' },
      { header: 'filter · exposure', className: 'time' },
      { header: 'verdict' },
      { header: 'reasons', className: 'reasons' },
      { header: 'background (ADU)', numeric: true },
      { header: 'noise (ADU)', numeric: true },
      { header: 'FWHM (px)', numeric: true },
      { header: 'stars', numeric: true },
      { header: 'weight', numeric: true },
    ],
    rows,
  );
}

function forecastTable(doc: AuditDocument): string {
  const list = doc.forecast ?? [];
  if (!list.length) return '';
  const rows = list.map((f) => [
    f.filter ?? '(no filter)',
    `${f.kept.frameCount} of ${f.all.frameCount}`,
    `${duration(f.kept.totalExposureSeconds)} of ${duration(f.all.totalExposureSeconds)}`,
    num(f.kept.kishEffectiveFrames, 3),
    num(f.kept.equivalentTypicalFrames, 3),
    num(f.keptVsAll?.weightedSnrRatio, 3),
  ]);
  return tableHtml(
    'audit-forecast',
    'Stack forecast per filter: what the kept frames give (weights relative to a typical frame; noise falls as 1/√N only for equal frames)',
    [
      { header: 'filter' },
      { header: 'frames kept', numeric: true },
      { header: 'exposure kept', numeric: true },
      { header: 'effective frames (Kish)', numeric: true },
      { header: 'typical-frame equivalents', numeric: true },
      { header: 'SNR kept / all', numeric: true },
    ],
    rows,
  );
}

function groupTable(doc: AuditDocument): string {
  const groups = doc.groups ?? [];
  if (!groups.length) return '';
  const status = (m: { status: string; files?: string[] | null | undefined } | null | undefined) =>
    m ? `${codeWords(m.status)}${m.files && m.files.length ? ` (${m.files.length})` : ''}` : '\u2013';
  const rows = groups.map((g) => [
    String(g.index ?? ''),
    g.filter ?? '(no filter)',
    num(g.exposureSeconds, 4),
    isNum(g.temperatureCelsius) ? fixed(g.temperatureCelsius, 1) : '\u2013',
    String(g.lightCount),
    status(g.bias),
    status(g.dark),
    status(g.flat),
    status(g.flatDark),
  ]);
  return tableHtml(
    'audit-calibration',
    'Light groups and the calibration frames that match them',
    [
      { header: 'group', numeric: true },
      { header: 'filter' },
      { header: 'exposure (s)', numeric: true },
      { header: 'temp (°C)', numeric: true },
      { header: 'lights', numeric: true },
      { header: 'bias' },
      { header: 'dark' },
      { header: 'flat' },
      { header: 'flat-dark' },
    ],
    rows,
  );
}

function thumbnailFigure(t: ReportThumbnail, frame: AuditFrameDocument | undefined): string {
  const size = pngSize(t.png);
  const w = t.frameWidth ?? (isNum(frame?.metrics?.width) ? frame.metrics.width : size?.width ?? 1);
  const h = t.frameHeight ?? (isNum(frame?.metrics?.height) ? frame.metrics.height : size?.height ?? 1);
  const bottom = t.firstRowAtBottom ?? true;
  const trails = t.trails ?? frame?.metrics?.trails ?? [];
  const stroke = Math.max(w, h) / 120;
  const lines = trails.map((tr) => {
    const y0 = bottom ? h - tr.y0 : tr.y0;
    const y1 = bottom ? h - tr.y1 : tr.y1;
    return `<line${attrs({ class: 'trail', x1: tr.x0, y1: y0, x2: tr.x1, y2: y1, 'stroke-width': Math.round(stroke * 100) / 100, 'stroke-dasharray': `${Math.round(stroke * 400) / 100} ${Math.round(stroke * 250) / 100}`, 'data-x0': tr.x0, 'data-y0': tr.y0, 'data-x1': tr.x1, 'data-y1': tr.y1 })}/>`;
  });
  const href = `data:image/png;base64,${Buffer.from(t.png).toString('base64')}`;
  const label = `Thumbnail of ${t.file}${trails.length ? ` with ${trails.length} detected trail${trails.length > 1 ? 's' : ''} outlined` : ''}`;
  const svg = `<svg xmlns="http://www.w3.org/2000/svg"${attrs({ viewBox: `0 0 ${w} ${h}`, role: 'img', 'aria-label': label, 'data-file': t.file })}><title>${esc(label)}</title><image${attrs({ href, x: 0, y: 0, width: w, height: h, preserveAspectRatio: 'none' })}/>${lines.join('')}</svg>`;
  const verdict = frame ? `${VERDICT_STYLES[frame.verdict].symbol} ${frame.verdict}` : '';
  const reasons = frame?.reasons.length ? `: ${frame.reasons.map(codeWords).join(', ')}` : '';
  return `<figure${attrs({ 'data-plot': 'audit-thumbnail', 'data-file': t.file })}>${svg}<figcaption><strong class="file">${esc(t.file)}</strong> ${frame ? `<span class="verdict ${frame.verdict}">${esc(verdict)}</span>` : ''}${esc(reasons)}</figcaption></figure>`;
}

function thumbnails(doc: AuditDocument, list: readonly ReportThumbnail[]): string {
  const byFile = new Map(doc.frames.map((f) => [f.file, f]));
  const rank = { reject: 0, review: 1, keep: 2 } as const;
  const shown = list
    .filter((t) => byFile.get(t.file)?.verdict !== 'keep')
    .sort((a, b) => rank[byFile.get(a.file)?.verdict ?? 'review'] - rank[byFile.get(b.file)?.verdict ?? 'review']);
  if (!shown.length) return '';
  return `<h3>Rejected and review frames</h3><p class="note">Stretched to show faint sky (asinh about the median); first row at the bottom; detected trails dashed in orange.</p><div class="thumbs">${shown
    .map((t) => thumbnailFigure(t, byFile.get(t.file)))
    .join('')}</div>`;
}

function backgroundMapFigure(map: ReportBackgroundMap): string {
  const { columns, rows } = map;
  if (!(columns > 0 && rows > 0) || map.levelAdu.length < columns * rows) return '';
  const w = map.width ?? columns;
  const h = map.height ?? rows;
  const values = Array.from({ length: columns * rows }, (_, i) => Number(map.levelAdu[i]));
  const finite = values.filter(Number.isFinite).sort((a, b) => a - b);
  if (!finite.length) return '';
  const lo = finite[0]!;
  const hi = finite[finite.length - 1]!;
  const median = finite[Math.floor(finite.length / 2)]!;
  const span = hi - lo || 1;
  const bottom = map.firstRowAtBottom ?? true;
  const cw = w / columns;
  const ch = h / rows;
  // Layout in SVG units: map area scaled to 600 wide, colour bar below it.
  const scale = 600 / w;
  const mapH = h * scale;
  const cells: string[] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      const v = values[r * columns + c]!;
      const y = bottom ? (rows - 1 - r) * ch : r * ch;
      cells.push(
        `<rect${attrs({ x: Math.round(c * cw * scale * 100) / 100, y: Math.round(y * scale * 100) / 100, width: Math.ceil(cw * scale * 100) / 100 + 0.3, height: Math.ceil(ch * scale * 100) / 100 + 0.3, fill: Number.isFinite(v) ? viridis((v - lo) / span) : '#808080', 'data-row': r, 'data-column': c, 'data-value': numberAttr(v) })}/>`,
      );
    }
  }
  const barY = mapH + 14;
  const stops = Array.from({ length: 11 }, (_, i) => `<stop offset="${i * 10}%" stop-color="${viridis(i / 10)}"/>`).join('');
  const total = barY + 44;
  const title = `Background map of ${map.file}`;
  const svg = `<svg xmlns="http://www.w3.org/2000/svg"${attrs({ class: 'bgmap-svg', viewBox: `0 0 600 ${Math.round(total)}`, role: 'img', 'aria-label': title, 'data-plot': 'audit-background-map', 'data-min': lo, 'data-max': hi })}><title>${esc(title)}</title><defs><linearGradient id="bgmap-ramp">${stops}</linearGradient></defs><g class="cells">${cells.join('')}</g><rect x="0" y="${r2(barY)}" width="600" height="12" fill="url(#bgmap-ramp)"/><text x="0" y="${r2(barY + 30)}">${esc(num(lo, 5))} ADU</text><text x="300" y="${r2(barY + 30)}" text-anchor="middle">median ${esc(num(median, 5))}</text><text x="600" y="${r2(barY + 30)}" text-anchor="end">${esc(num(hi, 5))} ADU</text></svg>`;
  const range = median !== 0 ? ` Range ${fixed((100 * (hi - lo)) / Math.abs(median), 2)} % of the median level.` : '';
  return `<h3>Background map</h3><figure class="bgmap"${attrs({ 'data-plot': 'audit-background-map', 'data-file': map.file })}>${svg}<figcaption><strong>${esc(map.file)}</strong> Background level per mesh box (${columns} × ${rows} boxes), viridis colour scale; first row at the bottom.${esc(range)}</figcaption></figure>`;
}

function r2(v: number): string {
  return String(Math.round(v * 100) / 100);
}

function cards(doc: AuditDocument): Card[] {
  const c = doc.counts;
  const out: Card[] = [
    { label: 'Frames', value: String(c.frames), data: c.frames },
    { label: `${VERDICT_STYLES.keep.symbol} Keep`, value: String(c.keep), data: c.keep },
    { label: `${VERDICT_STYLES.review.symbol} Review`, value: String(c.review), data: c.review },
    { label: `${VERDICT_STYLES.reject.symbol} Reject`, value: String(c.reject), data: c.reject },
  ];
  const g = doc.gaps;
  if (g && isNum(g.firstStartMs) && isNum(g.lastStartMs)) {
    out.push({ label: 'Session', value: duration((g.lastStartMs - g.firstStartMs) / 1000), sub: `from ${utcTime(g.firstStartMs)} UTC` });
  }
  if (g && isNum(g.cadenceSeconds)) out.push({ label: 'Cadence', value: duration(g.cadenceSeconds), sub: `${g.gaps?.length ?? 0} gap(s)` });
  const t = doc.consistency?.temperature;
  if (t && isNum(t.sensorMedianCelsius)) {
    out.push({ label: 'Sensor temperature', value: `${fixed(t.sensorMedianCelsius, 1)}\u00a0°C`, sub: isNum(t.sensorMinCelsius) && isNum(t.sensorMaxCelsius) ? `${fixed(t.sensorMinCelsius, 1)} to ${fixed(t.sensorMaxCelsius, 1)} °C` : '' });
  }
  return out;
}

function reasonChips(doc: AuditDocument): string {
  const by = Object.entries(doc.counts.byReason ?? {}).filter(([, n]) => n > 0);
  if (!by.length) return '';
  return `<ul class="chips" aria-label="frames per reason">${by.map(([r, n]) => `<li>${esc(codeWords(r))}: <strong>${n}</strong></li>`).join('')}</ul>`;
}

/** The audit section (`section-audit`) of one audit document. */
export function auditSection(doc: AuditDocument, opts: AuditSectionOptions = {}, id = 'section-audit'): string {
  const figures = [
    metricFigure(doc, 'audit-background', 'Sky background', 'background (ADU)', (f) => f.metrics?.backgroundAdu, 'Background.', 'Median level of the background mesh (offset included); cloud and twilight raise it.'),
    metricFigure(doc, 'audit-noise', 'Sky noise', 'noise (ADU)', (f) => f.metrics?.noiseAdu, 'Noise.', 'MAD-sigma of the background pixels.'),
    metricFigure(doc, 'audit-fwhm', 'Star FWHM', 'FWHM (px)', (f) => f.metrics?.fwhmPixels, 'Focus and seeing.', 'Median FWHM of isolated unsaturated stars; soft focus raises it.'),
    metricFigure(doc, 'audit-stars', 'Stars detected', 'stars', (f) => f.metrics?.starCount, 'Star count.', 'Cloud and haze lower it.'),
    metricFigure(doc, 'audit-weight', 'Stack weight', 'weight (typical frame = 1)', (f) => f.weight, 'Weight.', 'Each frame’s stack weight relative to the typical frame of its filter.'),
  ];
  const notes = (doc.notes ?? []).map(codeWords);
  const body = [
    cardsHtml(cards(doc)),
    reasonChips(doc),
    notesHtml(notes),
    `<div class="figures">${figures.join('')}</div>`,
    frameTable(doc),
    forecastTable(doc),
    groupTable(doc),
    thumbnails(doc, opts.thumbnails ?? []),
    opts.backgroundMap ? backgroundMapFigure(opts.backgroundMap) : '',
  ].join('');
  return sectionHtml(
    id,
    'Session audit',
    `<p class="note">Verdicts: ${VERDICT_STYLES.keep.symbol} keep, ${VERDICT_STYLES.review.symbol} review, ${VERDICT_STYLES.reject.symbol} reject. Frames are compared with the others of the same filter and exposure.</p>`,
    body,
  );
}
