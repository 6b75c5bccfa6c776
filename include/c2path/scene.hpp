#pragma once
/// \file scene.hpp
/// The scene: a rig's axes with their limits, waypoints and planning options (pure data).
/// Every value keeps the place in the scene file it came from, for error messages.

#include <Eigen/Core>
#include <optional>
#include <string>
#include <vector>

#include "c2path/error.hpp"
#include "c2path/knots.hpp"
#include "c2path/spline.hpp"

namespace c2path {

/// One axis (joint) of the rig: its name, unit and limits. An omitted limit is not checked.
struct AxisSpec {
  std::string name;           ///< identifier [A-Za-z_][A-Za-z0-9_]*, unique, not t/hold/stop
  std::string unit;           ///< free text, e.g. "m" or "deg"; may be empty
  std::optional<double> min;  ///< lowest allowed position [unit]
  std::optional<double> max;  ///< highest allowed position [unit]
  std::optional<double> vel;  ///< largest |velocity| [unit/s], > 0
  std::optional<double> acc;  ///< largest |acceleration| [unit/s^2], > 0
  std::optional<double> jerk; ///< largest |jerk| [unit/s^3], > 0
  std::optional<double> counts_per_unit;  ///< controller counts per unit (export --units counts), non-zero
  std::optional<double> offset;           ///< count value at position 0 [counts] (export --units counts)
  SourceLoc loc;              ///< where the axis entry starts
  SourceLoc counts_loc;       ///< where counts_per_unit is
};

/// How the move is timed.
enum class TimingMode {
  kKeyframes,  ///< each waypoint has a time t; the spline parameter is time
  kDuration,   ///< the whole move takes a given time (planned in a later issue)
  kFastest,    ///< as fast as the limits allow (planned in a later issue)
};

/// The spline options of the scene's `path:` block.
struct PathSpec {
  KnotType knots = KnotType::kChord;            ///< ignored in keyframes mode (the times are the knots)
  EndCondition ends = EndCondition::kNotAKnot;
  std::optional<Eigen::VectorXd> start;         ///< clamped: dq/dt at the start per axis [unit/s]; omitted axes 0
  std::optional<Eigen::VectorXd> end;           ///< clamped: dq/dt at the end per axis [unit/s]; omitted axes 0
  std::optional<Eigen::VectorXd> weights;       ///< knot weights per axis; default 1/vel (see knots.hpp)
  SourceLoc loc, ends_loc, start_loc, end_loc, weights_loc;
};

/// The scene's `timing:` block.
struct TimingSpec {
  TimingMode mode = TimingMode::kKeyframes;
  std::optional<double> duration_s;  ///< duration mode: total time [s]
  double scale = 1.0;                ///< fraction of every limit to plan against, (0, 1]
  SourceLoc loc, mode_loc, duration_loc, scale_loc;
};

/// One waypoint: a position for every axis, and in keyframes mode its time.
struct Waypoint {
  std::optional<double> t;  ///< keyframes mode: time [s], strictly increasing
  std::vector<double> q;    ///< one position per axis, in the order of Scene::axes [unit]
  double hold_s = 0.0;      ///< dwell at rest after arriving [s]
  bool stop = false;        ///< come to rest here; the path may turn a corner
  SourceLoc loc;            ///< where the waypoint entry starts
  SourceLoc t_loc, hold_loc, stop_loc;
  std::vector<SourceLoc> q_loc;  ///< where each axis value is
};

/// The scene's `export:` block.
struct ExportSpec {
  std::optional<double> rate_hz;  ///< setpoint rate [Hz]; kDefaultRateHz when omitted
  SourceLoc rate_loc;
};

/// Resource caps (see DEVELOPERS.md): axes, waypoints, largest magnitude of any number, smallest limit.
inline constexpr std::size_t kMaxAxes = 64;
inline constexpr std::size_t kMaxWaypoints = 2'000'000;
inline constexpr double kMaxMagnitude = 1e12;
inline constexpr double kMinLimit = 1e-9;

/// Setpoint rate used when neither the scene nor the command line gives one [Hz].
inline constexpr double kDefaultRateHz = 1000.0;

/// A whole scene, format 1.
struct Scene {
  std::string file;  ///< name used in messages ("<stdin>" for standard input)
  int format = 1;
  std::string name;
  std::vector<AxisSpec> axes;
  PathSpec path;
  TimingSpec timing;
  std::vector<Waypoint> waypoints;
  ExportSpec exports;

  /// Index of the axis called `name`, or -1.
  [[nodiscard]] int axis_index(const std::string& name) const;
  /// Waypoint positions, shape (waypoints) x (axes).
  [[nodiscard]] Eigen::MatrixXd positions() const;
  /// Waypoint times (keyframes mode), size waypoints; NaN where absent.
  [[nodiscard]] Eigen::VectorXd times() const;
};

/// Knot weights the scene implies: `path.weights` if given, else 1/vel per axis, else (when some
/// axis has no velocity limit) 1 for every axis. `fallback` is set in the last case.
[[nodiscard]] Eigen::VectorXd knot_weights(const Scene& scene, bool* fallback = nullptr);

/// Checks everything about a scene that does not depend on YAML: limits, waypoints, times, end
/// conditions, coincident waypoints. Throws c2path::Error with the file, line and column of the
/// offending value. Used by the loader and by the viewer after every edit.
void validate_scene(const Scene& scene);

/// Names as written in the scene file.
[[nodiscard]] const char* to_string(TimingMode mode);
[[nodiscard]] const char* to_string(EndCondition ends);
[[nodiscard]] const char* to_string(KnotType knots);

}  // namespace c2path
