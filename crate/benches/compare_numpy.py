#!/usr/bin/env python3
"""Time Bandwright's native sweep against numpy's batched linalg.solve on the same MNA system.

Run from anywhere (the default bench command runs in the workspace root):

    python3 crate/benches/compare_numpy.py [--repeats 7] [--skip-build] [--bench-cmd "..."]

What is compared, per frequency point, on a 10,000-point sweep from 10 kHz to 100 MHz (np.logspace,
both ends included):

  native  `cargo bench -p bandwright --bench sweep -- --json`, which prints one JSON line
          {"case": "ladder7_sweep", "points": 10000, "seconds_per_sweep_median": ...,
           "seconds_per_point": ..., "repeats": N, "h_at": {"f_hz": ..., "re": ..., "im": ...}}
  numpy   the identical 7x7 complex MNA system built batched for all points, solved with
          numpy.linalg.solve, then a second batched solve of the exact derivative system
          A dx = -(dA/domega) x, and H = V(n4)/E, tau = -Im(H'/H), Z_in = V(n1)/I_in.
          Building the matrices is inside the timed region, since the core assembles per point too.

The two sides are run alternately (native, numpy, native, numpy, ...) in one process so that both see
the same machine load; each side's figure is the median over --repeats runs. numpy's per-run time is
measured with time.perf_counter around one whole sweep; the native figure is the bench binary's own
seconds_per_point. One untimed numpy warm-up sweep runs first.

The circuit (what the Rust core assembles): 7th-order Butterworth doubly terminated LC ladder, shunt C
first, Rs = RL = 50 ohm, fc = 1 MHz. Prototype g_k = 2 sin((2k-1) pi / 14) (closed form, common practice;
see references.md section 2), C_k = g_k / (R0 wc) at odd k, L_k = g_k R0 / wc at even k. The EMF E = 1 V
behind Rs is stamped as a Norton source into n1. Unknowns: V(n1..n4), then I_L2, I_L4, I_L6.

Self-checks (asserted before any timing, against oracles outside the MNA code):
  - |H(fc)| = 0.5/sqrt(2), i.e. 3.0103 dB below the 0.5 DC transfer, to 1e-9 relative (Butterworth
    definition; the 0.5 is the matched-termination divider).
  - |H(f)|^2 = 0.25 / (1 + (f/fc)^14) at every sweep point with |H| >= 1e-6, to 1e-9 relative
    (closed-form Butterworth magnitude of the doubly terminated ladder).
  - tau from the derivative solve equals sum_p -Re p / ((Re p)^2 + (w/wc - Im p)^2) / wc over the
    poles of scipy.signal.buttap(7), to 1e-9 relative, where |H| >= 1e-6.
  - lossless ladder: power into Z_in equals power into RL at every point, to 1e-9 of the apparent
    input power |V(n1) conj(I_in)|.
And for every native run: numpy's H at the reported h_at.f_hz agrees with (re, im) to 1e-9 relative.

Exit status: 0 when everything ran and all checks passed (whether or not the 30x target was met),
1 on a failed check, a failed or malformed bench run, 2 on bad arguments.
"""

import argparse
import json
import math
import shlex
import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

WORKSPACE_ROOT = Path(__file__).resolve().parents[2]
DEFAULT_BENCH_CMD = "cargo bench -p bandwright --bench sweep -- --json"
BUILD_CMD = "cargo bench -p bandwright --bench sweep --no-run"
EXPECTED_CASE = "ladder7_sweep"
TARGET_RATIO = 30.0

# Circuit, in SI units.
ORDER = 7
R_SOURCE_OHM = 50.0
R_LOAD_OHM = 50.0
R0_OHM = 50.0
FC_HZ = 1e6
OMEGA_C = 2.0 * math.pi * FC_HZ
EMF_V = 1.0

# Sweep.
N_POINTS = 10_000
F_START_HZ = 1e4
F_STOP_HZ = 1e8

RTOL_H_AT = 1e-9
RTOL_SELF_CHECK = 1e-9
# Below this |H| the closed-form comparisons are dropped: the stop-band output is many orders smaller
# than the node voltages LU works with, so its relative accuracy is not a property of the model.
MIN_ABS_H_FOR_CHECKS = 1e-6

# MNA unknown indices.
N1, N2, N3, N4 = 0, 1, 2, 3
N_UNKNOWNS = 7


class BenchError(Exception):
    """A bench run failed or printed something that is not the expected JSON."""


def prototype_g(order):
    """Butterworth g-values g_k = 2 sin((2k-1) pi / (2n)), k = 1..n (closed form, common practice)."""
    return [2.0 * math.sin((2 * k - 1) * math.pi / (2 * order)) for k in range(1, order + 1)]


def ladder_elements():
    """Return (capacitors, inductors) as lists of (node or branch, value) in farad and henry.

    capacitors: (node index, C) for C1 at n1, C3 at n2, C5 at n3, C7 at n4.
    inductors:  (from node, to node, branch row, L) for L2 n1->n2 (row 4), L4 n2->n3 (row 5),
                L6 n3->n4 (row 6).
    """
    g = prototype_g(ORDER)
    caps = []
    inds = []
    for k in range(1, ORDER + 1):
        value = g[k - 1]
        if k % 2 == 1:
            caps.append(((k - 1) // 2, value / (R0_OHM * OMEGA_C)))
        else:
            a = k // 2 - 1
            inds.append((a, a + 1, 3 + k // 2, value * R0_OHM / OMEGA_C))
    return caps, inds


CAPACITORS, INDUCTORS = ladder_elements()


def solve_sweep(f_hz):
    """Build and solve the batched MNA system and its exact derivative system at f_hz.

    Returns (H, tau_s, z_in_ohm) as arrays over f_hz. This is the timed numpy work.
    """
    omega = 2.0 * math.pi * np.asarray(f_hz, dtype=float)
    n = omega.size
    jw = 1j * omega

    a = np.zeros((n, N_UNKNOWNS, N_UNKNOWNS), dtype=complex)
    # Norton source (1/Rs on n1) and load conductance.
    a[:, N1, N1] += 1.0 / R_SOURCE_OHM
    a[:, N4, N4] += 1.0 / R_LOAD_OHM
    # da holds only the diagonal of dA/domega: j C on capacitor nodes, -j L on inductor branch rows.
    da_diag = np.zeros((n, N_UNKNOWNS), dtype=complex)
    for node, c in CAPACITORS:
        a[:, node, node] += jw * c
        da_diag[:, node] += 1j * c
    for node_a, node_b, row, l in INDUCTORS:
        a[:, node_a, row] += 1.0
        a[:, node_b, row] -= 1.0
        a[:, row, node_a] += 1.0
        a[:, row, node_b] -= 1.0
        a[:, row, row] -= jw * l
        da_diag[:, row] -= 1j * l

    b = np.zeros((n, N_UNKNOWNS, 1), dtype=complex)
    b[:, N1, 0] = EMF_V / R_SOURCE_OHM

    x = np.linalg.solve(a, b)
    dx = np.linalg.solve(a, -(da_diag[:, :, None] * x))

    x = x[:, :, 0]
    dx = dx[:, :, 0]
    h = x[:, N4] / EMF_V
    dh = dx[:, N4] / EMF_V
    tau = -np.imag(dh / h)
    v1 = x[:, N1]
    i_in = (EMF_V - v1) / R_SOURCE_OHM
    z_in = v1 / i_in
    return h, tau, z_in


def sweep_frequencies():
    return np.logspace(math.log10(F_START_HZ), math.log10(F_STOP_HZ), N_POINTS)


def max_rel_err(actual, expected):
    return float(np.max(np.abs(actual - expected) / np.abs(expected)))


def self_check():
    """Assert the numpy MNA model against closed forms and scipy's Butterworth poles."""
    # Source: Butterworth definition, |H|^2 = H0^2 / (1 + (w/wc)^(2n)), H0 = RL/(Rs+RL) = 0.5.
    h_fc, _, _ = solve_sweep(np.array([FC_HZ]))
    expected = 0.5 / math.sqrt(2.0)
    err_fc = abs(abs(h_fc[0]) - expected) / expected
    assert err_fc <= RTOL_SELF_CHECK, f"|H(fc)| = {abs(h_fc[0])!r}, expected {expected!r} (rel {err_fc:.3e})"
    drop_db = 20.0 * math.log10(abs(h_fc[0]) / 0.5)

    f = sweep_frequencies()
    assert f[0] == F_START_HZ and abs(f[-1] - F_STOP_HZ) <= 1e-6 * F_STOP_HZ and f.size == N_POINTS
    h, tau, z_in = solve_sweep(f)
    mask = np.abs(h) >= MIN_ABS_H_FOR_CHECKS
    assert mask.sum() > N_POINTS // 2, "too few points above the check threshold"

    mag2_expected = 0.25 / (1.0 + (f / FC_HZ) ** (2 * ORDER))
    err_mag = max_rel_err(np.abs(h[mask]) ** 2, mag2_expected[mask])
    assert err_mag <= RTOL_SELF_CHECK, f"|H|^2 vs closed form: rel {err_mag:.3e}"

    # Source: scipy.signal.buttap(7) poles, group delay sum over poles (references.md section 7).
    from scipy.signal import buttap  # only for the self-check, outside the timed code

    _, poles, _ = buttap(ORDER)
    w_norm = f / FC_HZ
    tau_expected = np.zeros_like(f)
    for p in poles:
        tau_expected += -p.real / (p.real ** 2 + (w_norm - p.imag) ** 2)
    tau_expected /= OMEGA_C
    err_tau = max_rel_err(tau[mask], tau_expected[mask])
    assert err_tau <= RTOL_SELF_CHECK, f"group delay vs buttap poles: rel {err_tau:.3e}"

    # Lossless LC ladder: Re(V1 conj(I_in)) = |V4|^2 / RL. The error is measured against the apparent
    # power |V1 conj(I_in)|, the scale rounding works at: in the stop band the input is almost purely
    # reactive and P_in is a cancellation far below |S_in|.
    v1 = EMF_V * z_in / (z_in + R_SOURCE_OHM)
    i_in = (EMF_V - v1) / R_SOURCE_OHM
    s_in = v1 * np.conj(i_in)
    p_load = np.abs(h * EMF_V) ** 2 / R_LOAD_OHM
    err_power = float(np.max(np.abs(s_in.real - p_load) / np.abs(s_in)))
    assert err_power <= RTOL_SELF_CHECK, f"power balance: error / |S_in| = {err_power:.3e}"

    print("numpy MNA self-checks passed:")
    print(f"  |H(fc)| = {float(abs(h_fc[0]))!r}, expected 0.5/sqrt(2) = {expected!r} (rel err {err_fc:.2e});"
          f" {drop_db:.4f} dB vs DC 0.5")
    print(f"  |H|^2 vs 0.25/(1+(f/fc)^14):        max rel err {err_mag:.2e} over {int(mask.sum())} points")
    print(f"  tau vs buttap(7) poles:              max rel err {err_tau:.2e}")
    print(f"  power into Z_in vs power into RL:    max err/|S_in| {err_power:.2e} over all {N_POINTS} points")


def parse_bench_output(stdout):
    """Find and validate the single JSON object line in the bench's stdout."""
    objects = []
    for line in stdout.splitlines():
        line = line.strip()
        if not line.startswith("{"):
            continue
        try:
            value = json.loads(line)
        except json.JSONDecodeError as e:
            raise BenchError(f"bench printed a line that is not valid JSON ({e}): {line!r}") from None
        if isinstance(value, dict):
            objects.append(value)
    if len(objects) != 1:
        raise BenchError(
            f"expected exactly one JSON object line on the bench's stdout, found {len(objects)}; "
            f"stdout was: {stdout[-2000:]!r}"
        )
    record = objects[0]

    def number(container, key, where):
        if key not in container:
            raise BenchError(f"bench JSON has no {where}{key!r}; got {json.dumps(record)}")
        value = container[key]
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            raise BenchError(f"bench JSON {where}{key!r} must be a finite number, got {value!r}")
        return float(value)

    case = record.get("case")
    if case != EXPECTED_CASE:
        raise BenchError(f"bench JSON case is {case!r}; this script only models {EXPECTED_CASE!r}")
    points = record.get("points")
    if isinstance(points, bool) or not isinstance(points, int):
        raise BenchError(f"bench JSON 'points' must be an integer, got {points!r}")
    if points != N_POINTS:
        raise BenchError(f"bench swept {points} points; the numpy side models {N_POINTS}, so per-point "
                         f"times would not be comparable")
    repeats = record.get("repeats")
    if isinstance(repeats, bool) or not isinstance(repeats, int) or repeats < 1:
        raise BenchError(f"bench JSON 'repeats' must be a positive integer, got {repeats!r}")
    per_sweep = number(record, "seconds_per_sweep_median", "")
    per_point = number(record, "seconds_per_point", "")
    if per_sweep <= 0 or per_point <= 0:
        raise BenchError(f"bench times must be positive, got {per_sweep!r} s/sweep, {per_point!r} s/point")
    h_at = record.get("h_at")
    if not isinstance(h_at, dict):
        raise BenchError(f"bench JSON 'h_at' must be an object with f_hz, re, im; got {h_at!r}")
    f_hz = number(h_at, "f_hz", "h_at.")
    if f_hz <= 0:
        raise BenchError(f"bench JSON h_at.f_hz must be positive, got {f_hz!r}")
    h_native = complex(number(h_at, "re", "h_at."), number(h_at, "im", "h_at."))
    return {
        "points": points,
        "repeats": repeats,
        "seconds_per_sweep": per_sweep,
        "seconds_per_point": per_point,
        "f_hz": f_hz,
        "h": h_native,
    }


def run_bench(cmd):
    try:
        proc = subprocess.run(cmd, cwd=WORKSPACE_ROOT, capture_output=True, text=True, check=False)
    except OSError as e:
        raise BenchError(f"could not start bench command {shlex.join(cmd)!r}: {e}") from None
    if proc.returncode != 0:
        raise BenchError(f"bench command {shlex.join(cmd)!r} exited with {proc.returncode}; "
                         f"stderr tail: {proc.stderr[-2000:]!r}")
    return parse_bench_output(proc.stdout)


def time_numpy_sweep(f_hz):
    start = time.perf_counter()
    result = solve_sweep(f_hz)
    elapsed = time.perf_counter() - start
    return elapsed, result


def check_h_at(native):
    h_np, _, _ = solve_sweep(np.array([native["f_hz"]]))
    h_np = complex(h_np[0])
    err = abs(native["h"] - h_np) / abs(h_np)
    return err, h_np


def parse_args(argv):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--bench-cmd", default=None,
                        help=f"command printing the bench JSON line (default: {DEFAULT_BENCH_CMD!r}); "
                             "split with shell rules and run in the workspace root; "
                             "with this option the cargo pre-build is skipped")
    parser.add_argument("--skip-build", action="store_true",
                        help=f"do not run {BUILD_CMD!r} before timing")
    parser.add_argument("--repeats", type=int, default=7,
                        help="alternating native/numpy runs, median taken on each side (default 7)")
    args = parser.parse_args(argv)
    if args.repeats < 1:
        parser.error(f"--repeats must be at least 1, got {args.repeats}")
    return args


def main(argv=None):
    args = parse_args(argv)
    bench_cmd = shlex.split(args.bench_cmd if args.bench_cmd is not None else DEFAULT_BENCH_CMD)
    if not bench_cmd:
        print("error: --bench-cmd is empty; give a command that prints the bench JSON line", file=sys.stderr)
        return 2

    try:
        self_check()
    except AssertionError as e:
        print(f"error: numpy self-check failed: {e}", file=sys.stderr)
        return 1

    if args.bench_cmd is None and not args.skip_build:
        print(f"building: {BUILD_CMD}", flush=True)
        build = subprocess.run(shlex.split(BUILD_CMD), cwd=WORKSPACE_ROOT, check=False)
        if build.returncode != 0:
            print(f"error: build failed with exit status {build.returncode}", file=sys.stderr)
            return 1

    f_hz = sweep_frequencies()
    time_numpy_sweep(f_hz)  # warm-up, untimed

    print(f"bench command: {shlex.join(bench_cmd)}")
    print(f"{N_POINTS} points, {F_START_HZ:g} Hz .. {F_STOP_HZ:g} Hz; {args.repeats} alternating runs")
    header = (f"{'run':>3}  {'native s/sweep':>14}  {'native s/point':>14}  "
              f"{'numpy s/sweep':>14}  {'numpy s/point':>14}  {'h_at rel err':>12}")
    print(header)
    native_points = []
    numpy_points = []
    failures = []
    for run in range(1, args.repeats + 1):
        try:
            native = run_bench(bench_cmd)
        except BenchError as e:
            print(f"error: run {run}: {e}", file=sys.stderr)
            return 1
        numpy_seconds, _ = time_numpy_sweep(f_hz)
        err, h_np = check_h_at(native)
        if not err <= RTOL_H_AT:
            failures.append(f"run {run}: native H({native['f_hz']!r} Hz) = {native['h']!r}, "
                            f"numpy {h_np!r}, rel err {err:.3e} > {RTOL_H_AT}")
        implied = native["seconds_per_sweep"] / native["points"]
        if abs(implied - native["seconds_per_point"]) > 0.05 * native["seconds_per_point"]:
            print(f"note: run {run}: seconds_per_point {native['seconds_per_point']:.3e} differs from "
                  f"seconds_per_sweep_median/points {implied:.3e}; using seconds_per_point")
        native_points.append(native["seconds_per_point"])
        numpy_points.append(numpy_seconds / N_POINTS)
        print(f"{run:>3}  {native['seconds_per_sweep']:>14.6e}  {native['seconds_per_point']:>14.6e}  "
              f"{numpy_seconds:>14.6e}  {numpy_seconds / N_POINTS:>14.6e}  {err:>12.2e}", flush=True)

    native_median = statistics.median(native_points)
    numpy_median = statistics.median(numpy_points)
    ratio = numpy_median / native_median
    print(f"median native per point: {native_median:.4e} s")
    print(f"median numpy  per point: {numpy_median:.4e} s")
    print(f"ratio numpy/native per point: {ratio:.1f}x")
    print(f"target {TARGET_RATIO:g}x: {'met' if ratio >= TARGET_RATIO else 'not met'}")

    if failures:
        for failure in failures:
            print(f"error: h_at check failed: {failure}", file=sys.stderr)
        return 1
    print(f"h_at check passed on all {args.repeats} runs (rel tol {RTOL_H_AT})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
