#!/usr/bin/python3
"""Reference values for the statistics kernels of packages/core/src/stats, from numpy / astropy / photutils.

Run with Debian's interpreter (python3-numpy 1.24, python3-astropy 5.2.1, photutils 1.6.0):

    /usr/bin/python3 scripts/reference/stats_goldens.py --out fixtures/reference/stats

The input arrays are not stored. Both this script and packages/core/test/stats/goldenArrays.ts build them from
the case specs below with the same 32-bit xorshift generator (Marsaglia 2003, shifts 13/17/5) and only exact
integer arithmetic or correctly rounded +, *, / (no log/sin/cos), so the arrays agree bit for bit.

References are computed on float64 copies of the valid values (NaN and BLANK removed), as DESIGN.md section 5
asks: astropy's float32 path accumulates in float32.
"""
import argparse
import json
import math
import os
import sys

import numpy as np
import astropy
from astropy.stats import SigmaClip, biweight_location, biweight_scale, mad_std, median_absolute_deviation

try:
    import photutils
    from photutils.background import SExtractorBackground
except ImportError:  # pragma: no cover
    photutils = None

M32 = 0xFFFFFFFF
TWO32 = 4294967296

TYPE_RANGE = {
    "uint8": (0, 255),
    "int16": (-32768, 32767),
    "uint16": (0, 65535),
    "int32": (-2147483648, 2147483647),
    "uint32": (0, 4294967295),
}

# Each case: element type, size (odd and even), seed, Gaussian level and spread, per-mille rates of NaN, BLANK,
# outliers and constant runs. Outliers are level +- step * (1..60), or the type maximum one time in four.
CASES = [
    dict(name="uint8-odd", type="uint8", n=40001, seed=801, mean=100, sigma=8, nan=0, blank=4, blankValue=255,
         outlier=6, step=2, run=8, runMax=25),
    dict(name="int16-even", type="int16", n=50000, seed=1601, mean=-200, sigma=40, nan=0, blank=3,
         blankValue=-32768, outlier=8, step=300, run=5, runMax=40),
    dict(name="uint16-odd", type="uint16", n=60001, seed=1602, mean=1000, sigma=30, nan=0, blank=2, blankValue=0,
         outlier=10, step=900, run=10, runMax=30),
    dict(name="uint16-even-quantized", type="uint16", n=60000, seed=1603, mean=2048, sigma=3, nan=0, blank=0,
         blankValue=None, outlier=2, step=50, run=20, runMax=10),
    dict(name="int32-narrow-even", type="int32", n=40000, seed=3201, mean=100000, sigma=2000, nan=0, blank=2,
         blankValue=-2147483648, outlier=5, step=5000, run=4, runMax=20),
    dict(name="int32-wide-odd", type="int32", n=40001, seed=3202, mean=5000000, sigma=20000, nan=0, blank=0,
         blankValue=None, outlier=6, step=30000000, run=4, runMax=20),
    dict(name="float32-odd", type="float32", n=50001, seed=3203, mean=1000, sigma=25, nan=7, blank=0,
         blankValue=None, outlier=9, step=700, run=6, runMax=30),
    dict(name="float64-even", type="float64", n=50000, seed=6401, mean=0.125, sigma=0.01, nan=5, blank=0,
         blankValue=None, outlier=8, step=0.5, run=6, runMax=30),
    dict(name="float64-small-odd", type="float64", n=101, seed=6402, mean=10, sigma=1, nan=40, blank=0,
         blankValue=None, outlier=60, step=3, run=30, runMax=5),
]

QUANTILES = [0.01, 0.1, 0.25, 0.75, 0.9, 0.99]
CLIPS = [
    dict(name="sigma3", sigma=3, maxiters=5, stdfunc="std"),
    dict(name="sigma3-mad", sigma=3, maxiters=5, stdfunc="mad_std"),
    dict(name="asym-2-4-converge", sigma_lower=2, sigma_upper=4, maxiters=None, stdfunc="std"),
    dict(name="sigma2.5-one-iteration", sigma=2.5, maxiters=1, stdfunc="std"),
]


def generate(spec):
    """The case's values as Python floats (NaN for NaN); mirrors goldenArrays.ts exactly."""
    s = (spec["seed"] & M32) or 0x9E3779B9

    def nxt():
        nonlocal s
        x = s
        x ^= (x << 13) & M32
        x ^= x >> 17
        x ^= (x << 5) & M32
        s = x
        return x

    def below(k):
        return math.floor(nxt() / TWO32 * k)

    def normal():
        t = 0
        for _ in range(12):
            t += nxt()
        return (t - 6 * TWO32) / TWO32

    typ = spec["type"]
    mean, sigma, step = spec["mean"], spec["sigma"], spec["step"]
    p_nan, p_blank, p_out, p_run = spec["nan"], spec["blank"], spec["outlier"], spec["run"]
    lo, hi = TYPE_RANGE.get(typ, (None, None))
    n = spec["n"]
    out = []

    def quantize(x):
        if typ == "float64":
            return x
        if typ == "float32":
            return math.floor(x * 256 + 0.5) / 256
        q = math.floor(x + 0.5)
        return float(min(hi, max(lo, q)))

    while len(out) < n:
        r = below(1000)
        if r < p_nan:
            out.append(math.nan)
        elif r < p_nan + p_blank:
            out.append(float(spec["blankValue"]))
        elif r < p_nan + p_blank + p_out:
            if lo is not None and below(4) == 0:
                out.append(float(hi))
            else:
                sign = 1 if below(2) == 0 else -1
                out.append(quantize(mean + sign * step * (1 + below(60))))
        elif r < p_nan + p_blank + p_out + p_run:
            length = 1 + below(spec["runMax"])
            v = quantize(mean)
            for _ in range(min(length, n - len(out))):
                out.append(v)
        else:
            out.append(quantize(mean + sigma * normal()))
    return out


def references(spec):
    values = np.array(generate(spec), dtype=np.float64)
    valid = values[~np.isnan(values)]
    if spec["blankValue"] is not None:
        valid = valid[valid != spec["blankValue"]]
    rec = {
        "count": int(valid.size),
        "nanCount": int(np.isnan(values).sum()),
        "blankCount": int(values.size - np.isnan(values).sum() - valid.size),
        "median": float(np.median(valid)),
        "mad": float(median_absolute_deviation(valid)),
        "madSigma": float(mad_std(valid)),
        "mean": float(np.mean(valid)),
        "std": float(np.std(valid)),
        "min": float(valid.min()),
        "max": float(valid.max()),
        "quantiles": [float(q) for q in np.quantile(valid, QUANTILES)],
        "biweightLocation": float(biweight_location(valid)),
        "biweightScale": float(biweight_scale(valid)),
        "clipped": {},
    }
    for c in CLIPS:
        kw = {k: v for k, v in c.items() if k != "name"}
        sc = SigmaClip(cenfunc="median", **kw)
        kept = sc(valid, axis=None, masked=False, return_bounds=False, copy=True)
        kept = kept[~np.isnan(kept)]
        rec["clipped"][c["name"]] = {
            "mean": float(np.mean(kept)),
            "median": float(np.median(kept)),
            "std": float(np.std(kept)),
            "count": int(kept.size),
            "iterations": int(sc._niterations),
        }
    if photutils is not None:
        rec["mode"] = float(SExtractorBackground()(valid))
    return rec


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--out", required=True, help="directory for goldens.json")
    args = ap.parse_args()
    doc = {
        "generator": "scripts/reference/stats_goldens.py",
        "sources": {
            "numpy": np.__version__,
            "astropy": astropy.__version__,
            "photutils": getattr(photutils, "__version__", None),
            "python": sys.version.split()[0],
        },
        "quantiles": QUANTILES,
        "clips": CLIPS,
        "cases": [dict(spec=spec, expected=references(spec)) for spec in CASES],
    }
    os.makedirs(args.out, exist_ok=True)
    with open(os.path.join(args.out, "goldens.json"), "w") as f:
        json.dump(doc, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
