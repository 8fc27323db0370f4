import { Option } from 'commander';
import { DEFAULT_MAX_PIXELS } from '@subgauge/core';
import { writeFileAtomic } from '@subgauge/core/node';
import { type CliIo } from '../context.js';
import { toJson } from '../render/json.js';
import { parsePixelCount, parsePositiveInt } from '../options.js';

/** Options most commands share (DESIGN section 2). */
export interface CommonOptions {
  json?: boolean;
  out?: string;
  csv?: string;
  html?: string;
  jobs?: number;
  progress: boolean;
  quiet?: boolean;
  strict?: boolean;
  hdu?: number;
  maxPixels: number;
}


export function outputOptions(): Option[] {
  return [
    new Option('--json', 'print one JSON document on stdout instead of tables'),
    new Option('--out <file>', 'also write the JSON document to this file (written atomically)'),
  ];
}

/** `--html <file>`: a self-contained HTML report of the result (camera, sky, audit). */
export function htmlOption(): Option {
  return new Option('--html <file>', 'also write a self-contained HTML report with plots (opens offline in any browser)');
}

export function readOptions(): Option[] {
  return [
    new Option('--strict', 'treat FITS standard violations as errors instead of warnings'),
    new Option('--hdu <n>', 'only this HDU (0 = primary)').argParser(parsePositiveIntOrZero),
    new Option('--max-pixels <count>', 'refuse images declaring more pixels than this (e.g. 400M)')
      .argParser(parsePixelCount)
      .default(DEFAULT_MAX_PIXELS, '400M'),
  ];
}

export function runOptions(): Option[] {
  return [
    new Option('--no-progress', 'no progress bar on stderr'),
    new Option('--quiet', 'print only results and errors'),
    new Option('--jobs <n>', 'worker threads for folders (default: number of cores)').argParser(parsePositiveInt),
  ];
}

function parsePositiveIntOrZero(text: string): number {
  if (!/^\d+$/.test(text.trim())) throw new Error('expected a non-negative integer');
  return Number(text);
}

/** Write JSON to stdout (--json) and/or a file (--out). Returns true when stdout got the JSON. */
export async function emitJson(io: CliIo, opts: { json?: boolean; out?: string }, doc: unknown): Promise<boolean> {
  const text = toJson(doc);
  if (opts.out) await writeFileAtomic(opts.out, new TextEncoder().encode(text));
  if (opts.json) {
    io.stdout(text);
    return true;
  }
  return false;
}
