#!/usr/bin/env python3
"""Generate reference data for Bandwright's crossover tests with scipy.signal and numpy.

Run from the repository root:

    python3 tests/reference/gen_scipy_crossover.py

It writes, next to this script:
  - data/driver_impedance.csv   a small measured-style impedance curve of our own: a scenario driver
    (Re 6.4 ohm, Le 0.5 mH, fs 45 Hz, Qms 3.2, Qes 0.45; invented for the test, not a real part)
    sampled at 16 frequencies from 20 Hz to 20 kHz, printed to 6 significant figures;
  - data/scipy_crossover.json   the independent oracle for tests/reference/crossover.rs:
      * "interp": numpy.interp of ln|Z| and of the phase (degrees) against ln f, read between the
        CSV's points (the interpolation the core states: |Z| log-log, phase linear in log f);
      * "branches": scipy.signal.freqs_zpk of the analog prototypes, scaled with lp2lp_zpk,
        lp2hp_zpk: butter, and besselap(norm='mag') for Bessel; Linkwitz-Riley is butter(N/2)
        squared (its definition, references.md section 3.4). The band-pass is the product of a
        high-pass at f_low and a low-pass at f_high.
The output depends only on the SciPy/NumPy/Python versions, which are written into the JSON; keys are
sorted and floats use Python's shortest round-trip repr.
"""

import json
import math
import platform
from pathlib import Path

import numpy as np
import scipy
from scipy import signal

HERE = Path(__file__).resolve().parent
DATA = HERE / "data"

RE, LE, FS, QMS, QES = 6.4, 0.5e-3, 45.0, 3.2, 0.45


def driver_z(f):
    s = 2j * math.pi * f
    ws = 2 * math.pi * FS
    res, lces, cmes = RE * QMS / QES, RE / (ws * QES), QES / (ws * RE)
    return RE + s * LE + 1.0 / (1.0 / res + s * cmes + 1.0 / (s * lces))


def csv_text():
    freqs = np.geomspace(20.0, 20000.0, 16)
    lines = ["# scenario driver for the import test (invented data, see gen_scipy_crossover.py)",
             "frequency_hz,impedance_ohm,phase_deg"]
    rows = []
    for f in freqs:
        z = driver_z(f)
        row = (float(f"{f:.6g}"), float(f"{abs(z):.6g}"), float(f"{math.degrees(np.angle(z)):.6g}"))
        rows.append(row)
        lines.append(f"{row[0]:.6g},{row[1]:.6g},{row[2]:.6g}")
    return "\n".join(lines) + "\n", rows


def prototype(alignment, order):
    if alignment == "butterworth":
        return signal.buttap(order)
    if alignment == "bessel":
        return signal.besselap(order, norm="mag")
    if alignment == "linkwitz_riley":
        z, p, k = signal.buttap(order // 2)
        return np.concatenate([z, z]), np.concatenate([p, p]), k * k
    raise ValueError(alignment)


def branch(alignment, order, kind, f1, f2, freqs):
    z, p, k = prototype(alignment, order)
    w = 2 * math.pi * np.asarray(freqs)
    if kind == "lowpass":
        zz, pp, kk = signal.lp2lp_zpk(z, p, k, wo=2 * math.pi * f1)
    elif kind == "highpass":
        zz, pp, kk = signal.lp2hp_zpk(z, p, k, wo=2 * math.pi * f1)
    else:
        zh, ph, kh = signal.lp2hp_zpk(z, p, k, wo=2 * math.pi * f1)
        zl, pl, kl = signal.lp2lp_zpk(z, p, k, wo=2 * math.pi * f2)
        zz, pp, kk = np.concatenate([zh, zl]), np.concatenate([ph, pl]), kh * kl
    _, h = signal.freqs_zpk(zz, pp, kk, worN=w)
    centre = math.sqrt(f1 * f2) if kind == "bandpass" else f1
    _, hc = signal.freqs_zpk(zz, pp, kk, worN=[2 * math.pi * centre])
    return {"alignment": alignment, "order": order, "kind": kind, "f1_hz": f1, "f2_hz": f2,
            "centre_hz": centre, "h_centre_re": float(hc[0].real), "h_centre_im": float(hc[0].imag),
            "f_hz": [float(x) for x in freqs], "h_re": [float(x) for x in h.real],
            "h_im": [float(x) for x in h.imag]}


def main():
    text, rows = csv_text()
    (DATA / "driver_impedance.csv").write_text(text)
    f = np.array([r[0] for r in rows])
    mag = np.array([r[1] for r in rows])
    ph = np.array([r[2] for r in rows])
    # Geometric midpoints and a few points at 1/4 and 3/4 of a segment in log f.
    probes = []
    for a, b in zip(f[:-1], f[1:]):
        for t in (0.25, 0.5, 0.75):
            probes.append(float(math.exp(math.log(a) + t * (math.log(b) - math.log(a)))))
    probes = np.array(probes)
    interp_mag = np.exp(np.interp(np.log(probes), np.log(f), np.log(mag)))
    interp_ph = np.interp(np.log(probes), np.log(f), ph)
    freqs = list(np.geomspace(10.0, 100000.0, 41))
    branches = []
    for alignment, orders in (("butterworth", (1, 2, 3, 4)), ("linkwitz_riley", (2, 4)), ("bessel", (2, 3, 4))):
        for order in orders:
            branches.append(branch(alignment, order, "lowpass", 2000.0, 0.0, freqs))
            branches.append(branch(alignment, order, "highpass", 2000.0, 0.0, freqs))
            branches.append(branch(alignment, order, "bandpass", 250.0, 3000.0, freqs))
    data = {
        "generator": "tests/reference/gen_scipy_crossover.py",
        "python": platform.python_version(), "scipy": scipy.__version__, "numpy": np.__version__,
        "interp": {"f_hz": [float(x) for x in probes], "magnitude_ohm": [float(x) for x in interp_mag],
                   "phase_deg": [float(x) for x in interp_ph]},
        "branches": branches,
    }
    (DATA / "scipy_crossover.json").write_text(json.dumps(data, sort_keys=True, indent=1) + "\n")


if __name__ == "__main__":
    main()
