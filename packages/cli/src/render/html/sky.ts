/** The sky section: read-noise penalty and sub lengths of a `subgauge.sky/1` document. */
import type { SkyDocument, SkySubDocument } from '../../schemas/results.js';
import { esc } from './escape.js';
import { codeWords, duration, fixed, num, utcTime } from './format.js';
import { categoryStyle } from './palette.js';
import { type Card, cardsHtml, figureHtml, sectionHtml, tableHtml } from './parts.js';
import { type AxisSpec, type Series, renderPlot } from './plot.js';

const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/** Subs grouped by filter, in the order of the filter summaries (then any others). */
function byFilter(doc: SkyDocument): [string, SkySubDocument[]][] {
  const order = [...doc.filters.map((f) => f.filter), ...doc.subs.map((s) => s.filter)];
  const names = [...new Set(order)];
  return names.map((f) => [f, doc.subs.filter((s) => s.filter === f)]);
}

/** Time axis when every sub has a start time, else the sub's position in the list. */
function xAxis(doc: SkyDocument): { axis: AxisSpec; x: (s: SkySubDocument) => number; timed: boolean } {
  const timed = doc.subs.length > 0 && doc.subs.every((s) => isNum(s.startTimeMs));
  if (timed) return { axis: { label: 'start time (UTC)', scale: 'time' }, x: (s) => s.startTimeMs!, timed };
  const index = new Map(doc.subs.map((s, i) => [s, i + 1]));
  return { axis: { label: 'sub number', includeZero: false }, x: (s) => index.get(s) ?? 0, timed };
}

function subLabel(s: SkySubDocument): string {
  return `${s.file}${s.channel ? ` (${s.channel})` : ''}: ${fixed(s.readNoisePenaltyPercent, 2)} % penalty, ${num(s.skyRateElectronsPerSecond, 3)} e⁻/px/s`;
}

function penaltyFigure(doc: SkyDocument): string {
  const id = 'sky-penalty';
  const { axis, x, timed } = xAxis(doc);
  const series: Series[] = byFilter(doc).map(([filter, subs], i) => {
    const style = categoryStyle(i);
    return {
      kind: 'points',
      name: filter,
      color: style.color,
      marker: style.marker,
      points: subs
        .filter((s) => isNum(s.readNoisePenaltyPercent))
        .map((s) => ({ x: x(s), y: s.readNoisePenaltyPercent!, label: subLabel(s), data: { file: s.file, status: s.status } })),
      data: { filter },
    };
  });
  series.push({
    kind: 'rule',
    axis: 'y',
    value: doc.maxPenaltyPercent,
    name: `limit ${fixed(doc.maxPenaltyPercent, 1)} %`,
    color: 'vermillion',
    label: `limit ${fixed(doc.maxPenaltyPercent, 1)} %`,
    data: { role: 'limit' },
  });
  const svg = renderPlot({
    id,
    title: 'Read-noise penalty of each sub',
    description: `Extra noise from read noise in each light sub, per cent, against ${timed ? 'start time' : 'sub number'}, per filter, with the chosen limit.`,
    x: axis,
    y: { label: 'read-noise penalty (%)', includeZero: true },
    series,
  });
  return figureHtml(
    id,
    svg,
    'Read-noise penalty.',
    `How much more noise each sub has than a sub with no read noise, √(1 + σ²read/(sky + dark)) − 1. Subs above the ${fixed(doc.maxPenaltyPercent, 1)} % line are read-noise limited.`,
  );
}

function skyRateFigure(doc: SkyDocument): string {
  const id = 'sky-rate';
  const { axis, x, timed } = xAxis(doc);
  const rates = doc.subs.map((s) => s.skyRateElectronsPerSecond).filter((v): v is number => isNum(v) && v > 0);
  const log = rates.length > 1 && Math.max(...rates) / Math.min(...rates) > 8;
  const series: Series[] = byFilter(doc).map(([filter, subs], i) => {
    const style = categoryStyle(i);
    const pts = subs.filter((s) => isNum(s.skyRateElectronsPerSecond)).map((s) => ({ x: x(s), y: s.skyRateElectronsPerSecond!, label: subLabel(s), data: { file: s.file } }));
    return { kind: 'line', name: filter, color: style.color, marker: style.marker, points: pts.sort((a, b) => a.x - b.x), data: { filter } };
  });
  const svg = renderPlot({
    id,
    title: 'Sky rate against time per filter',
    description: `Sky background rate in electrons per pixel per second of each sub against ${timed ? 'start time' : 'sub number'}, one line per filter.`,
    x: axis,
    y: { label: 'sky rate (e⁻/px/s)', ...(log ? { scale: 'log' as const } : { includeZero: true }) },
    series,
  });
  return figureHtml(id, svg, 'Sky brightness.', 'Sky signal (background minus offset and dark) per second of exposure; twilight, moonlight and cloud raise it.');
}

function totalSecondsOf(doc: SkyDocument): number | null {
  if (isNum(doc.totalSeconds)) return doc.totalSeconds;
  let best = 0;
  for (const f of doc.filters) for (const r of f.subLengthTable ?? []) if (isNum(r.subs)) best = Math.max(best, r.subs * r.subSeconds);
  return best > 0 ? best : null;
}

function snrFigure(doc: SkyDocument): string {
  const filters = doc.filters.filter((f) => f.subLengthTable && f.subLengthTable.length);
  if (!filters.length) return '';
  const id = 'sky-snr';
  const series: Series[] = [];
  filters.forEach((f, i) => {
    const style = categoryStyle(i);
    series.push({
      kind: 'line',
      name: f.filter,
      color: style.color,
      marker: style.marker,
      points: [...f.subLengthTable!].sort((a, b) => a.subSeconds - b.subSeconds).map((r) => ({ x: r.subSeconds, y: r.relativeSnr })),
      data: { filter: f.filter },
    });
    if (isNum(f.recommendedMinimumExposureSeconds) && f.recommendedMinimumExposureSeconds > 0) {
      series.push({
        kind: 'rule',
        axis: 'x',
        value: f.recommendedMinimumExposureSeconds,
        name: '',
        legend: false,
        color: style.color,
        label: filters.length <= 3 ? `${f.filter}: ${duration(f.recommendedMinimumExposureSeconds)}` : undefined,
        data: { role: 'recommended', filter: f.filter },
      });
    }
  });
  const total = totalSecondsOf(doc);
  const svg = renderPlot({
    id,
    title: 'Relative SNR against sub length',
    description: 'Signal-to-noise ratio of a faint target in a stack of the given total time, relative to the same time with no read noise, against the sub length, per filter.',
    x: { label: 'sub length (s)', scale: 'log' },
    y: { label: 'relative SNR (1 = no read noise)' },
    series,
  });
  return figureHtml(
    id,
    svg,
    'Sub length.',
    `For ${total !== null ? `a total of ${duration(total)}` : 'the chosen total time'}: SNR = √(b·t / (b·t + σ²read)) relative to a read-noise-free stack; dashed lines mark the shortest sub that meets the limit.`,
  );
}

function filterTable(doc: SkyDocument): string {
  const rows = doc.filters.map((f) => [
    f.filter + (f.limitingChannel ? ` (${f.limitingChannel})` : ''),
    `${f.skyLimitedSubs} of ${f.subs}`,
    num(f.medianSkyRateElectronsPerSecond, 3),
    num(f.recommendationRateElectronsPerSecond, 3),
    duration(f.medianExposureSeconds),
    { html: `<strong>${esc(duration(f.recommendedMinimumExposureSeconds))}</strong>` },
  ]);
  return tableHtml(
    'sky-filters',
    `Per filter: the shortest sub with at most ${fixed(doc.maxPenaltyPercent, 1)} % read-noise penalty under the measured sky`,
    [
      { header: 'filter' },
      { header: 'sky-limited subs', numeric: true },
      { header: 'median sky (e⁻/px/s)', numeric: true },
      { header: 'sky used (e⁻/px/s)', numeric: true },
      { header: 'median sub', numeric: true },
      { header: 'shortest sky-limited sub', numeric: true },
    ],
    rows,
  );
}

function subTable(doc: SkyDocument): string {
  const rows = doc.subs.map((s) => [
    { html: esc(s.file) },
    s.filter + (s.channel ? ` (${s.channel})` : ''),
    isNum(s.startTimeMs) ? utcTime(s.startTimeMs) : '\u2013',
    num(s.exposureSeconds, 4),
    num(s.skyElectrons, 4),
    num(s.skyRateElectronsPerSecond, 3),
    fixed(s.readNoisePenaltyPercent, 2),
    { html: `<span class="status-${esc(s.status)}">${esc(codeWords(s.status))}</span>` },
    duration(s.minimumExposureSeconds),
  ]);
  return tableHtml(
    'sky-subs',
    'Every light sub',
    [
      { header: 'file', className: 'file' },
      { header: 'filter' },
      { header: 'start (UTC)', className: 'time' },
      { header: 'exposure (s)', numeric: true },
      { header: 'sky (e⁻/px)', numeric: true },
      { header: 'sky rate (e⁻/px/s)', numeric: true },
      { header: 'penalty (%)', numeric: true },
      { header: 'status' },
      { header: 'shortest sub', numeric: true },
    ],
    rows,
  );
}

function cards(doc: SkyDocument): Card[] {
  const files = new Set(doc.subs.map((s) => s.file));
  const limited = new Set(doc.subs.filter((s) => s.status !== 'sky-limited').map((s) => s.file));
  const out: Card[] = [
    { label: 'Subs', value: String(files.size), sub: `${files.size - limited.size} sky-limited`, data: files.size },
    { label: 'Penalty limit', value: fixed(doc.maxPenaltyPercent, 1), unit: '%', data: doc.maxPenaltyPercent },
  ];
  const c = doc.camera;
  if (c) {
    if (isNum(c.readNoiseElectrons)) out.push({ label: 'Read noise used', value: num(c.readNoiseElectrons, 3), unit: 'e⁻', sub: c.source ? `from ${codeWords(c.source)}` : '' });
    if (isNum(c.gainElectronsPerAdu)) out.push({ label: 'Gain used', value: num(c.gainElectronsPerAdu, 4), unit: 'e⁻/ADU' });
  }
  return out;
}

/** The sky section (`section-sky`) of one sky document. */
export function skySection(doc: SkyDocument, id = 'section-sky'): string {
  const figures = [penaltyFigure(doc), skyRateFigure(doc), snrFigure(doc)].filter(Boolean);
  return sectionHtml(
    id,
    'Sky-limited check',
    '<p class="note">A sub is sky-limited when the sky (and dark) signal is large enough that read noise adds little: the penalty is the extra noise over a read-noise-free sub.</p>',
    [cardsHtml(cards(doc)), filterTable(doc), `<div class="figures">${figures.join('')}</div>`, subTable(doc)].join(''),
  );
}
