// The viewer's document without a display: re-planning on edits (also in the background),
// invalid edits keeping the last valid plan, undo/redo, cancelled gestures, add/delete/reorder,
// saving; and the drawing samples (min/max tree, values taken from the trajectory, violations
// marked, the 3D thinning within its tolerance).

#include <catch2/catch.hpp>

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <random>
#include <string>
#include <thread>

#include "c2path/scene_yaml.hpp"
#include "document.hpp"
#include "samples.hpp"

using c2path::Index;
using c2path::viewer::Document;

namespace {
const std::string kScene = std::string(C2PATH_SCENES) + "/slider_pan.yaml";
double q(const Document& d, int k, int a) { return d.scene().waypoints[std::size_t(k)].q[std::size_t(a)]; }
}  // namespace

TEST_CASE("viewer document: loads and plans a demo scene", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  REQUIRE(d.shown() != nullptr);
  CHECK(d.load_error().empty());
  CHECK(d.up_to_date());
  CHECK(d.shown()->report.ok);
  CHECK(d.shown()->scene.waypoints.size() == 5);
  CHECK_FALSE(d.modified());
  CHECK_FALSE(d.can_undo());
}

TEST_CASE("viewer document: re-plans once per change, not on every call", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  const auto g0 = d.generation();
  CHECK_FALSE(d.replan());
  CHECK(d.generation() == g0);
  d.begin_gesture();
  d.edit().waypoints[2].q[0] = 1.3;
  d.changed();
  d.end_gesture();
  CHECK_FALSE(d.up_to_date());
  CHECK(d.replan());
  CHECK(d.generation() == g0 + 1);
  CHECK(d.shown()->scene.waypoints[2].q[0] == 1.3);
  CHECK_FALSE(d.replan());
  CHECK(d.modified());
}

TEST_CASE("viewer document: an invalid edit keeps the last valid plan", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  const auto* before = d.shown();
  d.begin_gesture();
  d.edit().waypoints[2].t = 1.0;  // before waypoint 2's time 2.5: out of order
  d.changed();
  d.end_gesture();
  CHECK_FALSE(d.replan());
  CHECK_FALSE(d.edit_error().empty());
  CHECK(d.edit_error().find("waypoint") != std::string::npos);
  CHECK(d.shown() == before);
  CHECK(d.shown()->scene.waypoints[2].t == 5.0);
  // Coincident waypoints are refused too.
  d.edit().waypoints[2].t = 5.0;
  d.edit().waypoints[2].q = d.scene().waypoints[1].q;
  d.edit().waypoints[2].t = 2.5 + 1e-3;
  d.changed();
  d.replan();
  // Fixing the scene brings a new plan and clears the error.
  d.edit().waypoints[2].q = {1.2, 0.0, -10.0};
  d.edit().waypoints[2].t = 5.0;
  d.changed();
  CHECK(d.replan());
  CHECK(d.edit_error().empty());
  CHECK(d.shown() != before);
}

TEST_CASE("viewer document: undo and redo restore whole gestures", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  d.begin_gesture();  // one drag: several changes, one undo step
  for (int i = 1; i <= 5; ++i) {
    d.edit().waypoints[1].q[1] = -20.0 + i;
    d.changed();
    d.replan();
  }
  d.end_gesture();
  d.begin_gesture();  // a gesture without a change leaves no step
  d.end_gesture();
  CHECK(q(d, 1, 1) == -15.0);
  REQUIRE(d.can_undo());
  CHECK(d.undo());
  CHECK(q(d, 1, 1) == -20.0);
  CHECK_FALSE(d.can_undo());
  CHECK(d.replan());
  CHECK(d.shown()->scene.waypoints[1].q[1] == -20.0);
  CHECK(d.redo());
  CHECK(q(d, 1, 1) == -15.0);
  CHECK_FALSE(d.can_redo());
  // A new edit after an undo drops the redo branch.
  CHECK(d.undo());
  d.begin_gesture();
  d.edit().waypoints[0].q[0] = 0.3;
  d.changed();
  d.end_gesture();
  CHECK_FALSE(d.can_redo());
}

namespace {
/// The plan of `s` made in the foreground, for comparing with a background one.
std::shared_ptr<const c2path::viewer::Planned> plan_now(const c2path::Scene& s) {
  auto p = std::make_shared<c2path::viewer::Planned>();
  p->scene = s;
  p->plan = c2path::plan(p->scene);
  p->report = c2path::check_limits(*p->plan.trajectory, p->plan.limits);
  return p;
}
void expect_same_plan(const c2path::viewer::Planned& a, const c2path::viewer::Planned& b) {
  REQUIRE(a.scene.waypoints.size() == b.scene.waypoints.size());
  for (std::size_t k = 0; k < a.scene.waypoints.size(); ++k) CHECK(a.scene.waypoints[k].q == b.scene.waypoints[k].q);
  CHECK(a.report.duration == b.report.duration);
  const auto& ta = *a.plan.trajectory;
  const auto& tb = *b.plan.trajectory;
  Eigen::VectorXd qa(ta.axes()), qb(tb.axes());
  for (int i = 0; i <= 20; ++i) {
    const double t = ta.t_begin() + (ta.t_end() - ta.t_begin()) * i / 20.0;
    ta.eval(t, 0, qa);
    tb.eval(t, 0, qb);
    CHECK(qa == qb);
  }
}
}  // namespace

TEST_CASE("viewer document: background planning never waits and ends with the latest scene", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  d.set_background(true);
  const std::thread::id ui = std::this_thread::get_id();
  auto planner = std::make_shared<std::thread::id>();
  int derives = 0;
  d.set_derive([&derives, planner]() -> Document::Derive {
    ++derives;  // on this thread, when a plan starts
    return [planner](c2path::viewer::Planned& p) {
      *planner = std::this_thread::get_id();
      auto s = std::make_shared<c2path::viewer::Samples>();
      s->build(p);
      p.samples = std::move(s);
    };
  });
  const auto g0 = d.generation();
  const auto shown0 = d.plans_shown();
  // A drag: waypoint 2 moves three times; the first change starts a plan, the others wait for it.
  d.begin_gesture();
  for (int i = 1; i <= 3; ++i) {
    d.edit().waypoints[1].q[0] = 0.65 + 0.01 * i;
    d.changed_waypoint(1);
    d.replan();
    CHECK_FALSE(d.up_to_date());
  }
  d.end_gesture();
  d.finish_planning();
  CHECK(d.up_to_date());
  CHECK_FALSE(d.planning());
  CHECK(d.generation() > g0);
  CHECK(d.plans_shown() > shown0);
  CHECK(derives >= 1);
  CHECK(derives <= 3);  // at most one plan per change, fewer when changes come faster than plans
  CHECK(*planner != std::thread::id());
  CHECK(*planner != ui);
  REQUIRE(d.shown() != nullptr);
  REQUIRE(d.shown()->samples != nullptr);
  CHECK(d.shown()->samples->n > 100);
  CHECK(d.shown()->scene.waypoints[1].q[0] == 0.65 + 0.03);
  expect_same_plan(*d.shown(), *plan_now(d.scene()));
  // The drag is one undo step (its snapshot shared with the planned copy), and redo brings it back.
  const double before_drag = 0.65;
  REQUIRE(d.undo());
  d.finish_planning();
  CHECK(d.scene().waypoints[1].q[0] == before_drag);
  CHECK(d.shown()->scene.waypoints[1].q[0] == before_drag);
  REQUIRE(d.redo());
  d.finish_planning();
  CHECK(d.shown()->scene.waypoints[1].q[0] == 0.65 + 0.03);
  expect_same_plan(*d.shown(), *plan_now(d.scene()));

  // Changes announced for one waypoint, then a change of another kind (a time): the planned
  // copy of the scene follows both.
  d.edit().waypoints[3].q[1] += 1.0;
  d.changed_waypoint(3);
  d.replan();
  d.edit().waypoints[2].q[2] -= 0.5;
  d.changed_waypoint(2);
  d.edit().waypoints[4].t = *d.scene().waypoints[4].t + 0.25;
  d.changed();
  d.finish_planning();
  CHECK(d.up_to_date());
  expect_same_plan(*d.shown(), *plan_now(d.scene()));
  CHECK(d.shown()->scene.waypoints[4].t == d.scene().waypoints[4].t);
  // A structural edit (a waypoint added) is planned from a full copy.
  d.add_waypoint_after(1);
  d.finish_planning();
  expect_same_plan(*d.shown(), *plan_now(d.scene()));

  // An invalid edit in the background keeps the last valid plan and reports the error.
  const auto* before = d.shown();
  d.edit().waypoints[2].t = 0.5;
  d.changed();
  d.finish_planning();
  CHECK_FALSE(d.edit_error().empty());
  CHECK(d.shown() == before);
  CHECK_FALSE(d.up_to_date());
}

TEST_CASE("viewer document: a cancelled gesture restores the scene and leaves no undo step", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  CHECK_FALSE(d.cancel_gesture());  // none open
  const auto q1 = d.scene().waypoints[1].q;
  d.add_waypoint_after(0);  // one undo step
  d.delete_waypoint(1);     // another; the scene is as loaded again, but modified
  REQUIRE(d.undo_depth() == 2);
  d.replan();
  d.begin_gesture();
  d.edit().waypoints[1].q[0] += 0.3;
  d.changed_waypoint(1);
  CHECK(d.replan());
  CHECK(d.shown()->scene.waypoints[1].q[0] == q1[0] + 0.3);
  CHECK(d.cancel_gesture());
  CHECK_FALSE(d.in_gesture());
  CHECK(d.scene().waypoints[1].q == q1);
  CHECK(d.undo_depth() == 2);
  CHECK(d.modified());  // it was before the gesture
  CHECK(d.replan());
  CHECK(d.shown()->scene.waypoints[1].q == q1);
  // Cancelling right after loading leaves the scene unmodified.
  REQUIRE(d.load(kScene));
  d.begin_gesture();
  d.edit().waypoints[1].q[1] = 5.0;
  d.changed();
  CHECK(d.modified());
  CHECK(d.cancel_gesture());
  CHECK_FALSE(d.modified());
  CHECK_FALSE(d.can_undo());
  CHECK(d.scene().waypoints[1].q == q1);
  // A gesture without a change: nothing to restore, still no undo step.
  d.begin_gesture();
  CHECK(d.cancel_gesture());
  CHECK_FALSE(d.can_undo());
}

TEST_CASE("viewer document: add, delete and reorder waypoints", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  d.add_waypoint_after(1);  // between waypoints 2 and 3 (t 2.5 and 5)
  REQUIRE(d.scene().waypoints.size() == 6);
  CHECK(d.scene().waypoints[2].t == 3.75);
  CHECK(q(d, 2, 0) == Approx(0.5 * (0.65 + 1.2)));
  CHECK(d.scene().waypoints[2].q_loc.size() == 3);
  CHECK(d.replan());
  CHECK(d.shown()->plan.waypoint_times.size() == 6);
  d.add_waypoint_after(5);  // after the last: continues the last leg
  CHECK(d.scene().waypoints.back().t == 12.5);
  d.delete_waypoint(6);
  d.delete_waypoint(2);
  CHECK(d.scene().waypoints.size() == 5);
  d.move_waypoint(0, +1);  // positions swap, times stay increasing
  CHECK(q(d, 0, 0) == 0.65);
  CHECK(q(d, 1, 0) == 0.20);
  CHECK(d.scene().waypoints[0].t == 0.0);
  CHECK(d.replan());
  int undos = 0;
  while (d.undo()) ++undos;
  CHECK(undos == 5);
  CHECK(q(d, 0, 0) == 0.20);
  CHECK(d.scene().waypoints.size() == 5);
}

TEST_CASE("viewer document: save writes a scene that loads back with the edits", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  d.edit().waypoints[3].q[2] = -7.25;
  d.changed();
  const auto out = std::filesystem::temp_directory_path() / "c2path_viewer_doc_test.yaml";
  d.save(out.string());
  CHECK_FALSE(d.modified());
  const c2path::Scene back = c2path::load_scene_file(out.string());
  CHECK(back.waypoints[3].q[2] == -7.25);
  CHECK(back.waypoints.size() == 5);
  std::filesystem::remove(out);
}

TEST_CASE("viewer document: a file that does not load reports its error and keeps the old scene", "[viewer]") {
  Document d;
  REQUIRE(d.load(kScene));
  const auto bad = std::filesystem::temp_directory_path() / "c2path_viewer_bad.yaml";
  {
    std::FILE* f = std::fopen(bad.string().c_str(), "w");
    REQUIRE(f);
    std::fputs("format: 1\nrig: [\n", f);
    std::fclose(f);
  }
  CHECK_FALSE(d.load(bad.string()));
  CHECK(d.load_error().find("c2path_viewer_bad.yaml:") != std::string::npos);
  CHECK(d.has_scene());
  CHECK(d.shown() != nullptr);
  std::filesystem::remove(bad);
  Document fresh;
  CHECK_FALSE(fresh.load(bad.string()));
  CHECK_FALSE(fresh.has_scene());
  CHECK(fresh.shown() == nullptr);
}

// ---- drawing samples ------------------------------------------------------------------------

TEST_CASE("viewer samples: the min/max tree agrees with a scan on every range", "[viewer]") {
  std::mt19937 rng(7);
  std::uniform_real_distribution<float> u(-5.0f, 5.0f);
  for (std::size_t n : {1u, 2u, 15u, 16u, 17u, 100u, 1000u}) {
    std::vector<float> v(n);
    for (auto& x : v) x = u(rng);
    const c2path::viewer::MinMaxTree tree(v.data(), n);
    std::uniform_int_distribution<std::size_t> pick(0, n - 1);
    for (int trial = 0; trial < 300; ++trial) {
      std::size_t a = pick(rng), b = pick(rng);
      if (a > b) std::swap(a, b);
      ++b;
      float lo = 0, hi = 0;
      tree.query(a, b, lo, hi);
      const auto [mn, mx] = std::minmax_element(v.begin() + long(a), v.begin() + long(b));
      INFO("n " << n << " range " << a << " .. " << b);
      CHECK(lo == *mn);
      CHECK(hi == *mx);
    }
  }
}

TEST_CASE("viewer samples: values are the trajectory's, violations are marked beyond 100 %", "[viewer]") {
  Document d;
  REQUIRE(d.load(std::string(C2PATH_SCENES) + "/whip_pan_violation.yaml"));
  const auto& planned = *d.shown();
  REQUIRE_FALSE(planned.report.violations.empty());
  c2path::viewer::Samples s;
  s.build(planned);
  REQUIRE(s.n >= 4096);
  CHECK(s.t.front() == planned.plan.trajectory->t_begin());
  CHECK(s.t.back() == planned.plan.trajectory->t_end());
  for (std::size_t i = 1; i < s.n; ++i) REQUIRE(s.t[i] >= s.t[i - 1]);
  Eigen::MatrixXd out(planned.plan.trajectory->axes(), 4);
  for (std::size_t i = 0; i < s.n; i += 97) {
    planned.plan.trajectory->eval_all(s.t[i], out);
    for (std::size_t a = 0; a < s.axes; ++a)
      for (int k = 0; k < 4; ++k)
        REQUIRE(double(s.series(k, a)[i]) == Approx(out(Index(a), k)).margin(1e-4 * (1.0 + std::abs(out(Index(a), k)))));
  }
  for (const auto& v : planned.report.violations)
    for (std::size_t i = 0; i < s.n; ++i)
      if (s.t[i] >= v.t_start && s.t[i] <= v.t_end) REQUIRE(s.pct[i] > 100.0f);
  // The whole-move range of each series covers the report's exact peaks (up to float rounding).
  for (std::size_t a = 0; a < s.axes; ++a) {
    const auto& pk = planned.report.peaks[a];
    CHECK(double(s.lo[0][a]) <= pk.pos_min + 1e-3 * (1 + std::abs(pk.pos_min)) + 1e-2 * (pk.pos_max - pk.pos_min));
    CHECK(double(s.hi[0][a]) >= pk.pos_max - 1e-2 * (pk.pos_max - pk.pos_min) - 1e-3);
  }
}

TEST_CASE("viewer samples: the 3D thinning keeps every sample within its tolerance of the kept chords", "[viewer]") {
  Document d;
  REQUIRE(d.load(std::string(C2PATH_SCENES) + "/turntable_orbit.yaml"));
  c2path::viewer::Samples s;
  s.build(*d.shown());
  REQUIRE(s.axes >= 2);
  c2path::viewer::ThinParams tp;
  tp.map[2] = s.axes >= 3 ? 2 : -1;
  for (int k = 0; k < 3; ++k) {
    if (tp.map[k] < 0) continue;
    tp.centre[k] = 0.5 * (s.lo[0][tp.map[k]] + s.hi[0][tp.map[k]]);
    tp.half[k] = std::max(1e-9, 0.5 * double(s.hi[0][tp.map[k]] - s.lo[0][tp.map[k]]));
  }
  for (float scale : {40.0f, 300.0f, 5000.0f}) {
    tp.step = std::floor(std::log2(scale) * 2.0f);
    const auto thin = c2path::viewer::thin_path_3d(s, tp);
    REQUIRE(thin.idx.size() >= 2);
    CHECK(thin.idx.front() == 0);
    CHECK(thin.idx.back() == s.n - 1);
    CHECK(thin.idx.size() == thin.val.size());
    // The bound the viewer relies on: eps = 0.3 px at the largest scale of the zoom step.
    const double eps = 0.3 / std::exp2((tp.step + 1.0) * 0.5);
    auto c3 = [&](std::size_t i, int k) {
      return tp.map[k] < 0 ? 0.0 : (double(s.series(0, std::size_t(tp.map[k]))[i]) - tp.centre[k]) / tp.half[k];
    };
    double worst = 0.0;
    for (std::size_t j = 1; j < thin.idx.size(); ++j) {
      const std::size_t a = thin.idx[j - 1], b = thin.idx[j];
      REQUIRE(b > a);
      for (std::size_t p = a + 1; p < b; ++p) {
        double ab[3], ap[3], l2 = 0, dot = 0;
        for (int k = 0; k < 3; ++k) {
          ab[k] = c3(b, k) - c3(a, k);
          ap[k] = c3(p, k) - c3(a, k);
          l2 += ab[k] * ab[k];
          dot += ab[k] * ap[k];
        }
        const double t = l2 > 0 ? std::clamp(dot / l2, 0.0, 1.0) : 0.0;
        double d2 = 0;
        for (int k = 0; k < 3; ++k) d2 += (ap[k] - t * ab[k]) * (ap[k] - t * ab[k]);
        worst = std::max(worst, std::sqrt(d2));
      }
    }
    INFO("scale " << scale << ": " << thin.idx.size() << " of " << s.n << " samples kept, worst " << worst << ", eps " << eps);
    CHECK(worst <= eps * (1.0 + 1e-3) + 1e-6);
    CHECK(thin.idx.size() < s.n);  // it does thin
  }
}
