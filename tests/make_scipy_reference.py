#!/usr/bin/python3
"""Generates tests/data/scipy_cubicspline.txt, the SciPy reference values read by tests/spline_test.cpp.

How the data was made
---------------------
    /usr/bin/python3 tests/make_scipy_reference.py > tests/data/scipy_cubicspline.txt

with Debian 12's python3-scipy (SciPy 1.10.1, NumPy 1.24.2); the script checks the versions.
(`python3` on PATH may be another interpreter without SciPy: use Debian's /usr/bin/python3.)
Each case fits scipy.interpolate.CubicSpline(u, q, axis=0, bc_type=..., extrapolate=True) and
evaluates value and derivatives 1..3 at the breakpoints, at the midpoints of the pieces, at
random parameters inside the range and at a few parameters outside it (where SciPy, like
c2path, continues the end cubic). Random data comes from numpy.random.default_rng with a fixed
seed per case, so running the script again gives the same file byte for byte.

SciPy's bc_type 'clamped' means zero end slope; for given end slopes v (start) and w (end) the
script passes ((1, v), (1, w)), which is c2path's EndCondition::kClamped with start_slope = v and
end_slope = w.

File format (plain text, one record per line, numbers printed with Python's repr, which
round-trips a double exactly; '#' starts a comment line):

    case NAME BC POINTS AXES EVALS     BC is not-a-knot or clamped
    slopes S_1 .. S_AXES E_1 .. E_AXES (clamped only) start and end slope per axis
    p U Q_1 .. Q_AXES                  POINTS lines: the data points
    e U D V_1 .. V_AXES                EVALS lines: d^D q / du^D at U per axis (D = 0..3)
    x U D V_1 .. V_AXES                (cases of up to 40 points) the same quantity of the exact
                                       spline, solved in rational arithmetic (fractions.Fraction)
                                       from the same double data and rounded once to double
    end

The exact values do not come from SciPy: they are the interpolating spline defined directly by
its conditions (interpolation, C1 and C2 at interior knots, and the third derivative continuous
at u_1 and u_{n-1} for not-a-knot, or the given end slopes), solved without rounding. They tell
which of two implementations that disagree in the last digits is closer to the truth.
"""

import sys
from fractions import Fraction

import numpy as np
import scipy
from scipy.interpolate import CubicSpline

if not scipy.__version__.startswith("1.10."):
    sys.exit(f"expected SciPy 1.10 (Debian 12 python3-scipy), found {scipy.__version__}")


def uneven_knots(rng, n_points, lo=0.2, hi=3.0, start=0.0):
    """Strictly increasing parameters with spacings drawn uniformly from [lo, hi)."""
    return start + np.concatenate(([0.0], np.cumsum(rng.uniform(lo, hi, n_points - 1))))


def exact_spline(u, y, bc, start=None, end=None):
    """Piece coefficients (c0..c3 in s = u - u_i) of the exact spline through (u, y), Fractions.

    Unknowns: the 4 coefficients of every piece; rows: value at both ends of each piece, C1 and C2
    at interior knots, and the two end conditions; solved by exact Gauss-Jordan elimination."""
    u = [Fraction(float(v)) for v in u]
    y = [Fraction(float(v)) for v in y]
    n = len(u) - 1
    h = [u[i + 1] - u[i] for i in range(n)]
    rows = []

    def row(entries, rhs):
        r = [Fraction(0)] * (4 * n) + [Fraction(rhs)]
        for col, val in entries:
            r[col] = Fraction(val)
        rows.append(r)

    for i in range(n):
        row([(4 * i, 1)], y[i])
        row([(4 * i, 1), (4 * i + 1, h[i]), (4 * i + 2, h[i] ** 2), (4 * i + 3, h[i] ** 3)], y[i + 1])
        if i + 1 < n:
            row([(4 * i + 1, 1), (4 * i + 2, 2 * h[i]), (4 * i + 3, 3 * h[i] ** 2), (4 * i + 5, -1)], 0)
            row([(4 * i + 2, 2), (4 * i + 3, 6 * h[i]), (4 * i + 6, -2)], 0)
    if bc == "clamped":
        row([(1, 1)], Fraction(float(start)))
        row([(4 * (n - 1) + 1, 1), (4 * (n - 1) + 2, 2 * h[-1]), (4 * (n - 1) + 3, 3 * h[-1] ** 2)],
            Fraction(float(end)))
    elif n == 1:  # not-a-knot, 2 points: the line
        row([(2, 1)], 0)
        row([(3, 1)], 0)
    elif n == 2:  # not-a-knot, 3 points: the parabola
        row([(3, 1)], 0)
        row([(7, 1)], 0)
    else:  # not-a-knot: third derivative continuous at u_1 and u_{n-1}
        row([(3, 1), (7, -1)], 0)
        row([(4 * (n - 2) + 3, 1), (4 * (n - 1) + 3, -1)], 0)
    size = 4 * n
    for c in range(size):
        p = next(r for r in range(c, size) if rows[r][c] != 0)
        rows[c], rows[p] = rows[p], rows[c]
        pivot = rows[c][c]
        rows[c] = [v / pivot for v in rows[c]]
        for r in range(size):
            if r != c and rows[r][c] != 0:
                f = rows[r][c]
                rows[r] = [a - f * b for a, b in zip(rows[r], rows[c])]
    x = [rows[i][size] for i in range(size)]
    return u, [x[4 * i:4 * i + 4] for i in range(n)]


def exact_eval(knots, coeffs, x, d):
    """d-th derivative of the exact spline at the double x (the end pieces continue outside)."""
    xf = Fraction(float(x))
    i = 0
    while i + 1 < len(coeffs) and xf >= knots[i + 1]:
        i += 1
    s = xf - knots[i]
    c0, c1, c2, c3 = coeffs[i]
    return float([c0 + s * (c1 + s * (c2 + s * c3)), c1 + s * (2 * c2 + 3 * c3 * s), 2 * c2 + 6 * c3 * s, 6 * c3][d])


def emit_case(name, u, q, bc, slopes=None, rng=None):
    u = np.asarray(u, dtype=float)
    q = np.asarray(q, dtype=float)
    if q.ndim == 1:
        q = q[:, None]
    n_points, axes = q.shape
    if bc == "not-a-knot":
        spline = CubicSpline(u, q, axis=0, bc_type="not-a-knot", extrapolate=True)
    elif bc == "clamped":
        start, end = (np.asarray(s, dtype=float).reshape(axes) for s in slopes)
        spline = CubicSpline(u, q, axis=0, bc_type=((1, start), (1, end)), extrapolate=True)
    else:
        raise ValueError(bc)

    # Query parameters: breakpoints, midpoints, random interior points, extrapolation.
    span = u[-1] - u[0]
    queries = list(u) + list(0.5 * (u[:-1] + u[1:]))
    if rng is not None:
        queries += list(rng.uniform(u[0], u[-1], min(40, 4 * n_points)))
    queries += [u[0] - 0.3 * span, u[0] - 0.01 * span, u[-1] + 0.01 * span, u[-1] + 0.3 * span]

    lines = [f"case {name} {bc} {n_points} {axes} {4 * len(queries)}"]
    if bc == "clamped":
        lines.append("slopes " + " ".join(repr(float(v)) for v in np.concatenate((start, end))))
    for k in range(n_points):
        lines.append("p " + " ".join(repr(float(v)) for v in [u[k], *q[k]]))
    for x in queries:
        for d in range(4):
            vals = spline(x, nu=d)
            lines.append(f"e {float(x)!r} {d} " + " ".join(repr(float(v)) for v in np.atleast_1d(vals)))
    if n_points <= 40:
        exact = [exact_spline(u, q[:, a], bc, *((start[a], end[a]) if bc == "clamped" else ()))
                 for a in range(axes)]
        for x in queries:
            for d in range(4):
                vals = [exact_eval(kn, co, x, d) for kn, co in exact]
                lines.append(f"x {float(x)!r} {d} " + " ".join(repr(v) for v in vals))
    lines.append("end")
    print("\n".join(lines))


def main():
    print("# SciPy 1.10 CubicSpline reference values for c2path's tests/spline_test.cpp.")
    print(f"# Generated by tests/make_scipy_reference.py with SciPy {scipy.__version__},"
          f" NumPy {np.__version__}; see that script for the format. Do not edit by hand.")

    # n = 2: not-a-knot gives the straight line, clamped the cubic Hermite piece.
    emit_case("two_points_line", [0.5, 2.0], [[1.0, -3.0], [4.0, 2.5]], "not-a-knot")
    emit_case("two_points_hermite", [0.5, 2.0], [[1.0, -3.0], [4.0, 2.5]], "clamped",
              slopes=([0.0, 1.5], [-2.0, 4.0]))

    # n = 3: not-a-knot gives the parabola through the points (uneven spacing).
    emit_case("three_points_parabola", [-1.0, 0.25, 3.0], [[2.0], [-1.0], [5.0]], "not-a-knot")
    emit_case("three_points_clamped", [-1.0, 0.25, 3.0], [[2.0], [-1.0], [5.0]], "clamped",
              slopes=([1.0], [-0.5]))

    # n = 4 and 5: the smallest systems with proper not-a-knot end rows.
    rng = np.random.default_rng(4)
    u = uneven_knots(rng, 4, start=1.0)
    q = rng.uniform(-2.0, 2.0, (4, 2))
    emit_case("four_points_2axes", u, q, "not-a-knot", rng=rng)
    emit_case("four_points_2axes_clamped", u, q, "clamped", slopes=([0.3, -1.2], [2.0, 0.0]), rng=rng)

    rng = np.random.default_rng(5)
    u = uneven_knots(rng, 5)
    q = rng.uniform(-10.0, 10.0, (5, 3))
    emit_case("five_points_3axes", u, q, "not-a-knot", rng=rng)
    emit_case("five_points_3axes_clamped", u, q, "clamped", slopes=([1.0, 0.0, -4.0], [0.5, 2.0, 0.0]), rng=rng)

    # Larger, uneven knots, several axes of very different magnitude (units).
    for seed, n_points, axes in ((17, 17, 3), (40, 40, 6), (200, 200, 2)):
        rng = np.random.default_rng(seed)
        u = uneven_knots(rng, n_points, lo=0.05, hi=2.0, start=-3.0)
        scales = 10.0 ** rng.uniform(-3.0, 3.0, axes)
        q = rng.standard_normal((n_points, axes)).cumsum(axis=0) * scales
        emit_case(f"random_{n_points}pts_{axes}axes", u, q, "not-a-knot", rng=rng)
        emit_case(f"random_{n_points}pts_{axes}axes_clamped", u, q, "clamped",
                  slopes=(rng.standard_normal(axes) * scales, rng.standard_normal(axes) * scales), rng=rng)

    # A smooth function on uneven knots, clamped with SciPy's zero-slope 'clamped' convention.
    rng = np.random.default_rng(99)
    u = np.sort(np.concatenate(([0.0, 2.0 * np.pi], rng.uniform(0.0, 2.0 * np.pi, 10))))
    emit_case("cos_zero_slopes", u, np.column_stack((np.cos(u), 3.0 * np.cos(u) + 1.0)), "clamped",
              slopes=([0.0, 0.0], [0.0, 0.0]), rng=rng)


if __name__ == "__main__":
    main()
