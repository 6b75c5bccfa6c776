#pragma once
// Private: the parts a TimeLaw is made of.

#include <memory>
#include <vector>

namespace c2path::detail {

/// One part of a time law on [t0, t1] [s], moving the parameter from ua to ub (ua == ub: a hold).
struct TimeLawPart {
  double t0 = 0, t1 = 0;
  double ua = 0, ub = 0;
  virtual ~TimeLawPart() = default;
  /// out[0..3] = u, du/dt, d2u/dt2, d3u/dt3 at absolute time t in [t0, t1].
  virtual void eval_local(double t, double* out) const = 0;
  /// Times strictly inside (t0, t1) where d3u/dt3 may jump, increasing, appended to out.
  virtual void inner_breaks(std::vector<double>& out) const { (void)out; }
  [[nodiscard]] virtual bool moving() const { return true; }
  /// u(ta + sigma (tb - ta)) = sum_k c[k] sigma^k, sigma in [0, 1], for [ta, tb] inside [t0, t1]
  /// between two inner breaks; returns the degree (<= 5; c has room for 6), -1 if not polynomial.
  virtual int poly_on(double ta, double tb, double* c) const {
    (void)ta, (void)tb, (void)c;
    return -1;
  }
};

/// The TOPP-RA law of one segment before smoothing, in local time s in [0, T0]: grid points
/// t_i (n+1), u_i - u_a, speed v_i = du/dt at t_i, constant d2u/dt2 w_i on [t_i, t_i+1] (n).
/// Rest before 0 (u = 0) and after T0 (u = L = u_n).
struct BaseLaw {
  std::vector<double> t, u, v, w;
  /// Integral of u_0 over [0, t_i], in extended precision: window integrals are differences of
  /// two of these, so their rounding stays far below that of u itself.
  std::vector<long double> area;
  /// Fills `area` (after t, u, v, w).
  void finish();
  /// out[0..2] = u_0, u_0', u_0'' at s (0 before the start; L, 0, 0 after the end); returns the
  /// integral of u_0 over [0, s].
  long double eval(double s, double* out) const;
};

/// The base law averaged over a trailing window of length tau and stretched by k >= 1:
/// u(t) = ua + (1/tau) * integral of u_0 over [s - tau, s], s = (t - t0) / k, on
/// t in [t0, t0 + k (T0 + tau)]. C2 in time; d3u/dt3 = (u_0''(s) - u_0''(s - tau)) / (tau k^3).
struct SmoothPart final : TimeLawPart {
  std::shared_ptr<const BaseLaw> base;
  double tau = 0, k = 1;
  void eval_local(double t, double* out) const override;
  void inner_breaks(std::vector<double>& out) const override;
  int poly_on(double ta, double tb, double* c) const override;
  /// Unstretched: out[0..3] = u - ua and its derivatives at local time s.
  void smoothed(double s, double* out) const;
};

std::shared_ptr<TimeLawPart> make_hold(double t0, double t1, double u);
std::shared_ptr<TimeLawPart> make_quintic(double t0, double t1, double ua, double ub);

}  // namespace c2path::detail
