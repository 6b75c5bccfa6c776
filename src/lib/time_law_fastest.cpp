// Fastest mode: TOPP-RA (Pham & Pham 2018, "A new approach to time-optimal path parameterization
// based on reachability analysis") for velocity and acceleration limits on a grid over u, then the
// jerk pass (moving-window average of the path acceleration, local repairs, uniform stretch).
//
// Notation on one segment [u_a, u_b] of the path: x = (du/dt)^2, w = d2u/dt2. Along a grid
// u_0 < ... < u_N, TOPP-RA takes w constant on each step, so x_{i+1} = x_i + 2 (u_{i+1} - u_i) w_i.
// At grid point i, axis a with b = dq_a/du, c = d2q_a/du2:
//   velocity      |b| sqrt(x) <= V            ->  x <= (V / |b|)^2
//   acceleration  |b w + c x| <= A            ->  -A/|b| - (c/b) x <= w <= A/|b| - (c/b) x  (b != 0)
//                                                  x <= A / |c|                               (b == 0)
//   jerk at constant speed  |q_uuu| x^(3/2) <= J  ->  x <= (J / |q_uuu|)^(2/3)  (a first guess for
//                                                  the jerk pass, which checks the full jerk)

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <exception>
#include <limits>
#include <string>
#include <system_error>
#include <thread>

#include "c2path/error.hpp"
#include "c2path/time_law.hpp"
#include "detail/poly.hpp"
#include "detail/time_law_part.hpp"

namespace c2path {

void FastestOptions::validate() const {
  if (!(scale > 0.0 && scale <= 1.0)) throw Error("fastest plan: scale must be in (0, 1]");
  if (min_segment_steps < 1 || min_segment_steps > 1000000) throw Error("fastest plan: min_segment_steps must be in [1, 1e6]");
  if (min_steps < 1 || max_steps < min_steps || max_steps > 10000) throw Error("fastest plan: need 1 <= min_steps <= max_steps <= 10000");
  if (!(bend_step > 0.0) || !std::isfinite(bend_step)) throw Error("fastest plan: bend_step must be positive");
  if (!(grid_factor >= 1.0 && grid_factor <= 100.0)) throw Error("fastest plan: grid_factor must be in [1, 100]");
  if (repair_iterations < 0 || repair_iterations > 100) throw Error("fastest plan: repair_iterations must be in [0, 100]");
  if (!(binding_fraction > 0.0 && binding_fraction <= 1.0)) throw Error("fastest plan: binding_fraction must be in (0, 1]");
}

namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
// Limits are planned this much inside scale x limit, so that what the grid cannot see stays inside.
constexpr double kSafety = 0.9995;

struct AxisLim {
  double vel = kInf, acc = kInf, jerk = kInf;
};

// Path derivatives on the grid of one segment, point-major: d1[i * m + a].
struct Grid {
  std::vector<double> u, d1, d2, d3;
  std::vector<char> brk;  // grid point i is a break of the path (derivatives may jump there)
  [[nodiscard]] std::size_t points() const { return u.size(); }
};

Grid make_grid(const Path& path, double ua, double ub, const std::vector<double>& all_breaks, const Eigen::VectorXd& norm,
               const FastestOptions& o) {
  const Index m = path.axes();
  std::vector<double> br;
  br.push_back(ua);
  for (double b : all_breaks)
    if (b > ua && b < ub) br.push_back(b);
  br.push_back(ub);
  Grid g;
  Eigen::VectorXd d1(m), e1(m);
  Eigen::MatrixXd all(m, 4);
  const int factor = int(std::lround(o.grid_factor));
  std::vector<int> steps(br.size() - 1);
  long total = 0;
  for (std::size_t k = 0; k + 1 < br.size(); ++k) {
    const double a = br[k], b = br[k + 1];
    path.eval(a, 1, d1);
    path.eval(std::nextafter(b, -kInf), 1, e1);
    const Eigen::VectorXd n0 = d1.cwiseProduct(norm), n1 = e1.cwiseProduct(norm);
    const double l0 = n0.norm(), l1 = n1.norm();
    double bend = double(o.max_steps);  // a stationary end: as fine as allowed
    if (l0 > 0.0 && l1 > 0.0) {
      const double c = std::clamp(n0.dot(n1) / (l0 * l1), -1.0, 1.0);
      bend = std::acos(c) + std::abs(std::log(l1 / l0));
    }
    steps[k] = std::clamp(int(std::ceil(o.min_steps + bend / o.bend_step)), o.min_steps, o.max_steps);
    total += steps[k];
  }
  // Short segments: at least min_segment_steps steps in all, shared by parameter length.
  if (total < o.min_segment_steps)
    for (std::size_t k = 0; k + 1 < br.size(); ++k)
      steps[k] = std::max(steps[k], int(std::ceil(o.min_segment_steps * (br[k + 1] - br[k]) / (ub - ua))));
  for (std::size_t k = 0; k + 1 < br.size(); ++k) {
    const double a = br[k], b = br[k + 1];
    const int n = factor * steps[k];
    for (int j = 0; j < n; ++j) {
      g.u.push_back(j == 0 ? a : a + (b - a) * double(j) / n);
      g.brk.push_back(j == 0 ? 1 : 0);
    }
  }
  g.u.push_back(ub);
  g.brk.push_back(1);
  const std::size_t n = g.u.size();
  g.d1.resize(n * std::size_t(m));
  g.d2.resize(n * std::size_t(m));
  g.d3.resize(n * std::size_t(m));
  for (std::size_t i = 0; i < n; ++i) {
    // The last point on the piece that ends there; every other on the piece that starts there.
    path.eval_all(i + 1 == n ? std::nextafter(g.u[i], -kInf) : g.u[i], all);
    for (Index a = 0; a < m; ++a) {
      g.d1[i * std::size_t(m) + std::size_t(a)] = all(a, 1);
      g.d2[i * std::size_t(m) + std::size_t(a)] = all(a, 2);
      g.d3[i * std::size_t(m) + std::size_t(a)] = all(a, 3);
    }
  }
  return g;
}

// TOPP-RA on one segment: returns x_i (squared path speed) at the grid points, x_0 = x_N = 0.
class Topp {
 public:
  Topp(const Grid& g, const std::vector<AxisLim>& lim) : g_(g), lim_(lim), m_(lim.size()) {
    // Acceleration lines per point and axis: w in [-r + s x, r + s x], r = A/|b|, s = -c/b
    // (r = 0: no line, the axis has no acceleration limit or b = 0).
    r_.assign(g.points() * m_, 0.0);
    s_.assign(g.points() * m_, 0.0);
    for (std::size_t i = 0; i < g.points(); ++i)
      for (std::size_t a = 0; a < m_; ++a) {
        const double b = g_.d1[i * m_ + a];
        if (!(lim_[a].acc < kInf) || b == 0.0) continue;
        r_[i * m_ + a] = lim_[a].acc / std::abs(b);
        s_[i * m_ + a] = -g_.d2[i * m_ + a] / b;
      }
    // (J / |q_uuu|)^(2/3) is increasing in J / |q_uuu|: the smallest ratio gives the cap.
    jcap_.assign(g.points(), kInf);
    for (std::size_t i = 0; i < g.points(); ++i) {
      double ratio = kInf;
      for (std::size_t a = 0; a < m_; ++a) {
        const double d = std::abs(g_.d3[i * m_ + a]);
        if (lim_[a].jerk < kInf && d > 0.0) ratio = std::min(ratio, lim_[a].jerk / d);
      }
      if (ratio < kInf) jcap_[i] = std::cbrt(ratio * ratio);
    }
  }

  // Squared-speed cap at grid point i under slow-down kappa_i (velocity, acceleration where
  // dq/du = 0, jerk at constant speed); `big_` where nothing limits it; 0 at both ends (rest).
  double cap_at(std::size_t i, double kappa) const {
    const std::size_t n = g_.points();
    if (i == 0 || i + 1 == n) return 0.0;
    const double k2 = kappa * kappa;
    double cap = kInf;
    for (std::size_t a = 0; a < m_; ++a) {
      const double b = std::abs(g_.d1[i * m_ + a]), c = std::abs(g_.d2[i * m_ + a]);
      if (lim_[a].vel < kInf && b > 0.0) cap = std::min(cap, (lim_[a].vel / b) * (lim_[a].vel / b) / k2);
      if (lim_[a].acc < kInf && b == 0.0 && c > 0.0) cap = std::min(cap, lim_[a].acc / c / k2);
    }
    cap = std::min(cap, jcap_[i] / k2);
    return cap < kInf ? cap : big_;
  }

  // x_i (squared path speed) at the grid points, x_0 = x_N = 0. The first call solves the whole
  // grid; a later call (kappa only ever grows) redoes the backward pass from the last changed point
  // down to where K no longer changes, and the forward pass from the first point whose inputs
  // changed up to where x no longer changes: the result is the same as a full solve.
  const std::vector<double>& solve(const std::vector<double>& kappa) {
    const std::size_t n = g_.points();
    if (K_.empty()) {
      double finite_max = 0.0;
      for (std::size_t i = 1; i + 1 < n; ++i) {
        big_ = kInf;
        const double c = cap_at(i, 1.0);
        if (c < kInf) finite_max = std::max(finite_max, c);
      }
      // A point where nothing limits the speed: far above every limited point.
      big_ = finite_max > 0.0 ? 1e12 * finite_max : 1e12;
      cap_.assign(n, 0.0);
      ascale_.assign(n, 1.0);
      for (std::size_t i = 0; i < n; ++i) {
        cap_[i] = cap_at(i, kappa[i]);
        ascale_[i] = 1.0 / (kappa[i] * kappa[i]);
      }
      kappa_ = kappa;
      // Backward pass: upper ends of the controllable sets K_i (their lower ends are 0: resting
      // at a grid point can always be continued by resting).
      K_.assign(n, 0.0);
      for (std::size_t i = n - 1; i-- > 0;) K_[i] = max_controllable(i, K_[i + 1]);
      // Forward pass: greedy, the largest w that keeps x_{i+1} controllable.
      x_.assign(n, 0.0);
      for (std::size_t i = 0; i + 1 < n; ++i) x_[i + 1] = forward(i, x_[i]);
      return x_;
    }
    std::size_t lo_c = n, hi_c = 0;
    for (std::size_t i = 0; i < n; ++i)
      if (kappa[i] != kappa_[i]) {
        cap_[i] = cap_at(i, kappa[i]);
        ascale_[i] = 1.0 / (kappa[i] * kappa[i]);
        lo_c = std::min(lo_c, i);
        hi_c = std::max(hi_c, i);
      }
    kappa_ = kappa;
    if (lo_c == n) return x_;
    std::size_t klo = n, khi = 0;
    for (std::size_t i = std::min(hi_c, n - 2) + 1; i-- > 0;) {
      const double k = max_controllable(i, K_[i + 1]);
      if (k != K_[i]) {
        K_[i] = k;
        klo = i;
        khi = std::max(khi, i);
      } else if (i < lo_c) {
        break;  // K_i and everything it feeds below are as before
      }
    }
    const std::size_t first = std::min(lo_c, klo == n ? n : (klo > 0 ? klo - 1 : 0));
    const std::size_t last = std::max(hi_c, khi);
    for (std::size_t i = first; i + 1 < n; ++i) {
      const double xn = forward(i, x_[i]);
      const bool same = xn == x_[i + 1];
      x_[i + 1] = xn;
      if (same && i + 1 > last) break;
    }
    return x_;
  }

 private:
  double forward(std::size_t i, double x) const {
    const double h2 = 2.0 * (g_.u[i + 1] - g_.u[i]);
    double lo, hi, slo, shi;
    bounds(i, x, K_[i + 1], lo, slo, hi, shi);
    const double w = std::max(std::min(hi, (K_[i + 1] - x) / h2), lo);
    return std::clamp(x + h2 * w, 0.0, K_[i + 1]);
  }

  // Bounds on w at grid point i for speed^2 x: w in [lo, hi], with the slopes d lo/dx, d hi/dx of
  // the active lines (reachability of [0, knext] at i+1 included).
  void bounds(std::size_t i, double x, double knext, double& lo, double& slo, double& hi, double& shi) const {
    const double h2 = 2.0 * (g_.u[i + 1] - g_.u[i]);
    lo = -x / h2;
    slo = -1.0 / h2;
    hi = (knext - x) / h2;
    shi = -1.0 / h2;
    const double* rr = &r_[i * m_];
    const double* ss = &s_[i * m_];
    const double as = ascale_[i];
    for (std::size_t a = 0; a < m_; ++a) {
      if (!(rr[a] > 0.0)) continue;
      const double r = rr[a] * as, s = ss[a];
      const double l = -r + s * x, h = r + s * x;
      if (l > lo) { lo = l; slo = s; }
      if (h < hi) { hi = h; shi = s; }
    }
  }

  // Largest x in [0, cap_i] with some w feasible at i (g(x) = lo(x) - hi(x) <= 0; g is convex and
  // piecewise linear, g(0) <= 0): Newton steps from the right, which cannot overshoot the root of
  // a convex function, guarded by bisection.
  double max_controllable(std::size_t i, double knext) const {
    double xr = cap_[i];
    if (xr <= 0.0) return 0.0;
    double lo, slo, hi, shi;
    auto infeasible = [&](double x) {
      bounds(i, x, knext, lo, slo, hi, shi);
      return lo - hi > 1e-13 * (std::abs(lo) + std::abs(hi));
    };
    if (!infeasible(xr)) return xr;
    double xl = 0.0, x = xr;
    for (int it = 0; it < 200 && xr - xl > 1e-15 * xr; ++it) {
      const double slope = slo - shi, gx = lo - hi;
      double xn = slope > 0.0 ? x - gx / slope : 0.5 * (xl + xr);
      const bool newton = xn > xl && xn < xr;
      if (!newton) xn = 0.5 * (xl + xr);
      if (infeasible(xn)) {
        xr = x = xn;
      } else {
        if (newton) return xn;  // a Newton step from the right lands at or above the root
        xl = xn;
        x = xr;
        (void)infeasible(x);  // restore the active lines at the right end
      }
    }
    return xl;
  }

  const Grid& g_;
  const std::vector<AxisLim>& lim_;
  std::size_t m_;
  std::vector<double> cap_, ascale_, jcap_, r_, s_, K_, x_, kappa_;
  double big_ = kInf;
};

// The TOPP-RA law from the squared speeds x at the grid points, written into `b` (whose vectors
// are reused from round to round).
void base_law(const Grid& g, const std::vector<double>& x, detail::BaseLaw* b) {
  const std::size_t n = g.points();
  b->t.resize(n);
  b->u.resize(n);
  b->v.resize(n);
  b->w.resize(n - 1);
  b->t[0] = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    b->u[i] = g.u[i] - g.u[0];
    b->v[i] = std::sqrt(std::max(0.0, x[i]));
  }
  for (std::size_t i = 0; i + 1 < n; ++i) {
    const double du = b->u[i + 1] - b->u[i], vs = b->v[i] + b->v[i + 1];
    if (!(vs > 0.0)) throw Error("fastest plan: the limits allow no motion along the path");
    const double dt = 2.0 * du / vs;
    b->t[i + 1] = b->t[i] + dt;
    b->w[i] = (b->v[i + 1] - b->v[i]) / dt;
  }
  b->finish();
}

// The smoothing window: the largest jump of an axis's acceleration in the base law divided by that
// axis's jerk limit, and at least `floor` (the first round takes 1e-3 of the segment's base
// duration, so the law is C2 without jerk limits too; later rounds the window so far).
double window(const Grid& g, const detail::BaseLaw& b, const std::vector<AxisLim>& lim, double floor) {
  const std::size_t n = g.points(), m = lim.size();
  double tau = floor;
  for (std::size_t i = 0; i < n; ++i) {
    const double wl = i == 0 ? 0.0 : b.w[i - 1], wr = i + 1 == n ? 0.0 : b.w[i];
    const double dw = std::abs(wr - wl);
    for (std::size_t a = 0; a < m; ++a)
      if (lim[a].jerk < kInf) tau = std::max(tau, std::abs(g.d1[i * m + a]) * dw / lim[a].jerk);
  }
  return tau;
}

// The breaks of a smoothed segment in local time: t_i and t_i + tau, merged (tags 2i and 2i + 1),
// each tagged with where it comes from; consecutive breaks bound the intervals that are verified.
void break_times(const detail::BaseLaw& b, double tau, std::vector<double>& br, std::vector<std::uint32_t>& bt) {
  const std::size_t n = b.t.size();
  br.clear();
  bt.clear();
  std::size_t i = 0, j = 0;
  while (i < n || j < n) {
    double x;
    std::uint32_t tag;
    if (j >= n || (i < n && b.t[i] <= b.t[j] + tau)) {
      tag = std::uint32_t(2 * i);
      x = b.t[i++];
    } else {
      tag = std::uint32_t(2 * j + 1);
      x = b.t[j++] + tau;
    }
    if (br.empty() || x > br.back()) {
      br.push_back(x);
      bt.push_back(tag);
    }
  }
}

struct SegmentPlan {
  std::shared_ptr<detail::SmoothPart> part;
  std::vector<Binding> binding;  // local unstretched times
  std::size_t grid_points = 0;
  int repairs = 0;
};

SegmentPlan plan_segment(const Path& path, double ua, double ub, const std::vector<double>& all_breaks,
                         const std::vector<AxisLim>& lim, const Eigen::VectorXd& norm, const FastestOptions& o) {
  const std::size_t m = lim.size();
  const Grid g = make_grid(path, ua, ub, all_breaks, norm, o);
  const std::size_t n = g.points();
  Topp topp(g, lim);
  // next_brk[i]: the first path break after grid point i (n - 1 when none is left).
  std::vector<std::size_t> next_brk(n, n - 1);
  for (std::size_t i = n - 1; i-- > 0;) next_brk[i] = (i + 1 + 1 < n && g.brk[i + 1]) ? i + 1 : next_brk[i + 1];
  std::vector<double> kappa(n, 1.0);
  auto part = std::make_shared<detail::SmoothPart>();
  part->ua = ua;
  part->ub = ub;
  double tau = 0.0;
  std::vector<double> ilim(3 * m, 0.0);  // 1 / limit, 0 where there is none
  for (std::size_t a = 0; a < m; ++a) {
    ilim[a * 3] = lim[a].vel < kInf ? 1.0 / lim[a].vel : 0.0;
    ilim[a * 3 + 1] = lim[a].acc < kInf ? 1.0 / lim[a].acc : 0.0;
    ilim[a * 3 + 2] = lim[a].jerk < kInf ? 1.0 / lim[a].jerk : 0.0;
  }
  // Per sample tag: bit 3a+q set when quantity q of axis a is near enough to its limit to bind
  // (ratio >= near_q[q]); kept across rounds, updated for the samples a round re-verifies.
  const std::size_t words = (3 * m + 63) / 64;
  std::vector<std::uint64_t> bind(2 * n * words, 0);
  double near_q[3];
  std::vector<double> ts;
  double kmax = 1.0;
  int repairs = 0;
  // Rounds of TOPP-RA and verification at the breaks of the smoothed law and the midpoints between
  // them, slowing TOPP-RA down where a sample exceeds a limit; then one more full verification of
  // the last law for the stretch and the binding intervals.
  //
  // A repair round re-verifies only the samples whose window touches a grid interval whose speeds
  // changed, or that exceeded a limit in the round before: every other sample sees the same base
  // law in its window (shifted in time) and so gives the same values as before.
  std::shared_ptr<detail::BaseLaw> current, spare;
  bool dense = false, tau_changed = false;
  std::vector<double> x_prev;
  std::vector<std::size_t> changed_before(n, 0);  // changed intervals among [0, i)
  std::vector<char> viol_prev, viol_now;
  std::vector<std::uint32_t> tags;
  std::vector<double> need(n);
  struct Slow {
    std::size_t i0, i1;
    double f;
  };
  std::vector<Slow> slow;
  std::vector<std::size_t> dq;
  for (int iter = 0;; ++iter) {
    if (!dense) {
      std::vector<double> x = topp.solve(kappa);  // a copy: x_prev keeps the previous round's
      // The law of this round into the spare one (the last round's law stays until replaced).
      if (!spare || spare.use_count() != 1) spare = std::make_shared<detail::BaseLaw>();
      base_law(g, x, spare.get());
      std::swap(spare, current);
      part->base = current;
      // The window follows the largest acceleration jump of the base law, which repairs can
      // make larger; a wider window changes every interval, so that round verifies them all.
      const double tau_new = window(g, *part->base, lim, iter == 0 ? 1e-3 * part->base->t.back() : tau);
      tau_changed = tau_new != tau;
      tau = tau_new;
      part->tau = tau;
      part->k = 1.0;
      if (!x_prev.empty()) {
        std::size_t c = 0;
        for (std::size_t i = 0; i + 1 < n; ++i) {
          changed_before[i] = c;
          if (x[i] != x_prev[i] || x[i + 1] != x_prev[i + 1]) ++c;
        }
        changed_before[n - 1] = c;
      }
      x_prev = std::move(x);
    }
    const bool partial = !dense && iter > 0 && !tau_changed;
    viol_now.assign(2 * n, 0);
    // Verify the smoothed law exactly, interval by interval, in one sweep: between consecutive
    // breaks of the smoothed law (t_i and t_i + tau) and the times the path's breaks are passed,
    // u is a cubic in time and each axis a cubic in u, so q_a(t) is a polynomial of degree 9 whose
    // derivatives are bounded from above by their Bernstein coefficients; where a bound comes
    // near a limit, the largest value is found exactly (ends and roots of the next derivative).
    // Cursors: the base intervals at s and s - tau, and the grid interval of u. The path's
    // derivatives come from its Taylor expansion at the grid point below u, exact for a
    // piecewise-cubic path, whose breaks are all grid points.
    break_times(*part->base, tau, ts, tags);
    {
      const double near_limit = o.binding_fraction / kSafety;
      const double kp = dense ? kmax : 1.0;
      near_q[0] = near_limit * kp;
      near_q[1] = near_limit * kp * kp;
      near_q[2] = near_limit * kp * kp * kp;
    }
    need.assign(n, 1.0);
    slow.clear();
    const detail::BaseLaw& bl = *part->base;
    const double T0 = bl.t.back(), L = bl.u.back();
    // One share of the intervals [k_begin, k_end): its own cursors (they start at the beginning
    // and walk forward), repairs and largest ratio. The binding bits and violation flags it
    // writes belong to its own intervals (one tag each), so two shares can run at once.
    struct Share {
      double kmax = 1.0;
      std::vector<Slow> slow;
    };
    auto verify_share = [&](std::size_t k_begin, std::size_t k_end, Share& sh) {
      std::size_t ih = 0, il = 0, ig = 0;
      auto advance = [&](double at, std::size_t& i) {
        while (i + 2 < n && bl.t[i + 1] <= at) ++i;
      };
      // Base law at `at` (right-hand values) with interval cursor i: u_0, u_0', u_0'' and the area
      // under u_0 up to `at` (extended precision: u is a difference of two areas).
      auto base_at = [&](double at, std::size_t& i, double* o3) -> long double {
        if (at < 0.0) {
          o3[0] = o3[1] = o3[2] = 0.0;
          return 0.0L;
        }
        if (at >= T0) {
          o3[0] = L;
          o3[1] = o3[2] = 0.0;
          return bl.area[n - 1] + (long double)L * (at - T0);
        }
        advance(at, i);
        const double y = at - bl.t[i];
        o3[0] = bl.u[i] + y * (bl.v[i] + 0.5 * bl.w[i] * y);
        o3[1] = bl.v[i] + bl.w[i] * y;
        o3[2] = bl.w[i];
        const long double ly = y;
        return bl.area[i] + ly * (bl.u[i] + ly * (bl.v[i] * 0.5L + ly * bl.w[i] * (1.0L / 6.0L)));
      };
      const double itau = 1.0 / tau;
      const long double itau_l = 1.0L / (long double)tau;
      std::uint64_t* bits = nullptr;
      double rv = 0.0, ra = 0.0, rj = 0.0;  // exact largest ratios of the current interval
      // One piece of the move: sigma in [0, 1] over time H, u(sigma) = ug + X[0..3] (X[0] >= 0 the
      // offset from grid point ig). Updates rv, ra, rj and the binding bits.
      auto verify_piece = [&](const double* X, double H) {
        const double iH = 1.0 / H;
        // Ranges over the piece, for a first screen by interval arithmetic (certified, cheap):
        // x = u - u_g in [X0, X(1)] (u nondecreasing), |du/dt| <= U1 (a quadratic in sigma: its
        // ends and vertex), |d2u/dt2| <= U2 (linear: its ends), d3u/dt3 = U3 (constant).
        const double xm = std::max(std::abs(X[0]), std::abs(X[0] + X[1] + X[2] + X[3]));
        double U1 = std::max(std::abs(X[1]), std::abs(X[1] + 2.0 * X[2] + 3.0 * X[3]));
        if (X[3] != 0.0) {
          const double sv = -X[2] / (3.0 * X[3]);
          if (sv > 0.0 && sv < 1.0) U1 = std::max(U1, std::abs(X[1] + sv * (2.0 * X[2] + 3.0 * sv * X[3])));
        }
        U1 *= iH;
        const double U2 = std::max(std::abs(2.0 * X[2]), std::abs(2.0 * X[2] + 6.0 * X[3])) * iH * iH;
        const double U3 = std::abs(6.0 * X[3]) * iH * iH * iH;
        bool powers = false;
        double x2[7] = {}, x3[10] = {};
        const double* p1 = &g.d1[ig * m];
        const double* p2 = &g.d2[ig * m];
        const double* p3 = &g.d3[ig * m];
        for (std::size_t a = 0; a < m; ++a) {
          // |q_u| <= Q1, |q_uu| <= Q2, |q_uuu| = Q3 over the piece (Taylor at the grid point, exact).
          const double Q3 = std::abs(p3[a]), Q2 = std::abs(p2[a]) + Q3 * xm, Q1 = std::abs(p1[a]) + xm * (std::abs(p2[a]) + 0.5 * Q3 * xm);
          const double screen[3] = {Q1 * U1 * ilim[a * 3], (Q2 * U1 * U1 + Q1 * U2) * ilim[a * 3 + 1],
                                    (Q3 * U1 * U1 * U1 + 3.0 * Q2 * U1 * U2 + Q1 * U3) * ilim[a * 3 + 2]};
          // Which quantities the screen leaves open (branch-free: these tests are hard to predict).
          const unsigned open = unsigned(!(screen[0] < near_q[0] && screen[0] <= 1.0)) |
                                unsigned(!(screen[1] < near_q[1] && screen[1] <= 1.0)) << 1 |
                                unsigned(!(screen[2] < near_q[2] && screen[2] <= 1.0)) << 2;
          if (open == 0) continue;
          if (!powers) {
            for (int i = 0; i <= 3; ++i)
              for (int j = 0; j <= 3; ++j) x2[i + j] += X[i] * X[j];
            for (int i = 0; i <= 6; ++i)
              for (int j = 0; j <= 3; ++j) x3[i + j] += x2[i] * X[j];
            powers = true;
          }
          // q_a(sigma) - q_a(0) = d1 x + d2 x^2 / 2 + d3 x^3 / 6 with x = X(sigma) (Taylor, exact).
          const double c1 = p1[a], c2 = 0.5 * p2[a], c3 = p3[a] / 6.0;
          double P[10];
          for (int j = 1; j <= 9; ++j) P[j] = c1 * (j <= 3 ? X[j] : 0.0) + c2 * (j <= 6 ? x2[j] : 0.0) + c3 * x3[j];
          double D[3][9];  // velocity (degree 8), acceleration (7), jerk (6) in sigma, per unit time
          for (int j = 0; j <= 8; ++j) D[0][j] = double(j + 1) * P[j + 1] * iH;
          for (int j = 0; j <= 7; ++j) D[1][j] = double(j + 1) * D[0][j + 1] * iH;
          for (int j = 0; j <= 6; ++j) D[2][j] = double(j + 1) * D[1][j + 1] * iH;
          for (int q = 0; q < 3; ++q) {
            const double il_q = ilim[a * 3 + std::size_t(q)];
            if (!(il_q > 0.0) || !((open >> q) & 1u)) continue;
            const int deg = 8 - q;
            const double* c = D[q];
            // Tighter bounds in turn: sigma^j in [0, 1], so c0 + (sum of the negative c_j) <= p <=
            // c0 + (sum of the positive c_j); then the Bernstein coefficients (convex hull).
            double pos = 0.0, neg = 0.0;
            for (int j = 1; j <= deg; ++j) (c[j] > 0.0 ? pos : neg) += c[j];
            const double quick = std::min(screen[q], std::max(c[0] + pos, -(c[0] + neg)) * il_q);
            if (quick < near_q[q] && quick <= 1.0) continue;
            const double bound = std::min(quick, detail::bernstein_max_abs(c, deg) * il_q);
            if (bound < near_q[q] && bound <= 1.0) continue;
            const double e1 = c[0] + pos + neg;
            double r = std::max(std::abs(c[0]), std::abs(e1)) * il_q;  // the ends: values it takes
            if (r < near_q[q] || bound > 1.0) {
              const auto [lo, hi] = detail::poly_range(c, deg, 0.0, 1.0);
              r = std::max(std::abs(hi), std::abs(lo)) * il_q;
            }
            if (r >= near_q[q]) bits[(a * 3 + std::size_t(q)) / 64] |= std::uint64_t(1) << ((a * 3 + std::size_t(q)) % 64);
            double& rq = q == 0 ? rv : q == 1 ? ra : rj;
            rq = std::max(rq, r);
          }
        }
      };
      for (std::size_t k = k_begin; k < k_end; ++k) {
        const double s = ts[k], H = ts[k + 1] - s;
        if (partial) {
          advance(s, ih);
          advance(s - tau, il);
          const std::size_t i0 = (s - tau > 0.0) ? il : 0, i1 = std::min(ih + 1, n - 1);
          if (changed_before[i1] == changed_before[i0] && !viol_prev[tags[k]]) continue;
        }
        if (!(H > 0.0)) continue;
        double hi[3], lo[3];
        const long double ahi = base_at(s, ih, hi), alo = base_at(s - tau, il, lo);
        // u(s + y) = u + u1 y + u2 y^2 / 2 + u3 y^3 / 6 on the interval (u3: the base acceleration
        // entering minus leaving the window, constant here).
        const double uu = std::min(L, double((ahi - alo) * itau_l));
        const double u1 = (hi[0] - lo[0]) * itau, u2 = (hi[1] - lo[1]) * itau, u3 = (hi[2] - lo[2]) * itau;
        const double ur = uu + g.u[0];
        while (ig + 2 < n && g.u[ig + 1] <= ur) ++ig;
        bits = &bind[std::size_t(tags[k]) * words];
        std::fill(bits, bits + words, 0);
        rv = ra = rj = 0.0;
        // The cubic in sigma over the whole interval, u relative to the grid point below.
        double U[4] = {ur, u1 * H, 0.5 * u2 * H * H, u3 * H * H * H / 6.0};
        double sg0 = 0.0;  // start of the current piece in sigma
        for (;;) {
          const double u_end = U[0] + U[1] + U[2] + U[3];
          // The next path break passed inside the interval, if any: the piece ends there.
          const std::size_t c = next_brk[ig];
          const bool split = c + 1 < n && g.u[c] < u_end && g.u[c] > U[0];
          double sg1 = 1.0;
          if (split) {
            // u(sigma) = g.u[c]: u is nondecreasing; safeguarded Newton on [sg0, 1].
            double a0 = sg0, b0 = 1.0, x = sg0 + (1.0 - sg0) * (g.u[c] - U[0]) / (u_end - U[0]);
            for (int it = 0; it < 100; ++it) {
              const double f = U[0] + x * (U[1] + x * (U[2] + x * U[3])) - g.u[c];
              const double df = U[1] + x * (2.0 * U[2] + 3.0 * x * U[3]);
              if (f == 0.0) break;
              if (f < 0.0) a0 = x;
              else b0 = x;
              double xn = df > 0.0 ? x - f / df : 0.5 * (a0 + b0);
              if (!(xn > a0 && xn < b0)) xn = 0.5 * (a0 + b0);
              if (xn == x || b0 - a0 <= 4e-16) break;
              x = xn;
            }
            sg1 = std::clamp(x, sg0, 1.0);
          }
          // This piece, [sg0, sg1], re-expressed in its own sigma' in [0, 1]: u = U(sg0 + w sigma').
          const double w = sg1 - sg0;
          if (w > 0.0) {
            const double e0 = U[0] + sg0 * (U[1] + sg0 * (U[2] + sg0 * U[3]));
            const double d1 = U[1] + sg0 * (2.0 * U[2] + 3.0 * sg0 * U[3]);
            const double d2 = U[2] + 3.0 * sg0 * U[3];
            const double X[4] = {e0 - g.u[ig], d1 * w, d2 * w * w, U[3] * w * w * w};
            verify_piece(X, H * w);
          }
          if (!split) break;
          sg0 = sg1;
          ig = c;
        }
        const double kneed = std::max({1.0, rv, std::sqrt(std::max(ra, rj))});
        double& km = sh.kmax;
        if (rv > km || ra > km * km || rj > km * km * km) km = std::max({km, rv, std::sqrt(ra), std::cbrt(rj)});
        if (kneed > 1.0) {
          if (!dense) viol_now[tags[k]] = 1;
          // The base law inside the window [s - tau, s + H] made this interval: slow it down there.
          sh.slow.push_back({(s - tau > 0.0) ? il : 0, std::min(ih + 1, n - 1), kneed * 1.001});
        }
      }
    };
    // A full round on a long segment: two shares on two threads (the same results: the shares'
    // repairs are concatenated in interval order and their largest ratios merged).
    const std::size_t nk = ts.size() - 1;
    Share first, second;
    std::thread worker;
    std::exception_ptr err;
    if (nk >= 8192 && std::thread::hardware_concurrency() > 1) {
      try {
        worker = std::thread([&] {
          try {
            verify_share(nk / 2, nk, second);
          } catch (...) {
            err = std::current_exception();
          }
        });
      } catch (const std::system_error&) {
        // No thread to be had (a limit of the process): one share does it all.
      }
    }
    if (worker.joinable()) {
      verify_share(0, nk / 2, first);
      worker.join();
      if (err) std::rethrow_exception(err);
    } else {
      verify_share(0, nk, first);
    }
    kmax = std::max(first.kmax, second.kmax);
    slow = std::move(first.slow);
    slow.insert(slow.end(), second.slow.begin(), second.slow.end());
    // need[i] = the largest factor of the windows that cover grid point i. Both ends of the
    // windows increase with the sample, so a sliding maximum (monotone deque) does it in O(n).
    {
      std::size_t next = 0, head = 0;
      dq.clear();  // indices into slow, factors decreasing
      for (std::size_t i = 0; i < n; ++i) {
        while (next < slow.size() && slow[next].i0 <= i) {
          while (dq.size() > head && slow[dq.back()].f <= slow[next].f) dq.pop_back();
          if (dq.size() < head) head = dq.size();
          dq.push_back(next++);
        }
        while (dq.size() > head && slow[dq[head]].i1 < i) ++head;
        if (dq.size() > head) need[i] = slow[dq[head]].f;
      }
    }
    if (dense) break;
    viol_prev.swap(viol_now);
    if (kmax <= 1.0 || iter >= o.repair_iterations) {
      repairs = iter;
      // The bits are those of this law; a stretch under 0.1% changes the ratios by less than
      // 0.3%, which the binding threshold may ignore. A larger stretch: one more full pass for
      // the bits at the stretched limits.
      if (kmax <= 1.001) break;
      dense = true;
      continue;
    }
    for (std::size_t i = 0; i < n; ++i) kappa[i] *= need[i];
  }
  part->k = kmax;
  part->t0 = 0.0;
  part->t1 = kmax * (part->base->t.back() + tau);
  SegmentPlan sp;
  sp.part = part;
  sp.grid_points = n;
  sp.repairs = repairs;
  // Binding intervals: runs of consecutive intervals where a quantity reaches binding_fraction of
  // its limit.
  for (std::size_t a = 0; a < m; ++a)
    for (std::size_t q = 0; q < 3; ++q) {
      const Quantity qq = q == 0 ? Quantity::kVel : q == 1 ? Quantity::kAcc : Quantity::kJerk;
      const std::size_t bit = a * 3 + q;
      bool open = false;
      Binding cur;
      for (std::size_t k = 0; k + 1 < ts.size(); ++k) {
        const bool on = (bind[std::size_t(tags[k]) * words + bit / 64] >> (bit % 64)) & 1u;
        if (on && !open) {
          cur = {Index(a), qq, ts[k] * kmax, ts[k + 1] * kmax};
          open = true;
        } else if (on) {
          cur.t_end = ts[k + 1] * kmax;
        } else if (open) {
          sp.binding.push_back(cur);
          open = false;
        }
      }
      if (open) sp.binding.push_back(cur);
    }
  return sp;
}

}  // namespace

FastestResult plan_fastest(const Path& path, const std::vector<AxisLimits>& limits, const std::vector<double>& holds_s,
                           const FastestOptions& o) {
  o.validate();
  const std::size_t m = std::size_t(path.axes());
  if (limits.size() != m) throw Error("fastest plan: one set of limits per axis is needed");
  const std::vector<double> st = path.stops();
  if (holds_s.size() != st.size()) throw Error("fastest plan: one hold per path stop is needed");
  std::vector<AxisLim> lim(m);
  Eigen::VectorXd norm(static_cast<Index>(m));
  bool any = false;
  for (std::size_t a = 0; a < m; ++a) {
    const double f = o.scale * kSafety;
    if (limits[a].vel) lim[a].vel = f * *limits[a].vel;
    if (limits[a].acc) lim[a].acc = f * *limits[a].acc;
    if (limits[a].jerk) lim[a].jerk = f * *limits[a].jerk;
    any = any || limits[a].vel || limits[a].acc;
    norm[Index(a)] = limits[a].vel ? 1.0 / *limits[a].vel : 1.0;
  }
  if (!any) throw Error("timing: mode fastest needs a 'vel' or 'acc' limit on at least one axis");
  const std::vector<double> br = path.breaks();
  FastestResult res;
  std::vector<std::shared_ptr<const detail::TimeLawPart>> parts;
  double t = 0.0;
  for (std::size_t k = 0; k < st.size(); ++k) {
    if (holds_s[k] > 0.0) {
      parts.push_back(detail::make_hold(t, t + holds_s[k], st[k]));
      t = parts.back()->t1;
    }
    if (k + 1 == st.size()) break;
    SegmentPlan sp = plan_segment(path, st[k], st[k + 1], br, lim, norm, o);
    const double T = sp.part->t1;
    sp.part->t0 = t;
    sp.part->t1 = t + T;
    for (auto b : sp.binding) {
      b.t_start += t;
      b.t_end += t;
      res.binding.push_back(b);
    }
    res.grid_points += sp.grid_points;
    res.repairs += sp.repairs;
    res.window_s = std::max(res.window_s, sp.part->tau);
    res.stretch = std::max(res.stretch, sp.part->k);
    t = sp.part->t1;
    parts.push_back(sp.part);
  }
  std::sort(res.binding.begin(), res.binding.end(), [](const Binding& x, const Binding& y) {
    if (x.t_start != y.t_start) return x.t_start < y.t_start;
    if (x.axis != y.axis) return x.axis < y.axis;
    return int(x.quantity) < int(y.quantity);
  });
  res.law = std::make_shared<TimeLaw>(std::move(parts));
  return res;
}

}  // namespace c2path
