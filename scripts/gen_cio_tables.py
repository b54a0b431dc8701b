#!/usr/bin/env python3
"""Generates core/src/earth/cip_series.rs: the IAU 2006/2000A series for the coordinates X, Y
of the Celestial Intermediate Pole and for s + XY/2 (IERS Conventions 2010, tables 5.2a, 5.2b
and 5.2d), as rotaframe's own tables.

Where the numbers come from: the published tables in machine-readable form from the package
registries. The copy used is the coefficient data of pyerfa's source distribution on PyPI
(pyerfa 2.0.1.5, the IAU SOFA-derived reference library that the tests compare with; its
liberfa sources hold the tables as C arrays: `xy06.c` for X and Y, `s06.c` for s + XY/2; BSD
licence, "derived, with permission, from the IAU SOFA library"). Only the numbers are taken:
the polynomial parts, the multipliers of the fundamental arguments of each frequency and the
amplitudes with their use (X or Y, sine or cosine, power of t). The generated tables group the
amplitudes by frequency in rotaframe's own layout, and the script checks them by evaluating
the series here (numpy, direct sines) against the library's own functions when pyerfa is
installed.

Usage:
    python3 scripts/gen_cio_tables.py [path/to/pyerfa-2.0.1.5.tar.gz]
(without a path it downloads that sdist from PyPI's simple index and checks its sha256).
The output is committed; regenerate only if this script changes, and say so in the commit.
"""

import hashlib
import io
import math
import re
import sys
import tarfile
import urllib.request
from pathlib import Path

SDIST = "pyerfa-2.0.1.5.tar.gz"
SHA256 = "17d6b24fe4846c65d5e7d8c362dcb08199dc63b30a236aedd73875cc83e1f6c0"
URL = ("https://files.pythonhosted.org/packages/71/39/63cc8291b0cf324ae710df41527faf7d331bce573899199d926b3e492260/"
       + SDIST)
OUT = Path(__file__).resolve().parent.parent / "core" / "src" / "earth" / "cip_series.rs"


def sources(path):
    """The texts of xy06.c and s06.c from the sdist."""
    data = Path(path).read_bytes() if path else urllib.request.urlopen(URL, timeout=60).read()
    digest = hashlib.sha256(data).hexdigest()
    if digest != SHA256:
        sys.exit(f"{SDIST}: sha256 {digest}, expected {SHA256}")
    with tarfile.open(fileobj=io.BytesIO(data)) as tar:
        read = lambda name: tar.extractfile(f"pyerfa-2.0.1.5/liberfa/erfa/src/{name}").read().decode()
        return read("xy06.c"), read("s06.c")


def block(text, declaration):
    """The text between `declaration ... {` and its closing `};`, comments removed."""
    start = text.index(declaration)
    body = text[text.index("{", start) + 1 : text.index("};", start)]
    return re.sub(r"/\*.*?\*/", "", body, flags=re.S)


def numbers(text):
    """The numbers of a C initialiser, as written (strings)."""
    return re.findall(r"[-+]?\d+(?:\.\d*)?(?:[eE][-+]?\d+)?", text)


def micro(text):
    """A value written in arcsec as `mantissa e-6` (s06.c), as the same digits in µas."""
    m = re.fullmatch(r"([-+]?\d+(?:\.\d*)?)e-6", text)
    if not m:
        sys.exit(f"unexpected s06 value {text}")
    return m.group(1)


def parse(xy06, s06):
    xyp = [float(v) for v in numbers(block(xy06, "xyp[2][MAXPT+1]"))]
    mfals = [int(v) for v in numbers(block(xy06, "mfals[][5]"))]
    mfapl = [int(v) for v in numbers(block(xy06, "mfapl[][14]"))]
    nc = [int(v) for v in numbers(block(xy06, "nc[]"))]
    amplitudes = numbers(block(xy06, "double a[]"))
    use = [[int(v) for v in numbers(xy06[xy06.index(f"{n}[] = {{") : xy06.index("};", xy06.index(f"{n}[] = {{"))])] for n in ("jaxy", "jasc", "japt")]
    frequencies = [tuple(mfals[i : i + 5]) + (0,) * 9 for i in range(0, len(mfals), 5)]
    frequencies += [tuple(mfapl[i : i + 14]) for i in range(0, len(mfapl), 14)]
    assert len(nc) == len(frequencies), (len(nc), len(frequencies))
    # (frequency, series 0 X / 1 Y, power) -> [sin, cos] as written (µas).
    terms = {}
    for f, start in enumerate(nc):
        end = nc[f + 1] if f + 1 < len(nc) else len(amplitudes) + 1
        for slot, k in enumerate(range(start - 1, end - 1)):
            xy, sc, power = use[0][slot], use[1][slot], use[2][slot]
            terms.setdefault((f, xy, power), ["0.0", "0.0"])[sc] = amplitudes[k]
    # s + XY/2: polynomial and terms in arcsec; multipliers of l, l', F, D, Om, LVe, LE, pA.
    sp = [micro(v) for v in numbers(block(s06, "sp[]"))]
    places = [0, 1, 2, 3, 4, 6, 7, 13]
    index = {m: i for i, m in enumerate(frequencies)}
    for power in range(5):
        values = numbers(block(s06, f"TERM s{power}[]"))
        for i in range(0, len(values), 10):
            row = [0] * 14
            for place, v in zip(places, values[i : i + 8]):
                row[place] = int(v)
            key = tuple(row)
            if key not in index:
                index[key] = len(frequencies)
                frequencies.append(key)
            terms[(index[key], 2, power)] = [micro(values[i + 8]), micro(values[i + 9])]
    return xyp, sp, frequencies, terms


def fundamental_arguments(t):
    """The 14 fundamental arguments (rad) at t Julian centuries of TT from J2000 (IERS
    Conventions 2010, eqs. 5.43 and 5.44), as core/src/earth/cip.rs evaluates them."""
    arcsec = math.pi / 648000.0
    delaunay = [
        (485868.249036, 1717915923.2178, 31.8792, 0.051635, -0.00024470),
        (1287104.79305, 129596581.0481, -0.5532, 0.000136, -0.00001149),
        (335779.526232, 1739527262.8478, -12.7512, -0.001037, 0.00000417),
        (1072260.70369, 1602961601.2090, -6.3706, 0.006593, -0.00003169),
        (450160.398036, -6962890.5431, 7.4722, 0.007702, -0.00005939),
    ]
    out = [sum(c * t**k for k, c in enumerate(p)) % 1296000.0 * arcsec for p in delaunay]
    planets = [(4.402608842, 2608.7903141574), (3.176146697, 1021.3285546211), (1.753470314, 628.3075849991),
               (6.203480913, 334.0612426700), (0.599546497, 52.9690962641), (0.874016757, 21.3299104960),
               (5.481293872, 7.4781598567), (5.311886287, 3.8133035638)]
    out += [(a + b * t) % (2 * math.pi) for a, b in planets]
    out.append((0.02438175 + 0.00000538691 * t) * t)
    return out


def evaluate(xyp, sp, frequencies, terms, t):
    """X, Y (rad) and s + XY/2 (rad) by direct sines, to check the tables."""
    phi = fundamental_arguments(t)
    totals = [0.0, 0.0, 0.0]
    for (f, series, power), (s, c) in terms.items():
        arg = sum(m * p for m, p in zip(frequencies[f], phi))
        totals[series] += (float(s) * math.sin(arg) + float(c) * math.cos(arg)) * t**power
    uas = math.pi / 648000.0 * 1e-6
    x = sum(c * t**k for k, c in enumerate(xyp[:6])) * math.pi / 648000.0 + totals[0] * uas
    y = sum(c * t**k for k, c in enumerate(xyp[6:])) * math.pi / 648000.0 + totals[1] * uas
    s_plus = sum(float(c) * t**k for k, c in enumerate(sp)) * uas + totals[2] * uas
    return x, y, s_plus


def check(tables):
    try:
        import erfa
    except ImportError:
        print("pyerfa not installed: the tables are not checked here (tests/python/test_celestial.py checks them)")
        return
    worst = 0.0
    for jd in [2451545.0, 2415020.5, 2488070.5, 2460000.5, 2440000.5, 2470000.25]:
        t = (jd - 2451545.0) / 36525.0
        x, y, s_plus = evaluate(*tables, t)
        rx, ry = erfa.xy06(jd, 0.0)
        rs = erfa.s06(jd, 0.0, rx, ry)
        worst = max(worst, abs(x - rx), abs(y - ry), abs(s_plus - rx * ry / 2 - rs))
    print(f"largest difference from erfa.xy06 / erfa.s06 over six dates, 1900 to 2100: {worst:.2e} rad")
    assert worst < 1e-13, "the tables do not reproduce the reference"


def write(xyp, sp, frequencies, terms):
    lines = [
        "//! The IAU 2006/2000A series of the CIP coordinates X, Y and of s + XY/2 (IERS Conventions",
        "//! 2010, tables 5.2a, 5.2b and 5.2d), generated by `scripts/gen_cio_tables.py` from the",
        "//! coefficient data of pyerfa 2.0.1.5's source distribution on PyPI (derived from the IAU",
        "//! SOFA library; BSD licence). Do not edit: regenerate.",
        "",
        "// 3.14 µas is a coefficient, not π.",
        "#![allow(clippy::approx_constant)]",
        "",
        "/// Polynomial part of X (arcsec), by power of t (Julian centuries of TT from J2000).",
        f"pub(super) const X_POLYNOMIAL: [f64; 6] = [{', '.join(map(str, xyp[:6]))}];",
        "/// Polynomial part of Y (arcsec).",
        f"pub(super) const Y_POLYNOMIAL: [f64; 6] = [{', '.join(map(str, xyp[6:]))}];",
        "/// Polynomial part of s + XY/2 (µas).",
        f"pub(super) const S_POLYNOMIAL: [f64; 6] = [{', '.join(sp)}];",
        "",
        "/// The multipliers of the 14 fundamental arguments (l, l', F, D, Ω, L_Me, L_Ve, L_E, L_Ma,",
        "/// L_J, L_Sa, L_U, L_Ne, p_A) of each frequency.",
        "#[rustfmt::skip]",
        f"pub(super) static FREQUENCIES: [[i8; 14]; {len(frequencies)}] = [",
    ]
    lines += [f"    [{', '.join(map(str, f))}]," for f in frequencies]
    lines += ["];", ""]
    ordered = sorted(terms.items())
    lines += [
        "/// The amplitudes: (frequency, series (0: X, 1: Y, 2: s + XY/2), power of t, sine and cosine",
        "/// coefficients in µas), grouped by frequency.",
        "#[rustfmt::skip]",
        f"pub(super) static AMPLITUDES: [(u16, u8, u8, f64, f64); {len(ordered)}] = [",
    ]
    fix = lambda v: v if ("." in v or "e" in v.lower()) else v + ".0"
    lines += [f"    ({f}, {series}, {power}, {fix(s)}, {fix(c)})," for (f, series, power), (s, c) in ordered]
    lines += ["];", ""]
    OUT.write_text("\n".join(lines))
    print(f"wrote {OUT} ({len(frequencies)} frequencies, {len(ordered)} amplitude rows)")


def main():
    xy06, s06 = sources(sys.argv[1] if len(sys.argv) > 1 else None)
    tables = parse(xy06, s06)
    check(tables)
    write(*tables)


if __name__ == "__main__":
    main()
