#!/usr/bin/python3
"""Reference values of real FITS files from other writers, as astropy reads them.

Source of truth: astropy 5.2.1 ``astropy.io.fits`` with numpy 1.24 (Debian bookworm
``python3-astropy``, ``python3-numpy``). Datasets:

* ``astropy-test-data``: the FITS files shipped with astropy's own tests
  (``astropy/io/fits/tests/data``);
* ``eso-midas-testdata``: the test images of the Debian package ``eso-midas-testdata``
  (``/usr/lib/eso-midas/22FEB/test``).

A file belongs to a dataset when its first bytes are ``SIMPLE  =``. For every HDU astropy opens
the output lists its kind, selected keyword values (parsed by astropy from the header bytes as
stored) and CHECKSUM/DATASUM status (computed with numpy over the stored bytes; astropy's own
verdict is added where it differs); for image HDUs
(primary, IMAGE extensions and tile-compressed images, which astropy decodes) the shape
(NAXIS1 first), the element type, the sha256 of the physical values as little-endian float64 in
file order (every NaN written as 0x7ff8000000000000), min, max, exact sum, NaN count and, where
BLANK applies, how astropy treated the blank pixels. Paths are relative to the dataset root.
Output is deterministic JSON (sorted keys) so that a regenerated file can be compared byte for byte.

Usage: astropy_fits_goldens.py [--out FILE] [--astropy-data DIR] [--midas-test DIR]
"""

import argparse
import hashlib
import json
import math
import os
import subprocess
import sys
import warnings

import astropy
import numpy as np
from astropy.io import fits
from astropy.utils.exceptions import AstropyWarning

ASTROPY_DATA = os.path.join(os.path.dirname(fits.__file__), "tests", "data")
MIDAS_TEST = "/usr/lib/eso-midas/22FEB/test"

# Keywords looked up in every HDU; those missing are listed as absent, so a reader that invents a
# keyword is caught.
FIXED_KEYWORDS = [
    "SIMPLE", "XTENSION", "BITPIX", "NAXIS", "PCOUNT", "GCOUNT", "EXTEND", "GROUPS",
    "BZERO", "BSCALE", "BLANK", "OBJECT", "EXPTIME", "DATE-OBS", "DATE", "ORIGIN",
    "TELESCOP", "INSTRUME", "EXTNAME", "BUNIT", "EQUINOX", "CRVAL1", "CRPIX1", "CDELT1",
    "CTYPE1", "ZIMAGE", "ZBITPIX", "ZCMPTYPE", "CHECKSUM", "DATASUM",
]
# How many further valued cards of each value type to pick, in file order.
PICKS_PER_TYPE = 4
PICKS_LONG_STRING = 6
PICKS_HIERARCH = 6
COMMENTARY = {"COMMENT", "HISTORY", "", "CONTINUE", "END"}

CANONICAL_NAN = np.uint64(0x7FF8000000000000)
MAX_SAFE_INTEGER = 2**53 - 1


def is_fits(path):
    with open(path, "rb") as fh:
        return fh.read(9) == b"SIMPLE  ="


def list_dataset(tag, root):
    found = []
    for dirpath, dirnames, filenames in os.walk(root):
        dirnames.sort()
        for name in sorted(filenames):
            full = os.path.join(dirpath, name)
            if os.path.isfile(full) and not os.path.islink(full) and is_fits(full):
                found.append((tag, os.path.relpath(full, root), full))
    return found


def json_number(x):
    """A float as JSON: finite values as numbers, the rest as strings."""
    x = float(x)
    if math.isnan(x):
        return "NaN"
    if math.isinf(x):
        return "Infinity" if x > 0 else "-Infinity"
    return x


def encode_value(value):
    """A card value as {type, value}; integers beyond 2^53 and non-finite floats as strings."""
    if isinstance(value, (bool, np.bool_)):
        return {"type": "bool", "value": bool(value)}
    if isinstance(value, (int, np.integer)):
        v = int(value)
        return {"type": "int", "value": v if abs(v) <= MAX_SAFE_INTEGER else str(v)}
    if isinstance(value, (float, np.floating)):
        return {"type": "float", "value": json_number(value)}
    if isinstance(value, (complex, np.complexfloating)):
        return {"type": "complex", "value": {"re": json_number(value.real), "im": json_number(value.imag)}}
    if isinstance(value, str):
        return {"type": "str", "value": value}
    if value is None or isinstance(value, fits.card.Undefined):
        return {"type": "undefined", "value": None}
    return {"type": "unknown", "value": repr(value)}


def card_keyword(card):
    try:
        return card.keyword
    except Exception:  # noqa: BLE001 - an unparsable card has no usable keyword
        return None


def keyword_values(header):
    """The fixed keywords plus a deterministic pick of other valued cards (first occurrence wins,
    as astropy's ``header[keyword]`` does). Returns (values by keyword, absent fixed keywords);
    every card astropy refuses to parse is included."""
    cards = list(header.cards)
    counts = {}
    first = {}
    for card in cards:
        kw = card_keyword(card)
        if kw is None:
            continue
        counts[kw] = counts.get(kw, 0) + 1
        first.setdefault(kw, card)

    def entry(kw):
        card = first[kw]
        try:
            out = encode_value(card.value)
        except Exception as exc:  # noqa: BLE001 - record what astropy refuses
            return {"type": "astropy-error", "value": None, "astropyError": type(exc).__name__}
        if counts[kw] > 1:
            out["occurrences"] = counts[kw]
        return out

    chosen = {}
    absent = []
    fixed = list(FIXED_KEYWORDS)
    if "NAXIS" in first and isinstance(first["NAXIS"].value, int):
        fixed += ["NAXIS%d" % n for n in range(1, first["NAXIS"].value + 1)]
    for kw in fixed:
        if kw in first:
            chosen[kw] = entry(kw)
        else:
            absent.append(kw)

    per_type = {}
    long_strings = 0
    hierarch = 0
    for card in cards:
        kw = card_keyword(card)
        if kw is None or kw in chosen or kw in COMMENTARY or counts.get(kw, 0) > 1:
            continue
        e = entry(kw)  # before card.image: astropy rewrites an unparsable card when it re-forms it
        try:
            image = card.image
        except Exception:  # noqa: BLE001 - astropy cannot re-form this card; its value is recorded as an error
            image = ""
        if image.startswith("HIERARCH"):
            if hierarch < PICKS_HIERARCH:
                chosen[kw] = e
                hierarch += 1
            continue
        if len(image) > 80:  # a long string continued with CONTINUE cards
            if long_strings < PICKS_LONG_STRING:
                chosen[kw] = e
                long_strings += 1
            continue
        t = e["type"]
        if t == "astropy-error" or per_type.get(t, 0) < PICKS_PER_TYPE:
            chosen[kw] = e
            per_type[t] = per_type.get(t, 0) + 1
    return chosen, sorted(absent)


def hdu_kind(hdu):
    if isinstance(hdu, fits.CompImageHDU):
        return "compressed"
    if isinstance(hdu, fits.GroupsHDU):
        return "groups"
    if isinstance(hdu, fits.PrimaryHDU):
        return "primary"
    if isinstance(hdu, fits.ImageHDU):
        return "image"
    if isinstance(hdu, fits.BinTableHDU):
        return "bintable"
    if isinstance(hdu, fits.TableHDU):
        return "table"
    return "other"


CHECKSUM_STATUS = {1: "valid", 0: "invalid", 2: "absent"}


def astropy_checksum_status(hdu):
    """astropy's verify_checksum/verify_datasum. Note: astropy 5.2.1 sums the header as it
    re-serialises it, so a card it rewrites on reading makes a correct CHECKSUM look invalid."""
    out = {}
    for name, method in (("astropyChecksum", hdu.verify_checksum), ("astropyDatasum", hdu.verify_datasum)):
        try:
            out[name] = CHECKSUM_STATUS.get(method(), "unknown")
        except Exception as exc:  # noqa: BLE001
            out[name] = "astropy-error:" + type(exc).__name__
    return out


def ones_complement_sum(data):
    """32-bit ones'-complement sum of big-endian words (checksum convention, FITS 4.0 App. J)."""
    usable = len(data) - len(data) % 4
    total = int(np.frombuffer(data[:usable], dtype=">u4").astype(np.uint64).sum())
    while total >> 32:
        total = (total & 0xFFFFFFFF) + (total >> 32)
    return total


def stored_checksum_status(header, header_bytes, data_bytes):
    """CHECKSUM/DATASUM checked over the stored bytes with numpy (the HDU must sum to 0xFFFFFFFF;
    DATASUM must equal the data's sum), independent of how astropy re-serialises the header."""
    out = {"checksum": "absent", "datasum": "absent"}
    data_sum = ones_complement_sum(data_bytes)
    if "CHECKSUM" in header:
        whole = ones_complement_sum(header_bytes) + data_sum
        while whole >> 32:
            whole = (whole & 0xFFFFFFFF) + (whole >> 32)
        out["checksum"] = "valid" if whole == 0xFFFFFFFF else "invalid"
    if "DATASUM" in header:
        try:
            out["datasum"] = "valid" if int(str(header["DATASUM"]).strip()) == data_sum else "invalid"
        except Exception:  # noqa: BLE001 - an unreadable DATASUM cannot match
            out["datasum"] = "invalid"
    return out


def pixel_summary(data):
    """Shape (NAXIS1 first), element type and value summary of a decoded image."""
    values = np.ascontiguousarray(data, dtype="<f8").ravel()  # C order of numpy = FITS order
    nan_mask = np.isnan(values)
    canonical = values.copy()
    canonical.view("<u8")[nan_mask] = CANONICAL_NAN
    finite_or_inf = values[~nan_mask]
    out = {
        "shape": [int(n) for n in reversed(data.shape)],
        "elementType": data.dtype.newbyteorder("=").name,
        "pixelCount": int(values.size),
        "sha256": hashlib.sha256(canonical.tobytes()).hexdigest(),
        "nanCount": int(nan_mask.sum()),
        "infCount": int(np.isinf(values).sum()),
    }
    if finite_or_inf.size:
        out["min"] = json_number(finite_or_inf.min())
        out["max"] = json_number(finite_or_inf.max())
        try:
            out["sum"] = json_number(math.fsum(finite_or_inf.tolist()))  # exactly rounded
        except (ValueError, OverflowError):
            out["sum"] = json_number(np.sum(finite_or_inf))
        out["sumAbs"] = json_number(math.fsum(np.abs(finite_or_inf).tolist()))
    else:
        out["min"] = out["max"] = out["sum"] = out["sumAbs"] = None
    return out


def blank_summary(raw_header, data_bytes):
    """How astropy treats BLANK (integer BITPIX only): stored value, how many stored pixels equal it,
    and whether astropy turned them into NaN (it does when it converts to float, i.e. when the
    data are scaled or BLANK is present without the unsigned convention; FITS 3.0 sec. 4.4.2.5)."""
    bitpix = raw_header.get("BITPIX")
    if "BLANK" not in raw_header or not isinstance(bitpix, int) or bitpix <= 0:
        return None
    blank = int(raw_header["BLANK"])
    dtype = {8: ">u1", 16: ">i2", 32: ">i4", 64: ">i8"}[bitpix]
    count = int(raw_header.get("NAXIS", 0) and np.prod([raw_header["NAXIS%d" % (n + 1)] for n in range(raw_header["NAXIS"])]))
    stored = np.frombuffer(data_bytes[: count * abs(bitpix) // 8], dtype=dtype)  # before any scaling
    out = {"stored": str(blank), "storedCount": int((stored == blank).sum())}
    if raw_header.get("BSCALE", 1) == 1 and raw_header.get("BZERO", 0) == 0:
        # Unscaled integers: astropy goes to float only because BLANK is present; this is the
        # integer type the values have without it.
        out["integerElementType"] = {8: "uint8", 16: "int16", 32: "int32", 64: "int64"}[bitpix]
    return out


def read_file(tag, rel, full):
    record = {"dataset": tag, "path": rel, "bytes": os.path.getsize(full)}
    hdus = []
    with warnings.catch_warnings(record=True) as caught, np.errstate(all="ignore"):
        warnings.simplefilter("always")
        # Pass 1: each header parsed by astropy's Header.fromstring from the bytes as stored (an
        # HDUList edits headers: it inserts EXTEND and rewrites cards it "fixes"); compressed
        # HDUs as their binary tables; checksums.
        raw = []
        with open(full, "rb") as fh:
            file_bytes = fh.read()
        try:
            with fits.open(full, memmap=False, lazy_load_hdus=True, disable_image_compression=True) as hl:
                i = 0
                while True:
                    try:
                        hdu = hl[i]
                    except IndexError:
                        break
                    # Offsets as astropy found them (what HDUList.fileinfo reports as hdrLoc, datLoc,
                    # datSpan; read directly because fileinfo fails on a header with a bad card).
                    data_at = hdu._data_offset
                    header_bytes = file_bytes[hdu._header_offset : data_at]
                    data_bytes = file_bytes[data_at : data_at + hdu._data_size]
                    try:
                        header = fits.Header.fromstring(header_bytes.decode("latin-1"))
                        keywords, absent = keyword_values(header)
                        checks = stored_checksum_status(header, header_bytes, data_bytes)
                        for name, status in astropy_checksum_status(hdu).items():
                            if status != checks[name[len("astropy") :].lower()]:
                                checks[name] = status  # recorded only where astropy disagrees
                        raw.append((keywords, absent, checks, header, data_bytes, None))
                    except Exception as exc:  # noqa: BLE001
                        raw.append(({}, [], {}, hdu.header, data_bytes, type(exc).__name__))
                    i += 1
        except Exception as exc:  # noqa: BLE001 - astropy refusing the file is a result
            record["astropyError"] = type(exc).__name__
            record["astropyStoppedAtHdu"] = len(raw)
        # Pass 2: data as astropy presents them (scaling, unsigned convention, decompression).
        try:
            with fits.open(full, memmap=False, lazy_load_hdus=True) as hl:
                for i in range(len(raw)):
                    hdu = hl[i]
                    keywords, absent, checksums, raw_header, data_bytes, header_error = raw[i]
                    entry = {"index": i, "kind": hdu_kind(hdu), "keywords": keywords, "absentKeywords": absent, **checksums}
                    if header_error is not None:
                        entry["astropyHeaderError"] = header_error
                    if entry["kind"] in ("primary", "image", "compressed"):
                        if entry["kind"] == "compressed":
                            entry["compressed"] = {
                                "bitpix": hdu.header.get("BITPIX"),
                                "axes": [hdu.header.get("NAXIS%d" % (n + 1)) for n in range(hdu.header.get("NAXIS", 0))],
                                "algorithm": raw_header.get("ZCMPTYPE"),
                            }
                        try:
                            data = hdu.data
                            if data is not None and data.size > 0:
                                entry["image"] = pixel_summary(data)
                                blank = blank_summary(raw_header, data_bytes) if entry["kind"] != "compressed" else None
                                if blank is not None:
                                    blank["astropyMadeNaN"] = data.dtype.kind == "f"
                                    entry["image"]["blank"] = blank
                            elif data is not None:
                                entry["emptyShape"] = [int(n) for n in reversed(data.shape)]
                        except Exception as exc:  # noqa: BLE001
                            entry["astropyError"] = type(exc).__name__
                    hdus.append(entry)
        except Exception as exc:  # noqa: BLE001
            record.setdefault("astropyError", type(exc).__name__)
    record["hdus"] = hdus
    # Only astropy's own warnings about the file (not numpy's about NaN casts, nor ResourceWarning).
    record["astropyWarnings"] = sorted({w.category.__name__ for w in caught if issubclass(w.category, AstropyWarning)})
    return record


def package_version(name):
    try:
        out = subprocess.run(["dpkg-query", "-W", "-f", "${Version}", name], capture_output=True, text=True, check=True)
        return out.stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return None


def main(argv):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", help="output file (default: stdout)")
    parser.add_argument("--astropy-data", default=ASTROPY_DATA)
    parser.add_argument("--midas-test", default=MIDAS_TEST)
    args = parser.parse_args(argv)

    files = list_dataset("astropy-test-data", args.astropy_data) + list_dataset("eso-midas-testdata", args.midas_test)
    files.sort(key=lambda f: (f[0], f[1]))
    document = {
        "schema": "subgauge.reference.astropy-fits/1",
        "generator": "scripts/reference/astropy_fits_goldens.py",
        "sources": {
            "astropy": astropy.__version__,
            "numpy": np.__version__,
            "eso-midas-testdata": package_version("eso-midas-testdata"),
            "python3-astropy": package_version("python3-astropy"),
        },
        "hashOf": "sha256 of physical values as little-endian float64 in file order, NaN as 0x7ff8000000000000",
        "files": [read_file(*f) for f in files],
    }
    text = json.dumps(document, indent=1, sort_keys=True, ensure_ascii=True) + "\n"
    if args.out:
        with open(args.out, "w", encoding="ascii") as fh:
            fh.write(text)
    else:
        sys.stdout.write(text)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
