#include "c2path/timing.hpp"

#include <Eigen/LU>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <string>

#include "c2path/error.hpp"
#include "c2path/knots.hpp"

namespace c2path {

namespace {

std::string wp_name(std::size_t k) { return "waypoint " + std::to_string(k + 1); }

std::string num_text(double v) {
  char buf[32];
  const auto r = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, r.ptr);
}

/// How one end of a segment's spline is fitted.
enum class EndKind {
  kNotAKnot,  ///< third derivative continuous at the neighbouring breakpoint
  kNatural,   ///< second derivative zero
  kSlope,     ///< first derivative given
  kRest,      ///< first and second derivative zero (keyframes stop/hold: the rig rests there)
};

struct End {
  EndKind kind = EndKind::kNotAKnot;
  Eigen::VectorXd slope;  // kSlope
};

// Linear functionals of a spline used as end conditions: value for axis a.
double second_at_start(const CubicSpline& s, Index a) { return 2.0 * s.coeff(0, a, 2); }
double second_at_end(const CubicSpline& s, Index a) {
  const Index p = s.pieces() - 1;
  const double h = s.breaks().back() - s.breaks()[std::size_t(p)];
  return 2.0 * s.coeff(p, a, 2) + 6.0 * s.coeff(p, a, 3) * h;
}
double nak_start(const CubicSpline& s, Index a) { return s.coeff(0, a, 3) - s.coeff(1, a, 3); }
double nak_end(const CubicSpline& s, Index a) {
  const Index p = s.pieces() - 1;
  return s.coeff(p, a, 3) - s.coeff(p - 1, a, 3);
}

// A spline through (u, q) with possibly different conditions at its two ends. Same plain
// conditions use CubicSpline::fit directly; otherwise the clamped spline is linear in the data and
// the end slopes, so the free slopes (not-a-knot, natural ends) and the value at an extra knot in
// the end piece (rest ends: slope 0 and second derivative 0) are solved for from the conditions.
CubicSpline fit_segment(const Eigen::VectorXd& u, const Eigen::MatrixXd& q, const End& e0, const End& e1) {
  const Index m = q.cols();
  const Index n = u.size();
  auto plain = [](EndKind k) { return k == EndKind::kNotAKnot || k == EndKind::kNatural; };
  if (e0.kind == e1.kind && plain(e0.kind)) {
    SplineOptions o;
    o.ends = e0.kind == EndKind::kNotAKnot ? EndCondition::kNotAKnot : EndCondition::kNatural;
    return CubicSpline::fit(u, q, o);
  }
  if (e0.kind == EndKind::kSlope && e1.kind == EndKind::kSlope) {
    SplineOptions o;
    o.ends = EndCondition::kClamped;
    o.start_slope = e0.slope;
    o.end_slope = e1.slope;
    return CubicSpline::fit(u, q, o);
  }
  // Knots with the extra ones at rest ends (the middle of the end piece; thirds of a single piece).
  std::vector<double> uu;
  std::vector<Index> src;  // waypoint row, or -1 for an extra knot
  const bool r0 = e0.kind == EndKind::kRest, r1 = e1.kind == EndKind::kRest;
  for (Index i = 0; i < n; ++i) {
    uu.push_back(u[i]);
    src.push_back(i);
    if (i + 1 < n) {
      const double a = u[i], b = u[i + 1];
      if (n == 2 && r0 && r1) {
        uu.push_back(a + (b - a) / 3.0);
        src.push_back(-1);
        uu.push_back(a + 2.0 * (b - a) / 3.0);
        src.push_back(-1);
      } else if ((i == 0 && r0) || (i + 2 == n && r1)) {
        uu.push_back(0.5 * (a + b));
        src.push_back(-1);
      }
    }
  }
  const Index nn = Index(uu.size());
  Eigen::VectorXd U = Eigen::Map<Eigen::VectorXd>(uu.data(), nn);
  // Unknowns: 0 = start (extra-knot value or slope), 1 = end.
  struct Unknown {
    bool slope;
    Index row;  // data row of the extra knot
  };
  std::vector<Unknown> unk;
  std::vector<int> cond;  // 0 s''(start), 1 s''(end), 2 nak start, 3 nak end
  const int pieces = int(nn - 1);
  auto add_end = [&](const End& e, bool start) {
    if (e.kind == EndKind::kSlope) return;
    if (e.kind == EndKind::kRest) {
      unk.push_back({false, start ? 1 : nn - 2});
      cond.push_back(start ? 0 : 1);
    } else {
      unk.push_back({true, 0});
      const bool nak = e.kind == EndKind::kNotAKnot && pieces >= 2;
      cond.push_back(start ? (nak ? 2 : 0) : (nak ? 3 : 1));
    }
  };
  add_end(e0, true);
  const std::size_t n_start = unk.size();
  add_end(e1, false);
  Eigen::MatrixXd Q = Eigen::MatrixXd::Zero(nn, m);
  for (Index i = 0; i < nn; ++i)
    if (src[std::size_t(i)] >= 0) Q.row(i) = q.row(src[std::size_t(i)]);
  SplineOptions o;
  o.ends = EndCondition::kClamped;
  o.start_slope = e0.kind == EndKind::kSlope ? e0.slope : Eigen::VectorXd::Zero(m);
  o.end_slope = e1.kind == EndKind::kSlope ? e1.slope : Eigen::VectorXd::Zero(m);
  const CubicSpline s0 = CubicSpline::fit(U, Q, o);
  std::vector<CubicSpline> basis;
  for (std::size_t j = 0; j < unk.size(); ++j) {
    Eigen::MatrixXd B = Eigen::MatrixXd::Zero(nn, 1);
    SplineOptions ob;
    ob.ends = EndCondition::kClamped;
    ob.start_slope = Eigen::VectorXd::Zero(1);
    ob.end_slope = Eigen::VectorXd::Zero(1);
    if (unk[j].slope) (j < n_start ? ob.start_slope : ob.end_slope)[0] = 1.0;
    else B(unk[j].row, 0) = 1.0;
    basis.push_back(CubicSpline::fit(U, B, ob));
  }
  auto functional = [&](int c, const CubicSpline& s, Index a) {
    switch (c) {
      case 0: return second_at_start(s, a);
      case 1: return second_at_end(s, a);
      case 2: return nak_start(s, a);
      default: return nak_end(s, a);
    }
  };
  const std::size_t k = unk.size();
  const Index nk = static_cast<Index>(k);
  Eigen::MatrixXd M(nk, nk);
  for (std::size_t i = 0; i < k; ++i)
    for (std::size_t j = 0; j < k; ++j) M(Index(i), Index(j)) = functional(cond[i], basis[j], 0);
  const auto lu = M.fullPivLu();
  if (!lu.isInvertible()) throw Error("spline: the end conditions of a segment cannot be met together");
  std::vector<double> coeffs(std::size_t(pieces) * std::size_t(m) * 4);
  for (Index a = 0; a < m; ++a) {
    Eigen::VectorXd rhs(nk);
    for (std::size_t i = 0; i < k; ++i) rhs[Index(i)] = -functional(cond[i], s0, a);
    const Eigen::VectorXd z = lu.solve(rhs);
    for (Index p = 0; p < pieces; ++p)
      for (int d = 0; d < 4; ++d) {
        double c = s0.coeff(p, a, d);
        for (std::size_t j = 0; j < k; ++j) c += z[Index(j)] * basis[j].coeff(p, 0, d);
        coeffs[std::size_t(((p * m) + a) * 4 + d)] = c;
      }
  }
  std::vector<double> endv(static_cast<std::size_t>(m));
  for (Index a = 0; a < m; ++a) endv[std::size_t(a)] = q(n - 1, a);
  // Slope and curvature at the last breakpoint as the end condition fixes them (exact zeros at a
  // rest end), the last cubic otherwise.
  std::vector<double> endd(static_cast<std::size_t>(2 * m));
  const double hl = uu.back() - uu[uu.size() - 2];
  for (Index a = 0; a < m; ++a) {
    const double* c = &coeffs[std::size_t((((pieces - 1) * m) + a) * 4)];
    double slope = cubic_eval(c, hl, 1), curv = cubic_eval(c, hl, 2);
    if (e1.kind == EndKind::kRest) slope = curv = 0.0;
    if (e1.kind == EndKind::kSlope) slope = e1.slope[a];
    if (e1.kind == EndKind::kNatural) curv = 0.0;
    endd[std::size_t(a) * 2] = slope;
    endd[std::size_t(a) * 2 + 1] = curv;
  }
  return CubicSpline(uu, m, std::move(coeffs), std::move(endv), std::move(endd));
}

// Waypoints where the path is split: the first, every interior one with stop or hold, the last.
std::vector<std::size_t> cut_points(const Scene& s) {
  std::vector<std::size_t> c{0};
  for (std::size_t k = 1; k + 1 < s.waypoints.size(); ++k)
    if (s.waypoints[k].stop || s.waypoints[k].hold_s > 0.0) c.push_back(k);
  c.push_back(s.waypoints.size() - 1);
  return c;
}

bool rests(const Waypoint& w) { return w.stop || w.hold_s > 0.0; }

CubicSpline shifted(const CubicSpline& s, double first, double offset) {
  std::vector<double> b = s.breaks();
  for (auto& x : b) x += offset;
  b.front() = first;
  std::vector<double> c(std::size_t(s.pieces() * s.axes() * 4));
  for (Index p = 0; p < s.pieces(); ++p)
    for (Index a = 0; a < s.axes(); ++a)
      for (int d = 0; d < 4; ++d) c[std::size_t(((p * s.axes()) + a) * 4 + d)] = s.coeff(p, a, d);
  std::vector<double> e, ed;
  for (Index a = 0; a < s.axes(); ++a) {
    e.push_back(s.end_value(a));
    ed.push_back(s.end_deriv(a, 1));
    ed.push_back(s.end_deriv(a, 2));
  }
  return CubicSpline(std::move(b), s.axes(), std::move(c), std::move(e), std::move(ed));
}

CubicSpline constant_piece(double t0, double t1, const Eigen::VectorXd& q) {
  std::vector<double> c(std::size_t(q.size()) * 4, 0.0);
  std::vector<double> e;
  for (Index a = 0; a < q.size(); ++a) {
    c[std::size_t(a) * 4] = q[a];
    e.push_back(q[a]);
  }
  return CubicSpline({t0, t1}, q.size(), std::move(c), std::move(e));
}

}  // namespace

// Hardening (issue 6): a spline whose coefficients or end derivatives overflow, or come near it
// (waypoints far apart for the time or parameter between them, e.g. t steps of 1e-200 s), is an
// input error at the waypoint that ends the piece, never a move with NaN or infinite values.
static void check_spline_finite(const Scene& scene, const std::vector<CubicSpline>& segs) {
  constexpr double kMaxDerivative = 1e100;
  std::size_t k0 = 0;  // waypoint at the start of the segment
  for (const CubicSpline& sg : segs) {
    for (Index i = 0; i < sg.pieces(); ++i) {
      const double h = sg.breaks()[std::size_t(i) + 1] - sg.breaks()[std::size_t(i)];
      bool ok = true;
      for (Index a = 0; a < sg.axes() && ok; ++a)
        for (int d = 0; d < 4 && ok; ++d) {
          const double c = sg.coeff(i, a, d), v = cubic_eval(sg.coeffs(i, a), h, d);
          ok = std::abs(c) <= kMaxDerivative && std::abs(v) <= kMaxDerivative;  // false for NaN too
        }
      if (!ok) {
        const std::size_t k = std::min(k0 + std::size_t(i) + 1, scene.waypoints.size() - 1);
        const Waypoint& w = scene.waypoints[k];
        throw Error(scene.file, w.t ? w.t_loc : w.loc,
                    wp_name(k) + ": too close to " + wp_name(k - 1) + " for the distance between them (the spline's "
                    "derivatives overflow); spread the waypoints apart in time or check the units");
      }
    }
    k0 += std::size_t(sg.pieces());
  }
}

Plan build_path(const Scene& scene) {
  Plan p;
  p.mode = scene.timing.mode;
  p.limits = scene_limits(scene);
  const Eigen::MatrixXd q = scene.positions();
  const Index m = q.cols();
  const std::size_t nw = scene.waypoints.size();
  const bool keyframes = scene.timing.mode == TimingMode::kKeyframes;
  const std::vector<std::size_t> cuts = cut_points(scene);
  const EndCondition ends = scene.path.ends;
  if (ends == EndCondition::kPeriodic) {
    for (std::size_t k = 0; k < nw; ++k) {
      const Waypoint& w = scene.waypoints[k];
      const bool inner = k > 0 && k + 1 < nw;
      if ((inner || keyframes) && rests(w))
        throw Error(scene.file, w.stop ? w.stop_loc : w.hold_loc,
                    wp_name(k) + ": a periodic path runs through every waypoint without stopping" +
                        (inner ? "" : " (in keyframes mode also at its ends)") +
                        "; remove 'stop'/'hold' here or use ends: not-a-knot");
    }
  }
  if (ends != EndCondition::kClamped && (scene.path.start || scene.path.end))
    p.notes.push_back(std::string("path: 'start'/'end' apply only to ends: clamped; ignored with ends: ") + to_string(ends));
  if (!keyframes && ends == EndCondition::kClamped)
    p.notes.push_back(std::string("path: with mode ") + to_string(scene.timing.mode) +
                      " the clamped start/end are the path's tangents dq/du (direction of departure and arrival); "
                      "the move still starts and ends at rest");
  if (scene.timing.scale != 1.0 && scene.timing.mode != TimingMode::kFastest)
    p.notes.push_back("timing: 'scale' applies only to mode: fastest; ignored");
  // Holds per waypoint and per stop.
  for (std::size_t c : cuts) p.holds_s.push_back(scene.waypoints[c].hold_s);
  for (double h : p.holds_s) p.hold_total_s += h;
  if (keyframes) {
    if (scene.timing.duration_s) p.notes.push_back("timing: 'duration' applies only to mode: duration; ignored");
    // The parameter is time minus the holds before: the path stays contiguous across holds.
    p.knots.resize(Index(nw));
    double held = 0.0;
    for (std::size_t k = 0; k < nw; ++k) {
      const Waypoint& w = scene.waypoints[k];
      p.knots[Index(k)] = *w.t - held;
      if (k > 0 && !(p.knots[Index(k)] > p.knots[Index(k) - 1]))
        throw Error(scene.file, scene.waypoints[k - 1].hold_loc,
                    wp_name(k - 1) + ": 'hold' of " + num_text(scene.waypoints[k - 1].hold_s) + " s does not fit before " +
                        wp_name(k) + " at t " + num_text(*w.t) + " s; the gap to the next waypoint's t must exceed the hold");
      held += w.hold_s;
    }
  } else {
    bool fallback = false;
    const Eigen::VectorXd w = knot_weights(scene, &fallback);
    if (fallback)
      p.notes.push_back("knot weights: some axis has no 'vel' limit and no weights are given, so every axis has weight 1");
    try {
      p.knots = compute_knots(q, scene.path.knots, w, 0.0);
    } catch (const Error& e) {
      throw Error(scene.file, scene.waypoints.front().loc, e.message());
    }
  }
  const Eigen::VectorXd zero = Eigen::VectorXd::Zero(m);
  try {
    std::vector<CubicSpline> segs;
    if (ends == EndCondition::kPeriodic) {
      SplineOptions o;
      o.ends = EndCondition::kPeriodic;
      segs.push_back(CubicSpline::fit(p.knots, q, o));
    } else {
      for (std::size_t j = 0; j + 1 < cuts.size(); ++j) {
        const std::size_t a = cuts[j], b = cuts[j + 1];
        auto end_of = [&](std::size_t k, bool outer, bool start) {
          End e;
          const Waypoint& w = scene.waypoints[k];
          if (keyframes && rests(w)) {
            e.kind = EndKind::kRest;
            const auto& given = start ? scene.path.start : scene.path.end;
            if (outer && ends == EndCondition::kClamped && given && given->cwiseAbs().maxCoeff() > 0.0)
              throw Error(scene.file, start ? scene.path.start_loc : scene.path.end_loc,
                          std::string("path: '") + (start ? "start" : "end") + "' asks for a velocity at " + wp_name(k) +
                              ", but its 'stop'/'hold' makes the rig rest there; set it to 0 or remove stop/hold");
            return e;
          }
          if (!outer) {
            e.kind = ends == EndCondition::kNatural || ends == EndCondition::kClamped ? EndKind::kNatural : EndKind::kNotAKnot;
            return e;
          }
          switch (ends) {
            case EndCondition::kNatural: e.kind = EndKind::kNatural; break;
            case EndCondition::kClamped: {
              e.kind = EndKind::kSlope;
              const auto& given = start ? scene.path.start : scene.path.end;
              e.slope = given ? *given : zero;
              break;
            }
            default: e.kind = EndKind::kNotAKnot; break;
          }
          return e;
        };
        const End e0 = end_of(a, j == 0, true), e1 = end_of(b, j + 2 == cuts.size(), false);
        const Eigen::VectorXd uk = p.knots.segment(Index(a), Index(b - a + 1));
        const Eigen::MatrixXd qk = q.middleRows(Index(a), Index(b - a + 1));
        segs.push_back(fit_segment(uk, qk, e0, e1));
      }
    }
    check_spline_finite(scene, segs);
    p.path = std::make_shared<SplinePath>(std::move(segs));
  } catch (const Error& e) {
    if (!e.file().empty()) throw;
    throw Error(scene.file, scene.path.loc.line > 0 ? scene.path.loc : scene.waypoints.front().loc, e.message());
  }
  return p;
}

Plan plan(const Scene& scene) {
  Plan p = build_path(scene);
  const std::size_t nw = scene.waypoints.size();
  const Index m = Index(scene.axes.size());
  const std::vector<std::size_t> cuts = cut_points(scene);
  if (scene.timing.mode == TimingMode::kKeyframes) {
    const auto* sp = static_cast<const SplinePath*>(p.path.get());
    std::vector<CubicSpline> pieces;
    const Eigen::MatrixXd q = scene.positions();
    double t = *scene.waypoints.front().t;
    for (std::size_t j = 0; j < cuts.size(); ++j) {
      const std::size_t c = cuts[j];
      const double h = scene.waypoints[c].hold_s;
      if (h > 0.0) {
        pieces.push_back(constant_piece(t, t + h, q.row(Index(c)).transpose()));
        t = pieces.back().u_end();
      }
      if (j + 1 == cuts.size()) break;
      const CubicSpline& seg = sp->segments()[j];
      // Time = parameter + the holds up to and including this segment's first waypoint.
      const double offset = t - seg.u_begin();
      pieces.push_back(shifted(seg, t, offset));
      t = pieces.back().u_end();
    }
    p.trajectory = std::make_shared<CubicTrajectory>(std::move(pieces));
    p.waypoint_times.resize(Index(nw));
    for (std::size_t k = 0; k < nw; ++k) p.waypoint_times[Index(k)] = *scene.waypoints[k].t;
    return p;
  }
  (void)m;
  try {
    if (scene.timing.mode == TimingMode::kDuration) {
      p.time_law = plan_duration(*p.path, *scene.timing.duration_s, p.holds_s);
    } else {
      FastestOptions o;
      o.scale = scene.timing.scale;
      FastestResult r = plan_fastest(*p.path, p.limits, p.holds_s, o);
      p.time_law = r.law;
      p.binding = std::move(r.binding);
      p.grid_points = r.grid_points;
      p.fastest_stretch = r.stretch;
    }
  } catch (const Error& e) {
    if (!e.file().empty()) throw;
    throw Error(scene.file, scene.timing.mode == TimingMode::kDuration ? scene.timing.duration_loc : scene.timing.mode_loc,
                e.message());
  }
  p.trajectory = std::make_shared<PathTrajectory>(p.path, p.time_law);
  p.waypoint_times.resize(Index(nw));
  for (std::size_t k = 0; k < nw; ++k) p.waypoint_times[Index(k)] = p.time_law->time_of(p.knots[Index(k)]);
  return p;
}

std::optional<double> shortest_duration(const Plan& plan, const Report& report) {
  if (plan.mode != TimingMode::kDuration || report.pos_violation || !plan.time_law) return std::nullopt;
  double k = 0.0;
  bool any = false;
  for (std::size_t a = 0; a < plan.limits.size() && a < report.peaks.size(); ++a) {
    const AxisLimits& l = plan.limits[a];
    const AxisPeaks& pk = report.peaks[a];
    if (l.vel) { k = std::max(k, pk.vel / *l.vel); any = true; }
    if (l.acc) { k = std::max(k, std::sqrt(pk.acc / *l.acc)); any = true; }
    if (l.jerk) { k = std::max(k, std::cbrt(pk.jerk / *l.jerk)); any = true; }
  }
  if (!any) return std::nullopt;
  const double T = plan.time_law->t_end() - plan.time_law->t_begin();
  return plan.hold_total_s + (T - plan.hold_total_s) * k;
}

}  // namespace c2path
