import { Command } from 'commander';
import {
  CoreError,
  type Diagnostic,
  type FitsFile,
  type Hdu,
  describeWhere,
  observationOf,
} from '@subgauge/core';
import { readFitsFile, readFitsHeaders } from '@subgauge/core/node';
import { type CliIo, EXIT_OK, EXIT_SOME_FAILED, palette } from '../context.js';
import type { Run } from '../main.js';
import { parseRegion, type RegionOption } from '../options.js';
import { scanPaths } from '../io/scan.js';
import { fmtSig, renderTable } from '../render/table.js';
import { type CommonOptions, emitJson, outputOptions, readOptions } from './common.js';
import { measureImageHdu, measurementLines, type HduMeasurements } from './inspectMeasure.js';

interface InspectOptions extends CommonOptions {
  header?: boolean;
  region?: RegionOption;
}

/** One HDU in the inspect output. */
export interface InspectHdu {
  index: number;
  kind: string;
  xtension?: string;
  bitpix: number;
  axes: number[];
  width?: number;
  height?: number;
  planes?: number;
  elementType?: string;
  bscale: number;
  bzero: number | string;
  scaling: string;
  frameKind: string;
  exposureSeconds?: number;
  filter?: string;
  sensorTemperatureCelsius?: number;
  checksum: string;
  datasum: string;
  measurements?: HduMeasurements;
  cards?: { keyword: string; value: unknown; comment: string; raw: string }[];
}

export interface InspectFileRecord {
  file: string;
  ok: boolean;
  hdus?: InspectHdu[];
  diagnostics?: Diagnostic[];
  error?: { code: string; message: string; where: Record<string, unknown> };
}

/** Describe how stored values become physical values (FITS 3.0 §4.4.2.5, Table 4.9). */
export function scalingText(hdu: Hdu): string {
  const { bitpix, bscale, bzero, elementType } = hdu.layout;
  if (bitpix < 0) return bscale === 1 && Number(bzero) === 0 ? 'IEEE float' : `float, x${bscale} + ${bzero}`;
  if (elementType === 'uint16' || elementType === 'uint32' || elementType === 'uint64' || elementType === 'int8')
    return `${elementType === 'int8' ? 'signed' : 'unsigned'} via BZERO ${bzero}`;
  if (bscale === 1 && Number(bzero) === 0) return 'none';
  return `x${bscale} + ${bzero}`;
}

function hduRecord(hdu: Hdu, withCards: boolean): InspectHdu {
  const obs = observationOf(hdu.header);
  const l = hdu.layout;
  const image = l.kind === 'image' && l.axes.length >= 1 && l.axes.every((n) => n > 0);
  const rec: InspectHdu = {
    index: l.index,
    kind: l.kind,
    ...(l.xtension !== undefined ? { xtension: l.xtension } : {}),
    bitpix: l.bitpix,
    axes: l.axes,
    bscale: l.bscale,
    bzero: typeof l.bzero === 'bigint' ? l.bzero.toString() : l.bzero,
    scaling: scalingText(hdu),
    frameKind: obs.frameKind,
    checksum: hdu.checksum.checksum,
    datasum: hdu.checksum.datasum,
  };
  if (image) {
    rec.width = l.axes[0];
    rec.height = l.axes[1] ?? 1;
    rec.planes = l.axes.slice(2).reduce((a, b) => a * b, 1);
    if (l.elementType) rec.elementType = l.elementType;
  }
  if (obs.exposureSeconds !== undefined) rec.exposureSeconds = obs.exposureSeconds;
  if (obs.filter !== undefined) rec.filter = obs.filter;
  if (obs.sensorTemperatureCelsius !== undefined) rec.sensorTemperatureCelsius = obs.sensorTemperatureCelsius;
  if (withCards) {
    rec.cards = hdu.header.cards.map((c) => ({ keyword: c.keyword, value: c.value, comment: c.comment, raw: c.raw }));
  }
  return rec;
}

function errorRecord(file: string, err: unknown): InspectFileRecord {
  if (err instanceof CoreError) {
    return { file, ok: false, error: { code: err.code, message: err.message, where: { ...err.where, file } } };
  }
  throw err;
}

export async function inspectFiles(paths: readonly string[], opts: InspectOptions): Promise<InspectFileRecord[]> {
  const { files, missing } = await scanPaths(paths);
  const records: InspectFileRecord[] = missing.map((m) => ({
    file: m.path,
    ok: false,
    error: { code: m.code, message: m.message, where: { file: m.path } },
  }));
  for (const file of files) {
    try {
      const parseOpts = {
        strict: Boolean(opts.strict),
        maxPixels: opts.maxPixels,
        file,
        ...(opts.hdu !== undefined ? { hdu: opts.hdu } : {}),
      };
      const fits: FitsFile = opts.header ? await readFitsHeaders(file, parseOpts) : await readFitsFile(file, parseOpts);
      const hdus = fits.hdus
        .filter((h) => opts.hdu === undefined || h.layout.index === opts.hdu)
        .map((h) => {
          const rec = hduRecord(h, Boolean(opts.header));
          if (!opts.header && h.image) rec.measurements = measureImageHdu(h, opts.region);
          return rec;
        });
      if (opts.hdu !== undefined && hdus.length === 0) {
        throw new CoreError('INPUT_BAD_PARAMETER', `no HDU ${opts.hdu} (the file has ${fits.hdus.length})`, {
          file,
          hdu: opts.hdu,
        });
      }
      records.push({ file, ok: true, hdus, diagnostics: fits.diagnostics });
    } catch (err) {
      records.push(errorRecord(file, err));
    }
  }
  return records;
}

function renderHeaderCards(io: CliIo, records: readonly InspectFileRecord[]): void {
  const p = palette(io);
  for (const r of records) {
    if (!r.ok) continue;
    for (const h of r.hdus ?? []) {
      io.stdout(p.head(`${r.file}  HDU ${h.index} (${h.xtension ?? 'primary'})`) + '\n');
      for (const c of h.cards ?? []) if (c.keyword !== 'END') io.stdout(c.raw.trimEnd() + '\n');
      io.stdout('END\n\n');
    }
  }
}

function renderSummary(io: CliIo, records: readonly InspectFileRecord[], region: RegionOption | undefined): void {
  const p = palette(io);
  const rows: string[][] = [];
  for (const r of records) {
    if (!r.ok) continue;
    for (const h of r.hdus ?? []) {
      const m = h.measurements;
      const size =
        h.width !== undefined
          ? `${h.width}x${h.height}${h.planes && h.planes > 1 ? `x${h.planes}` : ''}`
          : h.kind === 'image'
            ? 'no data'
            : h.kind;
      rows.push([
        r.file,
        String(h.index),
        size,
        String(h.bitpix),
        h.scaling,
        h.frameKind,
        h.exposureSeconds !== undefined ? fmtSig(h.exposureSeconds) : '-',
        h.filter ?? '-',
        h.sensorTemperatureCelsius !== undefined ? h.sensorTemperatureCelsius.toFixed(1) : '-',
        h.checksum === 'absent' ? '-' : h.checksum,
        m ? fmtSig(m.min) : '-',
        m ? fmtSig(m.max) : '-',
        m ? fmtSig(m.mean, 6) : '-',
        m ? fmtSig(m.median, 6) : '-',
        m ? fmtSig(m.madSigma, 4) : '-',
        m ? String(m.nanCount + m.blankCount) : '-',
      ]);
    }
  }
  if (rows.length) {
    io.stdout(
      renderTable(
        [
          { header: 'file' },
          { header: 'HDU', align: 'right' },
          { header: 'size' },
          { header: 'BITPIX', align: 'right' },
          { header: 'scaling' },
          { header: 'kind' },
          { header: 'exp s', align: 'right' },
          { header: 'filter' },
          { header: 'temp C', align: 'right' },
          { header: 'checksum' },
          { header: 'min', align: 'right' },
          { header: 'max', align: 'right' },
          { header: 'mean', align: 'right' },
          { header: 'median', align: 'right' },
          { header: 'MAD-sigma', align: 'right' },
          { header: 'NaN+BLANK', align: 'right' },
        ],
        rows,
      ),
    );
  }
  // Details (clipped statistics, colour channels) are printed for a single image HDU or a region, where they fit.
  const imageHdus = records.reduce((n, r) => n + (r.hdus ?? []).filter((h) => h.measurements).length, 0);
  if (region || imageHdus <= 2) renderDetails(io, records, region);
  for (const r of records) {
    if (r.ok) {
      for (const d of r.diagnostics ?? []) {
        const where = describeWhere(d.where);
        io.stdout(p.warn(`${r.file}: ${d.severity} ${d.code}: ${d.message}${where ? ` (${where})` : ''}`) + '\n');
      }
    }
  }
  for (const r of records) {
    if (!r.ok && r.error) {
      const where = describeWhere(r.error.where);
      io.stdout(p.bad(`${r.file}: ${r.error.code}: ${r.error.message}${where ? ` (${where})` : ''}`) + '\n');
    }
  }
}

function renderDetails(io: CliIo, records: readonly InspectFileRecord[], region: RegionOption | undefined): void {
  for (const r of records) {
    for (const h of r.hdus ?? []) {
      const lines = h.measurements ? measurementLines(h.measurements, region) : [];
      if (lines.length) {
        io.stdout(`\n${r.file}  HDU ${h.index}\n`);
        for (const l of lines) io.stdout(`  ${l}\n`);
      }
    }
  }
}

export function inspectCommand(io: CliIo, setRun: (run: Run) => void): Command {
  const cmd = new Command('inspect')
    .summary('describe FITS files: HDUs, scaling, frame kind, checksums, pixel statistics')
    .description(
      'Describe FITS files: per HDU the size, BITPIX and scaling, frame kind, exposure, filter, temperature, checksum status and pixel statistics. Folders are searched recursively for .fits/.fit/.fts(.gz).',
    )
    .argument('<paths...>', 'FITS files or folders')
    .option('--header', 'print every header card and read no pixel data')
    .option('--region <x,y,w,h>', 'measure only this rectangle (0-based pixels, x along NAXIS1)', parseRegion);
  for (const o of [...outputOptions(), ...readOptions()]) cmd.addOption(o);
  cmd.addHelpText(
    'after',
    `
Examples:
  subgauge inspect night/lights               a table of every frame
  subgauge inspect frame.fits --header        all cards, no pixels read
  subgauge inspect frame.fits --region 100,100,200,200 --json`,
  );
  cmd.action((paths: string[], opts: InspectOptions) => {
    setRun(async () => {
      const records = await inspectFiles(paths, opts);
      const doc = { schema: 'subgauge.inspect/1', files: records };
      if (!(await emitJson(io, opts, doc))) {
        if (opts.header) renderHeaderCards(io, records);
        else renderSummary(io, records, opts.region);
      }
      const failed = records.filter((r) => !r.ok).length;
      if (!opts.json && !opts.quiet) {
        io.stderr(`${records.length} file(s), ${failed} failed\n`);
      }
      return failed > 0 ? EXIT_SOME_FAILED : EXIT_OK;
    });
  });
  return cmd;
}
