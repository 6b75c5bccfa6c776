#include "c2path/limits.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>

#include "c2path/error.hpp"
#include "detail/poly.hpp"

namespace c2path {

std::vector<AxisLimits> scene_limits(const Scene& scene) {
  std::vector<AxisLimits> l;
  for (const auto& a : scene.axes) l.push_back({a.min, a.max, a.vel, a.acc, a.jerk});
  return l;
}

std::vector<std::string> unchecked_limits(const Scene& scene) {
  std::vector<std::string> out;
  for (const AxisSpec& ax : scene.axes) {
    if (!ax.min && !ax.max) out.push_back(ax.name + " travel");
    if (!ax.vel) out.push_back(ax.name + " vel");
    if (!ax.acc) out.push_back(ax.name + " acc");
    if (!ax.jerk) out.push_back(ax.name + " jerk");
  }
  return out;
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
  if (!(sample_tol > 0.0 && sample_tol <= 0.1) || !(sample_tol_jerk > 0.0 && sample_tol_jerk <= 0.1))
    throw Error("check: sample tolerances must be in (0, 0.1]");
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

// Whether a stream's peak lies beyond its limit by more than its tolerance.
bool peak_beyond(const Stream& st, const AxisPeaks& pk) {
  const double peak = st.q == Quantity::kPos ? (st.side > 0 ? pk.pos_max : pk.pos_min)
                      : st.q == Quantity::kVel ? pk.vel : st.q == Quantity::kAcc ? pk.acc : pk.jerk;
  const double excess = st.q == Quantity::kPos ? st.side * (peak - st.limit) : peak - st.limit;
  return excess > st.tol;
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
    if (!peak_beyond(st, r.peaks[std::size_t(st.axis)])) continue;  // the peak is inside: no work
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

// Piecewise-polynomial trajectories (a time law on a piecewise-cubic path): exact like
// check_exact, on polynomials of degree <= 15 in sigma = (t - t_k) / h_k. Peaks by branch and
// bound: the Bernstein coefficients of a piece bound it from above (convex hull property), its
// ends are values it takes; only pieces whose bound beats the best value found so far are solved
// exactly (ends and roots of the derivative). Violations: pieces whose bound reaches beyond a
// limit are split at the roots of p - limit.

// d-th time derivative of piece k, axis a, as a polynomial in sigma (degree D - d) in g.
int poly_deriv(const PolyPieces& P, std::size_t k, Index a, int d, double* g) {
  const int D = P.degree;
  const double* c = P.coeffs(k, a);
  const double h = P.t[k + 1] - P.t[k];
  const double ih = h > 0 ? 1.0 / h : 0.0;
  double f = 1.0;
  for (int i = 0; i < d; ++i) f *= ih;
  for (int j = 0; j + d <= D; ++j) {
    double w = 1.0;
    for (int i = 1; i <= d; ++i) w *= double(j + i);
    g[j] = c[j + d] * w * f;
  }
  return std::max(D - d, 0);
}

// Sub-intervals of [0, 1] where side * (g(sigma) - L) > 0, each with its extreme, as times.
template <class Own>
void exceed_sigma(const double* g, int deg, double L, int side, double t0, double t1, Stream& st, bool magnitude, const Own& own) {
  double shifted[detail::kMaxPolyDegree + 1];
  for (int k = 0; k <= deg; ++k) shifted[k] = g[k];
  shifted[0] -= L;
  double pts[detail::kMaxPolyDegree + 2];
  int np = 0;
  pts[np++] = 0.0;
  double roots[detail::kMaxPolyDegree];
  const int nr = detail::poly_roots_in(shifted, deg, 0.0, 1.0, roots);
  for (int k = 0; k < nr; ++k) pts[np++] = roots[k];
  pts[np++] = 1.0;
  const double h = t1 - t0;
  auto to_t = [&](double sg) { return sg == 0.0 ? t0 : (sg == 1.0 ? t1 : t0 + sg * h); };
  for (int k = 0; k + 1 < np; ++k) {
    const double a = pts[k], b = pts[k + 1];
    if (side * detail::poly_eval(shifted, deg, 0.5 * (a + b)) > 0) {
      const auto [val, sg] = detail::poly_extreme(g, deg, a, b, side);
      const double v = own(to_t(sg), val);
      st.add(to_t(a), to_t(b), magnitude ? std::abs(v) : v, to_t(sg));
    }
  }
}

void check_poly(const Trajectory& tr, const PolyPieces& P, const std::vector<AxisLimits>& limits, double rel_tol, Report& r) {
  const std::size_t m = limits.size(), n = P.pieces();
  // Position, velocity and acceleration are continuous: their reported values are the
  // trajectory's own at the time found (a waypoint at rest reads exactly its value), not the
  // composed polynomial's (a few ulps off). Jerk may jump at breaks, so it keeps the
  // polynomial's one-sided value.
  Eigen::MatrixXd st4(Index(m), 4);
  auto own = [&](double t, Index a, int d, double poly_value) {
    if (d > 2) return poly_value;
    tr.eval_all(t, st4);
    return st4(a, d);
  };
  r.peaks.assign(m, AxisPeaks{});
  // Per piece and derivative d of one axis at a time: the ends (values taken) and a first range
  // bound in O(degree) (sigma^j in [0, 1]: c0 + sum of the negative c_j <= p <= c0 + sum of the
  // positive c_j); the Bernstein range (tighter, O(degree^2)) only where that does not settle
  // a question.
  std::vector<double> qlo(n * 4), qhi(n * 4), e0(n * 4), e1(n * 4);
  double g[detail::kMaxPolyDegree + 1], b[detail::kMaxPolyDegree + 1];
  const int D = P.degree;
  auto cells = [&](std::size_t a) {
    for (std::size_t k = 0; k < n; ++k) {
      const double h = P.t[k + 1] - P.t[k], ih = h > 0 ? 1.0 / h : 0.0;
      const double* c = P.coeffs(k, Index(a));
      for (int j = 0; j <= D; ++j) g[j] = c[j];
      for (int d = 0; d < 4; ++d) {
        const int deg = std::max(D - d, 0);
        if (d > 0)  // differentiate once more: d/dt = (1/h) d/dsigma
          for (int j = 0; j <= deg; ++j) g[j] = j < D - d + 1 ? double(j + 1) * g[j + 1] * ih : 0.0;
        double pos = 0.0, neg = 0.0;
        for (int j = 1; j <= deg; ++j) (g[j] > 0.0 ? pos : neg) += g[j];
        const std::size_t i = k * 4 + std::size_t(d);
        qlo[i] = g[0] + neg;
        qhi[i] = g[0] + pos;
        e0[i] = g[0];
        e1[i] = g[0] + pos + neg;  // p(1): the sum of the coefficients
      }
    }
  };
  // Bernstein range of one cell of the current axis (computed on demand).
  auto bern = [&](std::size_t k, std::size_t a, int d, double& lo, double& hi) {
    const int deg = poly_deriv(P, k, Index(a), d, g);
    detail::bernstein(g, deg, b);
    lo = hi = b[0];
    for (int j = 1; j <= deg; ++j) {
      lo = std::min(lo, b[j]);
      hi = std::max(hi, b[j]);
    }
    const std::size_t i = k * 4 + std::size_t(d);
    lo = std::max(lo, qlo[i]);
    hi = std::min(hi, qhi[i]);
  };
  std::vector<std::pair<double, std::size_t>> cand;
  for (std::size_t a = 0; a < m; ++a) {
    AxisPeaks& pk = r.peaks[a];
    cells(a);
    // side +1 / -1 of the position, then |vel|, |acc|, |jerk| (side 0: magnitude).
    for (int qd = 0; qd < 5; ++qd) {
      const int d = qd < 2 ? 0 : qd - 1, side = qd == 0 ? 1 : qd == 1 ? -1 : 0;
      auto score = [&](double v) { return side == 0 ? std::abs(v) : side * v; };
      auto upper = [&](double lo, double hi) { return side == 0 ? std::max(std::abs(lo), std::abs(hi)) : side > 0 ? hi : -lo; };
      // The best value found (as side * value, or magnitude) and when: first the ends.
      double best = -std::numeric_limits<double>::infinity(), tbest = P.t.front();
      for (std::size_t k = 0; k < n; ++k) {
        const std::size_t i = k * 4 + std::size_t(d);
        if (score(e0[i]) > best) { best = score(e0[i]); tbest = P.t[k]; }
        if (score(e1[i]) > best) { best = score(e1[i]); tbest = P.t[k + 1]; }
      }
      // Branch and bound: pieces whose bound beats the best so far, best bound first.
      cand.clear();
      for (std::size_t k = 0; k < n; ++k) {
        const std::size_t i = k * 4 + std::size_t(d);
        const double ub = upper(qlo[i], qhi[i]);
        if (ub > best) cand.push_back({ub, k});
      }
      // The few largest bounds first (they raise `best` to about the peak), then the rest in
      // piece order, each skipped once `best` reaches its bound.
      const auto by_bound = [](const auto& x, const auto& y) { return x.first > y.first || (x.first == y.first && x.second < y.second); };
      const std::size_t head = std::min<std::size_t>(cand.size(), 16);
      std::partial_sort(cand.begin(), cand.begin() + std::ptrdiff_t(head), cand.end(), by_bound);
      for (const auto& [ub, k] : cand) {
        if (!(ub > best)) continue;
        double lo, hi;
        bern(k, a, d, lo, hi);
        if (!(upper(lo, hi) > best)) continue;
        const int deg = poly_deriv(P, k, Index(a), d, g);
        const double h = P.t[k + 1] - P.t[k];
        for (int sd : {+1, -1}) {
          if (side != 0 && sd != side) continue;
          const auto [val, sg] = detail::poly_extreme(g, deg, 0.0, 1.0, sd);
          if (score(val) > best) {
            best = score(val);
            tbest = sg == 1.0 ? P.t[k + 1] : P.t[k] + sg * h;
          }
        }
      }
      if (std::isfinite(best)) {
        const double v = own(tbest, Index(a), d, side < 0 ? -best : best);
        best = side == 0 ? std::abs(v) : side * v;
      }
      switch (qd) {
        case 0: pk.pos_max = best; pk.t_pos_max = tbest; break;
        case 1: pk.pos_min = -best; pk.t_pos_min = tbest; break;
        case 2: pk.vel = best; pk.t_vel = tbest; break;
        case 3: pk.acc = best; pk.t_acc = tbest; break;
        default: pk.jerk = best; pk.t_jerk = tbest; break;
      }
    }
  }
  std::vector<Stream> streams = make_streams(limits, r.peaks, rel_tol);
  for (auto& st : streams) {
    if (!peak_beyond(st, r.peaks[std::size_t(st.axis)])) continue;  // the peak is inside: no work
    const int d = deriv_of(st.q);
    auto own_st = [&](double t, double pv) { return own(t, st.axis, d, pv); };
    cells(std::size_t(st.axis));
    for (std::size_t k = 0; k < n; ++k) {
      const std::size_t i = k * 4 + std::size_t(d);
      const double t0 = P.t[k], t1 = P.t[k + 1];
      auto beyond = [&](double lo, double hi) {
        return st.q == Quantity::kPos ? (st.side > 0 ? hi > st.limit : lo < st.limit) : (hi > st.limit || lo < -st.limit);
      };
      if (!beyond(qlo[i], qhi[i])) continue;
      double blo_i, bhi_i;
      bern(k, std::size_t(st.axis), d, blo_i, bhi_i);
      if (!beyond(blo_i, bhi_i)) continue;
      if (st.q == Quantity::kPos) {
        const int deg = poly_deriv(P, k, st.axis, d, g);
        exceed_sigma(g, deg, st.limit, st.side, t0, t1, st, false, own_st);
      } else {
        const bool up_possible = bhi_i > st.limit, down_possible = blo_i < -st.limit;
        const int deg = poly_deriv(P, k, st.axis, d, g);
        Stream up{st.axis, st.q, st.limit, st.tol, +1, {}};
        Stream down{st.axis, st.q, st.limit, st.tol, +1, {}};
        if (up_possible) exceed_sigma(g, deg, st.limit, +1, t0, t1, up, true, own_st);
        if (down_possible) {
          double neg[detail::kMaxPolyDegree + 1];
          for (int j = 0; j <= deg; ++j) neg[j] = -g[j];
          exceed_sigma(neg, deg, st.limit, +1, t0, t1, down, true, [&](double t, double pv) { return -own_st(t, -pv); });
        }
        std::vector<Violation> both = up.out;
        both.insert(both.end(), down.out.begin(), down.out.end());
        std::sort(both.begin(), both.end(), [](const Violation& x, const Violation& y) { return x.t_start < y.t_start; });
        for (const auto& v : both) st.add(v.t_start, v.t_end, v.peak, v.t_peak);
      }
    }
  }
  for (auto& st : streams) st.finish(r.violations);
}

// Trajectories that are not piecewise cubic: samples between the breakpoints, dense enough that
// what lies between them is bounded.
//
// Between two samples a, b = a + h of a quantity f (pos, vel, acc; f' is the next quantity, known
// at both samples) with |f''| <= M on [a, b]:
//   f(t) <= min(f(a) + f'(a) s + M s^2 / 2, f(b) - f'(b) (h - s) + M (h - s)^2 / 2),  s = t - a,
// so f exceeds the larger of the cubic Hermite interpolant's extreme and the samples by at most
// M h^2 / 8 (the two parabolas meet at most M h^2/8 above the chord of the tangents). For jerk
// (no next derivative in the Trajectory interface) with |jerk'| <= S: the excess is at most S h / 2.
// M is the peak |acc| for pos and the peak |jerk| for vel (both from this check); for acc and jerk
// it is the snap, estimated from divided differences of the sampled jerk (times 2 for safety). The
// step is chosen per break interval so that the bound is below CheckOptions::sample_tol of each
// limit (jerk: sample_tol_jerk) (at most
// kMaxSamples samples in all) and the bound actually reached is reported in Report::sample_bound.
constexpr std::size_t kMaxSamples = 1'000'000;

struct Samples {
  std::vector<double> t;
  std::vector<double> v;            // t.size() x m x 4, sample-major
  std::vector<std::size_t> first;   // first sample of each break interval (then per[b] more)
  std::vector<char> inner;          // inner[k]: samples k and k+1 lie in the same break interval
  std::size_t m = 0;
  [[nodiscard]] double at(std::size_t k, std::size_t a, int d) const { return v[(k * m + a) * 4 + std::size_t(d)]; }
};

// per[b] + 1 samples on each break interval [b_k, b_k+1], its ends moved inside by 1e-9 of its
// length, so that every sample of an interval is evaluated on that interval's side of a break
// (derivatives may jump at breaks).
Samples take_samples(const Trajectory& tr, const std::vector<double>& br, const std::vector<std::size_t>& per) {
  Samples S;
  S.m = std::size_t(tr.axes());
  const std::size_t nb = br.size() - 1;
  for (std::size_t b = 0; b < nb; ++b) {
    const double len = br[b + 1] - br[b], d = 1e-9 * len;
    S.first.push_back(S.t.size());
    for (std::size_t j = 0; j <= per[b]; ++j) {
      double t = br[b] + len * double(j) / double(per[b]);
      if (j == 0 && b > 0) t = br[b] + d;
      if (j == per[b]) t = b + 1 == nb ? br.back() : br[b + 1] - d;
      S.t.push_back(t);
      S.inner.push_back(j < per[b] ? 1 : 0);
    }
  }
  S.v.resize(S.t.size() * S.m * 4);
  Eigen::MatrixXd st(Index(S.m), 4);
  for (std::size_t k = 0; k < S.t.size(); ++k) {
    tr.eval_all(S.t[k], st);
    for (std::size_t a = 0; a < S.m; ++a)
      for (int d = 0; d < 4; ++d) S.v[(k * S.m + a) * 4 + std::size_t(d)] = st(Index(a), d);
  }
  return S;
}

// Extreme of side * H over [0, h] for the cubic Hermite H with values f0, f1 and slopes g0, g1.
std::pair<double, double> hermite_extreme(double f0, double g0, double f1, double g1, double h, int side) {
  // H(s) = f0 + g0 s + c2 s^2 + c3 s^3
  const double d = (f1 - f0) / h;
  const double c2 = (3.0 * d - 2.0 * g0 - g1) / h, c3 = (g0 + g1 - 2.0 * d) / (h * h);
  const double c[4] = {f0, g0, c2, c3};
  const double dc[3] = {g0, 2.0 * c2, 3.0 * c3};
  double best = side * f0 >= side * f1 ? f0 : f1, bs = side * f0 >= side * f1 ? 0.0 : h;
  // Roots of H' = dc[0] + dc[1] s + dc[2] s^2 in (0, h), closed form (stable quadratic formula).
  double r[2];
  int nr = 0;
  if (dc[2] != 0.0) {
    const double disc = dc[1] * dc[1] - 4.0 * dc[2] * dc[0];
    if (disc >= 0.0) {
      const double qq = -0.5 * (dc[1] + std::copysign(std::sqrt(disc), dc[1]));
      if (qq != 0.0) {
        r[nr++] = qq / dc[2];
        r[nr++] = dc[0] / qq;
      } else {
        r[nr++] = 0.0;
      }
    }
  } else if (dc[1] != 0.0) {
    r[nr++] = -dc[0] / dc[1];
  }
  for (int k = 0; k < nr; ++k) {
    if (!(r[k] > 0.0 && r[k] < h)) continue;
    const double val = detail::poly_eval(c, 3, r[k]);
    if (side * val > side * best) {
      best = val;
      bs = r[k];
    }
  }
  return {best, bs};
}

void check_sampled(const Trajectory& tr, const std::vector<AxisLimits>& limits, const CheckOptions& o, Report& r) {
  r.exact = false;
  const std::size_t m = limits.size();
  r.peaks.assign(m, AxisPeaks{});
  const std::vector<double> br = tr.breaks();
  const std::size_t nb = br.size() - 1;
  // Pass 1: samples_per_piece per break interval, to estimate the derivative bounds.
  std::vector<std::size_t> per(nb, std::size_t(o.samples_per_piece));
  Samples S = take_samples(tr, br, per);
  auto bounds_per_interval = [&](const Samples& X, const std::vector<std::size_t>& pp, std::vector<double>& acc_pk,
                                 std::vector<double>& jerk_pk, std::vector<double>& snap) {
    acc_pk.assign(nb * m, 0.0);
    jerk_pk.assign(nb * m, 0.0);
    snap.assign(nb * m, 0.0);
    for (std::size_t b = 0; b < nb; ++b) {
      const std::size_t k0 = X.first[b], k1 = k0 + pp[b];  // samples k0..k1 lie in break interval b
      for (std::size_t a = 0; a < m; ++a) {
        double A = 0, J = 0, Sn = 0;
        for (std::size_t k = k0; k <= k1; ++k) {
          A = std::max(A, std::abs(X.at(k, a, 2)));
          J = std::max(J, std::abs(X.at(k, a, 3)));
          if (k < k1) Sn = std::max(Sn, std::abs(X.at(k + 1, a, 3) - X.at(k, a, 3)) / (X.t[k + 1] - X.t[k]));
        }
        acc_pk[b * m + a] = A;
        jerk_pk[b * m + a] = J;
        snap[b * m + a] = 2.0 * Sn;
      }
    }
  };
  std::vector<double> acc_pk, jerk_pk, snap;
  bounds_per_interval(S, per, acc_pk, jerk_pk, snap);
  // Pass 2: the step each break interval needs for a bound below sample_tol of every limit.
  std::size_t total = 0;
  std::vector<std::size_t> need(nb);
  for (std::size_t b = 0; b < nb; ++b) {
    const double len = br[b + 1] - br[b];
    double n = double(o.samples_per_piece);
    for (std::size_t a = 0; a < m; ++a) {
      const AxisLimits& l = limits[a];
      double span = 1.0;
      if (l.min && l.max) span = *l.max - *l.min;
      auto quad = [&](double M, double lim) {  // M h^2 / 8 <= tol * lim
        if (M > 0 && lim > 0) n = std::max(n, len / std::sqrt(8.0 * 0.5 * o.sample_tol * lim / M));
      };
      if (l.min || l.max) quad(acc_pk[b * m + a], span);
      if (l.vel) quad(jerk_pk[b * m + a], *l.vel);
      if (l.acc) quad(snap[b * m + a], *l.acc);
      if (l.jerk && snap[b * m + a] > 0) n = std::max(n, len * snap[b * m + a] / (2.0 * 0.5 * o.sample_tol_jerk * *l.jerk));
    }
    need[b] = std::size_t(std::min(std::ceil(n), 1e7));
    total += need[b];
  }
  if (total > kMaxSamples) {
    const double f = double(kMaxSamples) / double(total);
    for (auto& x : need) x = std::max<std::size_t>(std::size_t(o.samples_per_piece), std::size_t(double(x) * f));
  }
  if (need != per) {
    S = take_samples(tr, br, need);
    per = need;
    bounds_per_interval(S, per, acc_pk, jerk_pk, snap);
  }
  const std::vector<double>& ts = S.t;
  // Peaks: samples, refined by the Hermite interpolant between samples (pos, vel, acc).
  for (std::size_t a = 0; a < m; ++a) {
    AxisPeaks& pk = r.peaks[a];
    for (std::size_t k = 0; k < ts.size(); ++k) {
      const double x = S.at(k, a, 0);
      if (k == 0 || x < pk.pos_min) { pk.pos_min = x; pk.t_pos_min = ts[k]; }
      if (k == 0 || x > pk.pos_max) { pk.pos_max = x; pk.t_pos_max = ts[k]; }
      for (int d = 1; d < 4; ++d) {
        double* peak = d == 1 ? &pk.vel : d == 2 ? &pk.acc : &pk.jerk;
        double* tp = d == 1 ? &pk.t_vel : d == 2 ? &pk.t_acc : &pk.t_jerk;
        if (k == 0 || std::abs(S.at(k, a, d)) > *peak) { *peak = std::abs(S.at(k, a, d)); *tp = ts[k]; }
      }
    }
    for (std::size_t b = 0; b < nb; ++b) {
      const std::size_t k0 = S.first[b], k1 = k0 + per[b];
      for (std::size_t k = k0; k < k1; ++k) {
        const double h = ts[k + 1] - ts[k];
        if (!(h > 0)) continue;
        for (int d = 0; d < 3; ++d)
          for (int side : {+1, -1}) {
            const auto [val, sv] = hermite_extreme(S.at(k, a, d), S.at(k, a, d + 1), S.at(k + 1, a, d), S.at(k + 1, a, d + 1), h, side);
            const double t = ts[k] + sv;
            if (d == 0) {
              if (side > 0 && val > pk.pos_max) { pk.pos_max = val; pk.t_pos_max = t; }
              if (side < 0 && val < pk.pos_min) { pk.pos_min = val; pk.t_pos_min = t; }
            } else {
              double* peak = d == 1 ? &pk.vel : &pk.acc;
              double* tp = d == 1 ? &pk.t_vel : &pk.t_acc;
              if (std::abs(val) > *peak) { *peak = std::abs(val); *tp = t; }
            }
          }
      }
    }
  }
  // The bound on what the samples can miss, as a fraction of each limit.
  double bound = 0.0;
  {
    for (std::size_t b = 0; b < nb; ++b) {
      const std::size_t k0 = S.first[b], k1 = k0 + per[b];
      double hmax = 0;
      for (std::size_t k = k0; k < k1; ++k) hmax = std::max(hmax, ts[k + 1] - ts[k]);
      for (std::size_t a = 0; a < m; ++a) {
        const AxisLimits& l = limits[a];
        const double q = hmax * hmax / 8.0;
        if (l.min && l.max) bound = std::max(bound, r.peaks[a].acc * q / (*l.max - *l.min));
        if (l.vel) bound = std::max(bound, r.peaks[a].jerk * q / *l.vel);
        if (l.acc) bound = std::max(bound, snap[b * m + a] * q / *l.acc);
        if (l.jerk) bound = std::max(bound, snap[b * m + a] * hmax / 2.0 / *l.jerk);
      }
    }
  }
  r.sample_bound = bound;
  // Violations: runs of samples beyond the limit; crossing times by bisection on the Hermite
  // interpolant (linear for jerk); a run the samples miss but the Hermite extreme shows is kept too.
  std::vector<Stream> streams = make_streams(limits, r.peaks, o.rel_tol);
  for (auto& s : streams) {
    const int d = deriv_of(s.q);
    const std::size_t a = std::size_t(s.axis);
    auto excess = [&](double x) { return s.q == Quantity::kPos ? s.side * (x - s.limit) : std::abs(x) - s.limit; };
    auto interp = [&](std::size_t k, double t) {  // value inside [ts[k], ts[k+1]]
      const double h = ts[k + 1] - ts[k], x = t - ts[k];
      if (d == 3 || !(h > 0) || !S.inner[k]) return S.at(k, a, d) + (S.at(k + 1, a, d) - S.at(k, a, d)) * (h > 0 ? x / h : 0.0);
      const double f0 = S.at(k, a, d), g0 = S.at(k, a, d + 1), f1 = S.at(k + 1, a, d), g1 = S.at(k + 1, a, d + 1);
      const double dd = (f1 - f0) / h;
      const double c2 = (3.0 * dd - 2.0 * g0 - g1) / h, c3 = (g0 + g1 - 2.0 * dd) / (h * h);
      return f0 + x * (g0 + x * (c2 + x * c3));
    };
    auto cross = [&](std::size_t k, bool rising) {  // where excess changes sign in [ts[k], ts[k+1]]
      double lo = ts[k], hi = ts[k + 1];
      for (int it = 0; it < 60; ++it) {
        const double mid = 0.5 * (lo + hi);
        if (mid <= lo || mid >= hi) break;
        const bool over = excess(interp(k, mid)) > 0;
        if (over == rising) hi = mid;
        else lo = mid;
      }
      return 0.5 * (lo + hi);
    };
    std::size_t k = 0;
    while (k < ts.size()) {
      if (excess(S.at(k, a, d)) <= 0) {
        // A bump between two samples below the limit.
        if (k + 1 < ts.size() && d < 3 && S.inner[k] && excess(S.at(k + 1, a, d)) <= 0 && ts[k + 1] > ts[k]) {
          const int side = s.q == Quantity::kPos ? s.side : (S.at(k, a, d) + S.at(k + 1, a, d) >= 0 ? +1 : -1);
          const auto [val, sv] = hermite_extreme(S.at(k, a, d), S.at(k, a, d + 1), S.at(k + 1, a, d), S.at(k + 1, a, d + 1),
                                                 ts[k + 1] - ts[k], side);
          if (excess(val) > 0) {
            const double tp = ts[k] + sv;
            double lo = ts[k], hi = tp;
            for (int it = 0; it < 60; ++it) { const double mid = 0.5 * (lo + hi); if (excess(interp(k, mid)) > 0) hi = mid; else lo = mid; }
            const double t0 = hi;
            lo = tp; hi = ts[k + 1];
            for (int it = 0; it < 60; ++it) { const double mid = 0.5 * (lo + hi); if (excess(interp(k, mid)) > 0) lo = mid; else hi = mid; }
            s.out.push_back({s.axis, s.q, t0, lo, s.q == Quantity::kPos ? val : std::abs(val), tp, s.limit});
          }
        }
        ++k;
        continue;
      }
      const std::size_t k0 = k;
      while (k < ts.size() && excess(S.at(k, a, d)) > 0) ++k;
      const double t0 = k0 > 0 ? cross(k0 - 1, true) : ts[k0];
      const double t1 = k < ts.size() ? cross(k - 1, false) : ts[k - 1];
      // Peak of the run: samples and the Hermite extremes between them.
      double best = S.at(k0, a, d), tb = ts[k0];
      const int side = s.q == Quantity::kPos ? s.side : (best >= 0 ? +1 : -1);
      for (std::size_t j = (k0 > 0 ? k0 - 1 : k0); j < k && j + 1 < ts.size(); ++j) {
        double val = S.at(j + 1, a, d), tv = ts[j + 1];
        if (d < 3 && S.inner[j] && ts[j + 1] > ts[j]) {
          const auto e = hermite_extreme(S.at(j, a, d), S.at(j, a, d + 1), S.at(j + 1, a, d), S.at(j + 1, a, d + 1), ts[j + 1] - ts[j], side);
          val = e.first;
          tv = ts[j] + e.second;
        }
        if (side * val > side * best) { best = val; tb = tv; }
      }
      s.out.push_back({s.axis, s.q, t0, t1, s.q == Quantity::kPos ? best : std::abs(best), tb, s.limit});
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
  PolyPieces poly;
  if (const auto* pieces = tr.cubic_pieces()) check_exact(*pieces, limits, o.rel_tol, r);
  else if (!o.force_sampled && tr.poly_pieces(poly)) check_poly(tr, poly, limits, o.rel_tol, r);
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
