#!/usr/bin/env python3
"""Reference values for the stars tests from photutils (Debian python3-photutils 1.6.0).

Builds a synthetic frame from a seeded 32-bit xorshift (Marsaglia 2003, triple 13/17/5) that
packages/core/test/stars/photutils.test.ts reproduces exactly (integer PRNG, 24-bit uniforms,
plain float64 arithmetic in the same order, math.exp), so no frame is committed. Then runs:

  * photutils.background.Background2D, box 32x32, filter 3x3, SigmaClip(sigma=3), MedianBackground
  * photutils.detection.DAOStarFinder(fwhm=3.7677, threshold=5 x background RMS median) on data - background
  * photutils.centroids.centroid_com on 11x11 cutouts of data - background about each DAOStarFinder position

and writes the frame checksum, the truth and these results as JSON.

Usage: photutils_goldens.py [--out fixtures/reference/stars/photutils_goldens.json]
"""
import argparse
import json
import math
import sys

import numpy as np
import astropy
import photutils
from astropy.stats import SigmaClip
from photutils.background import Background2D, MedianBackground
from photutils.centroids import centroid_com
from photutils.detection import DAOStarFinder

WIDTH, HEIGHT = 320, 256
SEED = 20240601
N_STARS = 24
MIN_SEPARATION = 24.0
MARGIN = 36.0  # keep stars inside the outer box centres, where the mesh is interpolated, not extrapolated
SIGMA_PSF = 1.6
NOISE = 10.0


class XorShift32:
    def __init__(self, seed):
        self.s = (seed & 0xFFFFFFFF) or 0x9E3779B9

    def next_uint32(self):
        x = self.s
        x ^= (x << 13) & 0xFFFFFFFF
        x ^= x >> 17
        x ^= (x << 5) & 0xFFFFFFFF
        self.s = x
        return x

    def uniform(self):
        return (self.next_uint32() >> 8) / 16777216.0

    def irwin_hall(self):
        s = 0.0
        for _ in range(12):
            s += self.uniform()
        return s - 6.0


def background_at(x, y):
    return 1000.0 + 0.8 * x + 0.5 * y


def make_frame():
    rng = XorShift32(SEED)
    stars = []
    tries = 0
    while len(stars) < N_STARS and tries < 100000:
        tries += 1
        x = MARGIN + rng.uniform() * (WIDTH - 2 * MARGIN)
        y = MARGIN + rng.uniform() * (HEIGHT - 2 * MARGIN)
        flux = 20000.0 + 60000.0 * rng.uniform()
        if all(math.hypot(sx - x, sy - y) >= MIN_SEPARATION for sx, sy, _ in stars):
            stars.append((x, y, flux))
    data = [0.0] * (WIDTH * HEIGHT)
    for y in range(HEIGHT):
        for x in range(WIDTH):
            data[y * WIDTH + x] = background_at(x, y) + NOISE * rng.irwin_hall()
    two_s2 = 2.0 * SIGMA_PSF * SIGMA_PSF
    for sx, sy, flux in stars:
        amp = flux / (math.pi * two_s2)
        for y in range(max(0, math.floor(sy) - 12), min(HEIGHT - 1, math.floor(sy) + 12) + 1):
            for x in range(max(0, math.floor(sx) - 12), min(WIDTH - 1, math.floor(sx) + 12) + 1):
                dx = x - sx
                dy = y - sy
                data[y * WIDTH + x] += amp * math.exp(-(dx * dx + dy * dy) / two_s2)
    pixels = [min(65535, max(0, math.floor(v + 0.5))) for v in data]
    return stars, pixels


def checksum(pixels):
    """FNV-1a (32-bit) over the pixel values as little-endian uint16, and the plain sum."""
    h = 0x811C9DC5
    for v in pixels:
        for b in (v & 0xFF, v >> 8):
            h ^= b
            h = (h * 0x01000193) & 0xFFFFFFFF
    return h, sum(pixels)


def main(argv):
    ap = argparse.ArgumentParser()
    ap.add_argument('--out', default='fixtures/reference/stars/photutils_goldens.json')
    args = ap.parse_args(argv)
    stars, pixels = make_frame()
    fnv, total = checksum(pixels)
    data = np.array(pixels, dtype=np.float64).reshape(HEIGHT, WIDTH)
    bkg = Background2D(data, (32, 32), filter_size=(3, 3), sigma_clip=SigmaClip(sigma=3.0), bkg_estimator=MedianBackground())
    sub = data - bkg.background
    fwhm = 2.0 * math.sqrt(2.0 * math.log(2.0)) * SIGMA_PSF
    finder = DAOStarFinder(fwhm=fwhm, threshold=5.0 * float(bkg.background_rms_median))
    found = finder(sub)
    out_stars = []
    r = 5
    for row in found:
        xc = float(row['xcentroid'])
        yc = float(row['ycentroid'])
        ix, iy = int(round(xc)), int(round(yc))
        if ix - r < 0 or iy - r < 0 or ix + r >= WIDTH or iy + r >= HEIGHT:
            continue
        cut = sub[iy - r:iy + r + 1, ix - r:ix + r + 1]
        cx, cy = centroid_com(cut)
        out_stars.append({
            'daoX': xc,
            'daoY': yc,
            'comX': float(cx) + ix - r,
            'comY': float(cy) + iy - r,
            'backgroundAdu': float(bkg.background[iy, ix]),
        })
    out = {
        'source': 'scripts/reference/photutils_goldens.py',
        'versions': {'photutils': photutils.__version__, 'astropy': astropy.__version__, 'numpy': np.__version__},
        'frame': {
            'width': WIDTH, 'height': HEIGHT, 'seed': SEED, 'stars': N_STARS, 'minSeparation': MIN_SEPARATION,
            'margin': MARGIN, 'sigmaPsf': SIGMA_PSF, 'noise': NOISE, 'background': '1000 + 0.8 x + 0.5 y',
            'fnv1a': fnv, 'sum': total,
        },
        'truth': [{'x': x, 'y': y, 'flux': f} for x, y, f in stars],
        'backgroundMethod': 'Background2D box (32, 32), filter (3, 3), SigmaClip(sigma=3), MedianBackground',
        'backgroundMedianAdu': float(bkg.background_median),
        'backgroundRmsMedianAdu': float(bkg.background_rms_median),
        'backgroundMesh': [[float(v) for v in row] for row in bkg.background_mesh],
        'finder': 'DAOStarFinder fwhm %.6f threshold 5 x background RMS median; centroid_com on 11x11 cutouts' % fwhm,
        'stars': out_stars,
    }
    with open(args.out, 'w') as fh:
        json.dump(out, fh, indent=1)
        fh.write('\n')
    return 0


if __name__ == '__main__':
    sys.exit(main(sys.argv[1:]))
