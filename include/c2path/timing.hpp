#pragma once
/// \file timing.hpp
/// Timing a path: from a scene to a trajectory (keyframes; duration and fastest follow).

#include <Eigen/Core>
#include <memory>
#include <string>
#include <vector>

#include "c2path/limits.hpp"
#include "c2path/path.hpp"
#include "c2path/scene.hpp"
#include "c2path/trajectory.hpp"

namespace c2path {

/// Everything the pipeline derives from a scene.
struct Plan {
  std::shared_ptr<const Path> path;              ///< q(u)
  std::shared_ptr<const Trajectory> trajectory;  ///< q(t)
  Eigen::VectorXd knots;                         ///< path parameter of each waypoint (keyframes: its time) [s or weighted units]
  Eigen::VectorXd waypoint_times;                ///< time at which the move reaches each waypoint [s]
  std::vector<AxisLimits> limits;                ///< the scene's limits per axis (what check_limits checks)
  std::vector<std::string> notes;                ///< facts the report should state (fallbacks, ignored keys)
};

/// The spline path of a scene: knots (keyframes: the times; otherwise from knots type and
/// weights) and one spline per segment. Throws c2path::Error with the scene location.
[[nodiscard]] Plan build_path(const Scene& scene);

/// The whole pipeline: build_path, then the time law of the scene's timing mode. Throws
/// c2path::Error for what cannot be planned, with the scene location.
[[nodiscard]] Plan plan(const Scene& scene);

}  // namespace c2path
