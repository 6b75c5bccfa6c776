#pragma once
// Shared test helpers: closeness checks that report the index, and reusable invariant checks.

#include <catch2/catch.hpp>

#include <cmath>
#include <iomanip>
#include <sstream>
#include <string>

#include "c2path/spline.hpp"
#include "c2path/trajectory.hpp"

namespace c2path::test {

/// q(t) = A sin(w t) on [0, T], one axis: every derivative in closed form, not piecewise cubic.
class SineTrajectory final : public Trajectory {
 public:
  SineTrajectory(double A, double w, double T) : A_(A), w_(w), T_(T) {}
  [[nodiscard]] Index axes() const override { return 1; }
  [[nodiscard]] double t_begin() const override { return 0.0; }
  [[nodiscard]] double t_end() const override { return T_; }
  void eval(double t, int d, Eigen::Ref<Eigen::VectorXd> out) const override {
    const double p = std::pow(w_, d);
    switch (d % 4) {
      case 0: out[0] = A_ * p * std::sin(w_ * t); break;
      case 1: out[0] = A_ * p * std::cos(w_ * t); break;
      case 2: out[0] = -A_ * p * std::sin(w_ * t); break;
      default: out[0] = -A_ * p * std::cos(w_ * t); break;
    }
  }
  [[nodiscard]] std::vector<double> breaks() const override { return {0.0, T_}; }

 private:
  double A_, w_, T_;
};

/// |a - b| <= abs_tol + rel_tol * max(|a|, |b|)
inline bool near(double a, double b, double rel_tol, double abs_tol = 0.0) {
  return std::abs(a - b) <= abs_tol + rel_tol * std::max(std::abs(a), std::abs(b));
}

/// CHECKs closeness and, when it fails, says what was compared at which index.
#define C2PATH_CHECK_NEAR(what, index, a, b, rel, abs_)                                                     \
  do {                                                                                                      \
    const double c2p_a_ = (a), c2p_b_ = (b);                                                                \
    INFO(what << " [" << (index) << "]: " << std::setprecision(17) << c2p_a_ << " vs " << c2p_b_           \
              << " (diff " << std::abs(c2p_a_ - c2p_b_) << ")");                                            \
    CHECK(::c2path::test::near(c2p_a_, c2p_b_, (rel), (abs_)));                                             \
  } while (0)

/// Value, slope and curvature agree from both sides at every interior breakpoint (C0, C1, C2),
/// relative to the size of the quantity on the spline.
inline void check_c2(const CubicSpline& s, double rel = 1e-10) {
  for (Index i = 1; i < s.pieces(); ++i) {
    const double u = s.breaks()[std::size_t(i)];
    const double h = s.breaks()[std::size_t(i)] - s.breaks()[std::size_t(i) - 1];
    for (Index a = 0; a < s.axes(); ++a)
      for (int d = 0; d <= 2; ++d) {
        const double left = cubic_eval(s.coeffs(i - 1, a), h, d);
        const double right = s.eval_piece(i, u, a, d);
        double scale = 1.0;
        for (Index p = 0; p < s.pieces(); ++p) scale = std::max(scale, std::abs(cubic_eval(s.coeffs(p, a), 0.0, d)));
        INFO("C" << d << " at breakpoint " << i << ", axis " << a);
        C2PATH_CHECK_NEAR("left vs right", i, left, right, 0.0, rel * scale);
      }
  }
}

/// The spline passes through the points exactly: q(u_i) == q_i bit for bit (u: n+1, q: (n+1) x axes).
inline void check_interpolates(const CubicSpline& s, const Eigen::Ref<const Eigen::VectorXd>& u,
                               const Eigen::Ref<const Eigen::MatrixXd>& q) {
  for (Index i = 0; i < u.size(); ++i)
    for (Index a = 0; a < s.axes(); ++a) {
      INFO("interpolation at point " << i << ", axis " << a);
      CHECK(s.eval(u[i], a) == q(i, a));
    }
}

/// Derivatives 1..3 at u agree with central differences of the derivative below, step `step`
/// (keep u at least `step` away from breakpoints for the third derivative), to `rel` times the
/// largest |derivative| at the breakpoints.
inline void check_fd_derivatives(const CubicSpline& s, double u, double step = 1e-5, double rel = 1e-6) {
  for (Index a = 0; a < s.axes(); ++a)
    for (int d = 1; d <= 3; ++d) {
      const double fd = (s.eval(u + step, a, d - 1) - s.eval(u - step, a, d - 1)) / (2.0 * step);
      double scale = 1.0;
      for (Index i = 0; i < s.pieces(); ++i)
        scale = std::max(scale, std::abs(s.eval_piece(i, s.breaks()[std::size_t(i)], a, d)));
      INFO("derivative " << d << " of axis " << a << " at u = " << u);
      C2PATH_CHECK_NEAR("derivative vs central difference", d, s.eval(u, a, d), fd, 0.0, rel * scale);
    }
}

}  // namespace c2path::test
