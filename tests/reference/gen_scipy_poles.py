#!/usr/bin/env python3
"""Generate scipy.signal reference vectors for Bandwright's prototype poles and frequency transforms.

Run from the repository root:

    python3 tests/reference/gen_scipy_poles.py

It writes crate/src/testdata/scipy_poles.json, which the unit tests in crate/src/prototype.rs and
crate/src/transform.rs read with include_str!. The output depends only on the SciPy/NumPy/Python
versions, which are written into the file; keys are sorted and floats use Python's shortest round-trip
repr, so a rerun with the same versions gives the same bytes.

Sources (the independent oracle for the Rust code):
  - scipy.signal.buttap(n)                 Butterworth, -3.0103 dB at omega = 1 rad/s
  - scipy.signal.cheb1ap(n, rp)            Chebyshev type I, ripple edge at omega = 1 rad/s
  - scipy.signal.besselap(n, norm)         Bessel, norm = 'mag', 'delay' and 'phase'
  - scipy.signal.lp2lp_zpk / lp2hp_zpk / lp2bp_zpk / lp2bs_zpk(z, p, k, wo[, bw])
                                           frequency transformations, wo and bw in rad/s
  - scipy.signal.freqs_zpk(z, p, k, worN)  complex analog response H(j omega), omega in rad/s

Conventions of the data:
  - Complex numbers are [re, im] pairs, in the order scipy returns them. The Rust tests match poles by
    nearest neighbour, so the order does not matter to them.
  - Each prototype carries its response at PROTOTYPE_OMEGA (rad/s).
  - Each transform case states the band in Hz the way the Rust API takes it (cutoff_hz, or low_hz and
    high_hz, or centre_hz and bandwidth_hz) and the wo/bw in rad/s handed to scipy, computed here from
    those Hz values as wo = 2*pi*sqrt(low*high), bw = 2*pi*(high - low) (or wo = 2*pi*centre,
    bw = 2*pi*bandwidth). Its response is at omega = wo * TRANSFORM_OMEGA_FACTORS, none of which is a
    transmission zero (the band-stop notch sits at exactly wo, which is left out).
"""

import json
import math
import platform
from pathlib import Path

import numpy as np
import scipy
import scipy.signal as signal

GENERATOR = "tests/reference/gen_scipy_poles.py"
OUT_PATH = Path(__file__).resolve().parents[2] / "crate" / "src" / "testdata" / "scipy_poles.json"

ORDERS = range(1, 9)
CHEBYSHEV_RIPPLES_DB = (0.5, 1.0)
BESSEL_NORMS = ("mag", "delay", "phase")
PROTOTYPE_OMEGA = (0.1, 0.5, 1.0, 2.0, 10.0)
TRANSFORM_OMEGA_FACTORS = (0.01, 0.3, 0.8, 0.97, 1.03, 1.25, 3.0, 100.0)


def pairs(values):
    return [[float(np.real(v)), float(np.imag(v))] for v in np.atleast_1d(values)]


def prototype(kind, n, ripple_db=None, norm=None):
    if kind == "butterworth":
        z, p, k = signal.buttap(n)
    elif kind == "chebyshev":
        z, p, k = signal.cheb1ap(n, ripple_db)
    elif kind == "bessel":
        z, p, k = signal.besselap(n, norm=norm)
    else:
        raise ValueError(kind)
    return np.asarray(z, dtype=complex), np.asarray(p, dtype=complex), float(k)


def response(z, p, k, omega):
    w, h = signal.freqs_zpk(z, p, k, worN=np.asarray(omega, dtype=float))
    # freqs_zpk evaluates the products directly; check it against the polynomial form as a sanity net.
    b, a = signal.zpk2tf(z, p, k)
    _, h_tf = signal.freqs(b, a, worN=w)
    assert np.allclose(h, h_tf, rtol=1e-9, atol=0.0), "freqs and freqs_zpk disagree"
    return {"omega": [float(x) for x in w], "h": pairs(h)}


def prototype_cases():
    cases = []
    for n in ORDERS:
        specs = [("butterworth", None, None)]
        specs += [("chebyshev", rp, None) for rp in CHEBYSHEV_RIPPLES_DB]
        specs += [("bessel", None, norm) for norm in BESSEL_NORMS]
        for kind, rp, norm in specs:
            z, p, k = prototype(kind, n, rp, norm)
            assert len(z) == 0 and len(p) == n
            cases.append(
                {
                    "kind": kind,
                    "order": n,
                    "ripple_db": rp,
                    "norm": norm,
                    "zeros": pairs(z),
                    "poles": pairs(p),
                    "gain": k,
                    "response": response(z, p, k, PROTOTYPE_OMEGA),
                }
            )
    return cases


# (transform, prototype kind, order, ripple_db, norm, band) with the band in Hz as the Rust API takes it.
TRANSFORM_SPECS = [
    ("lowpass", "butterworth", 3, None, None, {"cutoff_hz": 1000.0}),
    ("lowpass", "bessel", 5, None, "mag", {"cutoff_hz": 47.0}),
    ("highpass", "butterworth", 4, None, None, {"cutoff_hz": 80.0}),
    ("highpass", "chebyshev", 5, 0.5, None, {"cutoff_hz": 2500.0}),
    ("highpass", "bessel", 3, None, "mag", {"cutoff_hz": 12000.0}),
    ("bandpass", "butterworth", 2, None, None, {"low_hz": 300.0, "high_hz": 3400.0}),
    ("bandpass", "chebyshev", 3, 1.0, None, {"low_hz": 900.0, "high_hz": 1100.0}),
    ("bandpass", "bessel", 4, None, "delay", {"centre_hz": 5000.0, "bandwidth_hz": 2000.0}),
    ("bandstop", "butterworth", 3, None, None, {"low_hz": 45.0, "high_hz": 55.0}),
    ("bandstop", "chebyshev", 4, 0.5, None, {"centre_hz": 1000.0, "bandwidth_hz": 400.0}),
    ("bandstop", "bessel", 2, None, "phase", {"low_hz": 150.0, "high_hz": 600.0}),
]


def band_in_rad(band):
    if "cutoff_hz" in band:
        return 2 * math.pi * band["cutoff_hz"], None
    if "low_hz" in band:
        low, high = band["low_hz"], band["high_hz"]
        return 2 * math.pi * math.sqrt(low * high), 2 * math.pi * (high - low)
    return 2 * math.pi * band["centre_hz"], 2 * math.pi * band["bandwidth_hz"]


def transform_cases():
    cases = []
    for transform, kind, n, rp, norm, band in TRANSFORM_SPECS:
        z, p, k = prototype(kind, n, rp, norm)
        wo, bw = band_in_rad(band)
        if transform == "lowpass":
            zt, pt, kt = signal.lp2lp_zpk(z, p, k, wo=wo)
        elif transform == "highpass":
            zt, pt, kt = signal.lp2hp_zpk(z, p, k, wo=wo)
        elif transform == "bandpass":
            zt, pt, kt = signal.lp2bp_zpk(z, p, k, wo=wo, bw=bw)
        else:
            zt, pt, kt = signal.lp2bs_zpk(z, p, k, wo=wo, bw=bw)
        omega = [wo * f for f in TRANSFORM_OMEGA_FACTORS]
        cases.append(
            {
                "transform": transform,
                "kind": kind,
                "order": n,
                "ripple_db": rp,
                "norm": norm,
                "band": band,
                "wo": wo,
                "bw": bw,
                "zeros": pairs(zt),
                "poles": pairs(pt),
                "gain": float(np.real(kt)),
                "response": response(zt, pt, kt, omega),
            }
        )
    return cases


def main():
    data = {
        "generator": GENERATOR,
        "versions": {
            "scipy": scipy.__version__,
            "numpy": np.__version__,
            "python": platform.python_version(),
        },
        "prototypes": prototype_cases(),
        "transforms": transform_cases(),
    }
    OUT_PATH.parent.mkdir(parents=True, exist_ok=True)
    OUT_PATH.write_text(json.dumps(data, indent=1, sort_keys=True) + "\n", encoding="utf-8")
    print(f"wrote {OUT_PATH} ({len(data['prototypes'])} prototypes, {len(data['transforms'])} transforms)")


if __name__ == "__main__":
    main()
