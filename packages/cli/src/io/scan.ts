import { readdir, stat } from 'node:fs/promises';
import path from 'node:path';

/** File name endings treated as FITS when scanning folders (case-insensitive). */
export const FITS_EXTENSIONS = ['.fits', '.fit', '.fts', '.fits.gz', '.fit.gz', '.fts.gz'] as const;

export function looksLikeFitsName(name: string): boolean {
  const lower = name.toLowerCase();
  return FITS_EXTENSIONS.some((ext) => lower.endsWith(ext));
}

export interface ScanResult {
  /** Files in a stable order: the order the paths were given, folders expanded in name order. */
  files: string[];
  /** Paths that could not be read as given (missing, unreadable). */
  missing: { path: string; code: 'INPUT_NOT_FOUND' | 'INPUT_READ_FAILED'; message: string }[];
  /** Files inside the folders walked that were passed over: their names do not end as FITS names do. */
  skipped: string[];
}

/**
 * A note on the files a folder scan passed over (undefined when none), so that a folder of FITS files named in
 * another convention (ESO-MIDAS `.mt`, say) does not look empty without a word.
 */
export function skippedNote(scan: Pick<ScanResult, 'skipped'>): string | undefined {
  const n = scan.skipped.length;
  if (n === 0) return undefined;
  const example = path.basename(scan.skipped[0]!);
  return `${n} file(s) in the folders not read: their names do not end in ${FITS_EXTENSIONS.join(' ')} (e.g. ${example}); give such files by name to read them`;
}

/**
 * Expand paths: files are taken as given (whatever their name), folders are walked recursively for FITS names.
 * Hidden entries (starting with '.') inside folders are skipped. Symbolic links are followed once.
 */
export async function scanPaths(paths: readonly string[]): Promise<ScanResult> {
  const files: string[] = [];
  const missing: ScanResult['missing'] = [];
  const skipped: string[] = [];
  const seen = new Set<string>();
  const add = (f: string) => {
    if (!seen.has(f)) {
      seen.add(f);
      files.push(f);
    }
  };
  async function walk(dir: string, depth: number): Promise<void> {
    if (depth > 64) return;
    let entries;
    try {
      entries = await readdir(dir, { withFileTypes: true });
    } catch (err) {
      missing.push({ path: dir, code: 'INPUT_READ_FAILED', message: (err as Error).message });
      return;
    }
    entries.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    for (const e of entries) {
      if (e.name.startsWith('.')) continue;
      const full = path.join(dir, e.name);
      if (e.isDirectory()) await walk(full, depth + 1);
      else if (e.isFile()) (looksLikeFitsName(e.name) ? add(full) : skipped.push(full));
      else if (e.isSymbolicLink()) {
        try {
          const s = await stat(full);
          if (s.isDirectory()) await walk(full, depth + 1);
          else if (s.isFile()) (looksLikeFitsName(e.name) ? add(full) : skipped.push(full));
        } catch {
          /* dangling link: ignored like any non-FITS entry */
        }
      }
    }
  }
  for (const p of paths) {
    let s;
    try {
      s = await stat(p);
    } catch (err) {
      const code = (err as NodeJS.ErrnoException).code === 'ENOENT' ? 'INPUT_NOT_FOUND' : 'INPUT_READ_FAILED';
      missing.push({ path: p, code, message: code === 'INPUT_NOT_FOUND' ? 'no such file or folder' : (err as Error).message });
      continue;
    }
    if (s.isDirectory()) await walk(p, 0);
    else add(p);
  }
  return { files, missing, skipped };
}
