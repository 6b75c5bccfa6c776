#include "c2path/timing.hpp"

#include <string>

#include "c2path/error.hpp"
#include "c2path/knots.hpp"

namespace c2path {

namespace {

SplineOptions spline_options(const Scene& s) {
  SplineOptions o;
  o.ends = s.path.ends;
  if (o.ends == EndCondition::kClamped) {
    const Index m = Index(s.axes.size());
    o.start_slope = s.path.start ? *s.path.start : Eigen::VectorXd::Zero(m);
    o.end_slope = s.path.end ? *s.path.end : Eigen::VectorXd::Zero(m);
  }
  return o;
}

}  // namespace

Plan build_path(const Scene& scene) {
  Plan p;
  p.limits = scene_limits(scene);
  const Eigen::MatrixXd q = scene.positions();
  for (std::size_t k = 0; k < scene.waypoints.size(); ++k) {
    const Waypoint& w = scene.waypoints[k];
    if (w.stop)
      throw Error(scene.file, w.stop_loc, "waypoint " + std::to_string(k + 1) +
                                              ": 'stop' is not supported yet (planned with the timing modes); remove it");
    if (w.hold_s > 0.0)
      throw Error(scene.file, w.hold_loc, "waypoint " + std::to_string(k + 1) +
                                              ": 'hold' is not supported yet (planned with the timing modes); remove it");
  }
  if (scene.path.ends != EndCondition::kClamped && (scene.path.start || scene.path.end))
    p.notes.push_back(std::string("path: 'start'/'end' apply only to ends: clamped; ignored with ends: ") +
                      to_string(scene.path.ends));
  if (scene.timing.mode == TimingMode::kKeyframes) {
    p.knots = scene.times();
    if (scene.timing.duration_s) p.notes.push_back("timing: 'duration' applies only to mode: duration; ignored");
  } else {
    bool fallback = false;
    const Eigen::VectorXd w = knot_weights(scene, &fallback);
    if (fallback)
      p.notes.push_back("knot weights: some axis has no 'vel' limit and no weights are given, so every axis has weight 1");
    try {
      p.knots = compute_knots(q, scene.path.knots, w, 0.0);
    } catch (const Error& e) {
      throw Error(scene.file, scene.waypoints.front().loc, e.message());
    }
  }
  try {
    std::vector<CubicSpline> segs;
    segs.push_back(CubicSpline::fit(p.knots, q, spline_options(scene)));
    p.path = std::make_shared<SplinePath>(std::move(segs));
  } catch (const Error& e) {
    if (!e.file().empty()) throw;
    throw Error(scene.file, scene.path.loc, e.message());
  }
  return p;
}

Plan plan(const Scene& scene) {
  if (scene.timing.mode != TimingMode::kKeyframes)
    throw Error(scene.file, scene.timing.mode_loc,
                std::string("timing: mode ") + to_string(scene.timing.mode) +
                    " is not supported yet; use mode: keyframes with a time 't' on every waypoint");
  Plan p = build_path(scene);
  const auto* sp = static_cast<const SplinePath*>(p.path.get());
  p.trajectory = std::make_shared<CubicTrajectory>(sp->segments());
  p.waypoint_times = p.knots;
  return p;
}

}  // namespace c2path
