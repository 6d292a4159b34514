#!/usr/bin/env python3
"""Generate reference vectors for Bandwright's lowpass prototypes with scipy.signal.

Run from the repository root:

    python3 tests/reference/gen_scipy.py

It writes tests/reference/data/scipy_prototypes.json (next to this script, whatever the working
directory). The output depends only on the SciPy/NumPy/Python versions, which are written into the file;
keys are sorted and floats use Python's shortest round-trip repr, so a rerun with the same versions gives
the same bytes.

Sources (the independent oracle for the Rust prototypes and MNA sweeps):
  - scipy.signal.buttap(n)                 Butterworth, -3.0103 dB at omega = 1 rad/s
  - scipy.signal.cheb1ap(n, rp)            Chebyshev type I, ripple edge at omega = 1 rad/s,
                                           even n have DC gain -rp dB, odd n 0 dB
  - scipy.signal.besselap(n, norm='mag')   Bessel, -3.0103 dB at omega = 1 rad/s
                                           (SciPy's default norm is 'phase'; we do not use it)
  - scipy.signal.freqs_zpk / freqs         complex response H(j omega)
  - scipy.signal.zpk2tf                    num/den, highest power of s first

Conventions of the data:
  - omega in rad/s, sorted ascending: np.logspace(-2, 2, 61) merged with 0.5, 1.0 and 2.0; exact
    duplicates are dropped (1.0 is already a logspace point), so each case has 63 points.
  - mag_db = 20*log10|H|.
  - phase_deg_unwrapped = degrees(np.unwrap(angle(H))) along increasing omega. The script asserts that it
    equals the continuous phase sum_p -atan2(omega - Im p, -Re p) (exact for these all-pole prototypes
    with k > 0), so a grid too coarse for np.unwrap would be caught.
  - group_delay_s = sum_p -Re p / ((Re p)^2 + (omega - Im p)^2), in seconds for omega in rad/s. These
    prototypes have no finite zeros (the script asserts that). It is cross-checked against a central
    finite difference of the unwrapped phase at omega*(1 +- 1e-5).
  - poles_re/poles_im in the order scipy returns them; gain is k.
"""

import json
import math
import platform
import sys
from pathlib import Path

import numpy as np
import scipy
import scipy.signal as signal

GENERATOR = "tests/reference/gen_scipy.py"
OUT_PATH = Path(__file__).resolve().parent / "data" / "scipy_prototypes.json"

ORDERS = range(1, 9)
CHEBYSHEV_RIPPLES_DB = (0.5, 1.0)
EXTRA_OMEGA = (0.5, 1.0, 2.0)

# freqs(b, a) and freqs_zpk(z, p, k) must agree to this relative error (brief: 1e-9).
RTOL_FREQS = 1e-9
# Analytic group delay vs central finite difference of the unwrapped phase (brief: 1e-4).
RTOL_GROUP_DELAY_FD = 1e-4
# Relative step of that finite difference: truncation error ~ h^2, rounding ~ eps/h, both << 1e-4.
FD_REL_STEP = 1e-5
# np.unwrap result vs exact continuous phase, radians. Both come from atan2 of the same poles, so only
# rounding separates them; 1e-9 rad still catches any 2*pi slip.
ATOL_PHASE_RAD = 1e-9


def omega_grid():
    """Return the sorted, de-duplicated frequency grid in rad/s."""
    grid = np.concatenate([np.logspace(-2, 2, 61), np.array(EXTRA_OMEGA)])
    return np.unique(grid)  # sorts ascending and drops exact duplicates


def continuous_phase_rad(p, k, omega):
    """Exact unwrapped phase of k / prod(j omega - p) for left-half-plane poles p and real k > 0.

    Each factor j omega - p has real part -Re p > 0, so atan2 stays in (-pi/2, pi/2) and is
    continuous in omega; no unwrapping is needed.
    """
    assert np.all(p.real < 0), "prototype poles must lie in the left half-plane"
    assert np.isreal(k) and float(np.real(k)) > 0, "gain must be real and positive"
    phase = np.zeros_like(omega)
    for pole in p:
        phase -= np.arctan2(omega - pole.imag, -pole.real)
    return phase


def group_delay_from_poles(p, omega):
    """Group delay in seconds: sum over poles of -Re p / ((Re p)^2 + (omega - Im p)^2)."""
    tau = np.zeros_like(omega)
    for pole in p:
        tau += -pole.real / (pole.real ** 2 + (omega - pole.imag) ** 2)
    return tau


def group_delay_finite_difference(z, p, k, omega):
    """Group delay from a central difference of np.unwrap(angle(H)) at omega*(1 -+ h)."""
    tau = np.empty_like(omega)
    for i, w in enumerate(omega):
        step = FD_REL_STEP * w
        triple = np.array([w - step, w, w + step])
        _, h = signal.freqs_zpk(z, p, k, worN=triple)
        phase = np.unwrap(np.angle(h))
        tau[i] = -(phase[2] - phase[0]) / (2.0 * step)
    return tau


def max_rel_err(actual, expected):
    return float(np.max(np.abs(actual - expected) / np.abs(expected)))


def to_floats(values):
    """Convert a numpy array to a list of Python floats (serialised with repr precision)."""
    return [float(v) for v in values]


def real_coefficients(coeffs, name, case_name):
    coeffs = np.asarray(coeffs)
    if np.iscomplexobj(coeffs):
        imag = float(np.max(np.abs(coeffs.imag)))
        scale = float(np.max(np.abs(coeffs)))
        assert imag <= 1e-12 * scale, f"{case_name}: {name} has imaginary part {imag}"
        coeffs = coeffs.real
    return to_floats(coeffs)


def build_case(name, alignment, order, ripple_db, bessel_norm, zpk, omega):
    z, p, k = zpk
    z = np.asarray(z)
    p = np.asarray(p)
    assert z.size == 0, f"{name}: expected an all-pole prototype, got zeros {z}"
    assert p.size == order, f"{name}: expected {order} poles, got {p.size}"

    # Source: scipy.signal.freqs_zpk
    w_zpk, h = signal.freqs_zpk(z, p, k, worN=omega)
    assert np.array_equal(w_zpk, omega)

    # Source: scipy.signal.zpk2tf + scipy.signal.freqs (second route to the same H)
    b, a = signal.zpk2tf(z, p, k)
    _, h_ba = signal.freqs(b, a, worN=omega)
    err = max_rel_err(h_ba, h)
    assert err <= RTOL_FREQS, f"{name}: freqs vs freqs_zpk relative error {err:.3e} > {RTOL_FREQS}"

    phase_rad = np.unwrap(np.angle(h))
    exact_phase = continuous_phase_rad(p, k, omega)
    phase_err = float(np.max(np.abs(phase_rad - exact_phase)))
    assert phase_err <= ATOL_PHASE_RAD, (
        f"{name}: np.unwrap phase differs from the continuous phase by {phase_err:.3e} rad"
    )

    tau = group_delay_from_poles(p, omega)
    tau_fd = group_delay_finite_difference(z, p, k, omega)
    tau_err = max_rel_err(tau_fd, tau)
    assert tau_err <= RTOL_GROUP_DELAY_FD, (
        f"{name}: analytic vs finite-difference group delay relative error {tau_err:.3e}"
    )

    case = {
        "name": name,
        "alignment": alignment,
        "order": order,
        "ripple_db": ripple_db,
        "bessel_norm": bessel_norm,
        "omega": to_floats(omega),
        "re": to_floats(h.real),
        "im": to_floats(h.imag),
        "mag_db": to_floats(20.0 * np.log10(np.abs(h))),
        "phase_deg_unwrapped": to_floats(np.degrees(phase_rad)),
        "group_delay_s": to_floats(tau),
        "num": real_coefficients(b, "num", name),
        "den": real_coefficients(a, "den", name),
        "poles_re": to_floats(p.real),
        "poles_im": to_floats(p.imag),
        "gain": float(np.real(k)),
    }
    checks = {"freqs_rel": err, "phase_abs_rad": phase_err, "tau_fd_rel": tau_err}
    return case, checks


def ripple_tag(ripple_db):
    """0.5 -> '0p5db', 1.0 -> '1db' (no dots in case names)."""
    text = repr(float(ripple_db))
    if text.endswith(".0"):
        text = text[:-2]
    return text.replace(".", "p") + "db"


def main():
    omega = omega_grid()
    assert np.all(np.diff(omega) > 0)
    cases = []
    worst = {"freqs_rel": 0.0, "phase_abs_rad": 0.0, "tau_fd_rel": 0.0}

    def add(*args):
        case, checks = build_case(*args)
        cases.append(case)
        for key, value in checks.items():
            worst[key] = max(worst[key], value)

    for n in ORDERS:
        add(f"butterworth_n{n}", "butterworth", n, None, None, signal.buttap(n), omega)
    for ripple in CHEBYSHEV_RIPPLES_DB:
        for n in ORDERS:
            add(f"chebyshev_{ripple_tag(ripple)}_n{n}", "chebyshev", n, float(ripple), None,
                signal.cheb1ap(n, ripple), omega)
    for n in ORDERS:
        add(f"bessel_mag_n{n}", "bessel", n, None, "mag", signal.besselap(n, norm="mag"), omega)

    # Spot checks of the normalisations (Source: scipy.signal docstrings; see references.md section 7).
    by_name = {c["name"]: c for c in cases}
    i_one = by_name["butterworth_n1"]["omega"].index(1.0)
    for c in cases:
        if c["alignment"] in ("butterworth", "bessel"):
            # -3.0103 dB (= 10*log10(1/2)) at omega = 1 for buttap and besselap(norm='mag').
            assert abs(c["mag_db"][i_one] - 10.0 * math.log10(0.5)) < 1e-9, c["name"]
        else:
            # cheb1ap: gain is -rp dB at the ripple edge omega = 1.
            assert abs(c["mag_db"][i_one] + c["ripple_db"]) < 1e-9, c["name"]

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
    print(f"{len(cases)} cases x {omega.size} frequencies written to {OUT_PATH}")
    print(f"worst freqs(b,a) vs freqs_zpk relative error: {worst['freqs_rel']:.3e} (limit {RTOL_FREQS})")
    print(f"worst np.unwrap vs continuous phase: {worst['phase_abs_rad']:.3e} rad (limit {ATOL_PHASE_RAD})")
    print(f"worst analytic vs finite-difference group delay relative error: {worst['tau_fd_rel']:.3e} "
          f"(limit {RTOL_GROUP_DELAY_FD})")
    print("all self-checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
