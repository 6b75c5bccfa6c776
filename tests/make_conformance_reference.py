#!/usr/bin/python3
"""Generates the conformance corpus tests/data/conformance/sceneNN.{yaml,json} read by
tests/conformance_test.cpp.

How the data was made
---------------------
    /usr/bin/python3 tests/make_conformance_reference.py

with Debian 12's python3-scipy (SciPy 1.10.1, NumPy 1.24.2); the script checks the versions.
Every scene comes from numpy.random.default_rng with a fixed seed, so running the script again
gives the same files byte for byte. The scenes are invented test data, not real rigs or moves.

What is independent of c2path
-----------------------------
Nothing here uses c2path's code or output. The spline is scipy.interpolate.CubicSpline(t, q_axis,
bc_type=...), one per axis, with the waypoint times as the parameter (keyframes mode, design §3):
'not-a-knot', 'natural', ((1, v0), (1, v1)) for clamped with the scene's start/end velocities
(an axis left out of start/end gets 0, README "omitted axes 0"), and 'periodic'. The numbers are
written to the YAML as short decimal text and the reference is computed from float(text), the
same doubles c2path reads.

Everything else is computed from SciPy's piecewise polynomial (cs.c, local variable s = t - t_i):
  * Zeros of a polynomial p on [0, h] are found without companion matrices: the zeros of p'
    (recursively, down to degree 1) split [0, h] into pieces where p is monotone, and a sign
    change on such a piece is bisected until the interval cannot shrink any more (full double
    precision).
  * pos_min/pos_max: the extremes of q over the piece ends and the zeros of q' (so overshoot
    between waypoints counts); peak vel/acc/jerk: the largest |q'|, |q''|, |q'''| over the piece
    ends and the zeros of the next derivative.
  * Violations, per axis and quantity: the sub-intervals of each piece where q - max > 0,
    min - q > 0 (pos), or |q^(d)| - L > 0 (vel, acc, jerk: above +L and below -L, one stream in
    time order), split at the zeros of (quantity - bound); intervals that touch at a breakpoint
    (t_end of one == t_start of the next, both being that breakpoint) are merged. Each keeps its
    peak (the extreme position for pos, the largest magnitude otherwise) and t_peak.
  * stretch = max(1, v/vmax, sqrt(a/amax), cbrt(j/jmax)) over all axes with that limit when
    there is a vel/acc/jerk violation, else 1 (design §3; position violations cannot be fixed by
    slowing down).
  * Samples for the export check: rows of `c2path export --rate R` lie at t0 + k/R before the end
    and one row at exactly t_end (design §5, README); the expected row count is the number of k
    with k < D*R - 1e-9 (D = t_end - t0) plus one. A set of rows (the first, the last, rows next
    to breakpoints, spread rows) is evaluated with cs(t, 0..2).

Limits are chosen from the spline itself so that about half the scenes violate something (one
to three (axis, quantity) pairs below their peak; position limits placed inside the overshoot
between waypoints where there is one). c2path counts a quantity as beyond its limit only when it
exceeds it by more than 1e-9 of the limit (of the axis span for positions) (limits.hpp,
CheckOptions::rel_tol). So that both sides agree without ambiguity, a limit is re-drawn until no
local extreme and no piece-end value of any quantity lies within 1e-6 (relative, same scales) of
a bound: every interval then has a clear peak and transversal crossings, and no tangency decides
whether an interval exists.

Small cases (standard conventions, design §3): 2 and 3 points under every end condition. What
SciPy 1.10 does there (checked below by assertions, not taken on trust):
  * 2 points, not-a-knot or natural: SciPy replaces the end conditions by the chord slope, so the
    spline is the straight line (natural's zero curvature is satisfied by the line too).
  * 2 points, clamped: the cubic Hermite through both points with the two end slopes.
  * 2 points, periodic: SciPy gives the constant; for c2path this is an input error (last ==
    first makes the two waypoints coincide, design §3 "coincident consecutive waypoints are an
    input error"), so that scene expects exit 2 and a one-line error at the second waypoint.
  * 3 points, not-a-knot: SciPy builds the parabola through the three points.
  * 3 points, periodic: SciPy sets every slope to the same value sum(slope_i/h_i)/sum(1/h_i);
    the script asserts that this is C2 across the wrap and at the middle point (it is the
    periodic spline) -- but only when each axis is fitted on its own: with several axes at once
    (axis=0) SciPy 1.10 gives every axis the same slope (see AxesSpline), so every scene is
    fitted axis by axis.
  * 3 points, natural and clamped: the regular tridiagonal solve.

File format of sceneNN.json (one JSON object; numbers are Python floats written with repr, which
round-trips a double exactly):
    scene            file name of the YAML beside it
    seed             the generator seed
    ends             not-a-knot | natural | clamped | periodic
    expect_error     (only for input errors) {"line": L, "col": C, "text": "..."}: check and export
                     must exit 2 with one line FILE:L:C: error: ...TEXT...
    knots            the waypoint times
    duration         t_end - t0
    ok, exit_code    no violations / 1 when there are violations, else 0
    stretch          see above
    axes[]           {name, unit, peak{pos_min,pos_max,vel,acc,jerk},
                      limit{min,max,vel,acc,jerk} (null when absent),
                      scale{pos,vel,acc,jerk}: magnitudes used for relative comparisons: S =
                      max(|pos_min|, |pos_max|, pos_max - pos_min) for pos and, for derivative d,
                      max(peak, S / h^d) with h the mean piece length (the size of the
                      quantity's rounding error, so a zero jerk of a parabola is compared
                      absolutely rather than relative to its own noise)}
    violations[]     {axis, quantity, t_start, t_end, peak, t_peak, limit,
                      t_peak_ok: [[a, b], ...] closed ranges where the peak is attained to 1e-12
                      relative: a single point [t_peak, t_peak], except where the quantity is
                      constant on a piece (jerk always; velocity on a straight line), where any
                      time of that piece is a valid t_peak (not-a-knot gives the first two pieces
                      the same jerk, so the first piece is not the only answer)}
                     sorted by t_start, then axis index, then quantity (pos, vel, acc, jerk)
    export           {rate, rows, samples: [{k, t, pos[], vel[], acc[]}]}
"""

import json
import math
import os
import re
import sys

import numpy as np
import scipy
from scipy.interpolate import CubicSpline

if not scipy.__version__.startswith("1.10."):
    sys.exit(f"expected SciPy 1.10 (Debian 12 python3-scipy), found {scipy.__version__}")

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "data", "conformance")
MARGIN = 1e-6  # no local extreme within this fraction of a bound (see the docstring)
QUANTITIES = ["pos", "vel", "acc", "jerk"]


# ---------------------------------------------------------------- polynomials (low order first)

def peval(p, s):
    v = 0.0
    for c in reversed(p):
        v = v * s + c
    return v


def pderiv(p):
    return [k * p[k] for k in range(1, len(p))]


def trim(p):
    p = list(p)
    while len(p) > 1 and p[-1] == 0.0:
        p.pop()
    return p


def bisect(p, a, b):
    """Zero of p in [a, b] where p(a) and p(b) have opposite signs (p monotone there)."""
    fa = peval(p, a)
    lo, hi = a, b
    while True:
        mid = 0.5 * (lo + hi)
        if mid <= lo or mid >= hi:
            break
        fm = peval(p, mid)
        if fm == 0.0:
            return mid
        if (fm > 0) == (fa > 0):
            lo = mid
        else:
            hi = mid
    return lo if abs(peval(p, lo)) <= abs(peval(p, hi)) else hi


def zeros(p, a, b):
    """Sorted zeros of p strictly inside (a, b) (isolated ones; p not identically 0)."""
    p = trim(p)
    if len(p) <= 1:
        return []
    if len(p) == 2:
        r = -p[0] / p[1]
        return [r] if a < r < b else []
    pts = [a] + zeros(pderiv(p), a, b) + [b]
    out = []
    for x, y in zip(pts[:-1], pts[1:]):
        fx, fy = peval(p, x), peval(p, y)
        if fx == 0.0 and x != a and (not out or out[-1] != x):
            out.append(x)
        if (fx < 0 < fy) or (fy < 0 < fx):
            out.append(bisect(p, x, y))
    return [r for r in out if a < r < b]


# ---------------------------------------------------------------- reference from SciPy's spline

class AxesSpline:
    """One scipy CubicSpline per axis, seen as one spline of all axes: x (breakpoints),
    c (4 x pieces x axes, highest power first, as SciPy's PPoly) and self(t, nu) -> (axes,).

    Axis by axis rather than CubicSpline(t, q, axis=0) for all axes at once because SciPy 1.10's
    3-point periodic special case is wrong for more than one axis: it computes the common slope
    of each axis, then `s.fill(t)` fills every axis with a single one of them (found by this
    script's C2 assertion; for one axis the special case is right)."""

    def __init__(self, t, q, ends, v0=None, v1=None):
        t = np.asarray(t, float)
        q = np.asarray(q, float)
        self.parts = []
        for a in range(q.shape[1]):
            bc = ((1, float(v0[a])), (1, float(v1[a]))) if ends == "clamped" else ends
            self.parts.append(CubicSpline(t, q[:, a], bc_type=bc))
        self.x = self.parts[0].x
        self.c = np.stack([p.c for p in self.parts], axis=2)

    def __call__(self, t, nu=0):
        return np.array([float(p(t, nu)) for p in self.parts])


def fit(t, q, ends, v0=None, v1=None):
    return AxesSpline(t, q, ends, v0, v1)


def scipy_all_axes(t, q, ends):
    """CubicSpline of all axes at once (axis=0), only to show the 3-point periodic defect."""
    return CubicSpline(np.asarray(t, float), np.asarray(q, float), axis=0, bc_type=ends)


def piece_polys(cs, a):
    """For axis a: list of (t_i, t_i+1, [p_d for d in 0..3]) with p_d low order first in s."""
    x, c = cs.x, cs.c
    out = []
    for i in range(len(x) - 1):
        p0 = [float(c[3, i, a]), float(c[2, i, a]), float(c[1, i, a]), float(c[0, i, a])]
        ps = [p0]
        for _ in range(3):
            ps.append(pderiv(ps[-1]))
        out.append((float(x[i]), float(x[i + 1]), ps))
    return out


def critical_values(pieces, d):
    """Every piece-end value and local extreme of q^(d) (signed), with its time."""
    vals = []
    for t0, t1, ps in pieces:
        h = t1 - t0
        p = ps[d]
        for s in [0.0, h] + zeros(pderiv(p), 0.0, h):
            vals.append((peval(p, s), t0 + s))
    return vals


def axis_peaks(pieces):
    pos = critical_values(pieces, 0)
    pk = {"pos_min": min(v for v, _ in pos), "pos_max": max(v for v, _ in pos)}
    for d, name in ((1, "vel"), (2, "acc"), (3, "jerk")):
        pk[name] = max(abs(v) for v, _ in critical_values(pieces, d))
    return pk


def stream(pieces, d, f_of, badness):
    """Intervals where f(q^(d)) > 0, f(g) = badness(g) - bound, one stream in time order.

    f_of(g) is the polynomial f(g) of a piece; badness(x) orders values (x for above max, -x for
    below min, |x| for magnitudes). Returns [t_start, t_end, best_value, t_peak, candidates]
    where candidates are (badness, t, piece t0, piece t1, constant on the piece) of every extreme
    considered."""
    out = []
    for t0, t1, ps in pieces:
        h = t1 - t0
        g = ps[d]
        f = f_of(g)
        pts = [0.0] + zeros(f, 0.0, h) + [h]

        def to_t(s):
            return t0 if s == 0.0 else (t1 if s == h else t0 + s)

        for a, b in zip(pts[:-1], pts[1:]):
            if peval(f, 0.5 * (a + b)) > 0:
                cand = [a, b] + zeros(pderiv(g), a, b)
                best = max(cand, key=lambda s: badness(peval(g, s)))
                flat = len(trim(g)) <= 1 or all(c == 0.0 for c in g[1:])  # constant on the piece
                out.append([to_t(a), to_t(b), peval(g, best), to_t(best),
                            [(badness(peval(g, s)), to_t(s), t0, t1, flat) for s in cand]])
    return out


def merge(intervals, badness):
    """Sorts by t_start and merges intervals that touch (t_end == next t_start, a breakpoint)."""
    merged = []
    for v in sorted(intervals, key=lambda v: v[0]):
        if merged and merged[-1][1] == v[0]:
            m = merged[-1]
            m[1] = v[1]
            m[4] = m[4] + v[4]
            if badness(v[2]) > badness(m[2]):
                m[2], m[3] = v[2], v[3]
        else:
            merged.append(v)
    return merged


def violations(pieces, a_index, name, lim):
    res = []
    if lim["max"] is not None:
        L = lim["max"]
        up = stream(pieces, 0, lambda g: [g[0] - L] + g[1:], lambda x: x)
        res += [("pos", v, L, False) for v in merge(up, lambda x: x)]
    if lim["min"] is not None:
        L = lim["min"]
        dn = stream(pieces, 0, lambda g: [L - g[0]] + [-c for c in g[1:]], lambda x: -x)
        res += [("pos", v, L, False) for v in merge(dn, lambda x: -x)]
    for d, qn in ((1, "vel"), (2, "acc"), (3, "jerk")):
        L = lim[qn]
        if L is None:
            continue
        up = stream(pieces, d, lambda g: [g[0] - L] + g[1:], abs)
        dn = stream(pieces, d, lambda g: [-g[0] - L] + [-c for c in g[1:]], abs)
        res += [(qn, v, L, True) for v in merge(up + dn, abs)]
    out = []
    for qn, v, L, magnitude in res:
        t_start, t_end, best, t_peak, cands = v
        top = max(c[0] for c in cands)
        ok = []
        for bad, tv, p0, p1, flat in cands:
            if abs(bad - top) <= 1e-12 * abs(top):
                ok.append([max(p0, t_start), min(p1, t_end)] if flat else [tv, tv])
        out.append({"axis": name, "axis_index": a_index, "quantity": qn, "t_start": t_start, "t_end": t_end,
                    "peak": abs(best) if magnitude else best, "t_peak": t_peak, "limit": L, "t_peak_ok": dedupe(ok)})
    return out


def dedupe(ranges):
    out = []
    for r in sorted(ranges):
        if not out or r != out[-1]:
            out.append(r)
    return out


def near_bound(pieces, lim):
    """True when some piece-end value or local extreme lies within MARGIN of a bound."""
    pos = critical_values(pieces, 0)
    lo = min(v for v, _ in pos)
    hi = max(v for v, _ in pos)
    if lim["min"] is not None and lim["max"] is not None:
        span = lim["max"] - lim["min"]
    else:
        span = max(hi - lo, abs(lim["min"] or 0.0), abs(lim["max"] or 0.0))
    for b in (lim["min"], lim["max"]):
        if b is not None and any(abs(v - b) <= MARGIN * span for v, _ in pos):
            return True
    for d, qn in ((1, "vel"), (2, "acc"), (3, "jerk")):
        L = lim[qn]
        if L is not None and any(abs(abs(v) - L) <= MARGIN * L for v, _ in critical_values(pieces, d)):
            return True
    return False


# ---------------------------------------------------------------- number text

def txt(x, sig=6):
    """Short decimal text without exponent; float(txt(x)) is the value both sides use."""
    if x == 0:
        return "0"
    digits = max(0, sig - 1 - int(math.floor(math.log10(abs(x)))))
    s = f"{x:.{digits}f}"
    if "." in s:
        s = s.rstrip("0").rstrip(".")
    if s in ("-0", ""):
        s = "0"
    return s


def rnd(x, sig=6):
    return float(txt(x, sig))


# ---------------------------------------------------------------- scene generation

NAME_POOL = ["track", "pan", "tilt", "lift", "focus", "zoom", "x", "y", "z", "j1", "j2", "j3", "roll", "swing",
             "arm_2", "_base", "Boom", "wrist3"]
AXIS_KINDS = [("m", 0.8), ("m", 2.5), ("deg", 60.0), ("deg", 170.0), ("mm", 40.0), ("rad", 1.5), ("", 0.3), ("counts", 900.0)]


def make_times(rng, n, t0, style):
    if style == "even_ish":
        dt = rng.uniform(0.8, 1.2, n - 1)
    elif style == "wild":
        dt = np.where(rng.random(n - 1) < 0.3, rng.uniform(0.08, 0.3, n - 1), rng.uniform(1.0, 4.0, n - 1))
    else:
        dt = rng.uniform(0.25, 3.0, n - 1)
    t = [t0]
    for d in dt:
        t.append(rnd(t[-1] + max(0.05, round(float(d), 3)), 9))
    return [float(txt(v, 9)) for v in t]


def make_positions(rng, n, m, scales, periodic):
    q = np.zeros((n, m))
    for a in range(m):
        S = scales[a]
        x = rng.uniform(-0.5, 0.5) * S
        for k in range(n):
            q[k, a] = x
            x += rng.normal(0.0, 0.35) * S
    out = [[rnd(float(q[k, a]), 5) for a in range(m)] for k in range(n)]
    if periodic:
        out[-1] = list(out[0])
    return out


def choose_limits(rng, pieces_by_axis, q, violate_set, omit):
    """Limits per axis: quantities in violate_set below their peak, the others above it."""
    limits = []
    for a, pieces in enumerate(pieces_by_axis):
        pk = axis_peaks(pieces)
        wp_lo = min(row[a] for row in q)
        wp_hi = max(row[a] for row in q)
        rng_span = max(pk["pos_max"] - pk["pos_min"], 1e-6)
        for attempt in range(200):
            lim = {"min": None, "max": None, "vel": None, "acc": None, "jerk": None}
            if "pos" not in omit.get(a, ()):
                over_hi = pk["pos_max"] - wp_hi
                over_lo = wp_lo - pk["pos_min"]
                if (a, "pos") in violate_set:
                    side = rng.integers(2)
                    if side == 0:
                        if over_hi > 1e-3 * rng_span:  # inside the overshoot: waypoints stay within
                            hi = wp_hi + rng.uniform(0.1, 0.8) * over_hi
                        else:
                            hi = pk["pos_max"] - rng.uniform(0.02, 0.15) * rng_span
                        lo = pk["pos_min"] - rng.uniform(0.05, 0.5) * rng_span
                    else:
                        if over_lo > 1e-3 * rng_span:
                            lo = wp_lo - rng.uniform(0.1, 0.8) * over_lo
                        else:
                            lo = pk["pos_min"] + rng.uniform(0.02, 0.15) * rng_span
                        hi = pk["pos_max"] + rng.uniform(0.05, 0.5) * rng_span
                else:
                    lo = pk["pos_min"] - rng.uniform(0.01, 0.5) * rng_span
                    hi = pk["pos_max"] + rng.uniform(0.01, 0.5) * rng_span
                sig = 7 if attempt > 20 else 5
                lim["min"], lim["max"] = rnd(lo, sig), rnd(hi, sig)
                if "min_only" in omit.get(a, ()):
                    lim["max"] = None
                if "max_only" in omit.get(a, ()):
                    lim["min"] = None
            for qn in ("vel", "acc", "jerk"):
                if qn in omit.get(a, ()):
                    continue
                f = rng.uniform(0.55, 0.97) if (a, qn) in violate_set else rng.uniform(1.03, 2.5)
                lim[qn] = rnd(max(pk[qn], 1e-6) * f, 4 if attempt < 20 else 7)
            if not near_bound(pieces, lim):
                break
        else:
            raise RuntimeError("could not place limits away from the extremes")
        limits.append(lim)
    return limits


def sample_rows(rng, t, rate, cs):
    t0, t_end = t[0], t[-1]
    D = t_end - t0
    n_before = 0
    while n_before < D * rate - 1e-9:
        n_before += 1
    rows = n_before + 1
    ks = {0, rows - 1, rows - 2, 1}
    for tb in t[1:-1]:  # the rows on both sides of every breakpoint
        k = int(math.floor((tb - t0) * rate))
        ks.update({k, k + 1})
    ks.update(int(x) for x in rng.integers(0, rows, 30))
    ks = sorted(k for k in ks if 0 <= k < rows)
    out = []
    for k in ks:
        tk = t_end if k == rows - 1 else t0 + k / rate
        vals = [cs(tk, nu) for nu in range(3)]
        out.append({"k": k, "t": tk, "pos": [float(v) for v in vals[0]], "vel": [float(v) for v in vals[1]],
                    "acc": [float(v) for v in vals[2]]})
    return rows, out


def yaml_map(d):
    return "{" + ", ".join(f"{k}: {v}" for k, v in d) + "}"


def num(x):
    """The text of a number of the scene; the reference uses exactly the double it reads as."""
    s = txt(x, 12)
    assert float(s) == x, (x, s)
    return s


def write_scene(idx, seed, title, axes, limits, ends, start, end, t, q, rate, note):
    lines = ["# Invented test data for tests/conformance_test.cpp, generated by tests/make_conformance_reference.py",
             f"# (seed {seed}); not a real rig or move. {note}",
             "format: 1", f"name: {title}", "rig:", "  axes:"]
    for (name, unit), lim in zip(axes, limits):
        items = [("name", name)]
        if unit:
            items.append(("unit", unit))
        for k in ("min", "max", "vel", "acc", "jerk"):
            if lim[k] is not None:
                items.append((k, num(lim[k])))
        lines.append("    - " + yaml_map(items))
    lines.append("path:")
    lines.append(f"  ends: {ends}")
    if start is not None:
        lines.append("  start: " + yaml_map([(n, num(v)) for n, v in start]))
    if end is not None:
        lines.append("  end: " + yaml_map([(n, num(v)) for n, v in end]))
    lines += ["timing:", "  mode: keyframes", "waypoints:"]
    for tk, row in zip(t, q):
        lines.append("  - " + yaml_map([("t", num(tk))] + [(n, num(v)) for (n, _), v in zip(axes, row)]))
    lines += ["export:", f"  rate: {rate}", ""]
    path = os.path.join(OUT, f"scene{idx:02d}.yaml")
    with open(path, "w") as fh:
        fh.write("\n".join(lines))
    return lines


def reference(idx, seed, axes, limits, ends, v0, v1, t, q, rate, rng):
    cs = fit(t, q, ends, v0, v1)
    m = len(axes)
    pieces = [piece_polys(cs, a) for a in range(m)]
    ax_out, viols = [], []
    for a in range(m):
        pk = axis_peaks(pieces[a])
        span = pk["pos_max"] - pk["pos_min"]
        S = max(abs(pk["pos_min"]), abs(pk["pos_max"]), span)
        h = (t[-1] - t[0]) / (len(t) - 1)  # mean piece length
        scale = {"pos": S, "vel": max(pk["vel"], S / h), "acc": max(pk["acc"], S / h**2),
                 "jerk": max(pk["jerk"], S / h**3)}
        ax_out.append({"name": axes[a][0], "unit": axes[a][1], "peak": pk, "limit": limits[a], "scale": scale})
        viols += violations(pieces[a], a, axes[a][0], limits[a])
    viols.sort(key=lambda v: (v["t_start"], v["axis_index"], QUANTITIES.index(v["quantity"])))
    dynamic = any(v["quantity"] != "pos" for v in viols)
    k = 1.0
    if dynamic:
        for a in range(m):
            lim, pk = limits[a], ax_out[a]["peak"]
            if lim["vel"] is not None:
                k = max(k, pk["vel"] / lim["vel"])
            if lim["acc"] is not None:
                k = max(k, math.sqrt(pk["acc"] / lim["acc"]))
            if lim["jerk"] is not None:
                k = max(k, math.cbrt(pk["jerk"] / lim["jerk"]))
    rows, samples = sample_rows(rng, t, rate, cs)
    for v in viols:
        del v["axis_index"]
    return {"scene": f"scene{idx:02d}.yaml", "seed": seed, "ends": ends, "knots": list(t), "duration": t[-1] - t[0],
            "ok": not viols, "exit_code": 1 if viols else 0, "stretch": k, "axes": ax_out, "violations": viols,
            "export": {"rate": rate, "rows": rows, "samples": samples}}, cs


def write_json(idx, obj):
    text = json.dumps(obj, indent=1)
    # Lists of numbers on one line each, and each export sample on one line: shorter files.
    text = re.sub(r"\[\s*([-0-9.eE+,\s]+?)\s*\]", lambda m: "[" + ", ".join(x.strip() for x in m.group(1).split(",")) + "]", text)
    text = re.sub(r"\{\s*(\"k\"[^{}]*?)\s*\}", lambda m: "{" + " ".join(m.group(1).split()) + "}", text)
    assert json.loads(text) == obj
    with open(os.path.join(OUT, f"scene{idx:02d}.json"), "w") as fh:
        fh.write(text + "\n")


ENDS = ["not-a-knot", "natural", "clamped", "periodic"]


def random_scene(idx):
    seed = 7000 + idx
    rng = np.random.default_rng(seed)
    ends = ENDS[(idx - 1) % 4]
    m = int(rng.integers(1, 7))
    n = int(rng.integers(4, 41)) if idx > 2 else (2 + idx)  # scenes 1, 2: 3 and 4 points
    names = list(rng.choice(NAME_POOL, size=m, replace=False))
    kinds = [AXIS_KINDS[int(i)] for i in rng.integers(0, len(AXIS_KINDS), m)]
    axes = [(str(nm), unit) for nm, (unit, _) in zip(names, kinds)]
    scales = [S * rng.uniform(0.5, 1.5) for _, S in kinds]
    t0 = 0.0 if idx % 7 else rnd(rng.uniform(-3.0, 5.0), 3)
    style = ["uneven", "wild", "even_ish"][idx % 3]
    t = make_times(rng, n, t0, style)
    q = make_positions(rng, n, m, scales, ends == "periodic")
    start = end = None
    v0 = v1 = None
    if ends == "clamped":
        v0 = [0.0 if rng.random() < 0.3 else rnd(rng.normal(0, 0.5) * scales[a], 4) for a in range(m)]
        v1 = [0.0 if rng.random() < 0.3 else rnd(rng.normal(0, 0.5) * scales[a], 4) for a in range(m)]
        start = [(axes[a][0], v0[a]) for a in range(m)]
        if m > 1 and idx % 8 == 3:  # the first axis left out of start: README "omitted axes 0"
            v0[0] = 0.0
            start = start[1:]
        end = [(axes[a][0], v1[a]) for a in range(m)]
    cs = fit(t, q, ends, v0, v1)
    pieces = [piece_polys(cs, a) for a in range(m)]
    violating = ((idx - 1) % 4 + (idx - 1) // 4) % 2 == 1  # alternates within every end condition
    violate_set = set()
    if violating:
        for _ in range(int(rng.integers(1, 4))):
            violate_set.add((int(rng.integers(0, m)), QUANTITIES[int(rng.integers(0, 4))]))
    omit = {}
    for a in range(m):
        o = set()
        for qn in ("vel", "acc", "jerk"):
            if rng.random() < 0.12 and (a, qn) not in violate_set:
                o.add(qn)
        r = rng.random()
        if r < 0.06 and (a, "pos") not in violate_set:
            o.add("pos")
        elif r < 0.12 and (a, "pos") not in violate_set:
            o.add("min_only" if rng.random() < 0.5 else "max_only")
        omit[a] = o
    limits = choose_limits(rng, pieces, q, violate_set, omit)
    rate = int(rng.choice([50, 100, 200, 250, 500, 1000, 30, 60]))
    title = f"Conformance scene {idx:02d} ({ends}, {m} axes, {n} waypoints)"
    note = f"{'Chosen to exceed ' + ', '.join(sorted(f'{axes[a][0]} {qq}' for a, qq in violate_set)) if violate_set else 'Chosen within every limit'}."
    write_scene(idx, seed, title, axes, limits, ends, start, end, t, q, rate, note)
    obj, _ = reference(idx, seed, axes, limits, ends, v0, v1, t, q, rate, rng)
    write_json(idx, obj)
    return obj


SMALL_VIOLATIONS = {
    (2, "not-a-knot"): set(), (2, "natural"): {(0, "vel")}, (2, "clamped"): {(0, "acc"), (1, "pos")},
    (3, "not-a-knot"): {(0, "vel"), (1, "pos")}, (3, "natural"): set(), (3, "clamped"): {(0, "acc"), (1, "jerk")},
    (3, "periodic"): {(0, "acc"), (1, "pos")},
}


def small_scene(idx, n, ends, seed):
    """2- and 3-point scenes: one or two axes, limits chosen as for the random scenes."""
    rng = np.random.default_rng(seed)
    axes = [("x", "m"), ("pan", "deg")]
    t = [0.0, rnd(rng.uniform(1.0, 3.0), 3)] if n == 2 else [0.0, rnd(rng.uniform(0.6, 2.0), 3), 0.0]
    if n == 3:
        t[2] = rnd(t[1] + rng.uniform(0.4, 3.0), 3)
    q = [[rnd(rng.uniform(-1, 1), 4), rnd(rng.uniform(-90, 90), 4)] for _ in range(n)]
    if ends == "periodic":
        q[-1] = list(q[0])
    v0 = v1 = None
    start = end = None
    if ends == "clamped":
        v0 = [rnd(rng.uniform(-1, 1), 3), 0.0]
        v1 = [0.0, rnd(rng.uniform(-60, 60), 3)]
        start = [("x", v0[0]), ("pan", v0[1])]
        end = [("x", v1[0]), ("pan", v1[1])]
    title = f"Conformance scene {idx:02d} ({n} points, {ends})"
    if n == 2 and ends == "periodic":
        # Last == first: the two waypoints coincide, an input error for c2path (see the docstring).
        limits = [{"min": -2.0, "max": 2.0, "vel": 1.0, "acc": 2.0, "jerk": 10.0},
                  {"min": -170.0, "max": 170.0, "vel": 60.0, "acc": 120.0, "jerk": 600.0}]
        lines = write_scene(idx, seed, title, axes, limits, ends, None, None, t, q, 100,
                            "Two points with periodic ends: an input error.")
        cs = fit(t, q, ends)
        assert np.all(cs.c[:3] == 0.0), "SciPy: 2-point periodic is the constant"
        line = next(i for i, s in enumerate(lines) if s.startswith("  - ")) + 2  # second waypoint
        write_json(idx, {"scene": f"scene{idx:02d}.yaml", "seed": seed, "ends": ends,
                         "expect_error": {"line": line, "col": 5, "text": "coincides"}})
        return None
    cs = fit(t, q, ends, v0, v1)
    # The conventions, asserted on SciPy's result rather than taken on trust.
    if n == 2 and ends in ("not-a-knot", "natural"):
        assert np.allclose(cs.c[:2], 0.0, atol=1e-12), "2 points: a straight line"
    if n == 2 and ends == "clamped":
        h = t[1] - t[0]
        for a in range(2):
            # cubic Hermite: slopes v0, v1 at the ends, values q0, q1
            assert abs(cs(t[0], 1)[a] - v0[a]) < 1e-12 and abs(cs(t[1], 1)[a] - v1[a]) < 1e-9 * max(1, abs(v1[a]))
            assert abs(cs(t[1])[a] - q[1][a]) < 1e-12 * max(1, abs(q[1][a])) and h > 0
    if n == 3 and ends == "not-a-knot":
        assert np.allclose(cs.c[0], 0.0, atol=1e-12), "3 points not-a-knot: the parabola"
        for a in range(2):
            par = np.polyfit(t, [row[a] for row in q], 2)
            assert abs(cs(0.5 * (t[0] + t[2]))[a] - np.polyval(par, 0.5 * (t[0] + t[2]))) < 1e-9 * max(1, abs(q[1][a]))
    if n == 3 and ends == "periodic":
        for nu in range(3):
            d0, d1 = cs(t[0], nu), cs(t[-1], nu)
            assert np.allclose(d0, d1, rtol=1e-9, atol=1e-9), "3 points periodic: C0..C2 across the wrap"
            h0 = t[1] - t[0]
            left = [peval(piece_polys(cs, a)[0][2][nu], h0) for a in range(2)]
            assert np.allclose(left, cs(t[1], nu), rtol=1e-9, atol=1e-9), "3 points periodic: C0..C2 at t1"
        all_axes = scipy_all_axes(t, q, ends)
        assert not np.allclose(all_axes(t[1], 2), cs(t[1], 2)), "SciPy 1.10 3-point periodic defect (see AxesSpline) gone?"
    pieces = [piece_polys(cs, a) for a in range(2)]
    violate_set = SMALL_VIOLATIONS[(n, ends)]
    if n == 2 and ends != "clamped":  # a line has no acc, jerk or overshoot to limit
        omit = {0: {"acc", "jerk"}, 1: {"acc", "jerk"}}
    else:
        omit = {}
    limits = choose_limits(rng, pieces, q, violate_set, omit)
    note = "Chosen to exceed a limit." if violate_set else "Chosen within every limit."
    write_scene(idx, seed, title, axes, limits, ends, start, end, t, q, 100, note)
    obj, _ = reference(idx, seed, axes, limits, ends, v0, v1, t, q, 100, rng)
    write_json(idx, obj)
    return obj


def edge_scene(idx, seed, ends):
    """Peaks 3e-6 (relative) beyond or inside a bound: far above c2path's 1e-9 tolerance, so the
    reported set is still unambiguous, but the crossings are close together (short intervals).
    Axis x: vel and jerk limits 3e-6 below their peaks, max 3e-6 of the span below pos_max;
    axis pan: acc limit 3e-6 above its peak (no violation)."""
    for attempt in range(100):
        rng = np.random.default_rng(seed + 1000 * attempt)
        n = int(rng.integers(6, 12))
        axes = [("x", "m"), ("pan", "deg")]
        t = make_times(rng, n, 0.0, "uneven")
        q = make_positions(rng, n, 2, [1.0, 80.0], ends == "periodic")
        cs = fit(t, q, ends)
        pieces = [piece_polys(cs, a) for a in range(2)]
        pk = [axis_peaks(p) for p in pieces]
        span0 = pk[0]["pos_max"] - pk[0]["pos_min"]
        e = 3e-6
        limits = [{"min": rnd(pk[0]["pos_min"] - 0.3 * span0, 5), "max": rnd(pk[0]["pos_max"] - e * span0, 12),
                   "vel": rnd(pk[0]["vel"] * (1 - e), 12), "acc": rnd(pk[0]["acc"] * 2.0, 4),
                   "jerk": rnd(pk[0]["jerk"] * (1 - e), 12)},
                  {"min": rnd(pk[1]["pos_min"] - 10, 4), "max": rnd(pk[1]["pos_max"] + 10, 4),
                   "vel": rnd(pk[1]["vel"] * 1.5, 4), "acc": rnd(pk[1]["acc"] * (1 + e), 12), "jerk": None}]
        # Every extreme, the chosen peaks included (3e-6 > MARGIN), keeps the margin from the bounds.
        if not near_bound(pieces[0], limits[0]) and not near_bound(pieces[1], limits[1]):
            break
    else:
        raise RuntimeError("no edge scene")
    title = f"Conformance scene {idx:02d} (peaks 3e-6 from their limits, {ends})"
    write_scene(idx, seed, title, axes, limits, ends, None, None, t, q, 200,
                "Peaks 3e-6 beyond (x vel, jerk, max) and inside (pan acc) their limits.")
    obj, _ = reference(idx, seed, axes, limits, ends, None, None, t, q, 200, rng)
    write_json(idx, obj)
    return obj


def main():
    os.makedirs(OUT, exist_ok=True)
    for f in os.listdir(OUT):
        if f.startswith("scene") and (f.endswith(".yaml") or f.endswith(".json")):
            os.remove(os.path.join(OUT, f))
    summary = []
    for idx in range(1, 31):
        obj = random_scene(idx)
        summary.append((idx, obj["ends"], obj["ok"], len(obj["violations"])))
    idx = 31
    for n in (2, 3):
        for j, ends in enumerate(ENDS):
            obj = small_scene(idx, n, ends, 9000 + idx)
            summary.append((idx, ends, None if obj is None else obj["ok"], 0 if obj is None else len(obj["violations"])))
            idx += 1
    for ends in ("not-a-knot", "natural"):
        obj = edge_scene(idx, 9500 + idx, ends)
        summary.append((idx, ends, obj["ok"], len(obj["violations"])))
        idx += 1
    for s in summary:
        print("scene%02d %-10s ok=%s violations=%d" % s, file=sys.stderr)
    bad = sum(1 for s in summary if s[2] is False)
    print(f"{bad} of {len(summary)} scenes violate a limit", file=sys.stderr)


if __name__ == "__main__":
    main()
