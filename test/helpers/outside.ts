/**
 * Shared helpers for tests that need a reference from outside the project: Debian's python3 with
 * astropy/numpy/scipy, `fitsverify`, and two sets of real FITS files written by other programs
 * (astropy's own test data and the Debian package `eso-midas-testdata`).
 *
 * Rule (tests): a test whose outside reference is missing FAILS when `process.env.CI === 'true'`
 * (CI installs every reference, see `.ci/run`) and is skipped otherwise.
 */
import { spawnSync } from 'node:child_process';
import { closeSync, existsSync, openSync, readdirSync, readSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { fileURLToPath } from 'node:url';

/** Absolute path of the repository root (ends without a separator). */
export const REPO_ROOT = fileURLToPath(new URL('../..', import.meta.url)).replace(/[\\/]$/, '');

/** Debian's interpreter, which carries python3-astropy 5.2.1, python3-numpy 1.24 and python3-scipy 1.10. */
export const PYTHON3 = '/usr/bin/python3';
/** Debian package `fitsverify` (4.20, CFITSIO 4.02): the HEASARC FITS conformance checker. */
export const FITSVERIFY = '/usr/bin/fitsverify';
/** FITS files shipped with astropy's own tests (Debian package python3-astropy). */
export const ASTROPY_TEST_DATA = '/usr/lib/python3/dist-packages/astropy/io/fits/tests/data';
/** Test data of ESO-MIDAS (Debian package eso-midas-testdata); its FITS files use .mt, .fits, .fit, .tfits, .ffits. */
export const MIDAS_TEST_DATA = '/usr/lib/eso-midas/22FEB/test';

/** Tags naming the outside FITS datasets, as stored in committed reference files. */
export type OutsideDataset = 'astropy-test-data' | 'eso-midas-testdata';

const DATASET_ROOTS: Record<OutsideDataset, string> = {
  'astropy-test-data': ASTROPY_TEST_DATA,
  'eso-midas-testdata': MIDAS_TEST_DATA,
};

/** The part of a vitest test context this module uses (`ctx.skip`). */
export interface SkipContext {
  skip: (note?: string) => void;
}

/**
 * Decide what a test does when an outside reference may be missing.
 *
 * @param name - what is needed, for the message (e.g. `'python3 with astropy'`).
 * @param check - whether it is available (a boolean, or a function called once here).
 * @param ctx - the vitest test context; when given, a missing reference outside CI skips the test.
 * @returns true when available; false when missing outside CI and no `ctx` was given.
 * @throws Error when the reference is missing and `process.env.CI === 'true'` (the test fails).
 * @example
 * it('x(...) agrees with astropy', (ctx) => {
 *   requireOutside('python3 with astropy', () => pythonWithAstropy() !== undefined, ctx);
 *   // ...
 * });
 */
export function requireOutside(name: string, check: boolean | (() => boolean), ctx?: SkipContext): boolean {
  const available = typeof check === 'function' ? check() : check;
  if (available) return true;
  if (process.env.CI === 'true') {
    throw new Error(`outside reference missing under CI=true: ${name} (CI installs it in .ci/run)`);
  }
  ctx?.skip(`outside reference not available: ${name}`);
  return false;
}

let pythonChecked: string | null | undefined;

/**
 * Debian's python3 when it can import astropy, numpy and scipy (checked once per process).
 * @returns the interpreter path, or undefined when it or one of the modules is missing.
 */
export function pythonWithAstropy(): string | undefined {
  if (pythonChecked === undefined) {
    pythonChecked = null;
    if (existsSync(PYTHON3)) {
      const r = spawnSync(PYTHON3, ['-c', 'import astropy, numpy, scipy'], { encoding: 'utf8', timeout: 60_000 });
      if (r.status === 0) pythonChecked = PYTHON3;
    }
  }
  return pythonChecked ?? undefined;
}

/** Result of {@link runPython}. */
export interface PythonRun {
  stdout: string;
  stderr: string;
}

/**
 * Run Debian's python3 on a script and wait for it.
 *
 * @param script - path of the script (relative paths are taken from the repository root); pass
 *   `'-c'` with the code as the first element of `args` to run inline code.
 * @param args - arguments after the script.
 * @param options - `input` for stdin, `timeoutMs` (default 120 000).
 * @returns its stdout and stderr as text.
 * @throws Error when python3 is missing, times out or exits non-zero (stderr in the message).
 * @example
 * const { stdout } = runPython('-c', ['import numpy; print(numpy.median([1, 2, 3]))']);
 */
export function runPython(
  script: string,
  args: readonly string[] = [],
  options: { input?: string; timeoutMs?: number } = {},
): PythonRun {
  const scriptArg = script === '-c' || script.startsWith('/') ? script : join(REPO_ROOT, script);
  const r = spawnSync(PYTHON3, [scriptArg, ...args], {
    cwd: REPO_ROOT,
    encoding: 'utf8',
    input: options.input,
    timeout: options.timeoutMs ?? 120_000,
    maxBuffer: 256 * 1024 * 1024,
  });
  if (r.error) throw new Error(`python3 ${script}: ${r.error.message}`);
  if (r.status !== 0) {
    throw new Error(`python3 ${script} exited with ${r.status ?? r.signal}: ${r.stderr.slice(-2000)}`);
  }
  return { stdout: r.stdout, stderr: r.stderr };
}

/** true when `/usr/bin/fitsverify` exists. */
export function hasFitsverify(): boolean {
  return existsSync(FITSVERIFY);
}

/** One HDU's line of the fitsverify error summary. */
export interface FitsverifyHdu {
  /** 1-based, as fitsverify numbers them. */
  hdu: number;
  /** The "Name (version)" and "Type" columns, e.g. `Primary Array` or `SCI (1)   Image Array`. */
  label: string;
  warnings: number;
  errors: number;
}

/** What fitsverify said about one file. */
export interface FitsverifyResult {
  /** No errors and no warnings (the bar for every file we write: DESIGN.md section 5). */
  ok: boolean;
  errors: number;
  warnings: number;
  /** Per-HDU counts from the "Error Summary" table. */
  hdus: FitsverifyHdu[];
  /** The `*** Warning` / `*** Error` lines, in order. */
  messages: string[];
  /** stdout followed by stderr, for failure messages. */
  output: string;
}

/**
 * Check one file with fitsverify (HEASARC; Debian package fitsverify 4.20). Its exit status is the
 * number of problems, so the counts are read from its summary line
 * `**** Verification found N warning(s) and M error(s). ****`.
 *
 * @param path - the FITS file.
 * @throws Error when fitsverify cannot run or prints no summary line.
 * @example
 * const v = fitsverify(file); expect(v.ok, v.output).toBe(true);
 */
export function fitsverify(path: string): FitsverifyResult {
  const r = spawnSync(FITSVERIFY, [path], { encoding: 'utf8', timeout: 120_000, maxBuffer: 64 * 1024 * 1024 });
  if (r.error) throw new Error(`fitsverify ${path}: ${r.error.message}`);
  const output = `${r.stdout}${r.stderr}`;
  const summary = /Verification found (\d+) warning\(s\) and (\d+) error\(s\)/.exec(output);
  if (!summary) throw new Error(`fitsverify ${path}: no summary line in its output:\n${output.slice(-2000)}`);
  const warnings = Number(summary[1]);
  const errors = Number(summary[2]);
  const hdus: FitsverifyHdu[] = [];
  const table = output.split(/\+{5,}\s*Error Summary\s*\+{5,}/)[1] ?? '';
  for (const line of table.split('\n')) {
    // " 1                          Primary Array    0         0     " (the name column may be empty)
    const m = /^\s*(\d+)\s+(.*?)\s+(\d+)\s+(\d+)\s*$/.exec(line);
    if (m) hdus.push({ hdu: Number(m[1]), label: (m[2] ?? '').trim(), warnings: Number(m[3]), errors: Number(m[4]) });
  }
  const messages = output.split('\n').filter((l) => /^\*\*\* (Warning|Error)/.test(l.trim()));
  return { ok: errors === 0 && warnings === 0, errors, warnings, hdus, messages, output };
}

/** Absolute path of an outside dataset's root folder. */
export function datasetRoot(dataset: OutsideDataset): string {
  return DATASET_ROOTS[dataset];
}

/** true when the folder of an outside dataset exists. */
export function hasDataset(dataset: OutsideDataset): boolean {
  return existsSync(DATASET_ROOTS[dataset]);
}

function startsWithSimple(path: string): boolean {
  const fd = openSync(path, 'r');
  try {
    const head = Buffer.alloc(9);
    const n = readSync(fd, head, 0, 9, 0);
    return n === 9 && head.toString('latin1') === 'SIMPLE  =';
  } finally {
    closeSync(fd);
  }
}

/** One FITS file of an outside dataset. */
export interface OutsideFitsFile {
  dataset: OutsideDataset;
  /** Relative to the dataset root, with `/` separators (as in committed references). */
  path: string;
  absolutePath: string;
}

/**
 * The FITS files of an outside dataset: every regular file under its root whose first bytes are
 * `SIMPLE  =` (the rule `scripts/reference/astropy_fits_goldens.py` uses), sorted by path.
 * @returns an empty list when the dataset is not installed.
 */
export function listFitsFiles(dataset: OutsideDataset): OutsideFitsFile[] {
  const root = DATASET_ROOTS[dataset];
  const found: OutsideFitsFile[] = [];
  if (!existsSync(root)) return found;
  const walk = (dir: string): void => {
    for (const entry of readdirSync(dir, { withFileTypes: true })) {
      const full = join(dir, entry.name);
      if (entry.isDirectory()) walk(full);
      else if (entry.isFile() && statSync(full).size >= 9 && startsWithSimple(full)) {
        found.push({ dataset, path: relative(root, full).split(sep).join('/'), absolutePath: full });
      }
    }
  };
  walk(root);
  return found.sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));
}

/**
 * Version of an installed Debian package (`dpkg-query -W`), e.g. `eso-midas-testdata` → `22.02pl1.0-2`.
 * @returns undefined when the package or dpkg is missing.
 */
export function debianPackageVersion(name: string): string | undefined {
  const r = spawnSync('dpkg-query', ['-W', '-f', '${Version}', name], { encoding: 'utf8' });
  return r.status === 0 && r.stdout.trim() !== '' ? r.stdout.trim() : undefined;
}
