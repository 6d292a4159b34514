#!/usr/bin/env python3
"""Time Bandwright's native fit searches against a plain-Python brute force of the same searches.

Run from anywhere (the default bench command runs in the workspace root):

    python3 crate/benches/compare_fit_python.py [--repeats 5] [--skip-build] [--bench-cmd "..."]

Standard library only (no numpy): the point is the cost of the search written the obvious way.

The native side is `cargo bench -p bandwright --bench fit -- --json`, which prints one JSON line per
case: {"case": ..., "seconds_median": ..., "repeats": N, "best_objective": ..., "best_parts": [...],
"best_choices": [{"reference", "arrangement", "parts"}], ...}. The two sides run alternately (native,
Python, native, Python, ...) in one process so that both see the same machine load. Each side's figure
is the median over --repeats runs: the native figure is the bench binary's own median, and the Python
figure is time.perf_counter around one whole search. One untimed Python run of each case comes first.

The cases (what the native bench fits):

  rc_six_decades   first-order RC low-pass, fc = 1 kHz, ideal source (Rs = 0), open load. A real brute
                   force over the full grid: every E96 resistor in [100 ohm, 100 Mohm] times every E12
                   capacitor in [1 pF, 1 F]. Objective |fc_achieved - fc| / fc with
                   fc_achieved = 1 / (2 pi R C), in the same operation order as the core's closed form,
                   so the best objective must equal the native one to 1e-12 (it is in fact bit-equal).
  ladder5_combine  5th-order Butterworth LC ladder, 50 ohm / 50 ohm, fc = 10 MHz, shunt C first, E12
                   capacitors and inductors, two-part pairs allowed. The search that fit.rs's module doc
                   describes, written naively:
                   1. ideal values C_k = g_k / (R0 wc) (odd k, shunt), L_k = g_k R0 / wc (even k, series),
                      g_k = 2 sin((2k-1) pi / 10) (references.md section 2.1, Butterworth closed form);
                   2. per element, the CANDIDATES_PER_ELEMENT = 6 candidates nearest the ideal in
                      |ln(v / ideal)| among singles and two-part pairs within a factor of 4 (resistors and
                      inductors add in series and combine reciprocally in parallel; capacitors the other
                      way round), built exactly as fit::candidates builds them;
                   3. ALL 6^5 = 7776 assignments scored by the summed squared log error (instead of the
                      core's best-first heap), the LADDER_POOL = 64 smallest kept;
                   4. each of the 64 evaluated by an ABCD-matrix cascade (not MNA) over the deviation band
                      [fc/10, 3 fc]: a log grid of N = ceil(40 * decades) + 1 points, both ends included
                      (as FrequencyGrid::log with Spacing::PerDecade builds it), the worst
                      |dB(fitted) - dB(ideal)| where the ideal is within 40 dB of its peak;
                   5. the smallest worst deviation wins (ties by the summed log error).
                   The best value must equal the native best objective to 1e-6 dB.

E-series tables: E12 and E96 copied from the project's references.md section 1.2 (IEC 60063 as
transcribed by the public sources listed there). Decade values are built as the core builds them: the
mantissa's 2 or 3 digits times an exactly held power of ten in one correctly rounded operation, so that
4.7 nF is the float 4.7e-9 and values compare bit-equal with the core's.

Self-checks (asserted before any timing, against oracles outside the project's code):
  - the E12 and E96 tables: E96 equals round(10^(i/96), 2) everywhere, and E12 differs from
    round(10^(i/12), 1) exactly at indices 5, 6, 7, 8 and 11 (both from references.md section 1.3, an
    independent route to the same tables);
  - the ABCD cascade of the ideal ladder: |H|^2 = 0.25 / (1 + (f/fc)^10) at every grid point, to 1e-9
    relative (Butterworth definition; 0.25 is the matched-termination divider squared);
  - the deviation grid has ceil(40 log10(30)) + 1 = 61 points from exactly fc/10 to exactly 3 fc.
And for every native run: the native best objective of each case equals the Python one within the
tolerance above, and the native best parts are reported beside the Python best parts.

Exit status: 0 when everything ran and all checks passed (whether or not the native targets were met),
1 on a failed check or a failed or malformed bench run, 2 on bad arguments.
"""

import argparse
import cmath
import itertools
import json
import math
import shlex
import statistics
import subprocess
import sys
import time
from pathlib import Path

WORKSPACE_ROOT = Path(__file__).resolve().parents[2]
DEFAULT_BENCH_CMD = "cargo bench -p bandwright --bench fit -- --json"
BUILD_CMD = "cargo bench -p bandwright --bench fit --no-run"
CASES = ("ladder5_combine", "rc_six_decades")

# Constants of the core's search (bandwright::fit and bandwright::eseries), mirrored here.
CANDIDATES_PER_ELEMENT = 6
LADDER_POOL = 64
DEVIATION_FLOOR_DB = 40.0
DEVIATION_POINTS_PER_DECADE = 40.0
SAME_VALUE_RTOL = 1e-9

# How close the two sides' best objectives must be.
RC_OBJECTIVE_ATOL = 1e-12
LADDER_OBJECTIVE_ATOL_DB = 1e-6
RTOL_SELF_CHECK = 1e-9

# Source: references.md section 1.2 (IEC 60063 via the public copies S1-S4 listed there).
E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]
E96 = [
    1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30,
    1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74,
    1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32,
    2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09,
    3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12,
    4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49,
    5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
    7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76,
]

# The RC case.
RC_FC_HZ = 1e3
RC_R_RANGE_OHM = (100.0, 1e8)
RC_C_RANGE_F = (1e-12, 1.0)

# The ladder case.
LADDER_ORDER = 5
LADDER_R0_OHM = 50.0
LADDER_FC_HZ = 10e6
LADDER_BAND_HZ = (LADDER_FC_HZ / 10.0, LADDER_FC_HZ * 3.0)


class BenchError(Exception):
    """A bench run failed or printed something that is not the expected JSON."""


# ---------------------------------------------------------------------------------------------------
# E-series values, built as bandwright::eseries builds them

def decimal(digits, exponent):
    """digits x 10^exponent, correctly rounded: one IEEE operation on exact operands (as the core)."""
    if 0 <= exponent <= 22:
        return float(digits) * float(10 ** exponent)
    if -22 <= exponent < 0:
        return float(digits) / float(10 ** -exponent)
    return float(f"{digits}e{exponent}")


def values_between(mantissas, low, high):
    """Every series value in [low, high] (both ends within SAME_VALUE_RTOL), ascending."""
    start = low * (1.0 - SAME_VALUE_RTOL)
    end = high * (1.0 + SAME_VALUE_RTOL)
    digits = [round(m * 100.0) for m in mantissas]
    out = []
    for decade in range(math.floor(math.log10(start)) - 1, math.floor(math.log10(end)) + 2):
        for d in digits:
            value = decimal(d, decade - 2)
            if start <= value <= end:
                out.append(value)
    return out


# ---------------------------------------------------------------------------------------------------
# RC brute force

def rc_brute_force():
    """Every (R, C) of the grid; returns (objective, R, C) of the best, ties broken by smaller R."""
    fc = RC_FC_HZ  # times the first-order Butterworth pole magnitude, which is 1
    resistors = values_between(E96, *RC_R_RANGE_OHM)
    capacitors = values_between(E12, *RC_C_RANGE_F)
    best = (math.inf, 0.0, 0.0)
    two_pi = 2.0 * math.pi
    rs, cl = 0.0, 0.0
    for r in resistors:
        for c in capacitors:
            # The core's closed form, same operation order: 1 / (2 pi ((Rs + R) || RL) (C + CL)).
            achieved = 1.0 / (two_pi * (rs + r) * (c + cl))
            error = abs((achieved - fc) / fc)
            if error < best[0] or (error == best[0] and r < best[1]):
                best = (error, r, c)
    return best, len(resistors), len(capacitors)


# ---------------------------------------------------------------------------------------------------
# Ladder search

def butterworth_g(order):
    """g_k = 2 sin((2k-1) pi / (2n)), k = 1..n (references.md section 2.1)."""
    return [2.0 * math.sin((2 * k - 1) * math.pi / (2 * order)) for k in range(1, order + 1)]


def ideal_ladder():
    """[(reference, kind, ideal value)] from the source, shunt C first."""
    omega_c = 2.0 * math.pi * LADDER_FC_HZ
    elements = []
    for k, g in enumerate(butterworth_g(LADDER_ORDER), start=1):
        if k % 2 == 1:
            elements.append((f"C{k}", "capacitor", g / (LADDER_R0_OHM * omega_c)))
        else:
            elements.append((f"L{k}", "inductor", g * LADDER_R0_OHM / omega_c))
    return elements


def candidates(mantissas, low, high, kind):
    """Singles and pairs in [low, high], in the order fit::candidates generates them.

    Each is (value, parts, arrangement)."""
    out = [(v, (v,), "single") for v in values_between(mantissas, low, high)]
    adding, reciprocal = ("parallel", "series") if kind == "capacitor" else ("series", "parallel")
    adding_parts = values_between(mantissas, low / 10.0, high)
    for i, a in enumerate(adding_parts):
        for b in adding_parts[: i + 1]:
            v = a + b
            if low <= v <= high:
                out.append((v, (a, b), adding))
    reciprocal_parts = values_between(mantissas, low, high * 10.0)
    for i, a in enumerate(reciprocal_parts):
        for b in reciprocal_parts[: i + 1]:
            v = a * b / (a + b)
            if low <= v <= high:
                out.append((v, (a, b), reciprocal))
    return out


def nearest_choices(mantissas, ideal, kind, k):
    """The k candidates nearest ideal in |ln(v/ideal)|, singles before pairs on ties (stable sort)."""
    all_candidates = candidates(mantissas, ideal / 4.0, ideal * 4.0, kind)
    all_candidates.sort(key=lambda c: (abs(math.log(c[0] / ideal)), len(c[1])))
    deduplicated = []
    for c in all_candidates:
        if deduplicated and deduplicated[-1][0] == c[0] and deduplicated[-1][1] == c[1]:
            continue
        deduplicated.append(c)
    return deduplicated[:k]


def deviation_grid(start, stop):
    """FrequencyGrid::log(start, stop, PerDecade(40)): N = ceil(P decades) + 1, both ends exact."""
    n = int(math.ceil(DEVIATION_POINTS_PER_DECADE * math.log10(stop / start)) + 1.0)
    ratio_ln = math.log(stop / start)
    f = [start * math.exp(ratio_ln * i / (n - 1)) for i in range(n)]
    f[0], f[-1] = start, stop
    return f


def element_immittance(kind, parts, arrangement, jw):
    """(is_shunt_admittance, value): Y of a shunt capacitor, Z of a series inductor, from its parts."""
    if kind == "capacitor":
        if arrangement == "series":
            z = sum_complex(1.0 / (jw * p) for p in parts)
            return 1.0 / z
        return jw * sum_real(parts)
    if arrangement == "parallel":
        y = sum_complex(1.0 / (jw * p) for p in parts)
        return 1.0 / y
    return jw * sum_real(parts)


def sum_real(values):
    total = 0.0
    for v in values:
        total += v
    return total


def sum_complex(values):
    total = 0j
    for v in values:
        total += v
    return total


def cascade_db(elements, f_hz, r_source, r_load):
    """dB = 20 log10 |V_out / EMF| of the ladder by an ABCD cascade at each frequency.

    elements: [(kind, parts, arrangement)] from the source; capacitors are shunt, inductors series."""
    out = []
    for f in f_hz:
        jw = 2j * math.pi * f
        a, b, c, d = 1.0 + 0j, complex(r_source), 0j, 1.0 + 0j
        for kind, parts, arrangement in elements:
            x = element_immittance(kind, parts, arrangement, jw)
            if kind == "capacitor":  # shunt admittance Y: [[1, 0], [Y, 1]]
                a, b, c, d = a + b * x, b, c + d * x, d
            else:  # series impedance Z: [[1, Z], [0, 1]]
                a, b, c, d = a, a * x + b, c, c * x + d
        h = 1.0 / (a + b / r_load)
        out.append(20.0 * math.log10(abs(h)))
    return out


def worst_deviation_db(fitted_db, ideal_db):
    peak = max(ideal_db)
    worst = 0.0
    for a, b in zip(fitted_db, ideal_db):
        if b >= peak - DEVIATION_FLOOR_DB:
            worst = max(worst, abs(a - b))
    return worst


def ladder_search():
    """The whole ladder search; returns a dict with the best and some counts."""
    elements = ideal_ladder()
    lists = []
    for _, kind, ideal in elements:
        choices = nearest_choices(E12, ideal, kind, CANDIDATES_PER_ELEMENT)
        lists.append([(math.log(v / ideal) ** 2, (v, parts, arrangement)) for v, parts, arrangement in choices])
    # Brute force over every assignment instead of the best-first heap.
    scored = []
    for assignment in itertools.product(*(range(len(l)) for l in lists)):
        total = 0.0
        for index, choices in zip(assignment, lists):
            total += choices[index][0]
        scored.append((total, assignment))
    scored.sort()
    pool = scored[:LADDER_POOL]
    f_hz = deviation_grid(*LADDER_BAND_HZ)
    ideal_db = cascade_db([(kind, (value,), "single") for _, kind, value in elements], f_hz,
                          LADDER_R0_OHM, LADDER_R0_OHM)
    ranked = []
    for log_error, assignment in pool:
        chosen = [lists[k][index][1] for k, index in enumerate(assignment)]
        fitted = [(kind, parts, arrangement) for (_, kind, _), (_, parts, arrangement) in zip(elements, chosen)]
        deviation = worst_deviation_db(cascade_db(fitted, f_hz, LADDER_R0_OHM, LADDER_R0_OHM), ideal_db)
        ranked.append((deviation, log_error, assignment, chosen))
    ranked.sort(key=lambda r: (r[0], r[1]))
    deviation, log_error, assignment, chosen = ranked[0]
    return {
        "objective": deviation,
        "log_error": log_error,
        "choices": [(ref, v, parts, arrangement) for (ref, _, _), (v, parts, arrangement) in zip(elements, chosen)],
        "candidate_counts": [len(l) for l in lists],
        "assignments": len(scored),
        "ranked": ranked,
    }


# ---------------------------------------------------------------------------------------------------
# Self-checks

def self_check():
    # Source: references.md section 1.3 (computed there): E96 equals round(10^(i/96), 2) everywhere.
    assert len(E96) == 96 and all(round(10 ** (i / 96), 2) == m for i, m in enumerate(E96)), "E96 table"
    # Source: references.md section 1.3: E12 differs from round(10^(i/12), 1) exactly at 5, 6, 7, 8, 11.
    differs = [i for i, m in enumerate(E12) if round(10 ** (i / 12), 1) != m]
    assert len(E12) == 12 and differs == [5, 6, 7, 8, 11], f"E12 table differs at {differs}"
    # Decade values are the exact decimals.
    assert values_between(E12, 4.7e-9, 4.7e-9) == [4.7e-9] and values_between(E96, 4990.0, 4990.0) == [4990.0]

    f_hz = deviation_grid(*LADDER_BAND_HZ)
    assert len(f_hz) == 61 and f_hz[0] == 1e6 and f_hz[-1] == 3e7, f"grid {len(f_hz)} {f_hz[0]} {f_hz[-1]}"

    # Source: Butterworth definition |H|^2 = H0^2 / (1 + (f/fc)^(2n)), H0 = RL/(Rs+RL) = 0.5.
    elements = ideal_ladder()
    probe = f_hz + [LADDER_FC_HZ]
    ideal_db = cascade_db([(kind, (value,), "single") for _, kind, value in elements], probe,
                          LADDER_R0_OHM, LADDER_R0_OHM)
    worst = 0.0
    for f, db in zip(probe, ideal_db):
        expected = 0.25 / (1.0 + (f / LADDER_FC_HZ) ** (2 * LADDER_ORDER))
        worst = max(worst, abs(10.0 ** (db / 10.0) / expected - 1.0))
    assert worst <= RTOL_SELF_CHECK, f"ABCD cascade vs Butterworth |H|^2: rel {worst:.3e}"
    print("Python self-checks passed:")
    print("  E96 = round(10^(i/96), 2) everywhere; E12 differs from round(10^(i/12), 1) at 5 6 7 8 11")
    print(f"  deviation grid: {len(f_hz)} points, {f_hz[0]:g} .. {f_hz[-1]:g} Hz")
    print(f"  ideal ladder ABCD |H|^2 vs 0.25/(1+(f/fc)^10): max rel err {worst:.2e} over {len(probe)} points")


# ---------------------------------------------------------------------------------------------------
# The native side

def parse_bench_output(stdout):
    """The JSON lines of the bench's stdout, validated, as {case: record}."""
    records = {}
    for line in stdout.splitlines():
        line = line.strip()
        if not line.startswith("{"):
            continue
        try:
            value = json.loads(line)
        except json.JSONDecodeError as e:
            raise BenchError(f"bench printed a line that is not valid JSON ({e}): {line!r}") from None
        if not isinstance(value, dict):
            continue
        case = value.get("case")
        if case not in CASES:
            raise BenchError(f"bench JSON case is {case!r}; this script models {CASES}")
        if case in records:
            raise BenchError(f"bench printed case {case!r} twice")
        for key in ("seconds_median", "best_objective"):
            v = value.get(key)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v < 0:
                raise BenchError(f"bench JSON {case}.{key} must be a finite number >= 0, got {v!r}")
        if not value["seconds_median"] > 0:
            raise BenchError(f"bench JSON {case}.seconds_median must be positive, got {value['seconds_median']!r}")
        repeats = value.get("repeats")
        if isinstance(repeats, bool) or not isinstance(repeats, int) or repeats < 1:
            raise BenchError(f"bench JSON {case}.repeats must be a positive integer, got {repeats!r}")
        parts = value.get("best_parts")
        if not isinstance(parts, list) or not all(isinstance(p, (int, float)) and not isinstance(p, bool)
                                                  for p in parts):
            raise BenchError(f"bench JSON {case}.best_parts must be a list of numbers, got {parts!r}")
        records[case] = value
    missing = [c for c in CASES if c not in records]
    if missing:
        raise BenchError(f"bench printed no JSON line for {missing}; stdout was: {stdout[-2000:]!r}")
    return records


def run_bench(cmd):
    try:
        proc = subprocess.run(cmd, cwd=WORKSPACE_ROOT, capture_output=True, text=True, check=False)
    except OSError as e:
        raise BenchError(f"could not start bench command {shlex.join(cmd)!r}: {e}") from None
    if proc.returncode != 0:
        raise BenchError(f"bench command {shlex.join(cmd)!r} exited with {proc.returncode}; "
                         f"stderr tail: {proc.stderr[-2000:]!r}")
    return parse_bench_output(proc.stdout)


def timed(function):
    start = time.perf_counter()
    result = function()
    return time.perf_counter() - start, result


def describe_ladder_choices(choices):
    out = []
    for ref, value, parts, arrangement in choices:
        made = "" if arrangement == "single" else f" ({arrangement} {' + '.join(f'{p:g}' for p in parts)})"
        out.append(f"{ref}={value:.6g}{made}")
    return ", ".join(out)


def describe_native_choices(record):
    choices = record.get("best_choices")
    if not isinstance(choices, list):
        return ", ".join(f"{v:.6g}" for v in record["best_parts"])
    out = []
    for choice, value in zip(choices, record["best_parts"]):
        arrangement = choice.get("arrangement")
        parts = choice.get("parts", [])
        made = "" if arrangement == "single" else f" ({arrangement} {' + '.join(f'{p:g}' for p in parts)})"
        out.append(f"{choice.get('reference')}={value:.6g}{made}")
    return ", ".join(out)


def compare(native_records, python_results):
    """[(case, ok, message)] comparing each case's best objective and best parts."""
    out = []
    (rc_objective, rc_r, rc_c), _, _ = python_results["rc_six_decades"]
    native = native_records["rc_six_decades"]
    diff = abs(native["best_objective"] - rc_objective)
    same_parts = native["best_parts"] == [rc_r, rc_c]
    out.append(("rc_six_decades", diff <= RC_OBJECTIVE_ATOL,
                f"best |dfc|/fc native {native['best_objective']!r} python {rc_objective!r} (|diff| {diff:.3e},"
                f" tol {RC_OBJECTIVE_ATOL:g}); parts native {native['best_parts']} python {[rc_r, rc_c]}"
                f" ({'same' if same_parts else 'different'})"))
    ladder = python_results["ladder5_combine"]
    native = native_records["ladder5_combine"]
    diff = abs(native["best_objective"] - ladder["objective"])
    python_values = [value for _, value, _, _ in ladder["choices"]]
    same_parts = native["best_parts"] == python_values
    out.append(("ladder5_combine", diff <= LADDER_OBJECTIVE_ATOL_DB,
                f"best worst-deviation native {native['best_objective']!r} dB python {ladder['objective']!r} dB"
                f" (|diff| {diff:.3e}, tol {LADDER_OBJECTIVE_ATOL_DB:g}); parts"
                f" {'same' if same_parts else 'DIFFERENT'}: native [{describe_native_choices(native)}]"
                f" python [{describe_ladder_choices(ladder['choices'])}]"))
    return out


def parse_args(argv):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--bench-cmd", default=None,
                        help=f"command printing the bench JSON lines (default: {DEFAULT_BENCH_CMD!r}); "
                             "split with shell rules and run in the workspace root; "
                             "with this option the cargo pre-build is skipped")
    parser.add_argument("--skip-build", action="store_true", help=f"do not run {BUILD_CMD!r} before timing")
    parser.add_argument("--repeats", type=int, default=5,
                        help="alternating native/Python runs, median taken on each side (default 5)")
    args = parser.parse_args(argv)
    if args.repeats < 1:
        parser.error(f"--repeats must be at least 1, got {args.repeats}")
    return args


def main(argv=None):
    args = parse_args(argv)
    bench_cmd = shlex.split(args.bench_cmd if args.bench_cmd is not None else DEFAULT_BENCH_CMD)
    if not bench_cmd:
        print("error: --bench-cmd is empty; give a command that prints the bench JSON lines", file=sys.stderr)
        return 2

    try:
        self_check()
    except AssertionError as e:
        print(f"error: Python self-check failed: {e}", file=sys.stderr)
        return 1

    if args.bench_cmd is None and not args.skip_build:
        print(f"building: {BUILD_CMD}", flush=True)
        build = subprocess.run(shlex.split(BUILD_CMD), cwd=WORKSPACE_ROOT, check=False)
        if build.returncode != 0:
            print(f"error: build failed with exit status {build.returncode}", file=sys.stderr)
            return 1

    searches = {"ladder5_combine": ladder_search, "rc_six_decades": rc_brute_force}
    # Warm-up, untimed; these results are the ones compared (the searches are deterministic).
    python_results = {case: search() for case, search in searches.items()}
    ladder = python_results["ladder5_combine"]
    (_, _, _), n_r, n_c = python_results["rc_six_decades"]
    print(f"python rc_six_decades: {n_r} resistors x {n_c} capacitors = {n_r * n_c} pairs tried")
    print(f"python ladder5_combine: candidates per element {ladder['candidate_counts']}, "
          f"{ladder['assignments']} assignments scored, {LADDER_POOL} swept")

    print(f"bench command: {shlex.join(bench_cmd)}")
    print(f"{args.repeats} alternating runs (native bench = its own median; python = one search each)")
    print(f"{'run':>3}  {'case':<16}  {'native s':>12}  {'python s':>12}  {'python/native':>13}")
    native_times = {case: [] for case in CASES}
    python_times = {case: [] for case in CASES}
    failures = []
    last_native = None
    for run in range(1, args.repeats + 1):
        try:
            native = run_bench(bench_cmd)
        except BenchError as e:
            print(f"error: run {run}: {e}", file=sys.stderr)
            return 1
        last_native = native
        for case in CASES:
            seconds, result = timed(searches[case])
            native_seconds = native[case]["seconds_median"]
            native_times[case].append(native_seconds)
            python_times[case].append(seconds)
            print(f"{run:>3}  {case:<16}  {native_seconds:>12.4e}  {seconds:>12.4e}  "
                  f"{seconds / native_seconds:>12.1f}x", flush=True)
        for case, ok, message in compare(native, python_results):
            if not ok:
                failures.append(f"run {run}: {case}: {message}")

    for case in CASES:
        native_median = statistics.median(native_times[case])
        python_median = statistics.median(python_times[case])
        target = last_native[case].get("target_seconds")
        met = "" if target is None else (f"; native target {target * 1e3:g} ms "
                                         f"{'met' if native_median < target else 'not met'}")
        print(f"{case}: native {native_median * 1e3:.3f} ms, python {python_median * 1e3:.3f} ms, "
              f"ratio python/native {python_median / native_median:.1f}x{met}")
    for case, ok, message in compare(last_native, python_results):
        print(f"{case}: {'objective matches' if ok else 'OBJECTIVE MISMATCH'}: {message}")

    if failures:
        for failure in failures:
            print(f"error: {failure}", file=sys.stderr)
        return 1
    print(f"objective checks passed on all {args.repeats} runs")
    return 0


if __name__ == "__main__":
    sys.exit(main())
