#pragma once
/// \file timing.hpp
/// Timing a path: from a scene to a trajectory, in the three timing modes.
///
/// - keyframes: the waypoint times are the spline parameter (with holds, the parameter is time
///   minus the holds before); the trajectory is piecewise cubic in time, so the check is exact.
///   At a stop or hold the segments on both sides end with zero velocity and acceleration.
/// - duration: the quintic rest-to-rest time law of plan_duration on the chord-length path.
/// - fastest: TOPP-RA and the jerk pass of plan_fastest, against timing.scale x limits.
///
/// Stops and holds split the path into segments (one C2 spline each). In duration and fastest
/// modes the move starts and ends at rest; with `ends: clamped` the scene's start/end give the
/// path's tangent dq/du at the first and last waypoint (the direction of departure and arrival,
/// in unit per parameter unit, i.e. unit/s at full speed with the default 1/vel weights), and a
/// segment end at a stop is natural.

#include <Eigen/Core>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "c2path/limits.hpp"
#include "c2path/path.hpp"
#include "c2path/scene.hpp"
#include "c2path/time_law.hpp"
#include "c2path/trajectory.hpp"

namespace c2path {

/// Everything the pipeline derives from a scene.
struct Plan {
  std::shared_ptr<const Path> path;              ///< q(u)
  std::shared_ptr<const Trajectory> trajectory;  ///< q(t)
  Eigen::VectorXd knots;                         ///< path parameter of each waypoint (keyframes: its time minus the holds before it) [s or weighted units]
  Eigen::VectorXd waypoint_times;                ///< time at which the move reaches each waypoint [s]
  std::vector<AxisLimits> limits;                ///< the scene's limits per axis (what check_limits checks)
  std::vector<std::string> notes;                ///< facts the report should state (fallbacks, ignored keys)
  TimingMode mode = TimingMode::kKeyframes;      ///< the mode that produced the trajectory
  std::shared_ptr<const TimeLaw> time_law;       ///< duration and fastest modes: u(t); null for keyframes
  std::vector<double> holds_s;                   ///< dwell at each path stop (path->stops()) [s]
  double hold_total_s = 0.0;                     ///< sum of holds_s [s]
  std::vector<Binding> binding;                  ///< fastest: where a limit binds (against scale x limits)
  std::size_t grid_points = 0;                   ///< fastest: TOPP-RA grid points over all segments
  double fastest_stretch = 1.0;                  ///< fastest: largest uniform stretch a segment needed after the repairs
};

/// Duration mode: the shortest total duration [s] at which the same move (same profile, holds
/// unchanged) keeps every velocity, acceleration and jerk limit: holds + (T - holds) * k with
/// k = max(v/v_max, sqrt(a/a_max), cbrt(j/j_max)) over axes from the report's peaks (uniform time
/// scaling of the moving parts). Shorter than T when the move has room to spare. nullopt in
/// other modes, when no axis has such a limit, or when a position limit is violated.
[[nodiscard]] std::optional<double> shortest_duration(const Plan& plan, const Report& report);

/// The spline path of a scene: knots (keyframes: the times; otherwise from knots type and
/// weights) and one spline per segment. Throws c2path::Error with the scene location.
[[nodiscard]] Plan build_path(const Scene& scene);

/// The whole pipeline: build_path, then the time law of the scene's timing mode. Throws
/// c2path::Error for what cannot be planned, with the scene location.
[[nodiscard]] Plan plan(const Scene& scene);

}  // namespace c2path
