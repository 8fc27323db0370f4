import type { CameraMeasurement, CameraResult } from '@subgauge/core';
import { describeWhere } from '@subgauge/core';
import { type CliIo, palette } from '../context.js';
import type { LoadFailure } from '../io/load.js';
import { fmt, fmtSig, renderTable } from './table.js';

const num = (v: number | null | undefined, digits = 4) => (v === null || v === undefined ? '-' : fmtSig(v, digits));
/** An uncertainty with two significant digits, in fixed notation. */
const unc = (v: number | null | undefined) => {
  if (v === null || v === undefined || !Number.isFinite(v) || v <= 0) return '-';
  const decimals = Math.max(0, 1 - Math.floor(Math.log10(v)));
  return v.toFixed(Math.min(decimals, 8));
};

/** Thousands with thin grouping for electrons. */
function electrons(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '-';
  return Math.round(v).toLocaleString('en-US');
}

function rows(m: CameraMeasurement, r: CameraResult | undefined): [string, string, string][] {
  const fit = m.fit;
  const out: [string, string, string][] = [];
  out.push([
    'gain',
    `${num(m.gainElectronsPerAdu)} ± ${unc(m.gainUncertaintyElectronsPerAdu)} e-/ADU`,
    fit
      ? `PTC fit of ${fit.pointsUsed} levels, ${fmt(fit.window.minimumSignalAdu, 0)}-${fmt(fit.window.maximumSignalAdu, 0)} ADU; per level ${num(m.gainCrossChecks.perLevel.medianElectronsPerAdu)} ± ${unc(m.gainCrossChecks.perLevel.spreadElectronsPerAdu)}, per tile ${num(m.gainCrossChecks.perTile.medianElectronsPerAdu)} ± ${unc(m.gainCrossChecks.perTile.spreadElectronsPerAdu)}`
      : 'no photon-transfer fit',
  ]);
  out.push([
    'read noise',
    `${num(m.readNoiseElectrons, 3)} e- (${num(m.readNoiseAdu, 3)} ADU)`,
    `${m.bias.pairCount} bias pair(s)${fit ? `; PTC intercept gives ${num(fit.readNoiseFromInterceptElectrons, 3)} e-` : ''}`,
  ]);
  out.push([
    'offset',
    `${num(m.offsetAdu, 6)} ADU`,
    `${fmt(100 * m.bias.minimumCodeFraction, 3)} % of bias pixels at the minimum code${m.bias.minimumCodeFraction > 0.001 ? ' (offset may be too low)' : ''}`,
  ]);
  out.push([
    'full well',
    `${electrons(m.fullWellElectrons)} e-${m.fullWell.reached ? '' : ' (at least)'}`,
    m.fullWell.reached ? `limited by the ${m.fullWellLimitedBy === 'adc' ? 'ADC range' : 'pixel'}` : 'the variance did not roll off: take brighter flats',
  ]);
  if (m.linearity) out.push(['linearity error', `${fmt(m.linearity.linearityErrorPercent, 2)} %`, 'EMVA 1288 style, deviations relative to the fitted line']);
  if (m.prnu) out.push(['PRNU', `${fmt(m.prnu.prnuPercent, 3)} %`, `median of ${m.prnu.tileCount} tiles`]);
  out.push(['DSNU', `${num(m.dsnu.dsnuElectrons, 3)} e-`, `from the ${m.dsnu.source} frames`]);
  if (m.dark) {
    const d = m.dark;
    const temps = d.temperatures
      .map((t) => `${num(t.darkCurrentElectronsPerSecond, 3)} at ${t.temperatureCelsius === null ? '?' : fmt(t.temperatureCelsius, 1)} °C`)
      .join(', ');
    out.push(['dark current', `${num(d.darkCurrentElectronsPerSecond, 3)} e-/px/s`, temps + (d.darkDoublingCelsius ? `; doubles every ${fmt(d.darkDoublingCelsius, 1)} °C` : '')]);
    out.push(['hot pixels', String(d.hotPixels.count), `${fmt(100 * d.hotPixels.fraction, 3)} % (> ${d.hotPixels.thresholdSigma} sigma in the ${d.hotPixels.exposureSeconds} s darks)`]);
    if (d.ampGlow.detected) out.push(['amp glow', `${d.ampGlow.edge} edge`, `${fmt(d.ampGlow.edgeExcessAdu[d.ampGlow.edge], 1)} ADU above the centre in ${d.ampGlow.exposureSeconds} s`]);
  }
  if (r) {
    const q = r.quantization;
    if (q.stepAdu && q.stepAdu > 1) {
      out.push(['quantization', `step ${q.stepAdu} ADU`, `data shifted by ${Math.log2(q.stepAdu)} bits: in the ADC's own units gain ${num(r.nativeGainElectronsPerAdu)} e-/ADU, read noise ${num(r.nativeReadNoiseAdu, 3)} ADU`]);
    }
  }
  return out;
}

export function renderCameraSummary(r: CameraResult, io: CliIo): string {
  const p = palette(io);
  const lines: string[] = [];
  const s = r.settings;
  lines.push(p.head(`Camera at gain setting ${s.gain ?? '-'}, offset ${s.offset ?? '-'}, binning ${s.binning.x}x${s.binning.y}, ${s.width}x${s.height} px`));
  const used = r.frames.used;
  const count = (k: string) => used.filter((u) => u.kind === k).length;
  lines.push(`frames used: ${count('bias')} bias, ${count('flat')} flat, ${count('dark')} dark${count('flat-dark') ? `, ${count('flat-dark')} flat-dark` : ''}; left out: ${r.frames.leftOut.length}`);
  lines.push('');
  for (const [name, value, note] of rows(r, r)) lines.push(`  ${name.padEnd(16)} ${value.padEnd(26)} ${p.dim(note)}`);
  if (r.channels) {
    lines.push('', p.head(`Per colour channel (${r.cfa?.pattern ?? ''}; ${r.cfa?.combination ?? ''})`));
    const chans = Object.values(r.channels);
    lines.push(
      renderTable(
        [
          { header: 'channel' },
          { header: 'gain e-/ADU', align: 'right' },
          { header: '±', align: 'right' },
          { header: 'read noise e-', align: 'right' },
          { header: 'full well e-', align: 'right' },
          { header: 'max signal ADU', align: 'right' },
        ],
        chans.map((c) => [
          c.channel,
          num(c.gainElectronsPerAdu),
          unc(c.gainUncertaintyElectronsPerAdu),
          num(c.readNoiseElectrons, 3),
          electrons(c.fullWellElectrons),
          fmt(Math.max(0, ...c.curve.map((pt) => pt.signalAdu)), 0),
        ]),
        '  ',
      ).trimEnd(),
    );
  }
  if (r.curve.length) {
    lines.push('', p.head('Photon transfer curve (flat pairs)'));
    lines.push(
      renderTable(
        [
          { header: 'exp s', align: 'right' },
          { header: 'signal ADU', align: 'right' },
          { header: 'variance ADU2', align: 'right' },
          { header: 'gain e-/ADU', align: 'right' },
          { header: 'used' },
        ],
        r.curve.map((c) => [
          c.exposureSeconds === null ? '-' : fmtSig(c.exposureSeconds, 4),
          fmt(c.signalAdu, 1),
          fmt(c.varianceAdu2, 1),
          `${num(c.gainElectronsPerAdu)} ± ${unc(c.gainUncertaintyElectronsPerAdu)}`,
          c.inFit ? 'fit' : (c.excludedBecause ?? '-'),
        ]),
        '  ',
      ).trimEnd(),
    );
  }
  if (r.frames.leftOut.length) {
    lines.push('', p.head('Left out'));
    const byReason = new Map<string, string[]>();
    for (const f of r.frames.leftOut) byReason.set(f.reason, [...(byReason.get(f.reason) ?? []), f.file]);
    for (const [reason, files] of byReason) {
      lines.push(`  ${reason}: ${files.length} file(s): ${files.slice(0, 4).join(', ')}${files.length > 4 ? ', ...' : ''}`);
    }
  }
  for (const d of r.diagnostics) lines.push(p.warn(`note ${d.code}: ${d.message}`));
  return lines.join('\n') + '\n';
}

export function renderFailures(failures: readonly LoadFailure[], io: CliIo): string {
  const p = palette(io);
  return (
    failures
      .map((f) => {
        const where = describeWhere(f.where);
        return p.bad(`${f.file}: ${f.code}: ${f.message}${where ? ` (${where})` : ''}`);
      })
      .join('\n') + '\n'
  );
}
