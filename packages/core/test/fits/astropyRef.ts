// Reference values from astropy 5.2.1 (Debian python3-astropy) for the FITS tests.
// Tests that need it must fail under CI=true when it is missing (project rule) and may skip otherwise.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

export const PYTHON = '/usr/bin/python3';

/** True when python3 with astropy is available; throws under CI when it is not. */
export function haveAstropy(): boolean {
  const ok = existsSync(PYTHON) && spawnSync(PYTHON, ['-c', 'import astropy.io.fits'], { encoding: 'utf8' }).status === 0;
  if (!ok && process.env.CI === 'true') throw new Error('python3 with astropy is required under CI (python3-astropy)');
  return ok;
}

/** What astropy returns for one HDU: dtype name, shape (numpy order) and the flattened values as text. */
export interface AstropyHdu {
  kind: string;
  dtype: string | null;
  shape: number[] | null;
  /** Values as strings: repr of each element ('nan', 'inf', '-inf', integers exact). */
  values: string[] | null;
  checksum: number | null;
  datasum: number | null;
}

const SCRIPT = String.raw`
import sys, json, warnings, numpy as np
from astropy.io import fits
warnings.simplefilter('ignore')
def read(path):
    out = []
    try:
        hl = fits.open(path, memmap=False, checksum=True)
    except Exception as e:
        return dict(error=str(e))
    with hl:
        for h in hl:
            d = None
            try:
                d = h.data if h.is_image else None
            except Exception:
                d = None
            cs = getattr(h, '_checksum_valid', None)
            ds = getattr(h, '_datasum_valid', None)
            if d is None:
                out.append(dict(kind=type(h).__name__, dtype=None, shape=None, values=None, checksum=cs, datasum=ds))
                continue
            a = np.asarray(d)
            if a.dtype.kind == 'f':
                vals = [repr(float(x)) for x in a.ravel()]
            else:
                vals = [str(int(x)) for x in a.ravel()]
            out.append(dict(kind=type(h).__name__, dtype=a.dtype.name, shape=list(a.shape), values=vals, checksum=cs, datasum=ds))
    return out
print(json.dumps([read(p) for p in sys.argv[1:]]))
`;

/** Read files with astropy (default scaling on, checksums verified), all in one python process. */
export function astropyReadAll(paths: string[]): (AstropyHdu[] | { error: string })[] {
  const r = spawnSync(PYTHON, ['-c', SCRIPT, ...paths], { encoding: 'utf8', maxBuffer: 1 << 30 });
  if (r.status !== 0) throw new Error(`astropy failed: ${r.stderr}`);
  return JSON.parse(r.stdout) as (AstropyHdu[] | { error: string })[];
}

/** Read one file with astropy. */
export function astropyRead(path: string): AstropyHdu[] {
  const [one] = astropyReadAll([path]);
  if (one === undefined || !Array.isArray(one)) throw new Error(`astropy cannot open ${path}: ${one?.error}`);
  return one;
}

/** Parse astropy's printed values back to numbers (floats) or bigints (integers). */
export function astropyValues(hdu: AstropyHdu): (number | bigint)[] {
  const float = hdu.dtype?.startsWith('float') ?? false;
  return (hdu.values ?? []).map((t) => {
    if (!float) return BigInt(t);
    if (t === 'nan') return NaN;
    if (t === 'inf') return Infinity;
    if (t === '-inf') return -Infinity;
    return Number(t);
  });
}

/** Index of the first pixel that differs (Object.is for floats, so NaN = NaN and -0 != 0), or -1. */
export function firstDifference(ours: ArrayLike<number | bigint>, ref: (number | bigint)[]): number {
  if (ours.length !== ref.length) return Math.min(ours.length, ref.length);
  for (let i = 0; i < ref.length; i++) {
    const a = ours[i]!;
    const b = ref[i]!;
    if (typeof b === 'bigint' ? BigInt(a) !== b : !Object.is(Number(a), b)) return i;
  }
  return -1;
}

/** Digest of one HDU as astropy reads it: dtype, shape, sha256 of the values (float64, or int64 / uint64 for 64-bit integers; little-endian). */
export interface AstropyDigest {
  kind: string;
  dtype: string | null;
  shape: number[] | null;
  sha256: string | null;
  /** First occurrence of each valued keyword: [keyword, type, text]. */
  cards: [string, string, string][];
  error?: string;
}

const DIGEST_SCRIPT = String.raw`
import sys, json, warnings, hashlib, numpy as np
from astropy.io import fits
warnings.simplefilter('ignore')
def canon(a):
    if a.dtype.kind == 'f' or a.dtype.itemsize <= 4:
        b = np.asarray(a, dtype='<f8').copy()
        b[np.isnan(b)] = np.nan
        return b.tobytes()
    if a.dtype == np.uint64:
        return np.asarray(a, dtype='<u8').tobytes()
    return np.asarray(a, dtype='<i8').tobytes()
def cards(h):
    out, seen = [], set()
    for c in h.header.cards:
        k = c.keyword
        if k in ('COMMENT', 'HISTORY', '', 'CONTINUE') or k in seen:
            continue
        seen.add(k)
        try:
            v = c.value
        except Exception:
            continue
        if isinstance(v, bool): out.append([k, 'bool', 'T' if v else 'F'])
        elif isinstance(v, int): out.append([k, 'int', str(v)])
        elif isinstance(v, float): out.append([k, 'float', repr(v)])
        elif isinstance(v, complex): out.append([k, 'complex', repr(v.real) + ',' + repr(v.imag)])
        elif isinstance(v, str): out.append([k, 'str', v])
        else: out.append([k, 'undefined', ''])
    return out
def read(path):
    try:
        hl = fits.open(path, memmap=False)
        hl.readall()
    except Exception as e:
        return [dict(kind='error', dtype=None, shape=None, sha256=None, cards=[], error=str(e))]
    res = []
    with hl:
        for h in hl:
            # Cards first: astropy rewrites BITPIX/EXTEND in its header once scaled data are loaded.
            try:
                cs = cards(h)
            except Exception:
                cs = []
            try:
                d = h.data if h.is_image else None
            except Exception as e:
                d = None
            if d is None:
                res.append(dict(kind=type(h).__name__, dtype=None, shape=None, sha256=None, cards=cs))
            else:
                a = np.asarray(d)
                res.append(dict(kind=type(h).__name__, dtype=a.dtype.name, shape=list(a.shape), sha256=hashlib.sha256(canon(a)).hexdigest(), cards=cs))
    return res
print(json.dumps([read(p) for p in sys.argv[1:]]))
`;

/** Digests of files as astropy reads them (one python process). */
export function astropyDigests(paths: string[]): AstropyDigest[][] {
  const r = spawnSync(PYTHON, ['-c', DIGEST_SCRIPT, ...paths], { encoding: 'utf8', maxBuffer: 1 << 28 });
  if (r.status !== 0) throw new Error(`astropy failed: ${r.stderr}`);
  return JSON.parse(r.stdout) as AstropyDigest[][];
}
