#!/usr/bin/env python3
"""Worst-case interpolation error of the core's measurements, over grid shifts.

Run from the repository root (Python 3 standard library only):

    python3 tests/reference/scan_measure_interpolation.py

This justifies the tolerances in tests/reference/measurements.rs. It re-implements, independently
of the Rust code, the interpolation that crate/src/measure.rs documents:

  - gain: a cubic Hermite polynomial in (ln f, dB) through neighbouring grid points, using the exact
    slope d(dB)/d(ln f) at both ends; crossings of the -3.0103 dB level by bisection on that cubic;
    the peak by bisection on the cubic's derivative in the segment the exact slope points into;
  - impedance: a parabola in (ln f, ln|Z|) through the extreme grid point and its two neighbours.

For each case of measurements.rs it moves the feature across one grid step in 400 shifts (50 points
per decade unless stated) and prints the worst relative error against the closed form. The
tolerances in measurements.rs are about twice these numbers. When this was written the replica gave
the same corner and peak frequencies as the Rust code to the last digit on the grids tried.
"""

import math

HALF_POWER_DB = 10.0 * math.log10(2.0)
DB_PER_NEPER = 20.0 / math.log(10.0)
SHIFTS = 400


def log_grid(start, stop, per_decade):
    """The core's log grid: N = ceil(P * decades) + 1 points, both ends exact."""
    n = math.ceil(per_decade * math.log10(stop / start)) + 1
    ratio = math.log(stop / start)
    f = [start * math.exp(ratio * i / (n - 1)) for i in range(n)]
    f[0], f[-1] = start, stop
    return f


def hermite(p0, p1, t):
    (u0, y0, m0), (u1, y1, m1) = p0, p1
    h, t2, t3 = u1 - u0, t * t, t * t * t
    return (2 * t3 - 3 * t2 + 1) * y0 + (t3 - 2 * t2 + t) * h * m0 + (-2 * t3 + 3 * t2) * y1 + (t3 - t2) * h * m1


def hermite_dt(p0, p1, t):
    (u0, y0, m0), (u1, y1, m1) = p0, p1
    h, t2 = u1 - u0, t * t
    return (6 * t2 - 6 * t) * y0 + (3 * t2 - 4 * t + 1) * h * m0 + (-6 * t2 + 6 * t) * y1 + (3 * t2 - 2 * t) * h * m1


def bisect(g):
    lo, hi, g_lo = 0.0, 1.0, g(0.0)
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        if (g(mid) > 0) == (g_lo > 0):
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


def at(p0, p1, t):
    return math.exp(p0[0] + t * (p1[0] - p0[0]))


def curve(f_list, db_and_slope):
    """Points (ln f, dB, d dB / d ln f)."""
    return [(math.log(f),) + db_and_slope(f) for f in f_list]


def crossings(points, level):
    found = []
    for p0, p1 in zip(points, points[1:]):
        if (p0[1] - level) * (p1[1] - level) < 0:
            found.append(at(p0, p1, bisect(lambda t: hermite(p0, p1, t) - level)))
    return found


def peak(points):
    k = max(range(len(points)), key=lambda i: points[i][1])
    u, y, m = points[k]
    i = k if m > 0 else k - 1
    p0, p1 = points[i], points[i + 1]
    if hermite_dt(p0, p1, 0.0) > 0 and hermite_dt(p0, p1, 1.0) < 0:
        t = bisect(lambda t: hermite_dt(p0, p1, t))
        value = hermite(p0, p1, t)
        if value >= y:
            return at(p0, p1, t), value
    return math.exp(u), y


def impedance_minimum(points):
    """points: (ln f, ln|Z|); parabola through the minimum and its neighbours."""
    k = min(range(len(points)), key=lambda i: points[i][1])
    (x0, y0), (x1, y1), (x2, y2) = points[k - 1], points[k], points[k + 1]
    d = (x0 - x1) * (x0 - x2) * (x1 - x2)
    a = (x2 * (y1 - y0) + x1 * (y0 - y2) + x0 * (y2 - y1)) / d
    b = (x2 * x2 * (y0 - y1) + x1 * x1 * (y2 - y0) + x0 * x0 * (y1 - y2)) / d
    c = y1 - a * x1 * x1 - b * x1
    x = min(max(-b / (2 * a), x0), x2)
    return math.exp(x), math.exp(a * x * x + b * x + c)


def butterworth(n, fc):
    def db_and_slope(f):
        x = (f / fc) ** (2 * n)
        return 20 * math.log10(0.5) - 10 * math.log10(1 + x), -DB_PER_NEPER * n * x / (1 + x)
    return db_and_slope


def band_pass(q, f0):
    def db_and_slope(f):
        x = f / f0
        d = 1 + q * q * (x - 1 / x) ** 2
        dd = 2 * q * q * (x - 1 / x) * (1 + 1 / (x * x))
        return -10 * math.log10(d), -0.5 * DB_PER_NEPER * dd / d * x
    return db_and_slope


def low_pass(q, f0):
    def db_and_slope(f):
        x = f / f0
        d = (1 - x * x) ** 2 + (x / q) ** 2
        dd = -4 * x * (1 - x * x) + 2 * x / q ** 2
        return -10 * math.log10(d), -0.5 * DB_PER_NEPER * dd / d * x
    return db_and_slope


def shifts(per_decade):
    return [10 ** (j / (SHIFTS * per_decade)) for j in range(SHIFTS)]


def main():
    for per_decade in (50, 100):
        worst = 0.0
        for s in shifts(per_decade):
            points = curve(log_grid(7.0 * s, 7e4 * s, per_decade), butterworth(5, 1e3))
            (corner,) = crossings(points, points[0][1] - HALF_POWER_DB)
            worst = max(worst, abs(corner / 1e3 - 1))
        print(f"Butterworth n = 5 corner, {per_decade}/decade: worst relative error {worst:.2e}")

    grid = log_grid(1.0, 1e6, 50)
    for q in (316.227766 / 470.0, 316.227766 / 150.0, 10.0):
        worst = 0.0
        for s in shifts(50):
            f0 = 5e3 * s
            points = curve(grid, band_pass(q, f0))
            _, peak_db = peak(points)
            low, high = crossings(points, peak_db - HALF_POWER_DB)
            root = math.sqrt(1 + 1 / (4 * q * q))
            worst = max(worst, abs(low / (f0 * (root - 1 / (2 * q))) - 1), abs(high / (f0 * (root + 1 / (2 * q))) - 1))
        print(f"band-pass Q = {q:.3f} corners: worst relative error {worst:.2e}")

    for q in (1.0, 5.0):
        worst_f = worst_db = 0.0
        for s in shifts(50):
            f0 = 1.6e3 * s
            f_peak, db_peak = peak(curve(grid, low_pass(q, f0)))
            worst_f = max(worst_f, abs(f_peak / (f0 * math.sqrt(1 - 1 / (2 * q * q))) - 1))
            worst_db = max(worst_db, abs(db_peak - 20 * math.log10(q / math.sqrt(1 - 1 / (4 * q * q)))))
        print(f"low-pass Q = {q} peak: worst relative frequency error {worst_f:.2e}, gain error {worst_db:.2e} dB")

    inductance = 10e-3
    for total in (100.0, 20.0):
        worst_value = worst_f = 0.0
        for s in shifts(50):
            capacitance = 1e-6 / (s * s)
            f0 = 1 / (2 * math.pi * math.sqrt(inductance * capacitance))
            points = []
            for f in grid:
                x = 2 * math.pi * f * inductance - 1 / (2 * math.pi * f * capacitance)
                points.append((math.log(f), 0.5 * math.log(total * total + x * x)))
            f_min, value = impedance_minimum(points)
            worst_value = max(worst_value, abs(value / total - 1))
            worst_f = max(worst_f, abs(f_min / f0 - 1))
        q = math.sqrt(inductance / 1e-6) / total
        print(f"series RLC Q = {q:.2f} |Z_in| minimum: worst relative value error {worst_value:.2e}, "
              f"frequency {worst_f:.2e}")


if __name__ == "__main__":
    main()
