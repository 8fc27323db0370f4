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
out = []
with fits.open(sys.argv[1], memmap=False, checksum=True) as hl:
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
            vals = [repr(float(x)) if a.dtype.itemsize == 8 else repr(float(np.float32(x))) for x in a.ravel()]
        else:
            vals = [str(int(x)) for x in a.ravel()]
        out.append(dict(kind=type(h).__name__, dtype=a.dtype.name, shape=list(a.shape), values=vals, checksum=cs, datasum=ds))
print(json.dumps(out))
`;

/** Read a file with astropy (default scaling on, checksums verified). */
export function astropyRead(path: string): AstropyHdu[] {
  const r = spawnSync(PYTHON, ['-c', SCRIPT, path], { encoding: 'utf8', maxBuffer: 1 << 28 });
  if (r.status !== 0) throw new Error(`astropy failed on ${path}: ${r.stderr}`);
  return JSON.parse(r.stdout) as AstropyHdu[];
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
