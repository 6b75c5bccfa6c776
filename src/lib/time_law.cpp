// Time laws u(t): holds, the quintic rest-to-rest profile (duration mode) and the smoothed TOPP-RA
// law (fastest mode), the trajectory q(u(t)), and the two planners.

#include "c2path/time_law.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <string>

#include "c2path/error.hpp"
#include "detail/poly.hpp"
#include "detail/time_law_part.hpp"

namespace c2path {

namespace detail {

namespace {

struct HoldPart final : TimeLawPart {
  void eval_local(double, double* out) const override {
    out[0] = ua;
    out[1] = out[2] = out[3] = 0.0;
  }
  [[nodiscard]] bool moving() const override { return false; }
  int poly_on(double, double, double* c) const override {
    c[0] = ua;
    return 0;
  }
};

// u = ua + L p(s), s = (t - t0) / T, p(s) = 10 s^3 - 15 s^4 + 6 s^5.
struct QuinticPart final : TimeLawPart {
  void eval_local(double t, double* out) const override {
    const double T = t1 - t0, L = ub - ua;
    const double s = std::clamp((t - t0) / T, 0.0, 1.0);
    const double s2 = s * s;
    out[0] = ua + L * s2 * s * (10.0 + s * (-15.0 + 6.0 * s));
    out[1] = L / T * 30.0 * s2 * (1.0 + s * (-2.0 + s));
    out[2] = L / (T * T) * 60.0 * s * (1.0 + s * (-3.0 + 2.0 * s));
    out[3] = L / (T * T * T) * 60.0 * (1.0 + s * (-6.0 + 6.0 * s));
  }
  // Taylor coefficients of p at s_a times delta^k: p^(k)(s_a) / k! delta^k.
  int poly_on(double ta, double tb, double* c) const override {
    const double T = t1 - t0, L = ub - ua;
    const double s = std::clamp((ta - t0) / T, 0.0, 1.0), d = (tb - ta) / T;
    const double s2 = s * s;
    c[0] = ua + L * s2 * s * (10.0 + s * (-15.0 + 6.0 * s));
    c[1] = L * d * s2 * (30.0 + s * (-60.0 + 30.0 * s));
    c[2] = L * d * d * s * (30.0 + s * (-90.0 + 60.0 * s));
    c[3] = L * d * d * d * (10.0 + s * (-60.0 + 60.0 * s));
    c[4] = L * d * d * d * d * (-15.0 + 30.0 * s);
    c[5] = L * d * d * d * d * d * 6.0;
    return 5;
  }
};

}  // namespace

void BaseLaw::finish() {
  const std::size_t n = t.size() - 1;
  area.assign(n + 1, 0.0L);
  for (std::size_t i = 0; i < n; ++i) {
    const long double h = t[i + 1] - t[i];
    area[i + 1] = area[i] + h * (u[i] + h * (v[i] / 2.0L + h * w[i] / 6.0L));
  }
}

long double BaseLaw::eval(double s, double* out) const {
  const std::size_t n = t.size() - 1;
  if (!(s > 0.0)) {
    out[0] = out[1] = out[2] = 0.0;
    return 0.0L;
  }
  if (s >= t[n]) {
    out[0] = u[n];
    out[1] = out[2] = 0.0;
    return area[n] + (long double)(u[n]) * (s - t[n]);
  }
  const std::size_t i = std::size_t(std::upper_bound(t.begin(), t.end(), s) - t.begin()) - 1;
  const double x = s - t[i];
  out[0] = u[i] + x * (v[i] + 0.5 * w[i] * x);
  out[1] = v[i] + w[i] * x;
  out[2] = w[i];
  const long double lx = x;
  return area[i] + lx * (u[i] + lx * (v[i] / 2.0L + lx * w[i] / 6.0L));
}

void SmoothPart::eval_local(double t, double* out) const {
  if (t >= t1) {
    out[0] = ub;
    out[1] = out[2] = out[3] = 0.0;
    return;
  }
  const double s = std::max(0.0, (t - t0) / k);
  smoothed(s, out);
  const double ik = 1.0 / k;
  out[0] += ua;
  out[1] *= ik;
  out[2] *= ik * ik;
  out[3] *= ik * ik * ik;
}

void SmoothPart::smoothed(double s, double* out) const {
  const BaseLaw& b = *base;
  const double T0 = b.t.back();
  const double L = b.u.back();
  if (s - tau >= T0) {
    out[0] = L;
    out[1] = out[2] = out[3] = 0.0;
    return;
  }
  double hi[3], lo[3];
  const long double ahi = b.eval(s, hi), alo = b.eval(s - tau, lo);
  const double it = 1.0 / tau;
  out[0] = std::min(L, double((ahi - alo) / (long double)tau));
  out[1] = (hi[0] - lo[0]) * it;  // du/dt = (u_0(s) - u_0(s - tau)) / tau
  out[2] = (hi[1] - lo[1]) * it;  // d2u/dt2 = (u_0'(s) - u_0'(s - tau)) / tau
  out[3] = (hi[2] - lo[2]) * it;  // d3u/dt3: the base acceleration entering and leaving the window
}

int SmoothPart::poly_on(double ta, double tb, double* c) const {
  // Between two breaks u is a cubic in local time: its Taylor expansion at the midpoint (where
  // no side of a break is involved), moved to the start of the interval.
  const double sa = (ta - t0) / k, sb = (tb - t0) / k, H = sb - sa;
  double m[4];
  smoothed(0.5 * (sa + sb), m);
  const double y = -0.5 * H;
  const double d0 = m[0] + y * (m[1] + y * (0.5 * m[2] + y * m[3] / 6.0));
  const double d1 = m[1] + y * (m[2] + 0.5 * y * m[3]);
  const double d2 = m[2] + y * m[3];
  c[0] = ua + d0;
  c[1] = d1 * H;
  c[2] = 0.5 * d2 * H * H;
  c[3] = m[3] * H * H * H / 6.0;
  return 3;
}

void SmoothPart::inner_breaks(std::vector<double>& out) const {
  const BaseLaw& b = *base;
  const std::size_t n = b.t.size();
  std::size_t i = 0, j = 0;
  double last = t0;
  // Merge t_i and t_i + tau (both sorted).
  while (i < n || j < n) {
    double x;
    if (j >= n || (i < n && b.t[i] <= b.t[j] + tau)) x = b.t[i++];
    else x = b.t[j++] + tau;
    const double tt = t0 + k * x;
    if (tt > last && tt < t1) {
      out.push_back(tt);
      last = tt;
    }
  }
}

std::shared_ptr<TimeLawPart> make_hold(double t0, double t1, double u) {
  auto p = std::make_shared<HoldPart>();
  p->t0 = t0;
  p->t1 = t1;
  p->ua = p->ub = u;
  return p;
}

std::shared_ptr<TimeLawPart> make_quintic(double t0, double t1, double ua, double ub) {
  auto p = std::make_shared<QuinticPart>();
  p->t0 = t0;
  p->t1 = t1;
  p->ua = ua;
  p->ub = ub;
  return p;
}

}  // namespace detail

// ---- TimeLaw ---------------------------------------------------------------------------------

TimeLaw::TimeLaw(std::vector<std::shared_ptr<const detail::TimeLawPart>> parts) : parts_(std::move(parts)) {
  if (parts_.empty()) throw Error("a time law needs at least one part");
  for (std::size_t k = 0; k < parts_.size(); ++k) {
    const auto& p = *parts_[k];
    if (!(p.t1 > p.t0) || !(p.ub >= p.ua)) throw Error("time law: a part must have a positive duration and not go back");
    if (k > 0 && (p.t0 != parts_[k - 1]->t1 || p.ua != parts_[k - 1]->ub))
      throw Error("time law: parts must be contiguous in time and parameter");
  }
}

double TimeLaw::t_begin() const { return parts_.front()->t0; }
double TimeLaw::t_end() const { return parts_.back()->t1; }
double TimeLaw::u_begin() const { return parts_.front()->ua; }
double TimeLaw::u_end() const { return parts_.back()->ub; }

std::size_t TimeLaw::part_of(double t) const {
  if (parts_.size() == 1) return 0;
  const auto it = std::upper_bound(parts_.begin(), parts_.end() - 1, t,
                                   [](double x, const auto& p) { return x < p->t1; });
  return std::size_t(it - parts_.begin());
}

void TimeLaw::eval(double t, double* out) const { (void)eval_side(t, out); }

bool TimeLaw::eval_side(double t, double* out) const {
  if (!(t > t_begin())) t = t_begin();
  if (t > t_end()) t = t_end();
  const auto& p = *parts_[part_of(t)];
  p.eval_local(t, out);
  return p.moving() && t >= p.t1;
}

std::vector<double> TimeLaw::breaks() const {
  std::vector<double> b;
  b.push_back(t_begin());
  for (const auto& p : parts_) {
    p->inner_breaks(b);
    b.push_back(p->t1);
  }
  return b;
}

std::vector<double> TimeLaw::part_times() const {
  std::vector<double> b;
  b.push_back(t_begin());
  for (const auto& p : parts_) b.push_back(p->t1);
  return b;
}

int TimeLaw::poly_on(double ta, double tb, double* c) const {
  return parts_[part_of(0.5 * (ta + tb))]->poly_on(ta, tb, c);
}

double TimeLaw::time_of(double u) const {
  for (const auto& pp : parts_) {
    const auto& p = *pp;
    if (u > p.ub) continue;
    if (u <= p.ua) return p.t0;
    if (u >= p.ub) return p.t1;  // the end of a moving part: exactly, not where u(t) rounds to it
    // Safeguarded Newton on the nondecreasing u(t), bracketed by [lo, hi].
    double lo = p.t0, hi = p.t1, out[4];
    double x = p.t0 + (p.t1 - p.t0) * (u - p.ua) / (p.ub - p.ua);
    for (int it = 0; it < 200; ++it) {
      p.eval_local(x, out);
      if (std::abs(out[0] - u) <= 2 * std::numeric_limits<double>::epsilon() * std::max(std::abs(u), 1.0)) return x;
      if (out[0] < u) lo = x;
      else hi = x;
      if (!(hi - lo > 4 * std::numeric_limits<double>::epsilon() * std::max(std::abs(hi), 1.0))) break;
      double xn = out[1] > 0.0 ? x - (out[0] - u) / out[1] : 0.5 * (lo + hi);
      if (!(xn > lo && xn < hi)) xn = 0.5 * (lo + hi);
      if (xn == x) break;
      x = xn;
    }
    return hi;
  }
  return t_end();
}

// ---- PathTrajectory --------------------------------------------------------------------------

PathTrajectory::PathTrajectory(std::shared_ptr<const Path> path, std::shared_ptr<const TimeLaw> law)
    : path_(std::move(path)), law_(std::move(law)) {
  if (!path_ || !law_) throw Error("a path trajectory needs a path and a time law");
  if (law_->u_begin() < path_->u_begin() || law_->u_end() > path_->u_end())
    throw Error("time law: its parameter range lies outside the path");
}

void PathTrajectory::eval_all(double t, Eigen::Ref<Eigen::MatrixXd> out) const {
  double s[4];
  const bool left = law_->eval_side(t, s);
  // At the end of a moving part the path's derivatives are those of the segment that ends there
  // (its position is the same on both sides).
  path_->eval_all(left ? std::nextafter(s[0], -std::numeric_limits<double>::infinity()) : s[0], out);
  if (left) {
    Eigen::VectorXd q(path_->axes());
    path_->eval(s[0], 0, q);
    out.col(0) = q;
  }
  for (Index a = 0; a < out.rows(); ++a) {
    const double d1 = out(a, 1), d2 = out(a, 2), d3 = out(a, 3);
    out(a, 1) = d1 * s[1];
    out(a, 2) = d2 * (s[1] * s[1]) + d1 * s[2];
    out(a, 3) = d3 * (s[1] * s[1] * s[1]) + d2 * (3.0 * s[1] * s[2]) + d1 * s[3];
  }
}

void PathTrajectory::eval(double t, int deriv, Eigen::Ref<Eigen::VectorXd> out) const {
  Eigen::MatrixXd all(path_->axes(), 4);
  eval_all(t, all);
  out = all.col(std::clamp(deriv, 0, 3));
  if (deriv > 3) out.setZero();
}

std::vector<double> PathTrajectory::breaks() const {
  std::vector<double> b = law_->breaks();
  const double u0 = law_->u_begin(), u1 = law_->u_end();
  for (double u : path_->breaks())
    if (u > u0 && u < u1) b.push_back(law_->time_of(u));
  std::sort(b.begin(), b.end());
  b.erase(std::unique(b.begin(), b.end()), b.end());
  return b;
}

bool PathTrajectory::poly_pieces(PolyPieces& out) const {
  if (!path_->piecewise_cubic()) return false;
  const std::vector<double> br = breaks();
  const std::size_t n = br.size() - 1;
  const Index m = path_->axes();
  std::vector<double> cu(n * 6, 0.0);
  std::vector<int> du(n);
  int dmax = 0;
  for (std::size_t k = 0; k < n; ++k) {
    du[k] = law_->poly_on(br[k], br[k + 1], &cu[k * 6]);
    if (du[k] < 0) return false;
    dmax = std::max(dmax, du[k]);
  }
  const int D = 3 * dmax, w = D + 1;
  out.degree = D;
  out.axes = m;
  out.t = br;
  out.c.assign(n * std::size_t(m) * std::size_t(w), 0.0);
  Eigen::VectorXd d0(m);
  Eigen::MatrixXd pd(m, 4);
  for (std::size_t k = 0; k < n; ++k) {
    double x[16] = {}, x2[16] = {}, x3[16] = {};
    const int dk = du[k];
    const double* c = &cu[k * 6];
    bool moving = false;
    for (int j = 1; j <= dk; ++j) moving = moving || c[j] != 0.0;
    double* row = out.c.data() + k * std::size_t(m) * std::size_t(w);
    if (!moving) {
      path_->eval(c[0], 0, d0);
      for (Index a = 0; a < m; ++a) row[std::size_t(a) * std::size_t(w)] = d0[a];
      continue;
    }
    // The path's cubic around u at the interval's middle, in x = u - u_mid; then x(sigma).
    const double um = detail::poly_eval(c, dk, 0.5);
    path_->eval_all(um, pd);
    for (int j = 0; j <= dk; ++j) x[j] = c[j];
    x[0] -= um;
    for (int i = 0; i <= dk; ++i)
      for (int j = 0; j <= dk; ++j) x2[i + j] += x[i] * x[j];
    for (int i = 0; i <= 2 * dk; ++i)
      for (int j = 0; j <= dk; ++j) x3[i + j] += x2[i] * x[j];
    for (Index a = 0; a < m; ++a) {
      double* p = row + std::size_t(a) * std::size_t(w);
      const double p1 = pd(a, 1), p2 = 0.5 * pd(a, 2), p3 = pd(a, 3) / 6.0;
      for (int j = 0; j <= 3 * dk; ++j) p[j] = p1 * x[j] + p2 * x2[j] + p3 * x3[j];
      p[0] += pd(a, 0);
    }
  }
  return true;
}

// ---- duration mode ---------------------------------------------------------------------------

std::shared_ptr<const TimeLaw> plan_duration(const Path& path, double duration_s, const std::vector<double>& holds_s) {
  const std::vector<double> st = path.stops();
  if (holds_s.size() != st.size()) throw Error("duration plan: one hold per path stop is needed");
  if (!(duration_s > 0.0) || !std::isfinite(duration_s)) throw Error("duration plan: the duration must be positive");
  double hold = 0.0;
  for (double h : holds_s) hold += h;
  const double moving = duration_s - hold;
  if (!(moving > 1e-9 * duration_s)) {
    char buf[160];
    std::snprintf(buf, sizeof buf, "timing: the holds take %.15g s of the %.15g s duration, leaving no time to move", hold,
                  duration_s);
    throw Error(std::string(buf) + "; make the duration longer than the holds");
  }
  const double total_u = st.back() - st.front();
  std::vector<std::shared_ptr<detail::TimeLawPart>> parts;
  double t = 0.0;
  for (std::size_t k = 0; k < st.size(); ++k) {
    if (holds_s[k] > 0.0) {
      parts.push_back(detail::make_hold(t, t + holds_s[k], st[k]));
      t = parts.back()->t1;
    }
    if (k + 1 < st.size()) {
      parts.push_back(detail::make_quintic(t, t + moving * (st[k + 1] - st[k]) / total_u, st[k], st[k + 1]));
      t = parts.back()->t1;
    }
  }
  // Rounding: the last part ends at the requested duration exactly, and the moving part before any
  // final hold ends where that hold begins.
  const double drift = duration_s - parts.back()->t1;
  std::size_t last_move = parts.size() - 1;
  while (!parts[last_move]->moving()) --last_move;
  parts[last_move]->t1 = last_move + 1 == parts.size() ? duration_s : parts[last_move]->t1 + drift;
  for (std::size_t j = last_move + 1; j < parts.size(); ++j) {
    parts[j]->t0 = parts[j - 1]->t1;
    parts[j]->t1 = j + 1 == parts.size() ? duration_s : parts[j]->t1 + drift;
  }
  return std::make_shared<TimeLaw>(std::vector<std::shared_ptr<const detail::TimeLawPart>>(parts.begin(), parts.end()));
}

}  // namespace c2path
