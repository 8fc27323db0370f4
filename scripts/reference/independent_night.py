#!/usr/bin/python3
"""Independent generator of a night of light frames, for the sky and audit tests (numpy 1.24 + astropy 5.2.1).

Debian /usr/bin/python3 with python3-numpy, python3-scipy and python3-astropy only. It shares no code with the
TypeScript library or its simulator: electrons come from numpy's own generators (np.random.default_rng(seed):
Poisson for photons and dark current, normal for read noise) and the files are written by astropy.io.fits (uint16
stored as BITPIX 16 with BZERO 32768, FITS 4.0 section 5.2.5).

Invented set-up (made up for testing): camera "Tarn T9M" (mono, 16-bit, 3.8 um pixels) on a 480 mm refractor at
"Hollin Ridge Observatory", target "Verdant Field 7", filter L.

Model of one light frame, per pixel, in electrons:
    S = t * (sky_rate * (1 + linear gradient) + dark_rate) + sum of stars
    e = Poisson(S) + Normal(0, read_noise)
    ADU = round(offset + e / gain), clipped to [0, 65535]
The gradient is linear in x and y and zero at the frame centre, so the mean (and the median over a symmetric grid)
of the sky over the frame is sky_rate * t. Stars are circular Gaussians integrated over each pixel with erf
(pixel i spans i - 0.5 .. i + 0.5). Trailed stars are the same Gaussian moved uniformly along a segment (a sum of
many erf-integrated Gaussians), whose second moments give an elongation A/B of exactly 2 (REFERENCE.md E.2).

Defects, one per chosen frame (expected audit reason code in brackets):
    trail      a straight line across the frame with a Gaussian cross profile        [trail]
    cloud      sky x 1.5, star flux x 0.4                                             [cloud]
    soft-focus FWHM x 1.6                                                              [soft-focus]
    trailed    stars elongated to A/B = 2 at a chosen angle                            [elongated-stars]
    warm       CCD-TEMP 5 C above SET-TEMP (dark current scaled with its doubling)     [temperature-drift]
    exposure   EXPTIME halved and the whole signal halved                              [exposure-mismatch]
    binning    2 x 2 charge binning: half the size, XBINNING = YBINNING = 2            [binning-mismatch]

Also written: 2 bias frames (bias/), and for the sky test crowded/ (strong gradient, many stars), edge/ (strong
gradient along one axis, no stars) and faint/ (a narrowband-like sky of a few ADU) frames.

Usage: independent_night.py --out DIR [--seed N] [--frames 24] [--width 400] [--height 300]
Writes DIR/light/, DIR/bias/, DIR/crowded/, DIR/edge/, DIR/faint/ (*.fits) and DIR/truth.json.
"""
import argparse
import json
import os
import sys

import numpy as np
from astropy.io import fits
from scipy.special import erf

CAMERA = dict(
    name="Tarn T9M",
    gain=0.8,  # e-/ADU
    read_noise=3.4,  # e-
    offset=300,  # ADU
    adc_max=65535,
    pixel_um=3.8,
    dark_rate=0.004,  # e-/px/s at the set point
    dark_doubling_c=6.0,
    set_temp_c=-15.0,
    gain_setting=120,
    offset_setting=30,
)
SITE = dict(name="Hollin Ridge Observatory", focal_mm=480.0, target="Verdant Field 7", filter="L")
EXPOSURE_S = 60.0
CADENCE_S = 64.0
SKY_RATE = 1.5  # e-/px/s at the frame centre, before the per-frame variation
FWHM_PX = 3.0
STARS = 150
GAUSS_FWHM = 2.0 * np.sqrt(2.0 * np.log(2.0))  # FWHM / sigma (REFERENCE.md E.1)

DEFECTS = {
    "trail": ["trail"],
    "cloud": ["cloud"],
    "soft-focus": ["soft-focus"],
    "trailed": ["elongated-stars"],
    "warm": ["temperature-drift"],
    "exposure": ["exposure-mismatch"],
    "binning": ["binning-mismatch"],
}


def gaussian_stamp(img, flux, x0, y0, sigma):
    """Add a pixel-integrated circular Gaussian of total `flux` at (x0, y0) (erf along each axis)."""
    ny, nx = img.shape
    h = int(np.ceil(6.0 * sigma)) + 2
    x_lo, x_hi = max(int(np.floor(x0)) - h, 0), min(int(np.floor(x0)) + h + 1, nx)
    y_lo, y_hi = max(int(np.floor(y0)) - h, 0), min(int(np.floor(y0)) + h + 1, ny)
    if x_lo >= x_hi or y_lo >= y_hi:
        return
    ex = np.arange(x_lo, x_hi + 1, dtype=np.float64) - 0.5 - x0
    ey = np.arange(y_lo, y_hi + 1, dtype=np.float64) - 0.5 - y0
    px = np.diff(0.5 * erf(ex / (np.sqrt(2.0) * sigma)))
    py = np.diff(0.5 * erf(ey / (np.sqrt(2.0) * sigma)))
    img[y_lo:y_hi, x_lo:x_hi] += flux * np.outer(py, px)


def add_star(img, flux, x0, y0, sigma, elongation=1.0, angle_deg=0.0):
    """A round star, or one trailed along angle_deg so that the second-moment A/B equals `elongation`."""
    if elongation <= 1.0:
        gaussian_stamp(img, flux, x0, y0, sigma)
        return
    # Uniform motion over length L adds L^2/12 to the variance along the motion; n equally spaced positions
    # spanning L have variance (L^2/12)(n+1)/(n-1). Choose L so that sigma^2 + var = (elongation sigma)^2.
    n = 21
    extra = (elongation ** 2 - 1.0) * sigma ** 2
    length = np.sqrt(12.0 * extra * (n - 1) / (n + 1))
    c, s = np.cos(np.radians(angle_deg)), np.sin(np.radians(angle_deg))
    for u in np.linspace(-length / 2, length / 2, n):
        gaussian_stamp(img, flux / n, x0 + u * c, y0 + u * s, sigma)


def add_trail(img, x0, y0, angle_deg, peak, fwhm):
    """A straight line through (x0, y0) with a Gaussian cross profile of the given peak (e-) and FWHM (px)."""
    ny, nx = img.shape
    y, x = np.mgrid[0:ny, 0:nx].astype(np.float64)
    nxv, nyv = -np.sin(np.radians(angle_deg)), np.cos(np.radians(angle_deg))
    dist = (x - x0) * nxv + (y - y0) * nyv
    sigma = fwhm / GAUSS_FWHM
    img += peak * np.exp(-0.5 * (dist / sigma) ** 2)


def sky_field(nx, ny, level, gradient_fraction, angle_deg):
    """Linear sky: `level` at the centre, changing by +-gradient_fraction/2 of it from one corner to the other."""
    y, x = np.mgrid[0:ny, 0:nx].astype(np.float64)
    u = ((x - (nx - 1) / 2) * np.cos(np.radians(angle_deg)) + (y - (ny - 1) / 2) * np.sin(np.radians(angle_deg)))
    span = abs(nx * np.cos(np.radians(angle_deg))) + abs(ny * np.sin(np.radians(angle_deg)))
    return level * (1.0 + gradient_fraction * u / span)


def to_adu(rng, electrons_expected):
    e = rng.poisson(electrons_expected).astype(np.float64)
    e += rng.normal(0.0, CAMERA["read_noise"], size=e.shape)
    adu = np.floor(CAMERA["offset"] + e / CAMERA["gain"] + 0.5)
    return np.clip(adu, 0, CAMERA["adc_max"]).astype(np.uint16)


def base_header(kind, exptime, start, ccd_temp, binning):
    hdr = fits.Header()
    hdr["IMAGETYP"] = kind
    hdr["EXPTIME"] = (float(exptime), "[s] exposure time")
    hdr["DATE-OBS"] = (str(start), "start of exposure, UTC")
    hdr["CCD-TEMP"] = (float(round(ccd_temp, 2)), "[C] sensor temperature")
    hdr["SET-TEMP"] = (float(CAMERA["set_temp_c"]), "[C] cooler set point")
    hdr["GAIN"] = (CAMERA["gain_setting"], "gain setting")
    hdr["OFFSET"] = (CAMERA["offset_setting"], "offset setting")
    hdr["XBINNING"] = binning
    hdr["YBINNING"] = binning
    hdr["XPIXSZ"] = (float(CAMERA["pixel_um"] * binning), "[um] pixel size, binning included")
    hdr["YPIXSZ"] = (float(CAMERA["pixel_um"] * binning), "[um] pixel size, binning included")
    hdr["FOCALLEN"] = (SITE["focal_mm"], "[mm] focal length")
    hdr["INSTRUME"] = CAMERA["name"]
    hdr["TELESCOP"] = SITE["name"]
    return hdr


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", required=True)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--frames", type=int, default=24)
    ap.add_argument("--width", type=int, default=400)
    ap.add_argument("--height", type=int, default=300)
    args = ap.parse_args()
    if args.frames < len(DEFECTS) + 10:
        print(f"need at least {len(DEFECTS) + 10} frames", file=sys.stderr)
        return 2
    rng = np.random.default_rng(args.seed)
    nx, ny = args.width, args.height
    g = CAMERA["gain"]
    for sub in ("light", "bias", "crowded", "edge", "faint"):
        os.makedirs(os.path.join(args.out, sub), exist_ok=True)

    # Star catalogue in sky pixels (a margin so dithered frames keep the same field): dN/dm ~ 10^(0.3 m) over
    # 8 magnitudes, brightest 2.5e5 e- in one 60 s sub (peak about 2.5e5 / (2 pi sigma^2) = 2.2e4 e-, unsaturated).
    m = np.log10(1 + rng.random(STARS) * (10 ** (0.3 * 8) - 1)) / 0.3
    cat_flux = 2.5e5 * 10 ** (-0.4 * m)
    cat_x = rng.uniform(-10, nx + 10, STARS)
    cat_y = rng.uniform(-10, ny + 10, STARS)

    order = rng.permutation(np.arange(1, args.frames))  # frame 0 stays clean
    defect_of = {int(order[k]): name for k, name in enumerate(DEFECTS)}
    gradient_angle = float(rng.uniform(0, 360))
    trailed_angle = float(rng.uniform(0, 180))
    start0 = np.datetime64("2032-03-14T21:30:00")
    frames = []
    for i in range(args.frames):
        defect = defect_of.get(i)
        sky_rate = SKY_RATE * (1.0 + 0.04 * (i / (args.frames - 1)) + 0.015 * rng.standard_normal())
        fwhm = FWHM_PX * (1.0 + 0.03 * rng.standard_normal())
        dx, dy = rng.uniform(-4, 4, 2)
        ccd_temp = CAMERA["set_temp_c"] + 0.08 * rng.standard_normal()
        star_factor, sky_factor, signal_factor, elongation, binning = 1.0, 1.0, 1.0, 1.0, 1
        exptime_header = EXPOSURE_S
        trail = None
        if defect == "cloud":
            sky_factor, star_factor = 1.5, 0.4
        elif defect == "soft-focus":
            fwhm *= 1.6
        elif defect == "trailed":
            elongation = 2.0
        elif defect == "warm":
            ccd_temp = CAMERA["set_temp_c"] + 5.0
        elif defect == "exposure":
            exptime_header, signal_factor = EXPOSURE_S / 2, 0.5
        elif defect == "binning":
            binning = 2
        elif defect == "trail":
            # through a point near the centre, 6 sigma of the sky noise at its crest, 2.5 px wide (FWHM)
            sky_noise = np.sqrt(SKY_RATE * EXPOSURE_S + CAMERA["read_noise"] ** 2)
            trail = dict(x=float(rng.uniform(0.4, 0.6) * nx), y=float(rng.uniform(0.4, 0.6) * ny),
                         angleDegrees=float(rng.uniform(0, 180)), peakElectrons=float(6.0 * sky_noise), fwhmPixels=2.5)
        dark_rate = CAMERA["dark_rate"] * 2.0 ** ((ccd_temp - CAMERA["set_temp_c"]) / CAMERA["dark_doubling_c"])
        seconds = EXPOSURE_S * signal_factor  # what the sensor collected
        sigma = fwhm / GAUSS_FWHM
        # Full-resolution electrons; binning sums 2 x 2 blocks of the expected signal before the noise (charge binning).
        expected = sky_field(nx, ny, sky_rate * sky_factor * seconds, 0.06, gradient_angle) + dark_rate * seconds
        for f, x0, y0 in zip(cat_flux, cat_x, cat_y):
            add_star(expected, f * star_factor * signal_factor, x0 + dx, y0 + dy, sigma, elongation, trailed_angle)
        if trail:
            add_trail(expected, trail["x"], trail["y"], trail["angleDegrees"], trail["peakElectrons"], trail["fwhmPixels"])
        if binning > 1:
            bx, by = nx // binning, ny // binning
            expected = expected[: by * binning, : bx * binning].reshape(by, binning, bx, binning).sum(axis=(1, 3))
        data = to_adu(rng, expected)
        start = start0 + np.timedelta64(int(round(i * CADENCE_S * 1000)), "ms")
        hdr = base_header("LIGHT", exptime_header, start, ccd_temp, binning)
        hdr["FILTER"] = SITE["filter"]
        hdr["OBJECT"] = SITE["target"]
        name = f"light/verdant7_L_{i + 1:03d}.fits"
        fits.PrimaryHDU(data=data, header=hdr).writeto(os.path.join(args.out, name), overwrite=True)
        per_pixel = binning * binning
        frames.append(dict(
            file=name,
            defects=[defect] if defect else [],
            expectedReasons=DEFECTS[defect] if defect else [],
            exposureSeconds=exptime_header,
            collectedSeconds=seconds,
            # sky per (binned) pixel per header second: the rate a sky check should find
            skyRateElectronsPerSecond=sky_rate * sky_factor * per_pixel * seconds / exptime_header,
            darkRateElectronsPerSecond=dark_rate * per_pixel * seconds / exptime_header,
            skyElectrons=sky_rate * sky_factor * per_pixel * seconds,
            darkElectrons=dark_rate * per_pixel * seconds,
            fwhmPixels=fwhm / binning,
            elongation=elongation,
            elongationAngleDegrees=trailed_angle if elongation > 1 else None,
            starFluxFactor=star_factor * signal_factor,
            sensorTemperatureCelsius=float(round(ccd_temp, 2)),
            setTemperatureCelsius=CAMERA["set_temp_c"],
            binning=binning,
            width=data.shape[1],
            height=data.shape[0],
            trail=trail,
        ))

    for k in range(2):
        start = start0 + np.timedelta64(int(round((args.frames + 5 + k) * CADENCE_S * 1000)), "ms")
        ccd_temp = CAMERA["set_temp_c"] + 0.08 * rng.standard_normal()
        hdr = base_header("BIAS", 0.0, start, ccd_temp, 1)
        data = to_adu(rng, np.zeros((ny, nx)))
        fits.PrimaryHDU(data=data, header=hdr).writeto(os.path.join(args.out, f"bias/bias_{k + 1:03d}.fits"), overwrite=True)

    # Extra sky frames, each list checked on its own by the sky test:
    #   crowded/  a 40 % gradient at a random angle and 10-15 times the stars, faint ones included (dN/dm ~ 10^(0.3 m)
    #             over 10 mag), on 384 x 256 px: a whole number of 64 px boxes, so a box grid is symmetric about
    #             the centre and only the stars can pull a box-median sky away from the truth;
    #   edge/     no stars, a 40 % gradient along +x, then along +y, on the full frame (partial boxes at its edges);
    #   faint/    the night's model under a narrowband-like sky of 0.05-0.09 e-/px/s, chosen so that sky + dark lie at
    #             4.5, 5.5, 6.5 and 7.5 ADU above the offset: half-way between two codes, the worst case for a level
    #             resolved to whole codes (REFERENCE.md C.6); stars at a tenth of their broadband flux.
    extra = {"crowded": [], "edge": [], "faint": []}
    serial = [args.frames + 10]

    def write_extra(kind, name, data, sky_rate, exptime, **fields):
        start = start0 + np.timedelta64(int(round(serial[0] * CADENCE_S * 1000)), "ms")
        serial[0] += 1
        hdr = base_header("LIGHT", exptime, start, CAMERA["set_temp_c"], 1)
        hdr["FILTER"] = SITE["filter"]
        hdr["OBJECT"] = SITE["target"]
        path = f"{kind}/{name}"
        fits.PrimaryHDU(data=data, header=hdr).writeto(os.path.join(args.out, path), overwrite=True)
        extra[kind].append(dict(file=path, exposureSeconds=exptime, skyRateElectronsPerSecond=sky_rate,
                                darkRateElectronsPerSecond=CAMERA["dark_rate"], width=data.shape[1], height=data.shape[0], **fields))

    for k in range(2):
        cw, ch, n = 384, 256, 1500 + 750 * k  # stars in proportion to the sky, so they add a like share
        mm = np.log10(1 + rng.random(n) * (10 ** (0.3 * 10) - 1)) / 0.3
        flux = 2.5e5 * 10 ** (-0.4 * mm)
        sky_rate = SKY_RATE * (1.0 + 0.5 * k)
        angle = float(rng.uniform(0, 360))
        expected = sky_field(cw, ch, sky_rate * EXPOSURE_S, 0.4, angle) + CAMERA["dark_rate"] * EXPOSURE_S
        before = expected.sum()
        for f, x0, y0 in zip(flux, rng.uniform(-5, cw + 5, n), rng.uniform(-5, ch + 5, n)):
            add_star(expected, f, x0, y0, FWHM_PX / GAUSS_FWHM)
        # what the stars add, spread over the frame (e-/px/s): a mean-based sky estimate would include it
        star_rate = (expected.sum() - before) / (cw * ch) / EXPOSURE_S
        write_extra("crowded", f"crowded_{k + 1:03d}.fits", to_adu(rng, expected), sky_rate, EXPOSURE_S,
                    gradientPercent=40.0, gradientAngleDegrees=angle, stars=n, starRateElectronsPerSecond=star_rate)
    for k, angle in enumerate((0.0, 90.0)):
        expected = sky_field(nx, ny, SKY_RATE * EXPOSURE_S, 0.4, angle) + CAMERA["dark_rate"] * EXPOSURE_S
        write_extra("edge", f"gradient_{k + 1:03d}.fits", to_adu(rng, expected), SKY_RATE, EXPOSURE_S,
                    gradientPercent=40.0, gradientAngleDegrees=angle, stars=0)
    for k in range(4):
        sky_rate = (4.5 + k) * g / EXPOSURE_S - CAMERA["dark_rate"]
        expected = sky_field(nx, ny, sky_rate * EXPOSURE_S, 0.06, gradient_angle) + CAMERA["dark_rate"] * EXPOSURE_S
        for f, x0, y0 in zip(cat_flux, cat_x, cat_y):
            add_star(expected, f * 0.1, x0, y0, FWHM_PX / GAUSS_FWHM)  # through a narrowband filter: a tenth
        write_extra("faint", f"faint_{k + 1:03d}.fits", to_adu(rng, expected), sky_rate, EXPOSURE_S,
                    gradientPercent=6.0, gradientAngleDegrees=gradient_angle, stars=STARS)

    truth = dict(
        seed=args.seed,
        camera=dict(name=CAMERA["name"], gainElectronsPerAdu=g, readNoiseElectrons=CAMERA["read_noise"],
                    offsetAdu=CAMERA["offset"], darkCurrentElectronsPerSecond=CAMERA["dark_rate"],
                    darkDoublingCelsius=CAMERA["dark_doubling_c"], setTemperatureCelsius=CAMERA["set_temp_c"],
                    pixelSizeMicrons=CAMERA["pixel_um"], adcMaxAdu=CAMERA["adc_max"]),
        site=SITE,
        width=nx,
        height=ny,
        gradientPercent=6.0,
        gradientAngleDegrees=gradient_angle,
        frames=frames,
        biases=["bias/bias_001.fits", "bias/bias_002.fits"],
        crowded=extra["crowded"],
        edge=extra["edge"],
        faint=extra["faint"],
        generator="scripts/reference/independent_night.py (numpy %s, astropy %s)" % (np.__version__, __import__("astropy").__version__),
    )
    with open(os.path.join(args.out, "truth.json"), "w") as fh:
        json.dump(truth, fh, indent=2)
    return 0


if __name__ == "__main__":
    sys.exit(main())
