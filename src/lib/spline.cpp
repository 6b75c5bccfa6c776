#include "c2path/spline.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <limits>
#include <new>
#include <string>

#ifdef __linux__
#include <sys/mman.h>
#endif

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

namespace detail {

namespace {
constexpr std::size_t kHugePage = std::size_t(2) << 20;  // 2 MiB
constexpr std::size_t kBulkMin = std::size_t(4) << 20;   // bulk storage from 4 MiB on
}  // namespace

#ifdef __linux__
constexpr bool kHugePages = true;
#else
constexpr bool kHugePages = false;  // plain operator new elsewhere
#endif

void* bulk_allocate(std::size_t bytes) {
  if (!kHugePages || bytes < kBulkMin) return ::operator new(bytes);
  const std::size_t rounded = (bytes + kHugePage - 1) / kHugePage * kHugePage;
  void* p = std::aligned_alloc(kHugePage, rounded);
  if (p == nullptr) throw std::bad_alloc();
#ifdef __linux__
  (void)madvise(p, rounded, MADV_HUGEPAGE);  // advice only: without transparent huge pages, nothing changes
#endif
  return p;
}

void bulk_deallocate(void* p, std::size_t bytes) noexcept {
  if (!kHugePages || bytes < kBulkMin)
    ::operator delete(p);
  else
    std::free(p);
}

}  // namespace detail

namespace {

/// A copy of u as the breakpoint vector; a large fresh block is advised to use huge pages before
/// it is first written (fewer page faults), as detail::bulk_allocate does.
std::vector<double> copy_breaks(const double* u, Index np) {
  std::vector<double> b;
  b.reserve(std::size_t(np));
#ifdef __linux__
  const std::size_t bytes = std::size_t(np) * sizeof(double);
  if (bytes >= (std::size_t(8) << 20)) {
    const auto page = std::uintptr_t(4096);
    const auto first = (reinterpret_cast<std::uintptr_t>(b.data()) + page - 1) / page * page;
    const auto last = (reinterpret_cast<std::uintptr_t>(b.data()) + bytes) / page * page;
    if (last > first) (void)madvise(reinterpret_cast<void*>(first), last - first, MADV_HUGEPAGE);
  }
#endif
  b.assign(u, u + np);
  return b;
}

/// The checks of the parameters, in the order of their messages.
void check_parameters(const Eigen::Ref<const Eigen::VectorXd>& u) {
  const Index np = u.size();
  // Fast path: strictly increasing between finite ends implies finite everywhere.
  bool ok = std::isfinite(u[0]) && std::isfinite(u[np - 1]);
  for (Index i = 0; i + 1 < np; ++i) ok &= u[i + 1] > u[i];
  if (ok) return;
  for (Index i = 0; i < np; ++i)
    if (!std::isfinite(u[i])) throw Error("spline: parameter " + std::to_string(i) + " is not finite");
  for (Index i = 0; i + 1 < np; ++i)
    if (!(u[i + 1] > u[i]))
      throw Error("spline: parameters must increase strictly (points " + std::to_string(i) + " and " +
                  std::to_string(i + 1) + ")");
}

[[noreturn]] void throw_nonfinite(const Eigen::Ref<const Eigen::MatrixXd>& q) {
  if (!q.allFinite()) throw Error("spline: point values must be finite");
  throw Error("spline: the parameters or point values are too far apart (their differences overflow)");
}

/// Not-a-knot, natural and clamped splines: one tridiagonal system in the slopes s_0..s_n for all
/// axes at once, solved by the Thomas algorithm while the coefficients are written.
///   row 0:          b_0 s_0 + c_0 s_1 = r_0                  (end condition)
///   row i (0<i<n):  h_i s_{i-1} + 2 (h_{i-1} + h_i) s_i + h_{i-1} s_{i+1} = 3 (h_i m_{i-1} + h_{i-1} m_i)
///   row n:          a_n s_{n-1} + b_n s_n = r_n              (end condition)
/// with h_i = u_{i+1} - u_i and m_i = (q_{i+1} - q_i) / h_i; the end rows are SciPy's. The interior
/// rows are diagonally dominant, and so is every row after the first elimination step (the first
/// multiplier is 1 for not-a-knot), so no pivoting is needed. Returns false on a non-finite slope or
/// step (overflow, or non-finite data). M > 0 is the number of axes fixed at compile time, 0 = m.
template <int M>
bool banded_fit(const double* u, const double* q, Index ldq, Index n, Index m_dyn, const SplineOptions& o, double* cp,
                double* rp, double* coeffs) {
  const Index m = M > 0 ? Index(M) : m_dyn;
  double fixed[M > 0 ? 4 * M : 1];
  std::vector<double> heap;
  double* w = fixed;
  if constexpr (M == 0) {
    heap.resize(std::size_t(4 * m));
    w = heap.data();
  }
  double* mprev = w;       // m_{i-1} per axis
  double* snext = w + m;   // s_{i+1} per axis
  double* r0 = w + 2 * m;  // end-row right-hand sides
  auto Q = [&](Index i, Index a) { return q[i + a * ldq]; };
  const EndCondition e = o.ends;
  const bool nak = e == EndCondition::kNotAKnot;
  double check = 0.0;  // becomes NaN when a step or slope is not finite

  // Row 0.
  const double h0 = u[1] - u[0];
  const double inv_h0 = 1.0 / h0;
  check += h0 * 0.0;
  for (Index a = 0; a < m; ++a) {
    mprev[a] = (Q(1, a) - Q(0, a)) * inv_h0;
    check += mprev[a] * 0.0;
  }
  double b0 = 1.0, c0 = 0.0;
  if (nak && n >= 3) {
    const double h1 = u[2] - u[1];
    const double d0 = h0 + h1;
    b0 = h1;
    c0 = d0;
    for (Index a = 0; a < m; ++a) {
      const double m1 = (Q(2, a) - Q(1, a)) / h1;
      r0[a] = ((h0 + 2.0 * d0) * h1 * mprev[a] + h0 * h0 * m1) / d0;
    }
  } else if (nak && n == 2) {  // the parabola: s_0 + s_1 = 2 m_0
    c0 = 1.0;
    for (Index a = 0; a < m; ++a) r0[a] = 2.0 * mprev[a];
  } else if (nak) {  // the line
    for (Index a = 0; a < m; ++a) r0[a] = mprev[a];
  } else if (e == EndCondition::kNatural) {  // q''(u_0) = 0: 2 s_0 + s_1 = 3 m_0
    b0 = 2.0;
    c0 = 1.0;
    for (Index a = 0; a < m; ++a) r0[a] = 3.0 * mprev[a];
  } else {  // clamped
    for (Index a = 0; a < m; ++a) r0[a] = o.start_slope[a];
  }
  // The previous row's cp and rp stay in registers (rp_prev): the elimination is a chain of
  // dependent operations per row, and a round trip through memory would lengthen it.
  double* rp_prev = snext;  // scratch until the back substitution
  double cp_prev = c0 / b0;
  cp[0] = cp_prev;
  for (Index a = 0; a < m; ++a) rp[a] = rp_prev[a] = r0[a] / b0;

  // Interior rows, eliminated as they are formed.
  double h_prev = h0;
  for (Index i = 1; i < n; ++i) {
    const double h = u[i + 1] - u[i];
    const double inv_h = 1.0 / h;
    const double den = 2.0 * (h_prev + h) - h * cp_prev;
    const double inv = 1.0 / den;
    cp_prev = h_prev / den;  // not h_prev * inv: one rounding less on the dependency chain
    cp[i] = cp_prev;
    double* rp_i = rp + i * m;
    double row_check = h;
    for (Index a = 0; a < m; ++a) {
      const double mc = (Q(i + 1, a) - Q(i, a)) * inv_h;
      row_check += mc;
      rp_prev[a] = (3.0 * (h * mprev[a] + h_prev * mc) - h * rp_prev[a]) * inv;
      rp_i[a] = rp_prev[a];
      mprev[a] = mc;
    }
    check += row_check * 0.0;
    h_prev = h;
  }
  if (!std::isfinite(check)) return false;

  // Row n and s_n; mprev holds m_{n-1}.
  double an = 0.0, bn = 1.0;
  double* rn = r0;
  if (nak && n >= 3) {
    const double h1 = u[n] - u[n - 1], h2 = u[n - 1] - u[n - 2];  // h_{n-1}, h_{n-2}
    const double dn = h1 + h2;
    an = dn;
    bn = h2;
    for (Index a = 0; a < m; ++a) {
      const double m2 = (Q(n - 1, a) - Q(n - 2, a)) / h2;
      rn[a] = (h1 * h1 * m2 + (2.0 * dn + h1) * h2 * mprev[a]) / dn;
    }
  } else if (nak && n == 2) {  // s_1 + s_2 = 2 m_1
    an = 1.0;
    for (Index a = 0; a < m; ++a) rn[a] = 2.0 * mprev[a];
  } else if (nak) {
    for (Index a = 0; a < m; ++a) rn[a] = mprev[a];
  } else if (e == EndCondition::kNatural) {  // s_{n-1} + 2 s_n = 3 m_{n-1}
    an = 1.0;
    bn = 2.0;
    for (Index a = 0; a < m; ++a) rn[a] = 3.0 * mprev[a];
  } else {
    for (Index a = 0; a < m; ++a) rn[a] = o.end_slope[a];
  }
  const double den_n = bn - an * cp[n - 1];
  if (!(den_n != 0.0)) return false;
  for (Index a = 0; a < m; ++a) snext[a] = (rn[a] - an * rp[(n - 1) * m + a]) / den_n;

  // Back substitution, writing the Hermite form of each piece (as SciPy's CubicSpline does).
  for (Index i = n; i-- > 0;) {
    const double h = u[i + 1] - u[i];
    const double inv_h = 1.0 / h;
    const double cpi = cp[i];
    const double* rp_i = rp + i * m;
    double* c = coeffs + i * m * 4;
    for (Index a = 0; a < m; ++a, c += 4) {
      const double s = rp_i[a] - cpi * snext[a];
      const double q0 = Q(i, a);
      const double mi = (Q(i + 1, a) - q0) * inv_h;
      const double t = (s + snext[a] - 2.0 * mi) * inv_h;
      c[0] = q0;
      c[1] = s;
      c[2] = (mi - s) * inv_h - t;
      c[3] = t * inv_h;
      snext[a] = s;
    }
  }
  return true;
}

}  // namespace

CubicSpline::CubicSpline(std::vector<double> breaks, Index axes, std::vector<double> coeffs, std::vector<double> end_values,
                         std::vector<double> end_derivs)
    : breaks_(std::move(breaks)), axes_(axes), coeffs_(coeffs.begin(), coeffs.end()), end_values_(std::move(end_values)) {
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
  if (!end_derivs.empty() && end_derivs.size() != std::size_t(axes_) * 2)
    throw Error("CubicSpline: end derivatives need 2 values per axis");
  set_end_derivs(nullptr);
  if (!end_derivs.empty()) end_derivs_ = std::move(end_derivs);
}

void CubicSpline::set_end_derivs(const SplineOptions* options) {
  const Index last = pieces() - 1;
  const double h = breaks_.back() - breaks_[std::size_t(last)];
  end_derivs_.resize(std::size_t(axes_) * 2);
  for (Index a = 0; a < axes_; ++a) {
    double d1 = cubic_eval(coeffs(last, a), h, 1);
    double d2 = cubic_eval(coeffs(last, a), h, 2);
    if (options && options->ends == EndCondition::kClamped) d1 = options->end_slope[a];
    if (options && options->ends == EndCondition::kNatural && pieces() > 1) d2 = 0.0;
    if (options && options->ends == EndCondition::kPeriodic) {
      d1 = coeff(0, a, 1);
      d2 = 2.0 * coeff(0, a, 2);
    }
    end_derivs_[std::size_t(a) * 2] = d1;
    end_derivs_[std::size_t(a) * 2 + 1] = d2;
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
  check_parameters(u);
  const Index n = np - 1;  // pieces
  std::vector<double> end_values(static_cast<std::size_t>(m));
  for (Index a = 0; a < m; ++a) end_values[std::size_t(a)] = q(n, a);

  if (options.ends != EndCondition::kPeriodic) {
    detail::BulkVector coeffs(static_cast<std::size_t>(n * m * 4));  // default-initialised
    detail::BulkVector cp(static_cast<std::size_t>(np));
    detail::BulkVector rp(static_cast<std::size_t>(np * m));
    bool ok = false;
    const double* ud = u.data();
    const double* qd = q.data();
    const Index ld = q.outerStride();
    switch (m) {
      case 1: ok = banded_fit<1>(ud, qd, ld, n, m, options, cp.data(), rp.data(), coeffs.data()); break;
      case 2: ok = banded_fit<2>(ud, qd, ld, n, m, options, cp.data(), rp.data(), coeffs.data()); break;
      case 3: ok = banded_fit<3>(ud, qd, ld, n, m, options, cp.data(), rp.data(), coeffs.data()); break;
      case 4: ok = banded_fit<4>(ud, qd, ld, n, m, options, cp.data(), rp.data(), coeffs.data()); break;
      case 6: ok = banded_fit<6>(ud, qd, ld, n, m, options, cp.data(), rp.data(), coeffs.data()); break;
      default: ok = banded_fit<0>(ud, qd, ld, n, m, options, cp.data(), rp.data(), coeffs.data()); break;
    }
    if (!ok) throw_nonfinite(q);
    CubicSpline out(Fitted{}, copy_breaks(ud, np), m, std::move(coeffs), std::move(end_values));
    out.set_end_derivs(&options);
    return out;
  }

  if (!q.allFinite()) throw Error("spline: point values must be finite");
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

  if (n == 1) {
    // Two (equal) points: the constant.
    for (Index a = 0; a < m; ++a) S(0, a) = S(1, a) = sl(0, a);
  } else if (n == 2) {
    // Three points, periodic: both rows of the 2x2 cyclic system read (h0+h1)(2 s_self + s_other) = r,
    // so s_0 = s_1 = s_2 = (h1 m0 + h0 m1) / (h0 + h1).
    const double h0 = dx[0], h1 = dx[1];
    for (Index a = 0; a < m; ++a) S(0, a) = S(1, a) = S(2, a) = (h1 * sl(0, a) + h0 * sl(1, a)) / (h0 + h1);
  } else {
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
  }
  if (!std::all_of(s.begin(), s.end(), [](double v) { return std::isfinite(v); }))
    throw Error("spline: the parameters or point values are too far apart (their differences overflow)");

  // Hermite form of each piece, as in SciPy's CubicSpline.
  detail::BulkVector coeffs(static_cast<std::size_t>(n * m * 4));
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
  CubicSpline out(Fitted{}, copy_breaks(u.data(), np), m, std::move(coeffs), std::move(end_values));
  out.set_end_derivs(&options);
  return out;
}

double CubicSpline::eval(double u, Index axis, int deriv) const { return eval_piece(find_piece(u), u, axis, deriv); }

void CubicSpline::eval(double u, int deriv, Eigen::Ref<Eigen::VectorXd> out) const {
  const Index p = find_piece(u);
  const double s = u - breaks_[std::size_t(p)];
  for (Index a = 0; a < axes_; ++a) out[a] = cubic_eval(coeffs(p, a), s, deriv);
  if (deriv <= 2 && u == breaks_.back())
    for (Index a = 0; a < axes_; ++a) out[a] = end_deriv(a, deriv);
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
  } else if (deriv <= 2 && piece + 1 == pieces()) {
    const double v1 = end_deriv(axis, deriv);
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


}  // namespace c2path
