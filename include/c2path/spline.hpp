#pragma once
/// \file spline.hpp
/// Multi-axis C2 cubic interpolating splines, fitted by one banded O(n) solve for all axes.

#include <Eigen/Core>
#include <algorithm>
#include <cstddef>
#include <limits>
#include <new>
#include <type_traits>
#include <utility>
#include <vector>

namespace c2path {

using Index = Eigen::Index;

namespace detail {

/// Storage for large numeric arrays (spline coefficients): on Linux, blocks of 4 MiB and more are
/// aligned to 2 MiB and advised to use transparent huge pages, which cuts the page faults of a
/// fresh 100 MB coefficient array about 500-fold (3.5x less time for first touch, measured); the
/// elements are default-initialised (not zeroed) because the fit writes every one of them.
void* bulk_allocate(std::size_t bytes);
void bulk_deallocate(void* p, std::size_t bytes) noexcept;

template <class T>
struct BulkAllocator {
  using value_type = T;
  BulkAllocator() = default;
  template <class U>
  BulkAllocator(const BulkAllocator<U>&) noexcept {}  // NOLINT(google-explicit-constructor)
  T* allocate(std::size_t n) { return static_cast<T*>(bulk_allocate(n * sizeof(T))); }
  void deallocate(T* p, std::size_t n) noexcept { bulk_deallocate(p, n * sizeof(T)); }
  template <class U>
  void construct(U* p) noexcept(std::is_nothrow_default_constructible_v<U>) {
    ::new (static_cast<void*>(p)) U;
  }
  template <class U, class... Args>
  void construct(U* p, Args&&... args) {
    ::new (static_cast<void*>(p)) U(std::forward<Args>(args)...);
  }
  friend bool operator==(const BulkAllocator&, const BulkAllocator&) noexcept { return true; }
  friend bool operator!=(const BulkAllocator&, const BulkAllocator&) noexcept { return false; }
};

/// A vector of doubles in bulk storage (see BulkAllocator).
using BulkVector = std::vector<double, BulkAllocator<double>>;

}  // namespace detail

/// End condition of an interpolating cubic spline.
enum class EndCondition {
  kNotAKnot,  ///< third derivative continuous at the second and next-to-last breakpoint (default)
  kNatural,   ///< second derivative zero at both ends
  kClamped,   ///< first derivative given at both ends (SplineOptions::start_slope / end_slope)
  kPeriodic,  ///< first and last point equal; value, slope and curvature wrap around
};

/// Options of CubicSpline::fit.
struct SplineOptions {
  EndCondition ends = EndCondition::kNotAKnot;
  /// Clamped only: dq/du at u_0, one entry per axis (size = axes).
  Eigen::VectorXd start_slope;
  /// Clamped only: dq/du at u_n, one entry per axis (size = axes).
  Eigen::VectorXd end_slope;
  /// Throws c2path::Error if the options cannot apply to `axes` axes.
  void validate(Index axes) const;
};

/// Minimum and maximum of one quantity over a stretch of parameter, with where they occur.
struct Range {
  double min = 0.0;    ///< lowest value
  double u_min = 0.0;  ///< parameter where the lowest value occurs
  double max = 0.0;    ///< highest value
  double u_max = 0.0;  ///< parameter where the highest value occurs
};

/// Piecewise cubic q(u) with `axes()` components on breakpoints u_0 < ... < u_n.
///
/// Piece i covers [u_i, u_{i+1}] and holds, per axis a, q_a(u) = c0 + c1 s + c2 s^2 + c3 s^3 with
/// s = u - u_i. Outside [u_0, u_n] the end cubics continue (extrapolation by the first and last
/// piece). Evaluation finds the piece by binary search (O(log n)); a Cursor makes sorted queries
/// amortised O(1).
class CubicSpline {
 public:
  CubicSpline() = default;

  /// Interpolating spline through points q (shape (n+1) x axes) at strictly increasing u (n+1).
  /// Conventions for few points (as in SciPy's CubicSpline): 2 points give the straight line
  /// (clamped gives the cubic Hermite with the given slopes); 3 points with not-a-knot give the
  /// parabola. Periodic needs q.row(0) == q.row(n) exactly. Throws c2path::Error on invalid input.
  static CubicSpline fit(const Eigen::Ref<const Eigen::VectorXd>& u,
                         const Eigen::Ref<const Eigen::MatrixXd>& q, const SplineOptions& options = {});

  /// A spline from its breakpoints (n+1) and coefficients (n * axes * 4, layout [piece][axis][k]).
  /// `end_values` (size axes) is the value at u_n; empty means: evaluate the last cubic there.
  /// `end_derivs` (size 2 * axes: slope, curvature of each axis at u_n, see end_deriv()); empty
  /// means: evaluate the last cubic there.
  CubicSpline(std::vector<double> breaks, Index axes, std::vector<double> coeffs, std::vector<double> end_values = {},
              std::vector<double> end_derivs = {});

  [[nodiscard]] Index axes() const noexcept { return axes_; }
  /// Number of cubic pieces n (breakpoints n+1); 0 for an empty spline.
  [[nodiscard]] Index pieces() const noexcept { return breaks_.empty() ? 0 : Index(breaks_.size()) - 1; }
  [[nodiscard]] bool empty() const noexcept { return breaks_.size() < 2; }
  [[nodiscard]] double u_begin() const { return breaks_.front(); }
  [[nodiscard]] double u_end() const { return breaks_.back(); }
  /// Breakpoints u_0..u_n.
  [[nodiscard]] const std::vector<double>& breaks() const noexcept { return breaks_; }
  /// Coefficient c_k (k = 0..3) of piece `piece`, axis `axis`, in the local variable s = u - u_piece.
  [[nodiscard]] double coeff(Index piece, Index axis, int k) const {
    return coeffs_[std::size_t(((piece * axes_) + axis) * 4 + k)];
  }
  /// Pointer to the 4 coefficients c0..c3 of (piece, axis).
  [[nodiscard]] const double* coeffs(Index piece, Index axis) const {
    return coeffs_.data() + std::size_t(((piece * axes_) + axis) * 4);
  }

  /// Value of axis `axis` at u_n exactly as interpolated (the last waypoint), not the rounded
  /// value of the last cubic there; eval() returns it at u == u_n.
  [[nodiscard]] double end_value(Index axis) const { return end_values_[std::size_t(axis)]; }
  /// Value (deriv 0), slope (1) or curvature (2) of axis `axis` at u_n as the end condition fixes
  /// it: the given slope for clamped, 0 curvature for natural, the wrapped start for periodic;
  /// otherwise the last cubic evaluated there. eval() returns these at u == u_n, so a move that is
  /// clamped to rest ends with velocity exactly 0 rather than a rounding residue.
  [[nodiscard]] double end_deriv(Index axis, int deriv) const {
    return deriv == 0 ? end_values_[std::size_t(axis)] : end_derivs_[std::size_t(axis) * 2 + std::size_t(deriv - 1)];
  }

  /// Index of the piece that evaluates u: the i with u_i <= u < u_{i+1}, clamped to [0, n-1].
  [[nodiscard]] Index find_piece(double u) const;

  /// d^deriv q_axis / du^deriv at u (deriv 0..3; higher derivatives are 0).
  [[nodiscard]] double eval(double u, Index axis, int deriv = 0) const;
  /// All axes at once: out has size axes().
  void eval(double u, int deriv, Eigen::Ref<Eigen::VectorXd> out) const;

  /// Evaluation of one derivative on a given piece (no search).
  [[nodiscard]] double eval_piece(Index piece, double u, Index axis, int deriv) const;

  /// Exact lowest and highest value of d^deriv q_axis/du^deriv over piece `piece` (deriv 0..3),
  /// from the roots of the next derivative.
  [[nodiscard]] Range piece_range(Index piece, Index axis, int deriv) const;

  /// Remembers the last piece so that queries in increasing (or decreasing) order cost O(1)
  /// amortised. Cheap to copy; holds a pointer to the spline, which must outlive it.
  class Cursor {
   public:
    explicit Cursor(const CubicSpline& spline) : spline_(&spline) { set(0); }
    /// Piece for u (the same as find_piece(u)), walking from the last one.
    Index piece(double u) {
      // The common case of sorted queries: u is still on the last piece, [lo_, hi_).
      if (u >= lo_ && u < hi_) [[likely]]
        return last_;
      set(spline_->find_piece(u, last_));
      return last_;
    }
    double eval(double u, Index axis, int deriv = 0) { return spline_->eval_piece(piece(u), u, axis, deriv); }

   private:
    /// Makes `piece` the current piece; its bounds extend to -inf / +inf at the ends.
    void set(Index piece) {
      const Index n = spline_->pieces();
      last_ = piece;
      if (n < 1) {  // empty spline: never on a piece
        lo_ = std::numeric_limits<double>::infinity();
        hi_ = -lo_;
        return;
      }
      lo_ = piece == 0 ? -std::numeric_limits<double>::infinity() : spline_->breaks_[std::size_t(piece)];
      hi_ = piece + 1 == n ? std::numeric_limits<double>::infinity() : spline_->breaks_[std::size_t(piece) + 1];
    }
    const CubicSpline* spline_;
    Index last_ = 0;
    double lo_ = 0.0, hi_ = 0.0;  // u in [lo_, hi_) evaluates on piece last_
  };

 private:
  /// find_piece(u), walking a few pieces from `hint` before it falls back to binary search.
  Index find_piece(double u, Index hint) const {
    const Index n = pieces();
    Index i = hint;
    for (int step = 0; step < 8; ++step) {
      if (i + 1 < n && u >= breaks_[std::size_t(i) + 1])
        ++i;
      else if (i > 0 && u < breaks_[std::size_t(i)])
        --i;
      else if (u == u)
        return i;
      else
        break;  // NaN
    }
    return find_piece(u);
  }

  struct Fitted {};
  /// From a fit: the parts are known to be consistent (no checks).
  CubicSpline(Fitted, std::vector<double> breaks, Index axes, detail::BulkVector coeffs, std::vector<double> end_values)
      : breaks_(std::move(breaks)), axes_(axes), coeffs_(std::move(coeffs)), end_values_(std::move(end_values)) {}

  std::vector<double> breaks_;
  Index axes_ = 0;
  detail::BulkVector coeffs_;
  std::vector<double> end_values_;
  std::vector<double> end_derivs_;  // per axis: slope, curvature at u_n
  void set_end_derivs(const SplineOptions* options);
};

/// Horner evaluation of the deriv-th derivative of c0 + c1 s + c2 s^2 + c3 s^3.
[[nodiscard]] inline double cubic_eval(const double* c, double s, int deriv) {
  switch (deriv) {
    case 0: return ((c[3] * s + c[2]) * s + c[1]) * s + c[0];
    case 1: return (3.0 * c[3] * s + 2.0 * c[2]) * s + c[1];
    case 2: return 6.0 * c[3] * s + 2.0 * c[2];
    case 3: return 6.0 * c[3];
    default: return 0.0;
  }
}

inline Index CubicSpline::find_piece(double u) const {
  const Index n = pieces();
  if (n <= 1 || !(u >= breaks_[1])) return 0;  // also NaN -> 0; u_1 itself belongs to piece 1
  if (u >= breaks_[std::size_t(n - 1)]) return n - 1;
  const auto it = std::upper_bound(breaks_.begin() + 1, breaks_.end() - 1, u);
  return Index(it - breaks_.begin()) - 1;
}

inline double CubicSpline::eval_piece(Index piece, double u, Index axis, int deriv) const {
  if (deriv <= 2 && u == breaks_.back() && piece + 1 == pieces()) return end_deriv(axis, deriv);
  return cubic_eval(coeffs(piece, axis), u - breaks_[std::size_t(piece)], deriv);
}

}  // namespace c2path
