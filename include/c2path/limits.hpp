#pragma once
/// \file limits.hpp
/// The limit check: travel, peak |velocity|, |acceleration|, |jerk| per axis, every interval
/// where a limit is exceeded, and the stretch factor that would bring the move inside.

#include <optional>
#include <string>
#include <vector>

#include "c2path/scene.hpp"
#include "c2path/trajectory.hpp"

namespace c2path {

/// One axis's limits; an empty one is not checked.
struct AxisLimits {
  std::optional<double> min, max;     ///< position bounds [unit]
  std::optional<double> vel, acc, jerk;  ///< magnitude bounds [unit/s^k]
};

/// The scene's limits, axis by axis (not scaled by timing.scale: the check uses the real limits).
[[nodiscard]] std::vector<AxisLimits> scene_limits(const Scene& scene);

/// The limits a scene leaves out, as "AXIS travel|vel|acc|jerk", axis by axis (what check
/// cannot check).
[[nodiscard]] std::vector<std::string> unchecked_limits(const Scene& scene);

/// A checked quantity.
enum class Quantity { kPos, kVel, kAcc, kJerk };
/// "pos", "vel", "acc", "jerk".
[[nodiscard]] const char* to_string(Quantity q);

/// Extremes of one axis over the whole move, with the time of each.
struct AxisPeaks {
  double pos_min = 0, t_pos_min = 0;  ///< lowest position [unit] and when [s]
  double pos_max = 0, t_pos_max = 0;  ///< highest position
  double vel = 0, t_vel = 0;          ///< peak |velocity| [unit/s]
  double acc = 0, t_acc = 0;          ///< peak |acceleration| [unit/s^2]
  double jerk = 0, t_jerk = 0;        ///< peak |jerk| [unit/s^3]
};

/// A closed interval [t_start, t_end] where one quantity of one axis is beyond its limit.
/// For pos, `peak` is the extreme position and `limit` the bound it passes (min or max); for the
/// others `peak` is the largest magnitude.
struct Violation {
  Index axis = 0;
  Quantity quantity = Quantity::kPos;
  double t_start = 0, t_end = 0;  ///< [s]
  double peak = 0, t_peak = 0;
  double limit = 0;
};

/// Options of check_limits.
struct CheckOptions {
  /// A quantity counts as beyond its limit only when it exceeds it by more than this fraction of
  /// the limit (for positions: of the axis's span), so rounding noise at exactly the limit is not
  /// reported. Interval ends are still where the quantity crosses the limit itself.
  double rel_tol = 1e-9;
  /// Samples per trajectory piece for trajectories that are not piecewise cubic (minimum).
  int samples_per_piece = 64;
  /// Sampled checks: the step is chosen so that what can hide between samples is below this
  /// fraction of each position, velocity and acceleration limit ...
  double sample_tol = 1e-6;
  /// ... and of each jerk limit (a first-order bound, hence looser).
  double sample_tol_jerk = 1e-3;
  /// Sample even a trajectory that has an exact piecewise-polynomial form (for comparing the
  /// two methods; cubic-in-time trajectories are always checked exactly).
  bool force_sampled = false;
  void validate() const;
};

/// The result of a check.
struct Report {
  bool ok = true;              ///< no violations
  double t_begin = 0, t_end = 0, duration = 0;  ///< [s]
  /// Smallest uniform time scale k >= 1 that brings vel, acc and jerk inside their limits:
  /// max(1, v/v_max, sqrt(a/a_max), cbrt(j/j_max)) over axes and times. Slowing down cannot fix
  /// a position violation; see `pos_violation`.
  double stretch = 1.0;
  bool pos_violation = false;  ///< some axis leaves its travel range
  bool exact = true;           ///< peaks and intervals come from exact piecewise-polynomial analysis
  /// Sampled checks (exact == false): bound on how far any quantity may lie beyond what the
  /// samples and their Hermite interpolants show, as a fraction of its limit (0 when exact).
  double sample_bound = 0.0;
  std::vector<AxisPeaks> peaks;         ///< one per axis
  std::vector<Violation> violations;    ///< sorted by t_start, then axis, then quantity
  std::string message;                  ///< one-line summary
};

/// Checks a trajectory against per-axis limits (limits.size() == trajectory.axes()).
/// Exact for piecewise-polynomial trajectories (keyframes: cubic in time; duration and fastest
/// plans on a spline path: Trajectory::poly_pieces, degree <= 15): extremes from the roots of the
/// next derivative, interval ends from the roots of (quantity - limit), merged across pieces.
/// Other trajectories are sampled with a stated bound (Report::sample_bound).
[[nodiscard]] Report check_limits(const Trajectory& trajectory, const std::vector<AxisLimits>& limits,
                                  const CheckOptions& options = {});

}  // namespace c2path
