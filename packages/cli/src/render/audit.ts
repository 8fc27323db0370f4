import { describeWhere, type AuditFrameRecord, type AuditResult, type ReasonDetail } from '@subgauge/core';
import { type CliIo, palette } from '../context.js';
import { toCsv } from './csv.js';
import { fmt, fmtSig, renderTable } from './table.js';

const v = (x: number | string | null | undefined, digits = 4) =>
  x === null || x === undefined ? '-' : typeof x === 'number' ? fmtSig(x, digits) : x;

/** One short clause per detail: "fwhmPixels 5.27 vs 3.14 (x1.68, z 9.1; limit 1.2)". */
export function detailText(d: ReasonDetail): string {
  const parts = [`${d.metric} ${v(d.value)}`];
  if (d.reference !== null) parts.push(`vs ${v(d.reference)}`);
  const extra: string[] = [];
  if (d.ratio !== null) extra.push(`x${fmt(d.ratio, 2)}`);
  if (d.zScore !== null) extra.push(`z ${fmt(d.zScore, 1)}`);
  if (d.limit !== null) extra.push(`limit ${v(d.limit)}`);
  return parts.join(' ') + (extra.length ? ` (${extra.join(', ')})` : '');
}

function frameLine(f: AuditFrameRecord): string {
  if (f.error) return `${f.error.code}: ${f.error.message}${describeWhere(f.error.where) ? ` (${describeWhere(f.error.where)})` : ''}`;
  return f.details.map((d) => `${d.reason}: ${detailText(d)}`).join('; ');
}

export function renderAuditText(r: AuditResult, io: CliIo): string {
  const p = palette(io);
  const lines: string[] = [];
  const c = r.counts;
  // unreadable files are records (verdict reject) but not lights: say them apart
  const unreadable = c.byReason.unreadable;
  const what = unreadable ? `${c.frames - unreadable} light frame(s) and ${unreadable} unreadable file(s)` : `${c.frames} light frame(s)`;
  lines.push(p.head(`Audit of ${what}: ${c.keep} keep, ${c.review} review, ${c.reject} reject`));
  const reject = r.frames.filter((f) => f.verdict === 'reject');
  const review = r.frames.filter((f) => f.verdict === 'review');
  if (reject.length) {
    lines.push('', p.bad('Reject'));
    for (const f of reject) lines.push(`  ${f.file}  ${p.bad(f.reasons.join(', '))}`, `      ${p.dim(frameLine(f))}`);
  }
  if (review.length) {
    lines.push('', p.warn('Review'));
    for (const f of review) lines.push(`  ${f.file}  ${p.warn(f.reasons.join(', '))}`, `      ${p.dim(frameLine(f))}`);
  }
  lines.push('', p.head('Frames'));
  lines.push(
    renderTable(
      [
        { header: 'file' },
        { header: 'verdict' },
        { header: 'filter' },
        { header: 'exp s', align: 'right' },
        { header: 'sky ADU', align: 'right' },
        { header: 'noise', align: 'right' },
        { header: 'stars', align: 'right' },
        { header: 'FWHM px', align: 'right' },
        { header: 'FWHM "', align: 'right' },
        { header: 'elong', align: 'right' },
        { header: 'trails', align: 'right' },
        { header: 'weight', align: 'right' },
      ],
      r.frames.map((f) => {
        const m = f.metrics;
        const verdict = f.verdict === 'keep' ? p.good('keep') : f.verdict === 'review' ? p.warn('review') : p.bad('reject');
        return [
          f.file,
          verdict,
          m?.filter ?? '-',
          m?.exposureSeconds !== undefined ? fmtSig(m.exposureSeconds, 4) : '-',
          f.skyAdu !== null ? fmt(f.skyAdu, 1) : '-',
          m ? fmt(m.noiseAdu, 1) : '-',
          m ? String(m.starCount) : '-',
          m?.fwhmPixels != null ? fmt(m.fwhmPixels, 2) : '-',
          m?.fwhmArcsec != null ? fmt(m.fwhmArcsec, 2) : '-',
          m?.elongation != null ? fmt(m.elongation, 2) : '-',
          m ? String(m.trails.length) : '-',
          f.weight !== null ? fmt(f.weight, 2) : '-',
        ];
      }),
      '  ',
    ).trimEnd(),
  );
  lines.push('', p.head('Calibration'));
  for (const g of r.groups) {
    const what = `${g.lightCount} light(s), filter ${g.filter ?? 'none'}, ${v(g.exposureSeconds)} s, gain ${v(g.gainSetting)}, offset ${v(g.offsetSetting)}, ${g.binning}, ${g.size}, ${v(g.temperatureCelsius, 3)} °C`;
    lines.push(`  group ${g.index}: ${what}`);
    for (const m of [g.bias, g.dark, g.flat, g.flatDark]) {
      if (m.status === 'not-applicable') continue;
      if (m.status === 'missing' && m.candidateCount === 0 && m.kind === 'flat-dark') continue;
      const status = m.status === 'missing' ? p.bad(m.candidateCount ? 'missing' : 'none given') : m.status === 'scaled' ? p.warn('scaled') : p.good('matched');
      lines.push(`    ${m.kind.padEnd(9)} ${status}  ${m.files.length ? `${m.files.length} file(s)` : ''}${m.rule !== 'none' ? ` by ${m.rule}` : ''}${m.status === 'missing' && m.candidateCount ? ` (${m.candidateCount} candidate(s) failed: ${Object.entries(m.failedCounts).map(([k, n]) => `${k} ${n}`).join(', ')})` : ''}`);
    }
  }
  if (!r.groups.length || r.calibration.unusedFiles.length) {
    if (r.calibration.unusedFiles.length) lines.push(`  unused calibration frames: ${r.calibration.unusedFiles.length}`);
  }
  const t = r.consistency.temperature;
  if (t) lines.push('', p.head('Temperature'), `  ${temperatureText(t as unknown as Record<string, unknown>)}`);
  if (r.gaps.gaps.length) {
    lines.push('', p.head('Gaps in time'));
    for (const g of r.gaps.gaps) lines.push(`  ${fmt(g.stepSeconds / 60, 1)} min between ${g.afterFile} and ${g.beforeFile}`);
  }
  lines.push('', p.head('Stack forecast'));
  for (const f of r.forecast) {
    const k = f.kept;
    const a = f.all;
    lines.push(
      `  filter ${f.filter ?? 'none'}: keeping ${k.frameCount} of ${a.frameCount} frames (${fmt(k.totalExposureSeconds / 60, 1)} of ${fmt(a.totalExposureSeconds / 60, 1)} min)`,
      `    effective frames (Kish): ${fmt(k.kishEffectiveFrames, 1)} kept, ${fmt(a.kishEffectiveFrames, 1)} all; weighted stack noise ${v(k.weightedNoiseRelative, 3)} of one typical frame (ideal 1/sqrt(N) = ${v(k.idealNoiseRelative, 3)})`,
      `    SNR of the kept stack vs all frames: x${v(f.keptVsAll.weightedSnrRatio, 3)} (weights by ${f.weightMethod})`,
    );
  }
  return lines.join('\n') + '\n';
}

function temperatureText(t: Record<string, unknown>): string {
  const parts: string[] = [];
  for (const [k, val] of Object.entries(t)) {
    if (typeof val === 'number') parts.push(`${k} ${fmtSig(val, 3)}`);
  }
  return parts.join(', ');
}

export function auditCsv(r: AuditResult): string {
  return toCsv(
    ['file', 'verdict', 'reasons', 'filter', 'exposureSeconds', 'skyAdu', 'noiseAdu', 'gradientPercent', 'starCount', 'fwhmPixels', 'fwhmArcsec', 'elongation', 'trailCount', 'weight', 'details'],
    r.frames.map((f) => {
      const m = f.metrics;
      return [f.file, f.verdict, f.reasons.join(' '), m?.filter ?? '', m?.exposureSeconds ?? '', f.skyAdu ?? '', m?.noiseAdu ?? '', m?.gradientPercent ?? '', m?.starCount ?? '', m?.fwhmPixels ?? '', m?.fwhmArcsec ?? '', m?.elongation ?? '', m ? m.trails.length : '', f.weight ?? '', frameLine(f)];
    }),
  );
}
