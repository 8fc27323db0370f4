/** The camera section: photon-transfer results of a `subgauge.camera/1` document. */
import type { CameraChannelDocument, CameraDocument, CurvePointDocument } from '../../schemas/results.js';
import { esc } from './escape.js';
import { codeWords, fixed, num, plusMinus, withUnit } from './format.js';
import { CHANNEL_STYLES, categoryStyle } from './palette.js';
import { type Card, cardsHtml, figureHtml, notesHtml, sectionHtml, tableHtml } from './parts.js';
import { type PlotPoint, type Series, renderPlot } from './plot.js';

type Measurement = CameraDocument | CameraChannelDocument;

const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/** n values spaced evenly in log between a and b (both > 0). */
function logSpaced(a: number, b: number, n: number): number[] {
  const la = Math.log(a);
  const lb = Math.log(b);
  return Array.from({ length: n }, (_, i) => Math.exp(la + ((lb - la) * i) / (n - 1)));
}

function electronsText(e: number | null | undefined): string {
  if (!isNum(e)) return '\u2013';
  return e >= 1e4 ? withUnit(num(e / 1000, 3), 'ke\u207b') : withUnit(num(e, 3), 'e\u207b');
}

/** Read noise in ADU: the bias measurement's, else the top-level field. */
function readNoiseAduOf(m: Measurement): number | null {
  if (isNum(m.bias?.readNoiseAdu)) return m.bias.readNoiseAdu;
  return isNum(m.readNoiseAdu) ? m.readNoiseAdu : null;
}

/** Fit curve σ(S) = √(a + K·S) of the photon-transfer fit, sampled on log-spaced signals (REFERENCE B.5). */
function fitCurve(m: Measurement, sMin: number, sMax: number): { x: number; y: number }[] {
  const fit = m.fit;
  if (!fit || !(sMin > 0) || !(sMax > sMin)) return [];
  return logSpaced(sMin, sMax, 64)
    .map((s) => ({ x: s, y: Math.sqrt(fit.interceptAdu2 + fit.slopeAduPerElectron * s) }))
    .filter((p) => Number.isFinite(p.y) && p.y > 0);
}

function signalRange(curve: readonly CurvePointDocument[]): [number, number] | null {
  const s = curve.map((p) => p.signalAdu).filter((v) => v > 0);
  if (!s.length) return null;
  return [Math.min(...s), Math.max(...s)];
}

function ptcSeries(m: Measurement, prefix: string): Series[] {
  const curve = m.curve;
  const point = (p: CurvePointDocument): PlotPoint => ({
    x: p.signalAdu,
    y: Math.sqrt(p.varianceAdu2),
    label: `${num(p.signalAdu, 4)} ADU: σ ${num(Math.sqrt(p.varianceAdu2), 4)} ADU${p.inFit ? '' : ` (left out: ${codeWords(p.excludedBecause ?? 'not fitted')})`}`,
    data: { variance: p.varianceAdu2, 'in-fit': p.inFit ? 1 : 0 },
  });
  const inFit = curve.filter((p) => p.inFit);
  const saturated = curve.filter((p) => !p.inFit && (p.saturated || p.excludedBecause === 'saturated'));
  const other = curve.filter((p) => !p.inFit && !(p.saturated || p.excludedBecause === 'saturated'));
  const series: Series[] = [
    { kind: 'points', name: `${prefix}in fit (${inFit.length})`, color: 'blue', marker: 'circle', points: inFit.map(point), data: { role: 'in-fit' } },
  ];
  if (other.length) {
    series.push({ kind: 'points', name: `left out (${other.length})`, color: 'orange', marker: 'square', hollow: true, points: other.map(point), data: { role: 'left-out' } });
  }
  if (saturated.length) {
    series.push({ kind: 'points', name: `saturated (${saturated.length})`, color: 'vermillion', marker: 'times', points: saturated.map(point), data: { role: 'saturated' } });
  }
  const range = signalRange(curve);
  const fitPts = range ? fitCurve(m, range[0], range[1]) : [];
  if (m.fit && fitPts.length >= 2) {
    const first = fitPts[0]!;
    const last = fitPts[fitPts.length - 1]!;
    series.push({
      kind: 'line',
      name: `fit, g = ${num(m.fit.gainElectronsPerAdu, 4)} e\u207b/ADU`,
      color: 'ink',
      points: fitPts,
      data: {
        role: 'fit',
        slope: m.fit.slopeAduPerElectron,
        intercept: m.fit.interceptAdu2,
        gain: m.fit.gainElectronsPerAdu,
        x0: first.x,
        y0: first.y,
        x1: last.x,
        y1: last.y,
      },
    });
  }
  const rnAdu = readNoiseAduOf(m);
  if (rnAdu !== null && rnAdu > 0) {
    series.push({
      kind: 'rule',
      axis: 'y',
      value: rnAdu,
      name: 'read-noise floor',
      color: 'bluishGreen',
      label: `read noise ${num(rnAdu, 3)} ADU (${num(m.readNoiseElectrons, 3)} e\u207b)`,
      labelAt: 'start',
      data: { role: 'read-noise' },
    });
  }
  const fw = m.fullWell;
  if (fw && isNum(fw.saturationSignalAdu) && fw.saturationSignalAdu > 0) {
    series.push({
      kind: 'rule',
      axis: 'x',
      value: fw.saturationSignalAdu,
      name: fw.reached ? 'full well' : 'brightest level (full well not reached)',
      color: 'reddishPurple',
      label: fw.reached ? `full well ${electronsText(fw.fullWellElectrons)}` : `\u2265 ${electronsText(fw.fullWellElectrons)}`,
      labelAt: 'start',
      data: { role: 'full-well', electrons: fw.fullWellElectrons ?? null },
    });
  }
  return series;
}

function ptcFigure(m: Measurement): string {
  const id = 'camera-ptc';
  const svg = renderPlot({
    id,
    title: 'Photon transfer curve: temporal noise against signal',
    description:
      'Log-log plot of the temporal noise of each flat pair against its bias-subtracted signal, with the photon-transfer fit, the read-noise floor and the full-well point.',
    x: { label: 'signal S (ADU, bias subtracted)', scale: 'log' },
    y: { label: 'temporal noise σ (ADU)', scale: 'log' },
    series: ptcSeries(m, ''),
  });
  const fit = m.fit;
  const caption = fit
    ? `Noise σ = √(Var(A−B)/2) of each flat pair. The fit of variance against signal uses ${num(fit.pointsUsed, 3)} pairs${
        fit.window && isNum(fit.window.minimumSignalAdu) && isNum(fit.window.maximumSignalAdu)
          ? ` from ${num(fit.window.minimumSignalAdu, 3)} to ${num(fit.window.maximumSignalAdu, 3)} ADU`
          : ''
      } (reduced χ² ${num(fit.reducedChiSquare, 3)}); shot noise follows slope ½ above the read-noise floor.`
    : 'Noise σ = √(Var(A−B)/2) of each flat pair; no photon-transfer fit was possible.';
  return figureHtml(id, svg, 'Photon transfer.', caption);
}

function gainFigure(m: Measurement): string {
  const id = 'camera-gain';
  const pts = m.curve.filter((p) => isNum(p.gainElectronsPerAdu) && p.signalAdu > 0);
  const point = (p: CurvePointDocument): PlotPoint => ({
    x: p.signalAdu,
    y: p.gainElectronsPerAdu!,
    ...(isNum(p.gainUncertaintyElectronsPerAdu) ? { yError: p.gainUncertaintyElectronsPerAdu } : {}),
    label: `${num(p.signalAdu, 4)} ADU: ${plusMinus(p.gainElectronsPerAdu, p.gainUncertaintyElectronsPerAdu, 'e\u207b/ADU')}`,
    data: isNum(p.gainUncertaintyElectronsPerAdu) ? { uncertainty: p.gainUncertaintyElectronsPerAdu } : {},
  });
  const series: Series[] = [];
  const range = signalRange(m.curve);
  const g = m.fit?.gainElectronsPerAdu ?? m.gainElectronsPerAdu;
  const u = m.fit?.gainUncertaintyElectronsPerAdu ?? m.gainUncertaintyElectronsPerAdu;
  if (isNum(g) && range) {
    if (isNum(u)) {
      series.push({
        kind: 'band',
        name: `fit gain ± 1σ (${plusMinus(g, u, 'e\u207b/ADU')})`,
        color: 'blue',
        points: [
          { x: range[0], y0: g - u, y1: g + u },
          { x: range[1], y0: g - u, y1: g + u },
        ],
        data: { role: 'gain-band', gain: g, uncertainty: u },
      });
    }
    series.push({ kind: 'rule', axis: 'y', value: g, name: 'fit gain', legend: false, color: 'blue', dash: false, data: { role: 'gain' } });
  }
  series.push({ kind: 'points', name: 'per level, in fit', color: 'ink', marker: 'circle', points: pts.filter((p) => p.inFit).map(point) });
  const out = pts.filter((p) => !p.inFit);
  if (out.length) series.push({ kind: 'points', name: 'per level, left out', color: 'orange', marker: 'square', hollow: true, points: out.map(point) });
  // The axis spans the fitted gain ± 30 % (and the in-fit points' error bars): saturated pairs give wild
  // per-level gains that would flatten the rest; they stay in the markup (clipped) with their values.
  let yDomain: [number, number] | undefined;
  if (isNum(g) && g > 0) {
    let lo = g * 0.7;
    let hi = g * 1.3;
    for (const p of pts) {
      if (!p.inFit) continue;
      const e = isNum(p.gainUncertaintyElectronsPerAdu) ? p.gainUncertaintyElectronsPerAdu : 0;
      lo = Math.min(lo, p.gainElectronsPerAdu! - e);
      hi = Math.max(hi, p.gainElectronsPerAdu! + e);
    }
    yDomain = [lo, hi];
  }
  const hidden = yDomain ? pts.filter((p) => p.gainElectronsPerAdu! < yDomain![0] || p.gainElectronsPerAdu! > yDomain![1]).length : 0;
  const svg = renderPlot({
    id,
    title: 'Gain at each signal level',
    description: 'Two-flat, two-bias gain of each flat pair against its signal, with error bars, and the fitted gain with its uncertainty band.',
    x: { label: 'signal S (ADU, bias subtracted)', scale: 'log' },
    y: { label: 'gain (e\u207b/ADU)', ...(yDomain ? { domain: yDomain } : {}) },
    series,
  });
  const spread = (m as { gainCrossChecks?: { perLevel?: { spreadElectronsPerAdu?: number } } }).gainCrossChecks?.perLevel;
  return figureHtml(
    id,
    svg,
    'Gain per level.',
    `Each pair gives g = S/(σ² − σ²read) (Howell 2006, §4.3) with its standard error; a flat run means a linear sensor.${
      spread && isNum(spread.spreadElectronsPerAdu) ? ` Spread of the per-level gains: ${num(spread.spreadElectronsPerAdu, 2)} e\u207b/ADU.` : ''
    }${hidden ? ` ${hidden} pair${hidden > 1 ? 's' : ''} outside the axis range (near saturation) not drawn.` : ''}`,
  );
}

function linearityFigure(m: Measurement): string {
  const lin = m.linearity;
  if (!lin || !lin.points.length) return '';
  const id = 'camera-linearity';
  const svg = renderPlot({
    id,
    title: 'Linearity residuals',
    description: 'Deviation of each flat level from the straight line of signal against exposure time, in per cent, against the signal.',
    x: { label: 'signal S (ADU, bias subtracted)', includeZero: true },
    y: { label: 'deviation from line (%)', includeZero: true },
    series: [
      { kind: 'rule', axis: 'y', value: 0, name: 'zero', legend: false, color: 'grey', dash: false },
      {
        kind: 'line',
        name: 'deviation',
        color: 'blue',
        marker: 'circle',
        points: [...lin.points].sort((a, b) => a.signalAdu - b.signalAdu).map((p) => ({ x: p.signalAdu, y: p.deviationPercent })),
      },
    ],
  });
  return figureHtml(
    id,
    svg,
    'Linearity.',
    `Residuals of signal against exposure time from the fitted line; linearity error ${withUnit(fixed(lin.linearityErrorPercent, 2), '%')} (half the peak-to-peak deviation, EMVA 1288 style).`,
  );
}

function darkFigure(m: Measurement, gain: number | null): string {
  const dark = m.dark;
  if (!dark || !dark.temperatures.length || !dark.temperatures.some((t) => t.levels.length)) return '';
  const id = 'camera-dark';
  const series: Series[] = [];
  dark.temperatures.forEach((t, i) => {
    const style = categoryStyle(i);
    const tName = isNum(t.temperatureCelsius) ? `${fixed(t.temperatureCelsius, 1)} °C` : 'no temperature';
    const pts = t.levels.map((l) => ({ x: l.exposureSeconds, y: l.levelAdu }));
    series.push({
      kind: 'points',
      name: `${tName}: ${num(t.darkCurrentElectronsPerSecond, 3)} e\u207b/px/s`,
      color: style.color,
      marker: style.marker,
      points: pts.map((p) => ({ ...p, label: `${tName}, ${num(p.x, 4)} s: ${num(p.y, 4)} ADU` })),
      data: { temperature: t.temperatureCelsius ?? null },
    });
    // The line has the reported slope (D / g ADU per second); through zero for a fit through the bias, else through
    // the points' centroid (the least-squares intercept for that slope).
    if (isNum(t.darkCurrentElectronsPerSecond) && gain !== null && gain > 0 && pts.length) {
      const slope = t.darkCurrentElectronsPerSecond / gain;
      const meanT = pts.reduce((a, p) => a + p.x, 0) / pts.length;
      const meanL = pts.reduce((a, p) => a + p.y, 0) / pts.length;
      const intercept = t.method === 'through-bias' ? 0 : meanL - slope * meanT;
      const tMax = Math.max(...pts.map((p) => p.x));
      series.push({
        kind: 'line',
        name: '',
        legend: false,
        color: style.color,
        dash: true,
        points: [
          { x: 0, y: intercept },
          { x: tMax, y: intercept + slope * tMax },
        ],
        data: { role: 'dark-fit', 'slope-adu-per-second': slope, temperature: t.temperatureCelsius ?? null },
      });
    }
  });
  const svg = renderPlot({
    id,
    title: 'Dark level against exposure time',
    description: 'Bias-subtracted dark level of each dark pair against exposure time, one series per sensor temperature, with the fitted dark-current lines.',
    x: { label: 'exposure time (s)', includeZero: true },
    y: { label: 'dark level (ADU, bias subtracted)', includeZero: true },
    series,
  });
  const doubling = isNum(dark.darkDoublingCelsius) ? ` Dark current doubles every ${fixed(dark.darkDoublingCelsius, 1)} °C.` : '';
  return figureHtml(
    id,
    svg,
    'Dark current.',
    `Clipped mean of the central region; the slope times the gain is the dark current (e\u207b per pixel per second).${doubling}`,
  );
}

function channelFigure(doc: CameraDocument): string {
  const channels = doc.channels ? Object.entries(doc.channels) : [];
  if (!channels.length) return '';
  const id = 'camera-channels';
  const series: Series[] = [];
  channels.forEach(([name, ch], i) => {
    const style = CHANNEL_STYLES[name] ?? categoryStyle(i);
    series.push({
      kind: 'points',
      name: `${name}: g ${num(ch.gainElectronsPerAdu, 3)}`,
      color: style.color,
      marker: style.marker,
      points: ch.curve.map((p) => ({ x: p.signalAdu, y: Math.sqrt(p.varianceAdu2), data: { variance: p.varianceAdu2, 'in-fit': p.inFit ? 1 : 0 } })),
      data: { channel: name },
    });
    const range = signalRange(ch.curve);
    const fit = range ? fitCurve(ch, range[0], range[1]) : [];
    if (fit.length >= 2 && ch.fit) {
      series.push({
        kind: 'line',
        name: '',
        legend: false,
        color: style.color,
        points: fit,
        data: { role: 'fit', channel: name, slope: ch.fit.slopeAduPerElectron, intercept: ch.fit.interceptAdu2 },
      });
    }
  });
  const svg = renderPlot({
    id,
    title: 'Photon transfer per colour channel',
    description: 'Log-log photon transfer curves of each colour-filter-array channel with their fits.',
    x: { label: 'signal S (ADU, bias subtracted)', scale: 'log' },
    y: { label: 'temporal noise σ (ADU)', scale: 'log' },
    series,
  });
  return figureHtml(id, svg, 'Colour channels.', `Each CFA channel (${esc(doc.cfa?.pattern ?? 'pattern not recorded')}) measured on its own pixels; gains in e\u207b/ADU.`);
}

function headlineCards(doc: CameraDocument): Card[] {
  const cards: Card[] = [
    {
      label: 'Gain',
      value: plusMinus(doc.gainElectronsPerAdu, doc.gainUncertaintyElectronsPerAdu, ''),
      unit: 'e\u207b/ADU',
      sub: 'photon-transfer fit',
      data: doc.gainElectronsPerAdu,
    },
    {
      label: 'Read noise',
      value: plusMinus(doc.readNoiseElectrons, doc.bias?.readNoiseUncertaintyElectrons, ''),
      unit: 'e\u207b',
      sub: isNum(readNoiseAduOf(doc)) ? `${num(readNoiseAduOf(doc), 3)} ADU, from bias pairs` : 'from bias pairs',
      data: doc.readNoiseElectrons,
    },
    {
      label: 'Full well',
      value: (doc.fullWell && !doc.fullWell.reached ? '\u2265 ' : '') + num(doc.fullWellElectrons, 4),
      unit: 'e\u207b',
      sub: doc.fullWellLimitedBy ? `limited by the ${doc.fullWellLimitedBy === 'adc' ? 'ADC range' : 'pixel'}` : doc.fullWell && !doc.fullWell.reached ? 'saturation not reached' : '',
      data: doc.fullWellElectrons,
    },
  ];
  if (isNum(doc.offsetAdu)) cards.push({ label: 'Offset', value: num(doc.offsetAdu, 5), unit: 'ADU', sub: 'bias median', data: doc.offsetAdu });
  if (doc.darkCurrentElectronsPerSecond !== undefined) {
    const t = doc.dark?.referenceTemperatureCelsius;
    cards.push({
      label: 'Dark current',
      value: num(doc.darkCurrentElectronsPerSecond, 3),
      unit: 'e\u207b/px/s',
      sub: isNum(t) ? `at ${fixed(t, 1)} °C` : '',
      data: doc.darkCurrentElectronsPerSecond ?? null,
    });
  }
  if (isNum(doc.linearityErrorPercent)) cards.push({ label: 'Linearity error', value: fixed(doc.linearityErrorPercent, 2), unit: '%', data: doc.linearityErrorPercent });
  if (isNum(doc.prnuPercent)) cards.push({ label: 'PRNU', value: fixed(doc.prnuPercent, 2), unit: '%', data: doc.prnuPercent });
  if (isNum(doc.dsnuElectrons)) cards.push({ label: 'DSNU', value: num(doc.dsnuElectrons, 3), unit: 'e\u207b', data: doc.dsnuElectrons });
  if (isNum(doc.hotPixelCount)) {
    const f = doc.dark?.hotPixels?.fraction;
    cards.push({ label: 'Hot pixels', value: num(doc.hotPixelCount, 4), sub: isNum(f) ? `${fixed(100 * f, 3)} % of pixels` : '', data: doc.hotPixelCount });
  }
  if (isNum(doc.gainElectronsPerAdu) && isNum(doc.readNoiseElectrons) && isNum(doc.fullWellElectrons) && doc.readNoiseElectrons > 0) {
    const dr = doc.fullWellElectrons / doc.readNoiseElectrons;
    cards.push({ label: 'Dynamic range', value: fixed(20 * Math.log10(dr), 1), unit: 'dB', sub: `full well / read noise = ${num(dr, 3)}` });
  }
  return cards;
}

function settingsLine(doc: CameraDocument): string {
  const s = doc.settings;
  const parts: string[] = [];
  if (s) {
    if (s.gain !== undefined && s.gain !== null) parts.push(`gain setting ${s.gain}`);
    if (s.offset !== undefined && s.offset !== null) parts.push(`offset setting ${s.offset}`);
    if (s.binning) parts.push(`binning ${s.binning.x}×${s.binning.y}`);
    if (isNum(s.width) && isNum(s.height)) parts.push(`${s.width} × ${s.height} px`);
  }
  if (doc.cfa) parts.push(`colour sensor (${doc.cfa.pattern})`);
  const used = doc.frames?.used?.length;
  if (used !== undefined) parts.push(`${used} frames used`);
  return parts.length ? `<p class="meta">${esc(parts.join(' · '))}</p>` : '';
}

function channelTable(doc: CameraDocument): string {
  if (!doc.channels) return '';
  const rows = Object.entries(doc.channels).map(([name, ch]) => [
    name,
    plusMinus(ch.gainElectronsPerAdu, ch.gainUncertaintyElectronsPerAdu, ''),
    num(ch.readNoiseElectrons, 3),
    electronsText(ch.fullWellElectrons),
    num(ch.darkCurrentElectronsPerSecond, 3),
    fixed(ch.linearityErrorPercent, 2),
  ]);
  return tableHtml(
    'camera-channels',
    'Per-channel results',
    [
      { header: 'channel' },
      { header: 'gain (e⁻/ADU)', numeric: true },
      { header: 'read noise (e⁻)', numeric: true },
      { header: 'full well', numeric: true },
      { header: 'dark (e⁻/px/s)', numeric: true },
      { header: 'linearity error (%)', numeric: true },
    ],
    rows,
  );
}

function curveTable(doc: CameraDocument): string {
  if (!doc.curve.length) return '';
  const rows = doc.curve.map((p) => [
    { html: p.files?.length ? esc(p.files.join(' + ')) : '\u2013' },
    num(p.exposureSeconds, 4),
    num(p.signalAdu, 5),
    num(Math.sqrt(p.varianceAdu2), 4),
    plusMinus(p.gainElectronsPerAdu, p.gainUncertaintyElectronsPerAdu, ''),
    p.inFit ? 'in fit' : codeWords(p.excludedBecause ?? 'left out'),
  ]);
  return `<details><summary>Flat pairs on the curve (${doc.curve.length})</summary>${tableHtml(
    'camera-curve',
    'Flat pairs: signal, temporal noise and gain',
    [
      { header: 'files', className: 'file' },
      { header: 'exposure (s)', numeric: true },
      { header: 'signal (ADU)', numeric: true },
      { header: 'σ (ADU)', numeric: true },
      { header: 'gain (e⁻/ADU)', numeric: true },
      { header: 'use' },
    ],
    rows,
  )}</details>`;
}

function leftOutNotes(doc: CameraDocument): string {
  const left = doc.frames?.leftOut ?? [];
  const diags = doc.diagnostics ?? [];
  const notes = [
    ...left.map((f) => `${f.file}: left out (${codeWords(f.reason ?? 'no reason given')}${typeof f.detail === 'string' && f.detail ? `: ${f.detail}` : ''})`),
    ...diags.map((d) => `${d.code}: ${d.message ?? ''}`),
  ];
  if (!notes.length) return '';
  return `<details><summary>Frames left out and notes (${notes.length})</summary>${notesHtml(notes)}</details>`;
}

/** The camera section (`section-camera`) of one camera document. */
export function cameraSection(doc: CameraDocument, id = 'section-camera'): string {
  const gain = isNum(doc.gainElectronsPerAdu) ? doc.gainElectronsPerAdu : null;
  const figures = [ptcFigure(doc), gainFigure(doc), linearityFigure(doc), darkFigure(doc, gain), channelFigure(doc)].filter(Boolean);
  const body = [
    cardsHtml(headlineCards(doc)),
    `<div class="figures">${figures.join('')}</div>`,
    channelTable(doc),
    curveTable(doc),
    leftOutNotes(doc),
  ].join('');
  return sectionHtml(
    id,
    'Camera characterization',
    `${settingsLine(doc)}<p class="note">Measured by photon transfer from bias, flat and dark pairs; the values describe these frames at these settings.</p>`,
    body,
  );
}
