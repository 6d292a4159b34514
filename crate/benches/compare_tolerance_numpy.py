#!/usr/bin/env python3
"""Time Bandwright's native Monte Carlo tolerance run against numpy implementations of the same run.

Run from the workspace root:

    python3 crate/benches/compare_tolerance_numpy.py [--repeats 3] [--skip-build]

The run (both sides): a 5th-order Butterworth doubly terminated LC ladder, shunt C first,
Rs = RL = 50 ohm, fc = 1 MHz (g_k = 2 sin((2k-1) pi / 10), references.md section 2.1; C_k = g_k/(R0 wc),
L_k = g_k R0/wc); 10,000 trials with every R, L and C drawn uniformly within its tolerance (R 1 %,
C 5 %, L 10 %; RL is the only resistor); 200 log-spaced frequencies from 100 kHz to 10 MHz; per trial and
frequency the transfer H = V(out)/E, its exact frequency derivative (a second solve with the same
matrix), gain in dB, unwrapped phase and group delay; then per frequency the min, max and the 5th/95th
percentiles over the trials; the -3 dB corner of every trial.

native  `cargo bench -p bandwright --bench tolerance -- --json` (its own timing, all cores and one thread):
        each trial is folded into exact per-frequency accumulators as it is solved (the envelopes'
        percentiles by bracketed selection, bit for bit those of keeping every trial, which the
        bench checks before timing); `kept_seconds` is the run that keeps every response
numpy   (a) per trial, the 3x3 nodal admittance matrices of all 200 frequencies built at once and solved
        with one batched numpy.linalg.solve, the derivative system likewise (the trial loop in Python);
        (b) the same with trials vectorised too, 500 trials per batch, so Python overhead is amortised.
        numpy draws its own uniform values (numpy.random.default_rng(20261202)), so the two sides agree
        statistically, not bit for bit: the check is that the mean -3 dB corner agrees within 4 standard
        errors and the standard deviations within 10 %.

Self-check before timing: the nominal numpy H has |H|^2 = 0.25/(1 + (f/fc)^10) (closed-form Butterworth
magnitude of the matched ladder) to 1e-9 relative.

Exit status: 0 when everything ran and the checks passed (whether or not the 50x target was met),
1 on a failed check or bench run.
"""

import argparse
import json
import math
import subprocess
import sys
import time

import numpy as np

TRIALS, POINTS = 10_000, 200
R0, FC, ORDER = 50.0, 1e6, 5
TOL = {"R": 0.01, "C": 0.05, "L": 0.10}


def nominal_parts():
    wc = 2 * math.pi * FC
    g = [2 * math.sin((2 * k - 1) * math.pi / (2 * ORDER)) for k in range(1, ORDER + 1)]
    return {"C1": g[0] / (R0 * wc), "L2": g[1] * R0 / wc, "C3": g[2] / (R0 * wc), "L4": g[3] * R0 / wc,
            "C5": g[4] / (R0 * wc), "RL": R0}


def solve(parts, w):
    """parts: dict of arrays shaped (T, 1); w: (F,). Returns H, dH/dw shaped (T, F)."""
    jw = 1j * w[None, :]
    y_c1, y_c3, y_c5 = jw * parts["C1"], jw * parts["C3"], jw * parts["C5"]
    y_l2, y_l4 = 1 / (jw * parts["L2"]), 1 / (jw * parts["L4"])
    g_s, g_l = 1 / R0, 1 / parts["RL"] + 0 * w[None, :]
    d_c1, d_c3, d_c5 = 1j * parts["C1"] + 0 * jw, 1j * parts["C3"] + 0 * jw, 1j * parts["C5"] + 0 * jw
    d_l2, d_l4 = -y_l2 / w[None, :], -y_l4 / w[None, :]
    shape = y_c1.shape + (3, 3)
    a = np.zeros(shape, complex)
    da = np.zeros(shape, complex)
    a[..., 0, 0] = g_s + y_c1 + y_l2
    a[..., 0, 1] = a[..., 1, 0] = -y_l2
    a[..., 1, 1] = y_l2 + y_c3 + y_l4
    a[..., 1, 2] = a[..., 2, 1] = -y_l4
    a[..., 2, 2] = y_l4 + y_c5 + g_l
    da[..., 0, 0] = d_c1 + d_l2
    da[..., 0, 1] = da[..., 1, 0] = -d_l2
    da[..., 1, 1] = d_l2 + d_c3 + d_l4
    da[..., 1, 2] = da[..., 2, 1] = -d_l4
    da[..., 2, 2] = d_l4 + d_c5
    b = np.zeros(y_c1.shape + (3, 1), complex)
    b[..., 0, 0] = g_s  # Norton: E = 1 V behind Rs
    x = np.linalg.solve(a, b)
    dx = np.linalg.solve(a, -da @ x)
    return x[..., 2, 0], dx[..., 2, 0]


def summarize(h, dh, w):
    gain = 20 * np.log10(np.abs(h))
    phase = np.degrees(np.unwrap(np.angle(h), axis=1))
    delay = -np.imag(dh / h)
    env = [(q.min(axis=0), q.max(axis=0), np.percentile(q, 5, axis=0), np.percentile(q, 95, axis=0))
           for q in (gain, phase, delay)]
    # -3 dB corner per trial against the gain at the lowest frequency (linear in ln f between points).
    level = gain[:, :1] - 10 * math.log10(2)
    below = gain < level
    k = np.argmax(below, axis=1)
    u = np.log(w / (2 * math.pi))
    rows = np.arange(gain.shape[0])
    y0, y1 = gain[rows, k - 1] - level[:, 0], gain[rows, k] - level[:, 0]
    corner = np.exp(u[k - 1] + (u[k] - u[k - 1]) * y0 / (y0 - y1))
    return env, corner


def draw(rng, count):
    nominal = nominal_parts()
    return {name: value * (1 + TOL[name[0]] * rng.uniform(-1, 1, size=(count, 1))) for name, value in nominal.items()}


def numpy_loop(w):
    rng = np.random.default_rng(20261202)
    parts = draw(rng, TRIALS)
    hs, dhs = np.empty((TRIALS, POINTS), complex), np.empty((TRIALS, POINTS), complex)
    for t in range(TRIALS):
        one = {name: v[t:t + 1] for name, v in parts.items()}
        h, dh = solve(one, w)
        hs[t], dhs[t] = h[0], dh[0]
    return summarize(hs, dhs, w)


def numpy_batched(w, batch=500):
    rng = np.random.default_rng(20261202)
    parts = draw(rng, TRIALS)
    hs, dhs = np.empty((TRIALS, POINTS), complex), np.empty((TRIALS, POINTS), complex)
    for start in range(0, TRIALS, batch):
        chunk = {name: v[start:start + batch] for name, v in parts.items()}
        hs[start:start + batch], dhs[start:start + batch] = solve(chunk, w)
    return summarize(hs, dhs, w)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--skip-build", action="store_true")
    args = parser.parse_args()
    w = 2 * math.pi * np.logspace(5, 7, POINTS)

    nominal = {k: np.array([[v]]) for k, v in nominal_parts().items()}
    h, _ = solve(nominal, w)
    expected = 0.25 / (1 + (w / (2 * math.pi * FC)) ** 10)
    worst = float(np.max(np.abs(np.abs(h[0]) ** 2 / expected - 1)))
    if worst > 1e-9:
        print(f"self-check failed: |H|^2 deviates from the Butterworth closed form by {worst:.2e}")
        return 1

    cmd = ["cargo", "bench", "-q", "-p", "bandwright", "--bench", "tolerance", "--", "--json"]
    if not args.skip_build:
        subprocess.run(cmd[:7] + ["--no-run"], check=True)
    native, loop, batched = [], [], []
    numpy_corner = None
    for _ in range(args.repeats):
        out = subprocess.run(cmd, check=True, capture_output=True, text=True).stdout.strip().splitlines()[-1]
        native.append(json.loads(out))
        start = time.perf_counter()
        _, numpy_corner = numpy_loop(w)
        loop.append(time.perf_counter() - start)
        start = time.perf_counter()
        numpy_batched(w)
        batched.append(time.perf_counter() - start)
    med = lambda v: sorted(v)[len(v) // 2]
    n_all = med([r["seconds"] for r in native])
    n_one = med([r["one_thread_seconds"] for r in native])
    mean_n, std_n = native[-1]["corner_mean_hz"], native[-1]["corner_std_hz"]
    mean_p, std_p = float(numpy_corner.mean()), float(numpy_corner.std(ddof=1))
    se = std_p / math.sqrt(TRIALS)
    ok = abs(mean_n - mean_p) < 4 * math.hypot(se, std_n / math.sqrt(TRIALS)) and abs(std_n / std_p - 1) < 0.10
    print(f"numpy {np.__version__}, {TRIALS} trials x {POINTS} frequencies, median of {args.repeats}")
    print(f"  native, {native[-1]['threads']} threads: {n_all * 1e3:9.1f} ms   one thread: {n_one * 1e3:9.1f} ms")
    print(f"  numpy (a) trial loop:      {med(loop) * 1e3:9.1f} ms   ratio {med(loop) / n_all:6.1f}x (all cores), {med(loop) / n_one:6.1f}x (one thread)")
    print(f"  numpy (b) 500-trial batch: {med(batched) * 1e3:9.1f} ms   ratio {med(batched) / n_all:6.1f}x (all cores), {med(batched) / n_one:6.1f}x (one thread)")
    print(f"  corner mean native {mean_n:.6e} Hz, numpy {mean_p:.6e} Hz; std native {std_n:.4e}, numpy {std_p:.4e}")
    print("  target: native under 250 ms and at least 50x numpy")
    if not ok:
        print("check failed: the two runs disagree statistically")
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
