#!/usr/bin/env python3
"""Generate reference data for Bandwright's anti-aliasing workflow (tests/reference/anti_aliasing.rs).

Run from the repository root:

    python3 tests/reference/gen_scipy_adc.py

It writes tests/reference/data/scipy_adc.json (next to this script). The SciPy/NumPy/Python versions
are written into the file; keys are sorted, so a rerun with the same versions gives the same bytes.

Sources (independent of the Bandwright core):
  - scipy.signal.buttord / cheb1ord (analog=True): minimum orders of the anti-aliasing masks, with
    the attenuation from the exact rule forms 20*log10(2**N*sqrt(1.5)) and 20*log10(2**(N+1));
  - scipy.linalg.expm: the exact state transition of the two-capacitor sampling network
    (filter capacitor Cf with its resistor R to ground, switch resistor Rsw, sampling capacitor Cs),
    and scipy.optimize.brentq for the last time the error leaves +-1/2 LSB.
"""

import json
import math
import platform
from pathlib import Path

import numpy as np
import scipy
from scipy import linalg, optimize, signal


def snr_db(bits):
    return 20 * math.log10(2**bits * math.sqrt(1.5))


def half_lsb_db(bits):
    return 20 * math.log10(2 ** (bits + 1))


def orders(fp, fs_edge, gpass, gstop):
    wp, ws = 2 * math.pi * fp, 2 * math.pi * fs_edge
    nb, wnb = signal.buttord(wp, ws, gpass, gstop, analog=True)
    nc, wnc = signal.cheb1ord(wp, ws, gpass, gstop, analog=True)
    return {"buttord_order": int(nb), "buttord_wn_rad_s": float(wnb), "cheb1ord_order": int(nc), "cheb1ord_wn_rad_s": float(wnc)}


def masks():
    out = []
    # The references section 6 example: 1 kHz band, stopband at 10 kHz (fs = 11 kHz, first alias), 3 dB.
    out.append({"name": "section6_example_literal_74dB", "band_hz": 1e3, "sample_rate_hz": 11e3, "alias": "first_alias",
                "bits": 12, "rule": "explicit", "attenuation_db": 74.0, "droop_db": 3.0, **orders(1e3, 10e3, 3.0, 74.0)})
    for rule, att in [("snr", snr_db(12)), ("half_lsb", half_lsb_db(12))]:
        out.append({"name": f"section6_example_{rule}", "band_hz": 1e3, "sample_rate_hz": 11e3, "alias": "first_alias",
                    "bits": 12, "rule": rule, "attenuation_db": att, "droop_db": 3.0, **orders(1e3, 10e3, 3.0, att)})
    # The same band and rate with the edge at Nyquist (5.5 kHz).
    out.append({"name": "section6_example_nyquist", "band_hz": 1e3, "sample_rate_hz": 11e3, "alias": "nyquist",
                "bits": 12, "rule": "snr", "attenuation_db": snr_db(12), "droop_db": 3.0, **orders(1e3, 5.5e3, 3.0, snr_db(12))})
    # An audio-like scenario of our own: 20 kHz band at 96 kHz, 16 bits, 0.1 dB droop.
    out.append({"name": "band20k_fs96k_16bit", "band_hz": 20e3, "sample_rate_hz": 96e3, "alias": "first_alias",
                "bits": 16, "rule": "snr", "attenuation_db": snr_db(16), "droop_db": 0.1, **orders(20e3, 76e3, 0.1, snr_db(16))})
    return out


def settling_cases():
    out = []
    for name, r, cf, rsw, cs, bits in [
        ("rc_1k_1n_into_200R_100p", 1e3, 1e-9, 200.0, 100e-12, 12),
        ("rc_4k7_10n_into_1k_20p", 4.7e3, 10e-9, 1e3, 20e-12, 16),
        ("lumped_10M_1n_into_200R_100p", 1e7, 1e-9, 200.0, 100e-12, 12),
    ]:
        # States x = [u, w]: u on Cf (to ground via R), w the physical voltage on Cs; the switch
        # closes at t = 0 with u = 0 and w = -1 (a full-scale difference, normalised).
        a = np.array([[-(1 / r + 1 / rsw) / cf, 1 / (rsw * cf)], [1 / (rsw * cs), -1 / (rsw * cs)]])
        x0 = np.array([0.0, -1.0])
        w = lambda t: float((linalg.expm(a * t) @ x0)[1])
        band = 2.0 ** -(bits + 1)
        lam = np.linalg.eigvals(a)
        slow = 1 / min(abs(lam))
        # Scan for the last time |w| > band, then refine with brentq.
        ts = np.linspace(0, 60 * slow, 200001)
        vals = np.array([abs(w(t)) for t in ts[::100]])
        idx = np.nonzero(vals > band)[0][-1] * 100
        lo = ts[max(idx - 100, 0)]
        fine = np.linspace(lo, ts[min(idx + 200, len(ts) - 1)], 2001)
        fv = np.array([abs(w(t)) - band for t in fine])
        k = np.nonzero(fv > 0)[0][-1]
        t_settle = optimize.brentq(lambda t: abs(w(t)) - band, fine[k], fine[k + 1], xtol=1e-22, rtol=1e-15)
        samples = [(float(t), w(float(t))) for t in [0.1 * slow, 0.5 * slow, 1.0 * slow, 3.0 * slow]]
        tau_share = rsw * cs * cf / (cs + cf)
        fast = [(float(f * tau_share), w(float(f * tau_share))) for f in [0.5, 1.0, 2.0]]
        out.append({"name": name, "r_ohms": r, "cf_f": cf, "rsw_ohms": rsw, "cs_f": cs, "bits": bits,
                    "eigenvalues": sorted(float(x.real) for x in lam), "settling_time_s": float(t_settle),
                    "samples": samples + fast})
    return out


data = {
    "generator": "tests/reference/gen_scipy_adc.py",
    "scipy_version": scipy.__version__,
    "numpy_version": np.__version__,
    "python_version": platform.python_version(),
    "masks": masks(),
    "settling": settling_cases(),
}
path = Path(__file__).resolve().parent / "data" / "scipy_adc.json"
path.write_text(json.dumps(data, indent=1, sort_keys=True) + "\n")
print(json.dumps(data, indent=1, sort_keys=True))
