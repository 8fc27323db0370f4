#!/usr/bin/env python3
"""Independent frame generator for the camera tests (numpy 1.24 + astropy 5.2, Debian python3-numpy/python3-astropy).

Writes bias, flat, dark (and optionally light) frames of an invented camera with known truth into a folder,
plus truth.json. It shares no code with the TypeScript library: pixel values come from numpy's Poisson and
normal generators and are written by astropy.io.fits, so the library's photon-transfer analysis is checked
against a separate implementation of the sensor model (REFERENCE.md B.1: S = n_e/g, σ² = S/g + σ_R²/g² + Δ²/12).

Cameras (made up for testing):
  mono14   256 x 256, 14-bit, step 1, g = 1.5 e-/ADU, σ_R = 3.5 e-, offset 500 ADU, pixel full well 20 000 e-
           (pixel-limited), PRNU 1 %, dark 0.02 e-/s at -10 °C doubling every 6 °C, hot pixels, no glow.
  colour12 512 x 256 RGGB, 12-bit ADC shifted to 16 bits (step 16), native g = 2.0 e-/ADU (0.125 e-/file ADU),
           σ_R = 3.0 e-, offset 256 native ADU, ADC-limited (pixel well 14 000 e-), PRNU 0.8 %, dark 0.05 e-/s at
           0 °C doubling every 5.5 °C, hot pixels, amp glow on the right edge.

Usage: independent_camera.py --out DIR --camera mono14|colour12 [--seed N] [--lights N] [--sky-rate E_PER_S]
"""
import argparse
import json
import os
import sys

import numpy as np
from astropy.io import fits

CAMERAS = {
    "mono14": dict(
        width=256, height=256, bits=14, step=1, native_gain=1.5, read_noise=3.5, offset_native=500,
        pixel_full_well=20000.0, prnu=0.01, vignetting=0.02, bayer=None, channel_response=None,
        dark_rate=0.02, dark_reference_c=-10.0, doubling_c=6.0, dark_temperatures=[-10.0, 0.0],
        hot_fraction=5e-4, glow_rate=0.0, flux=2000.0,
    ),
    "colour12": dict(
        width=512, height=256, bits=12, step=16, native_gain=2.0, read_noise=3.0, offset_native=256,
        pixel_full_well=14000.0, prnu=0.008, vignetting=0.02, bayer="RGGB",
        channel_response={"R": 0.6, "G": 1.0, "B": 0.5},
        dark_rate=0.05, dark_reference_c=0.0, doubling_c=5.5, dark_temperatures=[0.0, 10.0],
        hot_fraction=5e-4, glow_rate=1.5, flux=1500.0,
    ),
}

# Flat levels as fractions of the effective full well at the centre of the brightest channel.
LEVELS = [0.03, 0.08, 0.12, 0.16, 0.2, 0.25, 0.3, 0.35, 0.4, 0.45, 0.5, 0.55, 0.6, 0.65, 0.75, 0.83, 0.9, 0.94, 0.97,
          0.99, 1.01, 1.04, 1.1]
DARK_EXPOSURES = [60.0, 180.0, 300.0]
BIAS_FRAMES = 4
COSMICS_PER_FRAME = 5


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", required=True)
    ap.add_argument("--camera", choices=sorted(CAMERAS), default="mono14")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--lights", type=int, default=0)
    ap.add_argument("--sky-rate", type=float, default=3.0, help="sky electrons per pixel per second in the lights")
    args = ap.parse_args()
    cam = CAMERAS[args.camera]
    rng = np.random.default_rng(args.seed)
    w, h = cam["width"], cam["height"]
    g = cam["native_gain"]
    adc_max_native = 2 ** cam["bits"] - 1
    step = cam["step"]
    adc_limit_e = (adc_max_native - cam["offset_native"]) * g
    full_well = min(cam["pixel_full_well"], adc_limit_e)

    y, x = np.mgrid[0:h, 0:w].astype(np.float64)
    r2 = ((x - (w - 1) / 2) / (w / 2)) ** 2 + ((y - (h - 1) / 2) / (h / 2)) ** 2
    illumination = 1.0 - cam["vignetting"] * r2 / 2.0  # gentle radial fall-off, 1 at the centre
    prnu_map = 1.0 + cam["prnu"] * rng.standard_normal((h, w))
    response = np.ones((h, w))
    if cam["bayer"]:
        pat = cam["bayer"]
        for k, colour in enumerate(pat):
            dx, dy = k % 2, k // 2
            response[dy::2, dx::2] = cam["channel_response"][colour]
    hot = np.ones((h, w))
    n_hot = int(round(cam["hot_fraction"] * w * h))
    hot_index = rng.choice(w * h, size=n_hot, replace=False)
    hot.flat[hot_index] = rng.uniform(50.0, 500.0, size=n_hot)
    glow = np.zeros((h, w))
    if cam["glow_rate"] > 0:
        glow = cam["glow_rate"] * np.exp(-((w - 1) - x) / 20.0)

    def dark_rate_at(t_c):
        return cam["dark_rate"] * 2.0 ** ((t_c - cam["dark_reference_c"]) / cam["doubling_c"])

    def expose(signal_rate, seconds, t_c, cosmics=True):
        """Electrons → native ADU → file ADU (uint16)."""
        lam = signal_rate * seconds + (dark_rate_at(t_c) * hot + glow) * seconds
        e = rng.poisson(lam).astype(np.float64)
        if cosmics and seconds > 0:
            for _ in range(COSMICS_PER_FRAME):
                e[rng.integers(0, h), rng.integers(0, w)] += 5000.0
        e = np.minimum(e, cam["pixel_full_well"])
        native = e / g + cam["offset_native"] + rng.normal(0.0, cam["read_noise"] / g, size=(h, w))
        native = np.clip(np.floor(native + 0.5), 0, adc_max_native)
        return (native * step).astype(np.uint16)

    os.makedirs(args.out, exist_ok=True)
    files = []
    clock = [0.0]  # seconds since the session start, for DATE-OBS

    def write(sub, name, data, kind, exptime, t_c, extra=None):
        folder = os.path.join(args.out, sub)
        os.makedirs(folder, exist_ok=True)
        hdr = fits.Header()
        hdr["IMAGETYP"] = kind
        hdr["EXPTIME"] = (float(exptime), "exposure, s")
        start = np.datetime64("2031-04-02T20:00:00") + np.timedelta64(int(round(clock[0] * 1000)), "ms")
        hdr["DATE-OBS"] = (str(start), "start of exposure, UTC")
        clock[0] += exptime + 2.0
        hdr["CCD-TEMP"] = (float(t_c + rng.normal(0, 0.05)), "sensor temperature, C")
        hdr["SET-TEMP"] = float(t_c)
        hdr["GAIN"] = (100, "gain setting")
        hdr["OFFSET"] = (50, "offset setting")
        hdr["XBINNING"] = 1
        hdr["YBINNING"] = 1
        hdr["INSTRUME"] = f"independent test camera {args.camera}"
        if cam["bayer"]:
            hdr["BAYERPAT"] = cam["bayer"]
            hdr["ROWORDER"] = "TOP-DOWN"
        for k, v in (extra or {}).items():
            hdr[k] = v
        path = os.path.join(folder, name)
        fits.PrimaryHDU(data=data, header=hdr).writeto(path, overwrite=True)
        files.append(os.path.relpath(path, args.out))

    ref_t = cam["dark_temperatures"][0]
    for i in range(BIAS_FRAMES):
        write("bias", f"bias_{i + 1:03d}.fits", expose(np.zeros((h, w)), 0.0, ref_t, cosmics=False), "Bias Frame", 0.0, ref_t)
    # brightest channel reaches the effective full well at level 1.0
    peak_response = float(response.max())
    flat_rate = cam["flux"] * illumination * prnu_map * response / peak_response
    levels = []
    for k, level in enumerate(LEVELS):
        seconds = level * full_well / cam["flux"]
        for side in "ab":
            write("flat", f"flat_{k + 1:02d}{side}.fits", expose(flat_rate, seconds, ref_t), "Flat Field", seconds, ref_t)
        levels.append(dict(fraction=level, exposureSeconds=seconds))
    for t_c in cam["dark_temperatures"]:
        for seconds in DARK_EXPOSURES:
            for side in "ab":
                tag = f"{'m' if t_c < 0 else 'p'}{abs(int(t_c)):02d}C_{int(seconds)}s_{side}"
                write("dark", f"dark_{tag}.fits", expose(np.zeros((h, w)), seconds, t_c), "Dark Frame", seconds, t_c)
    if args.lights > 0:
        sky = args.sky_rate * illumination * prnu_map * response / peak_response
        for i in range(args.lights):
            rate = sky.copy()
            for _ in range(12):
                cx, cy = rng.uniform(10, w - 10), rng.uniform(10, h - 10)
                rate += rng.uniform(50, 2000) * np.exp(-((x - cx) ** 2 + (y - cy) ** 2) / (2 * 1.5 ** 2))
            write("light", f"light_{i + 1:03d}.fits", expose(rate, 120.0, ref_t), "Light Frame", 120.0, ref_t, {"FILTER": "L"})

    truth = dict(
        camera=args.camera,
        seed=args.seed,
        width=w,
        height=h,
        gainElectronsPerAdu=g / step,
        nativeGainElectronsPerAdu=g,
        readNoiseElectrons=cam["read_noise"],
        offsetAdu=cam["offset_native"] * step,
        quantizationStepAdu=step,
        fullWellElectrons=full_well,
        pixelFullWellElectrons=cam["pixel_full_well"],
        adcLimitElectrons=adc_limit_e,
        adcMaxAdu=adc_max_native * step,
        fullWellLimitedBy="adc" if adc_limit_e < cam["pixel_full_well"] else "pixel",
        prnuPercent=cam["prnu"] * 100,
        darkCurrentElectronsPerSecond=dark_rate_at(ref_t),
        darkCurrentByTemperature={str(t): dark_rate_at(t) for t in cam["dark_temperatures"]},
        referenceTemperatureCelsius=ref_t,
        darkDoublingCelsius=cam["doubling_c"],
        hotPixelCount=n_hot,
        ampGlow=cam["glow_rate"] > 0,
        bayerPattern=cam["bayer"],
        channelResponse=cam["channel_response"],
        skyElectronsPerSecond=args.sky_rate if args.lights > 0 else None,
        flatLevels=levels,
        files=files,
        generator="scripts/reference/independent_camera.py (numpy %s, astropy %s)" % (np.__version__, __import__("astropy").__version__),
    )
    with open(os.path.join(args.out, "truth.json"), "w") as fh:
        json.dump(truth, fh, indent=2)
    return 0


if __name__ == "__main__":
    sys.exit(main())
