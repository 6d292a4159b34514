#!/usr/bin/env python3
"""Generate step- and impulse-response reference values for Bandwright's low-pass prototypes.

Run from the repository root:

    python3 tests/reference/gen_scipy_steps.py

It writes tests/reference/data/scipy_steps.json (next to this script, whatever the working
directory). The output depends only on the SciPy/NumPy/Python versions, which are written into the
file; keys are sorted and floats use Python's shortest round-trip repr, so a rerun with the same
versions gives the same bytes.

Sources (the independent oracle for the Rust time-domain module, crate/src/transient.rs):
  - scipy.signal.buttap(n)                 Butterworth, -3.0103 dB at omega = 1 rad/s
  - scipy.signal.besselap(n, norm='mag')   Bessel, -3.0103 dB at omega = 1 rad/s
  - scipy.signal.cheb1ap(n, rp)            Chebyshev type I, ripple edge at omega = 1 rad/s;
                                           even n have DC gain -rp dB, odd n 0 dB
  - scipy.signal.lti(z, p, k)              the continuous-time system
  - scipy.signal.step / scipy.signal.impulse
                                           its step and impulse responses (scipy evaluates them
                                           through lsim, a matrix exponential of the state-space
                                           form, which is exact for a constant input)
  - scipy.optimize.brentq                  crossings and the peak, refined between grid points

Conventions of the data (prototype units: omega in rad/s, so t in seconds with poles near 1 rad/s):
  - dc_gain = H(0) = k / prod(-p), the final value of the step response.
  - peak_time_s / peak_value: the first maximum of the step response. The grid maximum is refined
    by brentq on the impulse response (the derivative of the step response) between the grid
    neighbours; the script asserts that the refined peak is at least the grid maximum and that no
    later maximum is higher.
  - overshoot_pct = 100 * (peak_value - dc_gain) / dc_gain (0 when there is no overshoot).
  - t10_s / t90_s: the first crossings of 10 % and 90 % of dc_gain, by brentq on y(t) - level;
    rise_time_s = t90_s - t10_s.
  - settling_1pct_s and settling_2pow13_s: the last time |y(t) - dc_gain| leaves the band
    0.01*|dc_gain| and 2^-13*|dc_gain| (1/2 LSB of 12 bits), by brentq between the last grid point
    outside the band and the next one. The script asserts that the last 10 % of the grid lies
    inside the band with a margin.
  - sample_t_s / step_values / impulse_values: y(t) and h(t) at fixed times, each evaluated by
    step/impulse on the two-point grid [0, t] (exact, no grid interpolation).
"""

import json
import math
import platform
import sys
from pathlib import Path

import numpy as np
import scipy
import scipy.optimize as optimize
import scipy.signal as signal

GENERATOR = "tests/reference/gen_scipy_steps.py"
OUT_PATH = Path(__file__).resolve().parent / "data" / "scipy_steps.json"

ORDERS = range(2, 9)
CHEBYSHEV_RIPPLES_DB = (0.5, 1.0)
SAMPLE_T_S = (0.5, 1.0, 2.0, 3.0, 5.0, 8.0, 13.0, 21.0)
# Grid step of the scan that brackets crossings and extrema. The fastest oscillation of these
# prototypes has a period above 2.8 s, so 1 ms brackets every extremum on its own.
GRID_STEP_S = 1e-3
# brentq absolute tolerance on times: far below any tolerance the Rust test uses.
XTOL_S = 1e-13
SETTLE_FRACTIONS = {"settling_1pct_s": 0.01, "settling_2pow13_s": 2.0 ** -13}


def step_at(system, t):
    """Exact y(t) of the step response: step on the grid [0, t] (no interpolation)."""
    if t == 0.0:
        return float(signal.step(system, T=np.array([0.0, 1e-300]))[1][0])
    return float(signal.step(system, T=np.array([0.0, t]))[1][-1])


def impulse_at(system, t):
    """Exact h(t) of the impulse response on the grid [0, t]."""
    return float(signal.impulse(system, T=np.array([0.0, t]))[1][-1])


def build_case(name, alignment, order, ripple_db, zpk):
    z, p, k = zpk
    assert np.asarray(z).size == 0, f"{name}: expected an all-pole prototype"
    system = signal.lti(z, p, k)
    dc_gain = float(np.real(k / np.prod(-np.asarray(p))))
    sigma_min = float(np.min(-np.asarray(p).real))
    # Long enough for the slowest mode to decay well below 2^-13 (the envelope is checked below).
    t_end = 1.5 * (13.0 * math.log(2.0) + 8.0) / sigma_min
    n_grid = int(math.ceil(t_end / GRID_STEP_S)) + 1
    t = np.linspace(0.0, t_end, n_grid)
    _, y = signal.step(system, T=t)

    # Peak: the grid maximum refined on h(t) = y'(t).
    i = int(np.argmax(y))
    assert 0 < i < n_grid - 1, f"{name}: the peak lies at the end of the grid"
    h_left, h_right = impulse_at(system, t[i - 1]), impulse_at(system, t[i + 1])
    assert h_left > 0.0 > h_right, f"{name}: the grid maximum is not bracketed by h"
    peak_time = optimize.brentq(lambda x: impulse_at(system, x), t[i - 1], t[i + 1], xtol=XTOL_S)
    peak_value = step_at(system, peak_time)
    assert peak_value >= y[i] - 1e-15, f"{name}: refinement lowered the peak"
    first_max = int(np.argmax(np.diff(y) < 0))  # first index where y starts to fall
    assert abs(first_max - i) <= 1, f"{name}: the global maximum is not the first maximum"
    overshoot_pct = max(0.0, 100.0 * (peak_value - dc_gain) / dc_gain)

    def first_crossing(level):
        j = int(np.argmax(y >= level))
        assert j > 0 and y[j - 1] < level <= y[j]
        return optimize.brentq(lambda x: step_at(system, x) - level, t[j - 1], t[j], xtol=XTOL_S)

    t10 = first_crossing(0.1 * dc_gain)
    t90 = first_crossing(0.9 * dc_gain)

    settling = {}
    for key, fraction in SETTLE_FRACTIONS.items():
        band = fraction * abs(dc_gain)
        error = np.abs(y - dc_gain)
        tail = error[int(0.9 * n_grid):]
        assert np.max(tail) < 0.5 * band, f"{name}: the grid is too short to settle to {fraction}"
        j = int(np.nonzero(error > band)[0][-1])
        settling[key] = optimize.brentq(
            lambda x: abs(step_at(system, x) - dc_gain) - band, t[j], t[j + 1], xtol=XTOL_S
        )

    step_values = [step_at(system, ts) for ts in SAMPLE_T_S]
    impulse_values = [impulse_at(system, ts) for ts in SAMPLE_T_S]
    # The grid run and the two-point evaluations are the same computation; they must agree.
    for ts, value in zip(SAMPLE_T_S, step_values):
        j = int(round(ts / GRID_STEP_S))
        if abs(t[j] - ts) < 1e-12:
            assert abs(y[j] - value) <= 1e-12, f"{name}: grid and two-point step disagree at {ts}"

    case = {
        "name": name,
        "alignment": alignment,
        "order": order,
        "ripple_db": ripple_db,
        "poles_re": [float(v) for v in np.asarray(p).real],
        "poles_im": [float(v) for v in np.asarray(p).imag],
        "gain": float(np.real(k)),
        "dc_gain": dc_gain,
        "peak_time_s": float(peak_time),
        "peak_value": float(peak_value),
        "overshoot_pct": float(overshoot_pct),
        "t10_s": float(t10),
        "t90_s": float(t90),
        "rise_time_s": float(t90 - t10),
        "sample_t_s": list(SAMPLE_T_S),
        "step_values": step_values,
        "impulse_values": impulse_values,
    }
    case.update({key: float(value) for key, value in settling.items()})
    return case


def ripple_tag(ripple_db):
    """0.5 -> '0p5db', 1.0 -> '1db' (no dots in case names)."""
    text = repr(float(ripple_db))
    if text.endswith(".0"):
        text = text[:-2]
    return text.replace(".", "p") + "db"


def main():
    cases = []
    for n in ORDERS:
        cases.append(build_case(f"butterworth_n{n}", "butterworth", n, None, signal.buttap(n)))
    for n in ORDERS:
        cases.append(build_case(f"bessel_mag_n{n}", "bessel", n, None, signal.besselap(n, norm="mag")))
    for ripple in CHEBYSHEV_RIPPLES_DB:
        for n in ORDERS:
            cases.append(build_case(f"chebyshev_{ripple_tag(ripple)}_n{n}", "chebyshev", n, float(ripple),
                                    signal.cheb1ap(n, ripple)))

    # Spot check (Source: references.md section 3.3 and the cheb1ap docstring): even-order
    # Chebyshev prototypes have DC gain -rp dB, the others 0 dB.
    for c in cases:
        expected_db = -c["ripple_db"] if c["alignment"] == "chebyshev" and c["order"] % 2 == 0 else 0.0
        assert abs(20.0 * math.log10(c["dc_gain"]) - expected_db) < 1e-9, c["name"]

    data = {
        "generator": GENERATOR,
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "python_version": platform.python_version(),
        "cases": cases,
    }
    OUT_PATH.parent.mkdir(parents=True, exist_ok=True)
    text = json.dumps(data, sort_keys=True, indent=1, allow_nan=False) + "\n"
    OUT_PATH.write_text(text, encoding="utf-8")

    print(f"scipy {scipy.__version__}, numpy {np.__version__}, python {platform.python_version()}")
    print(f"{len(cases)} cases written to {OUT_PATH}")
    for c in cases:
        print(f"  {c['name']:24s} overshoot {c['overshoot_pct']:8.4f} %  rise {c['rise_time_s']:.6f} s  "
              f"settle 1 % {c['settling_1pct_s']:.4f} s")
    print("all self-checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
