#include "c2path/scene.hpp"

#include <charconv>
#include <cmath>
#include <limits>
#include <string>

namespace c2path {

int Scene::axis_index(const std::string& n) const {
  for (std::size_t i = 0; i < axes.size(); ++i)
    if (axes[i].name == n) return int(i);
  return -1;
}

Eigen::MatrixXd Scene::positions() const {
  Eigen::MatrixXd q(Index(waypoints.size()), Index(axes.size()));
  for (std::size_t k = 0; k < waypoints.size(); ++k)
    for (std::size_t a = 0; a < axes.size(); ++a)
      q(Index(k), Index(a)) = a < waypoints[k].q.size() ? waypoints[k].q[a] : std::numeric_limits<double>::quiet_NaN();
  return q;
}

Eigen::VectorXd Scene::times() const {
  Eigen::VectorXd t(Index(waypoints.size()));
  for (std::size_t k = 0; k < waypoints.size(); ++k)
    t[Index(k)] = waypoints[k].t ? *waypoints[k].t : std::numeric_limits<double>::quiet_NaN();
  return t;
}

Eigen::VectorXd knot_weights(const Scene& scene, bool* fallback) {
  const Index m = Index(scene.axes.size());
  if (fallback) *fallback = false;
  if (scene.path.weights) return *scene.path.weights;
  Eigen::VectorXd w(m);
  for (Index a = 0; a < m; ++a) {
    const auto& v = scene.axes[std::size_t(a)].vel;
    if (!v) {
      if (fallback) *fallback = true;
      return Eigen::VectorXd::Ones(m);
    }
    w[a] = 1.0 / *v;
  }
  return w;
}

namespace {

std::string wp_name(std::size_t k) { return "waypoint " + std::to_string(k + 1); }

// Shortest round-trip text of a number, as the scene file would write it (not std::to_string's "0.000000").
std::string num_text(double v) {
  char buf[32];
  const auto r = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, r.ptr);
}

}  // namespace

void validate_scene(const Scene& s) {
  auto fail = [&](SourceLoc loc, const std::string& msg) { throw Error(s.file, loc, msg); };
  if (s.axes.empty()) fail({}, "the rig has no axes: add at least one under rig: axes:");
  for (std::size_t i = 0; i < s.axes.size(); ++i) {
    const AxisSpec& ax = s.axes[i];
    const std::string who = "axis '" + ax.name + "'";
    if (ax.min && ax.max && !(*ax.min < *ax.max))
      fail(ax.loc, who + ": min must be below max (min " + num_text(*ax.min) + ", max " + num_text(*ax.max) + ")");
    const std::pair<const char*, const std::optional<double>*> lims[] = {{"vel", &ax.vel}, {"acc", &ax.acc}, {"jerk", &ax.jerk}};
    for (const auto& [key, val] : lims)
      if (*val && !(**val > 0.0)) fail(ax.loc, who + ": '" + key + "' must be greater than 0 (omit it to leave it unchecked)");
  }
  const Index m = Index(s.axes.size());
  if (s.waypoints.size() < 2)
    fail(s.waypoints.empty() ? SourceLoc{} : s.waypoints.back().loc,
         "a move needs at least 2 waypoints, the scene has " + std::to_string(s.waypoints.size()));
  for (std::size_t k = 0; k < s.waypoints.size(); ++k) {
    const Waypoint& w = s.waypoints[k];
    if (Index(w.q.size()) != m) fail(w.loc, wp_name(k) + ": needs a value for each of the " + std::to_string(m) + " axes");
    for (double v : w.q)
      if (!std::isfinite(v)) fail(w.loc, wp_name(k) + ": positions must be finite numbers");
    if (!(w.hold_s >= 0.0) || !std::isfinite(w.hold_s)) fail(w.hold_loc, wp_name(k) + ": 'hold' must be 0 or more seconds");
  }
  const bool keyframes = s.timing.mode == TimingMode::kKeyframes;
  for (std::size_t k = 0; k < s.waypoints.size(); ++k) {
    const Waypoint& w = s.waypoints[k];
    if (keyframes && !w.t) fail(w.loc, wp_name(k) + ": 't' is missing (keyframes mode needs a time on every waypoint)");
    if (!keyframes && w.t)
      fail(w.t_loc, wp_name(k) + ": 't' is only allowed in keyframes mode (timing mode is " + to_string(s.timing.mode) + ")");
    if (w.t && !std::isfinite(*w.t)) fail(w.t_loc, wp_name(k) + ": 't' must be a finite number");
    if (keyframes && k > 0 && !(*w.t > *s.waypoints[k - 1].t))
      fail(w.t_loc, wp_name(k) + ": 't' must be greater than the previous waypoint's (" + num_text(*s.waypoints[k - 1].t) + ")");
  }
  if (s.timing.mode == TimingMode::kDuration) {
    if (!s.timing.duration_s) fail(s.timing.loc, "timing: mode duration needs 'duration' (seconds)");
    if (!(*s.timing.duration_s > 0.0)) fail(s.timing.duration_loc, "timing: 'duration' must be greater than 0 seconds");
  }
  if (!(s.timing.scale > 0.0 && s.timing.scale <= 1.0)) fail(s.timing.scale_loc, "timing: 'scale' must be in (0, 1]");
  if (s.path.weights) {
    const Eigen::VectorXd& w = *s.path.weights;
    if (w.size() != m) fail(s.path.weights_loc, "path: 'weights' needs one value per axis");
    for (Index a = 0; a < m; ++a)
      if (!(w[a] >= 0.0) || !std::isfinite(w[a])) fail(s.path.weights_loc, "path: weights must be finite and 0 or more");
    if (!(w.maxCoeff() > 0.0)) fail(s.path.weights_loc, "path: at least one weight must be greater than 0");
  }
  for (const auto* v : {&s.path.start, &s.path.end})
    if (*v && (v->value().size() != m || !v->value().allFinite()))
      fail(v == &s.path.start ? s.path.start_loc : s.path.end_loc, "path: end derivatives must be finite, one per axis");
  const Eigen::MatrixXd q = s.positions();
  if (s.path.ends == EndCondition::kPeriodic) {
    const std::size_t last = s.waypoints.size() - 1;
    for (Index a = 0; a < m; ++a)
      if (q(0, a) != q(Index(last), a))
        fail(s.waypoints[last].loc, "periodic path: the last waypoint must equal the first, but '" + s.axes[std::size_t(a)].name +
                                        "' is " + num_text(q(Index(last), a)) + " instead of " + num_text(q(0, a)) +
                                        " (repeat the first waypoint at the end, or use ends: not-a-knot)");
  }
  if (auto k = find_coincident(q, knot_weights(s)))
    fail(s.waypoints[std::size_t(*k) + 1].loc, wp_name(std::size_t(*k) + 1) + " coincides with " + wp_name(std::size_t(*k)) +
                                                   ": remove one of them (use 'hold' to dwell in place)");
}

const char* to_string(TimingMode mode) {
  switch (mode) {
    case TimingMode::kKeyframes: return "keyframes";
    case TimingMode::kDuration: return "duration";
    case TimingMode::kFastest: return "fastest";
  }
  return "?";
}

const char* to_string(EndCondition ends) {
  switch (ends) {
    case EndCondition::kNotAKnot: return "not-a-knot";
    case EndCondition::kNatural: return "natural";
    case EndCondition::kClamped: return "clamped";
    case EndCondition::kPeriodic: return "periodic";
  }
  return "?";
}

const char* to_string(KnotType knots) {
  switch (knots) {
    case KnotType::kUniform: return "uniform";
    case KnotType::kChord: return "chord";
    case KnotType::kCentripetal: return "centripetal";
  }
  return "?";
}

}  // namespace c2path
