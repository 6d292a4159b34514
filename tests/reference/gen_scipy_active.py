#!/usr/bin/env python3
"""Generate reference vectors for Bandwright's active sections and cascades with scipy.signal.

Run from the repository root:

    python3 tests/reference/gen_scipy_active.py

It writes tests/reference/data/scipy_active.json (next to this script, whatever the working
directory). The output depends only on the SciPy/NumPy/Python versions, which are written into the
file; keys are sorted and floats use Python's shortest round-trip repr, so a rerun with the same
versions gives the same bytes.

Sources (the independent oracle for tests/reference/active_sections.rs):
  - scipy.signal.freqs(b, a, worN)   the standard second-order sections
        low-pass  H(s) = w0^2 / (s^2 + (w0/Q) s + w0^2)
        high-pass H(s) = s^2  / (s^2 + (w0/Q) s + w0^2)
    which are the published unity-gain forms (TI, Op Amps for Everyone, ch. 16, as 1/(1 + a s + b s^2)
    with a = 1/(Q w0), b = 1/w0^2; from memory) up to the sign of an inverting section's gain.
  - scipy.signal.butter / cheby1 / bessel(N, Wn, btype, analog=True, output='zpk') and freqs_zpk for
    the cascades; bessel uses norm='mag' (-3.0103 dB at the cutoff), not SciPy's default 'phase'.

Conventions of the data: frequencies in Hz (f_hz), w = 2*pi*f in rad/s is what scipy is given;
h_re/h_im is the complex H(j w).
"""

import json
import math
import platform
from pathlib import Path

import numpy as np
import scipy
import scipy.signal as signal

GENERATOR = "tests/reference/gen_scipy_active.py"
OUT_PATH = Path(__file__).resolve().parent / "data" / "scipy_active.json"

SECTIONS = [(1000.0, 0.5), (1000.0, 1.0 / math.sqrt(2.0)), (2500.0, 1.3065629648763766), (400.0, 4.0)]
CASCADE_CUTOFF_HZ = 1000.0
CASCADES = (
    [("butterworth", None, n) for n in range(1, 9)]
    + [("chebyshev", 0.5, n) for n in (5, 6)]
    + [("chebyshev", 1.0, 8)]
    + [("bessel", None, n) for n in (4, 7)]
)


def grid(centre_hz):
    f = np.logspace(math.log10(centre_hz) - 2.0, math.log10(centre_hz) + 2.0, 41)
    return np.unique(np.concatenate([f, [centre_hz]]))


def section_case(response, f0_hz, q):
    w0 = 2.0 * math.pi * f0_hz
    a = [1.0, w0 / q, w0 * w0]
    b = [w0 * w0] if response == "lowpass" else [1.0, 0.0, 0.0]
    f_hz = grid(f0_hz)
    _, h = signal.freqs(b, a, worN=2.0 * math.pi * f_hz)
    return {"response": response, "f0_hz": f0_hz, "q": q, "f_hz": f_hz.tolist(),
            "h_re": h.real.tolist(), "h_im": h.imag.tolist()}


def cascade_case(alignment, ripple_db, order, response):
    wc = 2.0 * math.pi * CASCADE_CUTOFF_HZ
    btype = "low" if response == "lowpass" else "high"
    if alignment == "butterworth":
        z, p, k = signal.butter(order, wc, btype, analog=True, output="zpk")
    elif alignment == "chebyshev":
        z, p, k = signal.cheby1(order, ripple_db, wc, btype, analog=True, output="zpk")
    else:
        z, p, k = signal.bessel(order, wc, btype, analog=True, output="zpk", norm="mag")
    f_hz = grid(CASCADE_CUTOFF_HZ)
    _, h = signal.freqs_zpk(z, p, k, worN=2.0 * math.pi * f_hz)
    return {"alignment": alignment, "ripple_db": ripple_db, "order": order, "response": response,
            "cutoff_hz": CASCADE_CUTOFF_HZ, "f_hz": f_hz.tolist(),
            "h_re": h.real.tolist(), "h_im": h.imag.tolist()}


def main():
    data = {
        "generator": GENERATOR,
        "python": platform.python_version(),
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "sections": [section_case(r, f0, q) for r in ("lowpass", "highpass") for (f0, q) in SECTIONS],
        "cascades": [cascade_case(a, rp, n, r) for r in ("lowpass", "highpass") for (a, rp, n) in CASCADES],
    }
    OUT_PATH.parent.mkdir(parents=True, exist_ok=True)
    OUT_PATH.write_text(json.dumps(data, sort_keys=True, indent=1) + "\n")
    print(f"wrote {OUT_PATH} ({len(data['sections'])} sections, {len(data['cascades'])} cascades)")


if __name__ == "__main__":
    main()
