#pragma once
/// \file time_law.hpp
/// Time laws u(t) on a path and the trajectory q(u(t)) they make: the duration and fastest
/// planners (TOPP-RA for velocity and acceleration, then a jerk-limiting pass).
///
/// Everything here sees the path only through the Path interface (q and dq/du, d2q/du2, d3q/du3
/// per joint axis, its breaks and its stops), so derived paths plug in unchanged.

#include <Eigen/Core>
#include <memory>
#include <vector>

#include "c2path/limits.hpp"
#include "c2path/path.hpp"
#include "c2path/trajectory.hpp"

namespace c2path {

namespace detail {
struct TimeLawPart;
}

/// The path parameter as a function of time, u(t) on [t_begin, t_end] [s]: nondecreasing and C2
/// (u, du/dt and d2u/dt2 continuous; d3u/dt3 may jump at breaks). It is made of parts, one per
/// path segment (moving from one stop to the next, starting and ending at rest: du/dt = d2u/dt2 = 0)
/// and one per hold (u constant).
class TimeLaw {
 public:
  /// Takes the parts in time order (contiguous); built by plan_duration and plan_fastest.
  explicit TimeLaw(std::vector<std::shared_ptr<const detail::TimeLawPart>> parts);
  [[nodiscard]] double t_begin() const;
  [[nodiscard]] double t_end() const;
  [[nodiscard]] double u_begin() const;
  [[nodiscard]] double u_end() const;
  /// out[0..3] = u, du/dt, d2u/dt2, d3u/dt3 at t [param/s^k]; clamped to the ends outside.
  void eval(double t, double* out) const;
  /// As eval; returns true when t is the end of a moving part, where the path is to be
  /// differentiated on the segment that ends there (not the one that starts there).
  bool eval_side(double t, double* out) const;
  /// Times where d3u/dt3 may jump (part boundaries and the inner breaks of each part), increasing,
  /// both ends included.
  [[nodiscard]] std::vector<double> breaks() const;
  /// The first time at which u(t) reaches u (inverse of the time law; at a hold, its start).
  [[nodiscard]] double time_of(double u) const;
  /// Part boundaries [s]: t_begin, then the end of every moving and hold part.
  [[nodiscard]] std::vector<double> part_times() const;
  /// u(ta + sigma (tb - ta)) = sum_k c[k] sigma^k for sigma in [0, 1], on an interval [ta, tb]
  /// that lies between two consecutive breaks(): returns the degree (<= 5), or -1 when the law
  /// is not polynomial there. c has room for 6 coefficients.
  [[nodiscard]] int poly_on(double ta, double tb, double* c) const;

 private:
  [[nodiscard]] std::size_t part_of(double t) const;
  std::vector<std::shared_ptr<const detail::TimeLawPart>> parts_;
};

/// q(u(t)) for a path q(u) and a time law u(t), with the chain rule
/// q' = q_u u', q'' = q_uu u'^2 + q_u u'', q''' = q_uuu u'^3 + 3 q_uu u' u'' + q_u u'''.
class PathTrajectory final : public Trajectory {
 public:
  PathTrajectory(std::shared_ptr<const Path> path, std::shared_ptr<const TimeLaw> law);
  [[nodiscard]] Index axes() const override { return path_->axes(); }
  [[nodiscard]] double t_begin() const override { return law_->t_begin(); }
  [[nodiscard]] double t_end() const override { return law_->t_end(); }
  void eval(double t, int deriv, Eigen::Ref<Eigen::VectorXd> out) const override;
  void eval_all(double t, Eigen::Ref<Eigen::MatrixXd> out) const override;
  /// The time law's breaks together with the times at which the path's breaks are passed.
  [[nodiscard]] std::vector<double> breaks() const override;
  /// Piecewise polynomial (degree 3 x the time law's, <= 15) when the path is piecewise cubic
  /// and the time law is polynomial between its breaks: pieces between consecutive breaks().
  [[nodiscard]] bool poly_pieces(PolyPieces& out) const override;
  [[nodiscard]] const TimeLaw& law() const { return *law_; }
  [[nodiscard]] const Path& path() const { return *path_; }

 private:
  std::shared_ptr<const Path> path_;
  std::shared_ptr<const TimeLaw> law_;
};

/// Duration mode: a rest-to-rest time law taking exactly `duration_s` in total, holds included.
/// Each path segment (stop to stop) gets a share of the moving time (duration minus holds)
/// proportional to its parameter length, and runs the quintic rest-to-rest profile
/// u = u_a + (u_b - u_a)(10 s^3 - 15 s^4 + 6 s^5), s = (t - t_a)/T_k (zero velocity and acceleration
/// at both ends). `holds_s` has one entry per path stop (path.stops()), >= 0 [s]. Throws
/// c2path::Error when the holds leave no time to move.
[[nodiscard]] std::shared_ptr<const TimeLaw> plan_duration(const Path& path, double duration_s,
                                                           const std::vector<double>& holds_s);

/// An interval of a fastest plan during which one axis's quantity sits at its (planned) limit.
struct Binding {
  Index axis = 0;
  Quantity quantity = Quantity::kVel;
  double t_start = 0, t_end = 0;  ///< [s]
};

/// Options of plan_fastest.
struct FastestOptions {
  /// Fraction of every limit to plan against, (0, 1].
  double scale = 1.0;
  /// Grid over u: every path break is a grid point and each path piece [b_k, b_k+1] is split into
  /// n_k = clamp(ceil(grid_factor * (min_steps + bend_k / bend_step)), min_steps, max_steps * grid_factor)
  /// equal steps, where bend_k is the turning of the limit-normalised tangent (dq_a/du / vel_a) over
  /// the piece plus the log of its length change [rad + nepers]. A segment with fewer than
  /// min_segment_steps steps in all gets at least min_segment_steps * (piece length / segment
  /// length) steps per piece, so a short move is resolved as finely as a long one.
  int min_steps = 3;
  int max_steps = 24;
  double bend_step = 0.3;
  int min_segment_steps = 1000;
  /// Multiplies the number of steps per piece (1 = the documented rule; 10 for convergence tests).
  double grid_factor = 1.0;
  /// Repairs (local slow-downs where the smoothed plan exceeds a limit) before the final uniform
  /// stretch of a segment.
  int repair_iterations = 6;
  /// A quantity "binds" where it is at least this fraction of its planned limit.
  double binding_fraction = 0.99;
  void validate() const;
};

/// The result of plan_fastest.
struct FastestResult {
  std::shared_ptr<const TimeLaw> law;
  std::vector<Binding> binding;   ///< sorted by t_start, then axis, then quantity
  std::size_t grid_points = 0;    ///< TOPP-RA grid points over all segments
  double stretch = 1.0;           ///< largest uniform stretch applied to a segment after repairs
  int repairs = 0;                ///< repair rounds used, summed over segments
  double window_s = 0.0;          ///< largest jerk-pass window tau over the segments [s]
};

/// Fastest mode: per path segment, TOPP-RA (Pham & Pham 2018: backward controllable sets, then a
/// greedy forward pass) for every axis's velocity and acceleration limit on a grid over u, then
/// the jerk pass: the acceleration of the TOPP-RA law is averaged over a moving window of length
/// tau (tau = largest jump of an axis's acceleration / its jerk limit), which makes u(t) C2 with
/// bounded jerk; samples of the result that exceed scale x limits slow the TOPP-RA limits down
/// locally and the segment is planned again; what remains is removed by a uniform stretch of the
/// segment. `limits` has one entry per axis; `holds_s` one entry per path stop [s]. Throws
/// c2path::Error when no axis has a velocity or acceleration limit.
[[nodiscard]] FastestResult plan_fastest(const Path& path, const std::vector<AxisLimits>& limits,
                                         const std::vector<double>& holds_s, const FastestOptions& options = {});

}  // namespace c2path
