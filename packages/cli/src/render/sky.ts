import type { SkySubRecord } from '@subgauge/core';
import { type CliIo, palette } from '../context.js';
import type { SkyDocument } from '../commands/sky.js';
import { toCsv } from './csv.js';
import { fmt, fmtSig, renderTable } from './table.js';

function duration(seconds: number): string {
  if (!Number.isFinite(seconds)) return 'never (no sky signal)';
  if (seconds < 100) return `${seconds.toFixed(seconds < 10 ? 1 : 0)} s`;
  if (seconds < 3600) return `${Math.ceil(seconds)} s (${(seconds / 60).toFixed(1)} min)`;
  return `${(seconds / 3600).toFixed(2)} h`;
}

export function renderSkyText(doc: SkyDocument, io: CliIo): string {
  const p = palette(io);
  const cam = doc.camera;
  const lines: string[] = [];
  lines.push(
    p.head(
      `Camera (${cam.source}): gain ${fmtSig(cam.gainElectronsPerAdu, 4)} e-/ADU, read noise ${fmtSig(cam.readNoiseElectrons, 3)} e-, offset ${fmtSig(cam.offsetAdu, 6)} ADU` +
        (cam.darkCurrentElectronsPerSecond ? `, dark ${fmtSig(cam.darkCurrentElectronsPerSecond, 3)} e-/px/s` : ''),
    ),
  );
  lines.push(`limit: read noise may add at most ${doc.maxPenaltyPercent} % to the noise`, '');
  const rows = doc.subs.map((s) => [
    s.file,
    s.filter,
    s.channel ?? '',
    fmtSig(s.exposureSeconds, 4),
    fmt(s.skyAdu, 1),
    fmt(s.skyElectrons, 1),
    fmt(s.skyRateElectronsPerSecond, 3),
    fmt(s.backgroundToReadNoiseSquared, 1),
    fmt(s.readNoisePenaltyPercent, 2),
    s.status === 'sky-limited' ? p.good(s.status) : p.warn(s.status),
    fmt(s.minimumExposureSeconds, 0),
  ]);
  lines.push(
    renderTable(
      [
        { header: 'file' },
        { header: 'filter' },
        { header: 'ch' },
        { header: 'exp s', align: 'right' },
        { header: 'sky ADU', align: 'right' },
        { header: 'sky e-', align: 'right' },
        { header: 'e-/px/s', align: 'right' },
        { header: 'sky/RN^2', align: 'right' },
        { header: 'penalty %', align: 'right' },
        { header: 'status' },
        { header: 'min exp s', align: 'right' },
      ],
      rows,
    ).trimEnd(),
  );
  for (const f of doc.filters) {
    lines.push('');
    lines.push(
      p.head(`filter ${f.filter}: `) +
        `${f.skyLimitedSubs} of ${f.subs} subs sky-limited; sky ${fmtSig(f.recommendationRateElectronsPerSecond, 3)} e-/px/s (${f.rule}${f.limitingChannel ? `, channel ${f.limitingChannel} decides` : ''})`,
    );
    lines.push(
      `  shortest sub for at most ${doc.maxPenaltyPercent} % read-noise penalty: ${p.bold(duration(f.recommendedMinimumExposureSeconds))}` +
        ` (your subs: ${fmtSig(f.medianExposureSeconds, 4)} s)`,
    );
    if (f.subLengthTable && doc.totalSeconds) {
      lines.push(`  splitting ${duration(doc.totalSeconds)} into subs (faint-target SNR relative to no read noise):`);
      lines.push(
        renderTable(
          [{ header: 'sub s', align: 'right' }, { header: 'subs', align: 'right' }, { header: 'relative SNR', align: 'right' }, { header: 'penalty %', align: 'right' }],
          f.subLengthTable.map((r) => [String(r.subSeconds), String(r.subs), fmt(r.relativeSnr, 3), fmt(r.readNoisePenaltyPercent, 2)]),
          '    ',
        ).trimEnd(),
      );
    }
  }
  return lines.join('\n') + '\n';
}

export function skyCsv(subs: readonly SkySubRecord[]): string {
  return toCsv(
    ['file', 'filter', 'channel', 'exposureSeconds', 'backgroundAdu', 'skyAdu', 'skyElectrons', 'skyRateElectronsPerSecond', 'darkElectrons', 'backgroundToReadNoiseSquared', 'readNoisePenaltyPercent', 'status', 'minimumExposureSeconds'],
    subs.map((s) => [s.file, s.filter, s.channel ?? '', s.exposureSeconds, s.backgroundAdu, s.skyAdu, s.skyElectrons, s.skyRateElectronsPerSecond, s.darkElectrons, s.backgroundToReadNoiseSquared, s.readNoisePenaltyPercent, s.status, s.minimumExposureSeconds]),
  );
}
