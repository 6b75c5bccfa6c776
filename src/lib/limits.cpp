#include "c2path/limits.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "c2path/error.hpp"
#include "detail/poly.hpp"

namespace c2path {

std::vector<AxisLimits> scene_limits(const Scene& scene) {
  std::vector<AxisLimits> l;
  for (const auto& a : scene.axes) l.push_back({a.min, a.max, a.vel, a.acc, a.jerk});
  return l;
}

const char* to_string(Quantity q) {
  switch (q) {
    case Quantity::kPos: return "pos";
    case Quantity::kVel: return "vel";
    case Quantity::kAcc: return "acc";
    case Quantity::kJerk: return "jerk";
  }
  return "?";
}

void CheckOptions::validate() const {
  if (!(rel_tol >= 0.0 && rel_tol < 1e-3)) throw Error("check: rel_tol must be in [0, 1e-3)");
  if (samples_per_piece < 2 || samples_per_piece > 1'000'000) throw Error("check: samples_per_piece must be in [2, 1e6]");
}

namespace {

// One stream of violation intervals (one axis, one quantity, one side for positions), in time order.
struct Stream {
  Index axis = 0;
  Quantity q = Quantity::kPos;
  double limit = 0;  // the bound as reported
  double tol = 0;    // how far beyond the bound the peak must be
  int side = 1;      // pos: +1 above max, -1 below min; others: magnitude
  std::vector<Violation> out;

  void add(double t0, double t1, double peak, double t_peak) {
    if (!out.empty() && out.back().t_end == t0) {
      Violation& v = out.back();
      v.t_end = t1;
      if (side * (peak - v.peak) > 0) {
        v.peak = peak;
        v.t_peak = t_peak;
      }
      return;
    }
    out.push_back({axis, q, t0, t1, peak, t_peak, limit});
  }
  // Drops intervals whose peak is within the tolerance of the limit.
  void finish(std::vector<Violation>& all) {
    for (const auto& v : out) {
      const double excess = q == Quantity::kPos ? side * (v.peak - limit) : v.peak - limit;
      if (excess > tol) all.push_back(v);
    }
  }
};

// Derivative `deriv` of the cubic c as a polynomial of degree 3 - deriv (coefficients in g).
int derivative_poly(const double* c, int deriv, double* g) {
  switch (deriv) {
    case 0: g[0] = c[0]; g[1] = c[1]; g[2] = c[2]; g[3] = c[3]; return 3;
    case 1: g[0] = c[1]; g[1] = 2 * c[2]; g[2] = 3 * c[3]; return 2;
    case 2: g[0] = 2 * c[2]; g[1] = 6 * c[3]; return 1;
    default: g[0] = 6 * c[3]; return 0;
  }
}

// Extreme of side*g over [s0, s1]: returns (value of g, s).
std::pair<double, double> extreme(const double* g, int deg, double s0, double s1, int side) {
  double best_s = s0;
  double best = detail::poly_eval(g, deg, s0);
  auto consider = [&](double s) {
    const double v = detail::poly_eval(g, deg, s);
    if (side * (v - best) > 0) {
      best = v;
      best_s = s;
    }
  };
  consider(s1);
  if (deg >= 2) {
    double dg[3];
    for (int k = 1; k <= deg; ++k) dg[k - 1] = k * g[k];
    double r[3];
    const int n = detail::poly_roots_in(dg, deg - 1, s0, s1, r);
    for (int k = 0; k < n; ++k) consider(r[k]);
  }
  return {best, best_s};
}

// Sub-intervals of [0, h] where side * (g(s) - L) > 0, each with its extreme.
void exceed(const double* g, int deg, double L, int side, double h, double t0, double t1, Stream& st, bool magnitude) {
  double shifted[4];
  for (int k = 0; k <= deg; ++k) shifted[k] = g[k];
  shifted[0] -= L;
  double pts[6];
  int np = 0;
  pts[np++] = 0.0;
  double roots[3];
  const int nr = detail::poly_roots_in(shifted, deg, 0.0, h, roots);
  for (int k = 0; k < nr; ++k) pts[np++] = roots[k];
  pts[np++] = h;
  auto to_t = [&](double s) { return s == 0.0 ? t0 : (s == h ? t1 : t0 + s); };
  for (int k = 0; k + 1 < np; ++k) {
    const double a = pts[k], b = pts[k + 1];
    const double mid = 0.5 * (a + b);
    if (side * (detail::poly_eval(shifted, deg, mid)) > 0) {
      const auto [val, s] = extreme(g, deg, a, b, side);
      st.add(to_t(a), to_t(b), magnitude ? std::abs(val) : val, to_t(s));
    }
  }
}

void update_peaks(AxisPeaks& pk, const CubicSpline& sp, Index i, Index axis, bool first) {
  const double t0 = sp.breaks()[std::size_t(i)];
  const double h = sp.breaks()[std::size_t(i) + 1] - t0;
  const double* c = sp.coeffs(i, axis);
  double g[4];
  {
    const Range r = sp.piece_range(i, axis, 0);  // exact at the waypoints
    if (first || r.min < pk.pos_min) { pk.pos_min = r.min; pk.t_pos_min = r.u_min; }
    if (first || r.max > pk.pos_max) { pk.pos_max = r.max; pk.t_pos_max = r.u_max; }
  }
  for (int d = 1; d < 4; ++d) {
    const int deg = derivative_poly(c, d, g);
    const auto [hi, shi] = extreme(g, deg, 0.0, h, +1);
    const auto [lo, slo] = extreme(g, deg, 0.0, h, -1);
    const double mag = std::max(std::abs(hi), std::abs(lo));
    const double tm = t0 + (std::abs(hi) >= std::abs(lo) ? shi : slo);
    double* peak = d == 1 ? &pk.vel : d == 2 ? &pk.acc : &pk.jerk;
    double* tp = d == 1 ? &pk.t_vel : d == 2 ? &pk.t_acc : &pk.t_jerk;
    if (first || mag > *peak) { *peak = mag; *tp = tm; }
  }
}

std::vector<Stream> make_streams(const std::vector<AxisLimits>& limits, const std::vector<AxisPeaks>& peaks, double rel_tol) {
  std::vector<Stream> st;
  for (std::size_t a = 0; a < limits.size(); ++a) {
    const AxisLimits& l = limits[a];
    double span = std::max(std::abs(peaks[a].pos_max - peaks[a].pos_min), 0.0);
    if (l.min && l.max) span = *l.max - *l.min;
    else if (l.min) span = std::max(span, std::abs(*l.min));
    else if (l.max) span = std::max(span, std::abs(*l.max));
    if (!(span > 0)) span = 1.0;
    if (l.max) st.push_back({Index(a), Quantity::kPos, *l.max, rel_tol * span, +1, {}});
    if (l.min) st.push_back({Index(a), Quantity::kPos, *l.min, rel_tol * span, -1, {}});
    if (l.vel) st.push_back({Index(a), Quantity::kVel, *l.vel, rel_tol * *l.vel, +1, {}});
    if (l.acc) st.push_back({Index(a), Quantity::kAcc, *l.acc, rel_tol * *l.acc, +1, {}});
    if (l.jerk) st.push_back({Index(a), Quantity::kJerk, *l.jerk, rel_tol * *l.jerk, +1, {}});
  }
  return st;
}

int deriv_of(Quantity q) { return q == Quantity::kPos ? 0 : q == Quantity::kVel ? 1 : q == Quantity::kAcc ? 2 : 3; }

void check_exact(const std::vector<CubicSpline>& pieces, const std::vector<AxisLimits>& limits, double rel_tol, Report& r) {
  const std::size_t m = limits.size();
  r.peaks.assign(m, AxisPeaks{});
  bool first = true;
  for (const auto& sp : pieces)
    for (Index i = 0; i < sp.pieces(); ++i) {
      for (std::size_t a = 0; a < m; ++a) update_peaks(r.peaks[a], sp, i, Index(a), first);
      first = false;
    }
  std::vector<Stream> streams = make_streams(limits, r.peaks, rel_tol);
  for (auto& st : streams) {
    const AxisPeaks& pk = r.peaks[std::size_t(st.axis)];
    // Skip the work when the peak is inside the limit.
    const double peak = st.q == Quantity::kPos ? (st.side > 0 ? pk.pos_max : pk.pos_min)
                        : st.q == Quantity::kVel ? pk.vel : st.q == Quantity::kAcc ? pk.acc : pk.jerk;
    const double excess = st.q == Quantity::kPos ? st.side * (peak - st.limit) : peak - st.limit;
    if (!(excess > st.tol)) continue;
    const int d = deriv_of(st.q);
    for (const auto& sp : pieces)
      for (Index i = 0; i < sp.pieces(); ++i) {
        const double t0 = sp.breaks()[std::size_t(i)];
        const double t1 = sp.breaks()[std::size_t(i) + 1];
        double g[4];
        const int deg = derivative_poly(sp.coeffs(i, st.axis), d, g);
        if (st.q == Quantity::kPos) {
          exceed(g, deg, st.limit, st.side, t1 - t0, t0, t1, st, false);
        } else {
          // |g| > L: above +L and below -L, merged into one stream in time order.
          Stream up{st.axis, st.q, st.limit, st.tol, +1, {}};
          Stream down{st.axis, st.q, st.limit, st.tol, +1, {}};
          exceed(g, deg, st.limit, +1, t1 - t0, t0, t1, up, true);
          double neg[4];
          for (int k = 0; k <= deg; ++k) neg[k] = -g[k];
          exceed(neg, deg, st.limit, +1, t1 - t0, t0, t1, down, true);
          std::vector<Violation> both = up.out;
          both.insert(both.end(), down.out.begin(), down.out.end());
          std::sort(both.begin(), both.end(), [](const Violation& x, const Violation& y) { return x.t_start < y.t_start; });
          for (const auto& v : both) st.add(v.t_start, v.t_end, v.peak, v.t_peak);
        }
      }
  }
  for (auto& st : streams) st.finish(r.violations);
}

// Trajectories that are not piecewise cubic: dense samples between breakpoints.
void check_sampled(const Trajectory& tr, const std::vector<AxisLimits>& limits, const CheckOptions& o, Report& r) {
  r.exact = false;
  const std::size_t m = limits.size();
  r.peaks.assign(m, AxisPeaks{});
  const std::vector<double> br = tr.breaks();
  std::vector<double> ts;
  for (std::size_t k = 0; k + 1 < br.size(); ++k)
    for (int j = 0; j < o.samples_per_piece; ++j) ts.push_back(br[k] + (br[k + 1] - br[k]) * j / o.samples_per_piece);
  ts.push_back(br.back());
  Eigen::MatrixXd st(Index(m), 4);
  std::vector<Eigen::MatrixXd> vals(ts.size(), Eigen::MatrixXd(Index(m), 4));
  for (std::size_t k = 0; k < ts.size(); ++k) {
    tr.eval_all(ts[k], st);
    vals[k] = st;
  }
  for (std::size_t a = 0; a < m; ++a) {
    AxisPeaks& pk = r.peaks[a];
    for (std::size_t k = 0; k < ts.size(); ++k) {
      const auto& v = vals[k];
      const Index ia = Index(a);
      if (k == 0 || v(ia, 0) < pk.pos_min) { pk.pos_min = v(ia, 0); pk.t_pos_min = ts[k]; }
      if (k == 0 || v(ia, 0) > pk.pos_max) { pk.pos_max = v(ia, 0); pk.t_pos_max = ts[k]; }
      if (k == 0 || std::abs(v(ia, 1)) > pk.vel) { pk.vel = std::abs(v(ia, 1)); pk.t_vel = ts[k]; }
      if (k == 0 || std::abs(v(ia, 2)) > pk.acc) { pk.acc = std::abs(v(ia, 2)); pk.t_acc = ts[k]; }
      if (k == 0 || std::abs(v(ia, 3)) > pk.jerk) { pk.jerk = std::abs(v(ia, 3)); pk.t_jerk = ts[k]; }
    }
  }
  std::vector<Stream> streams = make_streams(limits, r.peaks, o.rel_tol);
  for (auto& s : streams) {
    const int d = deriv_of(s.q);
    auto value = [&](std::size_t k) {
      const double x = vals[k](s.axis, d);
      return s.q == Quantity::kPos ? s.side * (x - s.limit) : std::abs(x) - s.limit;
    };
    std::size_t k = 0;
    while (k < ts.size()) {
      if (value(k) <= 0) { ++k; continue; }
      const std::size_t k0 = k;
      double best = -1;
      std::size_t kb = k;
      while (k < ts.size() && value(k) > 0) {
        if (value(k) > best) { best = value(k); kb = k; }
        ++k;
      }
      // Crossing times by linear interpolation between samples.
      double t0 = ts[k0], t1 = ts[k - 1];
      if (k0 > 0) { const double a0 = value(k0 - 1), a1 = value(k0); t0 = ts[k0 - 1] + (ts[k0] - ts[k0 - 1]) * (-a0) / (a1 - a0); }
      if (k < ts.size()) { const double a0 = value(k - 1), a1 = value(k); t1 = ts[k - 1] + (ts[k] - ts[k - 1]) * a0 / (a0 - a1); }
      const double x = vals[kb](s.axis, d);
      s.out.push_back({s.axis, s.q, t0, t1, s.q == Quantity::kPos ? x : std::abs(x), ts[kb], s.limit});
    }
  }
  for (auto& s : streams) s.finish(r.violations);
}

}  // namespace

Report check_limits(const Trajectory& tr, const std::vector<AxisLimits>& limits, const CheckOptions& o) {
  o.validate();
  if (Index(limits.size()) != tr.axes()) throw Error("check: one set of limits per axis is needed");
  Report r;
  r.t_begin = tr.t_begin();
  r.t_end = tr.t_end();
  r.duration = tr.duration();
  if (const auto* pieces = tr.cubic_pieces()) check_exact(*pieces, limits, o.rel_tol, r);
  else check_sampled(tr, limits, o, r);
  std::sort(r.violations.begin(), r.violations.end(), [](const Violation& x, const Violation& y) {
    if (x.t_start != y.t_start) return x.t_start < y.t_start;
    if (x.axis != y.axis) return x.axis < y.axis;
    return int(x.quantity) < int(y.quantity);
  });
  r.ok = r.violations.empty();
  double k = 1.0;
  for (std::size_t a = 0; a < limits.size(); ++a) {
    const AxisLimits& l = limits[a];
    const AxisPeaks& pk = r.peaks[a];
    if (l.vel) k = std::max(k, pk.vel / *l.vel);
    if (l.acc) k = std::max(k, std::sqrt(pk.acc / *l.acc));
    if (l.jerk) k = std::max(k, std::cbrt(pk.jerk / *l.jerk));
  }
  bool dynamic = false;
  for (const auto& v : r.violations) {
    if (v.quantity == Quantity::kPos) r.pos_violation = true;
    else dynamic = true;
  }
  // Within the tolerance of every limit: nothing to stretch.
  r.stretch = dynamic ? k : 1.0;
  r.message = r.ok ? "within limits" : std::to_string(r.violations.size()) + " limit violation(s)";
  return r;
}

}  // namespace c2path
