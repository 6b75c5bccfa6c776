#include "c2path/spline.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "c2path/error.hpp"
#include "detail/poly.hpp"

namespace c2path {

void SplineOptions::validate(Index axes) const {
  if (ends != EndCondition::kClamped) return;
  if (start_slope.size() != axes || end_slope.size() != axes)
    throw Error("clamped spline: start and end slopes need one value per axis (" + std::to_string(axes) +
                "), got " + std::to_string(start_slope.size()) + " and " + std::to_string(end_slope.size()));
  if (!start_slope.allFinite() || !end_slope.allFinite())
    throw Error("clamped spline: end slopes must be finite numbers");
}

CubicSpline::CubicSpline(std::vector<double> breaks, Index axes, std::vector<double> coeffs, std::vector<double> end_values)
    : breaks_(std::move(breaks)), axes_(axes), coeffs_(std::move(coeffs)), end_values_(std::move(end_values)) {
  if (breaks_.size() < 2 || axes_ < 1 || coeffs_.size() != (breaks_.size() - 1) * std::size_t(axes_) * 4 ||
      (!end_values_.empty() && end_values_.size() != std::size_t(axes_)))
    throw Error("CubicSpline: breakpoints and coefficients do not match");
  for (std::size_t i = 0; i + 1 < breaks_.size(); ++i)
    if (!(breaks_[i + 1] > breaks_[i])) throw Error("CubicSpline: breakpoints must increase strictly");
  if (end_values_.empty()) {
    const Index last = pieces() - 1;
    const double h = breaks_.back() - breaks_[std::size_t(last)];
    for (Index a = 0; a < axes_; ++a) end_values_.push_back(cubic_eval(this->coeffs(last, a), h, 0));
  }
}

CubicSpline CubicSpline::fit(const Eigen::Ref<const Eigen::VectorXd>& u,
                             const Eigen::Ref<const Eigen::MatrixXd>& q, const SplineOptions& options) {
  const Index np = u.size();
  const Index m = q.cols();
  if (np < 2) throw Error("a spline needs at least 2 points, got " + std::to_string(np));
  if (q.rows() != np)
    throw Error("spline: " + std::to_string(np) + " parameters but " + std::to_string(q.rows()) + " points");
  if (m < 1) throw Error("spline: at least one axis is needed");
  options.validate(m);
  for (Index i = 0; i < np; ++i)
    if (!std::isfinite(u[i])) throw Error("spline: parameter " + std::to_string(i) + " is not finite");
  for (Index i = 0; i + 1 < np; ++i)
    if (!(u[i + 1] > u[i]))
      throw Error("spline: parameters must increase strictly (points " + std::to_string(i) + " and " +
                  std::to_string(i + 1) + ")");
  if (!q.allFinite()) throw Error("spline: point values must be finite");
  const Index n = np - 1;  // pieces
  const bool periodic = options.ends == EndCondition::kPeriodic;
  if (periodic)
    for (Index a = 0; a < m; ++a)
      if (q(0, a) != q(n, a))
        throw Error("periodic spline: the first and last point differ on axis " + std::to_string(a));

  // dx[i] = u[i+1] - u[i], slope[i] = (q[i+1] - q[i]) / dx[i]  (row-major, n x m)
  std::vector<double> dx(static_cast<std::size_t>(n));
  std::vector<double> slope(static_cast<std::size_t>(n * m));
  for (Index i = 0; i < n; ++i) {
    dx[std::size_t(i)] = u[i + 1] - u[i];
    for (Index a = 0; a < m; ++a) slope[std::size_t(i * m + a)] = (q(i + 1, a) - q(i, a)) / dx[std::size_t(i)];
  }
  auto sl = [&](Index i, Index a) { return slope[std::size_t(i * m + a)]; };

  // Unknowns: the slopes s_i = q'(u_i), row-major (n+1) x m.
  std::vector<double> s(static_cast<std::size_t>(np * m));
  auto S = [&](Index i, Index a) -> double& { return s[std::size_t(i * m + a)]; };

  EndCondition ends = options.ends;
  if (n == 1 && (ends == EndCondition::kNotAKnot || ends == EndCondition::kPeriodic)) {
    // Two points: the straight line (for periodic the constant).
    for (Index a = 0; a < m; ++a) S(0, a) = S(1, a) = sl(0, a);
  } else if (periodic && n == 2) {
    // Three points, periodic: both rows of the 2x2 cyclic system read (h0+h1)(2 s_self + s_other) = r,
    // so s_0 = s_1 = s_2 = (h1 m0 + h0 m1) / (h0 + h1).
    const double h0 = dx[0], h1 = dx[1];
    for (Index a = 0; a < m; ++a) S(0, a) = S(1, a) = S(2, a) = (h1 * sl(0, a) + h0 * sl(1, a)) / (h0 + h1);
  } else if (periodic) {
    // Cyclic tridiagonal system in s_0..s_{n-1} (s_n = s_0), solved by Sherman-Morrison on top of
    // one tridiagonal solve with m+1 right-hand sides.
    const std::size_t nn = std::size_t(n);
    auto h = [&](Index i) { return dx[std::size_t((i + n) % n)]; };
    std::vector<double> dl(nn - 1), d(nn), du(nn - 1);
    const std::size_t mc = std::size_t(m) + 1;
    std::vector<double> rhs(nn * mc, 0.0);
    const double beta = h(0);           // A[0][n-1] = dx[0] (coefficient of s_{-1} in row 0)
    const double alpha = h(n - 2);      // A[n-1][0] = dx[n-2] (coefficient of s_n in row n-1)
    const double gamma = -2.0 * (h(-1) + h(0));
    for (Index i = 0; i < n; ++i) {
      d[std::size_t(i)] = 2.0 * (h(i - 1) + h(i));
      if (i > 0) dl[std::size_t(i - 1)] = h(i);
      if (i + 1 < n) du[std::size_t(i)] = h(i - 1);
      for (Index a = 0; a < m; ++a)
        rhs[std::size_t(i) * mc + std::size_t(a)] = 3.0 * (h(i) * sl((i - 1 + n) % n, a) + h(i - 1) * sl(i, a));
    }
    d[0] -= gamma;
    d[nn - 1] -= alpha * beta / gamma;
    rhs[std::size_t(m)] = gamma;
    rhs[(nn - 1) * mc + std::size_t(m)] = alpha;
    if (!detail::solve_tridiagonal(dl, d, du, rhs.data(), mc)) throw Error("periodic spline: singular system");
    const double z0 = rhs[std::size_t(m)];
    const double zn = rhs[(nn - 1) * mc + std::size_t(m)];
    const double denom = 1.0 + z0 + beta * zn / gamma;
    for (Index a = 0; a < m; ++a) {
      const double x0 = rhs[std::size_t(a)];
      const double xn = rhs[(nn - 1) * mc + std::size_t(a)];
      const double fact = (x0 + beta * xn / gamma) / denom;
      for (Index i = 0; i < n; ++i)
        S(i, a) = rhs[std::size_t(i) * mc + std::size_t(a)] - fact * rhs[std::size_t(i) * mc + std::size_t(m)];
      S(n, a) = S(0, a);
    }
  } else {
    // Tridiagonal system of n+1 rows in s_0..s_n; interior rows are C2 continuity at u_1..u_{n-1}:
    //   h_i s_{i-1} + 2 (h_{i-1} + h_i) s_i + h_{i-1} s_{i+1} = 3 (h_i m_{i-1} + h_{i-1} m_i)
    const std::size_t N = std::size_t(np);
    std::vector<double> dl(N - 1, 0.0), d(N, 0.0), du(N - 1, 0.0);
    for (Index i = 1; i < n; ++i) {
      const std::size_t k = std::size_t(i);
      dl[k - 1] = dx[k];
      d[k] = 2.0 * (dx[k - 1] + dx[k]);
      du[k] = dx[k - 1];
      for (Index a = 0; a < m; ++a) S(i, a) = 3.0 * (dx[k] * sl(i - 1, a) + dx[k - 1] * sl(i, a));
    }
    if (ends == EndCondition::kNotAKnot && n == 2) {
      // Three points: the parabola, s_0 + s_1 = 2 m_0 and s_1 + s_2 = 2 m_1 (as SciPy does).
      d[0] = 1.0; du[0] = 1.0;
      dl[1] = 1.0; d[2] = 1.0;
      for (Index a = 0; a < m; ++a) {
        S(0, a) = 2.0 * sl(0, a);
        S(2, a) = 2.0 * sl(1, a);
      }
    } else if (ends == EndCondition::kNotAKnot) {
      // q''' continuous at u_1 and u_{n-1}.
      const double d0 = dx[0] + dx[1];
      d[0] = dx[1];
      du[0] = d0;
      const double dn = dx[N - 2] + dx[N - 3];
      d[N - 1] = dx[N - 3];
      dl[N - 2] = dn;
      for (Index a = 0; a < m; ++a) {
        S(0, a) = ((dx[0] + 2.0 * d0) * dx[1] * sl(0, a) + dx[0] * dx[0] * sl(1, a)) / d0;
        S(n, a) = (dx[N - 2] * dx[N - 2] * sl(n - 2, a) + (2.0 * dn + dx[N - 2]) * dx[N - 3] * sl(n - 1, a)) / dn;
      }
    } else if (ends == EndCondition::kNatural) {
      // q'' = 0 at both ends: 2 s_0 + s_1 = 3 m_0, s_{n-1} + 2 s_n = 3 m_{n-1}.
      d[0] = 2.0; du[0] = 1.0;
      dl[N - 2] = 1.0; d[N - 1] = 2.0;
      for (Index a = 0; a < m; ++a) {
        S(0, a) = 3.0 * sl(0, a);
        S(n, a) = 3.0 * sl(n - 1, a);
      }
    } else {  // clamped
      d[0] = 1.0; du[0] = 0.0;
      dl[N - 2] = 0.0; d[N - 1] = 1.0;
      for (Index a = 0; a < m; ++a) {
        S(0, a) = options.start_slope[a];
        S(n, a) = options.end_slope[a];
      }
    }
    if (!detail::solve_tridiagonal(dl, d, du, s.data(), std::size_t(m)))
      throw Error("spline: singular system (check that the parameters increase)");
  }

  // Hermite form of each piece, as in SciPy's CubicSpline.
  std::vector<double> breaks(u.data(), u.data() + np);
  std::vector<double> coeffs(static_cast<std::size_t>(n * m * 4));
  for (Index i = 0; i < n; ++i) {
    const double h = dx[std::size_t(i)];
    for (Index a = 0; a < m; ++a) {
      const double t = (S(i, a) + S(i + 1, a) - 2.0 * sl(i, a)) / h;
      double* c = coeffs.data() + std::size_t((i * m + a) * 4);
      c[0] = q(i, a);
      c[1] = S(i, a);
      c[2] = (sl(i, a) - S(i, a)) / h - t;
      c[3] = t / h;
    }
  }
  std::vector<double> end_values(static_cast<std::size_t>(m));
  for (Index a = 0; a < m; ++a) end_values[std::size_t(a)] = q(n, a);
  return CubicSpline(std::move(breaks), m, std::move(coeffs), std::move(end_values));
}

Index CubicSpline::find_piece(double u) const {
  const Index n = pieces();
  if (n <= 1 || !(u >= breaks_[1])) return 0;  // also NaN -> 0; u_1 itself belongs to piece 1
  if (u >= breaks_[std::size_t(n - 1)]) return n - 1;
  const auto it = std::upper_bound(breaks_.begin() + 1, breaks_.end() - 1, u);
  return Index(it - breaks_.begin()) - 1;
}

double CubicSpline::eval_piece(Index piece, double u, Index axis, int deriv) const {
  if (deriv == 0 && u == breaks_.back() && piece + 1 == pieces()) return end_values_[std::size_t(axis)];
  return cubic_eval(coeffs(piece, axis), u - breaks_[std::size_t(piece)], deriv);
}

double CubicSpline::eval(double u, Index axis, int deriv) const { return eval_piece(find_piece(u), u, axis, deriv); }

void CubicSpline::eval(double u, int deriv, Eigen::Ref<Eigen::VectorXd> out) const {
  const Index p = find_piece(u);
  const double s = u - breaks_[std::size_t(p)];
  for (Index a = 0; a < axes_; ++a) out[a] = cubic_eval(coeffs(p, a), s, deriv);
  if (deriv == 0 && u == breaks_.back())
    for (Index a = 0; a < axes_; ++a) out[a] = end_values_[std::size_t(a)];
}

Range CubicSpline::piece_range(Index piece, Index axis, int deriv) const {
  const double* c = coeffs(piece, axis);
  const double u0 = breaks_[std::size_t(piece)];
  const double h = breaks_[std::size_t(piece) + 1] - u0;
  Range r;
  auto consider = [&](double s) {
    const double v = cubic_eval(c, s, deriv);
    if (v < r.min) { r.min = v; r.u_min = u0 + s; }
    if (v > r.max) { r.max = v; r.u_max = u0 + s; }
  };
  const double v0 = cubic_eval(c, 0.0, deriv);
  r.min = r.max = v0;
  r.u_min = r.u_max = u0;
  if (deriv == 0) {
    // The value at the end of the piece is the next waypoint exactly.
    const double v1 = piece + 1 < pieces() ? coeff(piece + 1, axis, 0) : end_values_[std::size_t(axis)];
    if (v1 < r.min) { r.min = v1; r.u_min = u0 + h; }
    if (v1 > r.max) { r.max = v1; r.u_max = u0 + h; }
  } else {
    consider(h);
  }
  if (deriv == 0) {
    const double dc[3] = {c[1], 2.0 * c[2], 3.0 * c[3]};
    double roots[2];
    const int nr = detail::poly_roots_in(dc, 2, 0.0, h, roots);
    for (int k = 0; k < nr; ++k) consider(roots[k]);
  } else if (deriv == 1 && c[3] != 0.0) {
    const double sv = -c[2] / (3.0 * c[3]);
    if (sv > 0.0 && sv < h) consider(sv);
  }
  return r;
}

Index CubicSpline::Cursor::piece(double u) {
  const auto& b = spline_->breaks_;
  const Index n = spline_->pieces();
  Index i = last_;
  // Walk a few steps; fall back to binary search for far jumps.
  for (int step = 0; step < 8; ++step) {
    if (i + 1 < n && u >= b[std::size_t(i) + 1]) {
      ++i;
    } else if (i > 0 && u < b[std::size_t(i)]) {
      --i;
    } else {
      last_ = i;
      return i;
    }
  }
  last_ = spline_->find_piece(u);
  return last_;
}

}  // namespace c2path
