// Tests of timing under limits (timing.hpp, time_law.hpp): duration and fastest modes, stops and
// holds, and the sampled limit check. The source of every expected value is named beside its
// check: Biagiotti & Melchiorri, "Trajectory Planning for Automatic Machines and Robots",
// Springer 2008 (B&M below), ch. 3 for the trapezoidal and double-S profiles; "identity" for a
// mathematical identity; "hand" for values worked out on paper. Values recalled from memory are
// marked so and recomputed here from the book's equations.

#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <fstream>
#include <numbers>
#include <string>
#include <vector>

#include "c2path/error.hpp"
#include "c2path/limits.hpp"
#include "c2path/scene_yaml.hpp"
#include "c2path/time_law.hpp"
#include "c2path/timing.hpp"
#include "test_util.hpp"

namespace {

using namespace c2path;

Plan plan_text(const std::string& yaml) { return plan(load_scene_text(yaml, "test.yaml")); }

// One axis, rest to rest over h, with the given limits (a limit <= 0 is left out), fastest mode.
std::string one_axis(double h, double v, double a, double j, const std::string& timing = "{mode: fastest}") {
  std::string lim = "vel: " + std::to_string(v) + ", acc: " + std::to_string(a);
  if (j > 0) lim += ", jerk: " + std::to_string(j);
  return "format: 1\nrig:\n  axes:\n    - {name: x, unit: m, " + lim + "}\ntiming: " + timing +
         "\nwaypoints:\n  - {x: 0}\n  - {x: " + std::to_string(h) + "}\n";
}

// Trapezoidal velocity profile, rest to rest (B&M ch. 3, trapezoidal profile with limits on v and a):
// T = h/v + v/a when h >= v^2/a (the cruise speed is reached), else the triangle T = 2 sqrt(h/a).
double trapezoid_time(double h, double v, double a) { return h >= v * v / a ? h / v + v / a : 2.0 * std::sqrt(h / a); }

// Samples q at `rate` Hz over the whole move.
struct Sampled {
  std::vector<double> t;
  std::vector<Eigen::MatrixXd> x;  // axes x 4 per sample
};
Sampled sample(const Trajectory& tr, double rate) {
  Sampled s;
  const auto n = std::size_t(std::floor(tr.duration() * rate));
  Eigen::MatrixXd st(tr.axes(), 4);
  for (std::size_t k = 0; k <= n; ++k) {
    const double t = tr.t_begin() + double(k) / rate;
    tr.eval_all(t, st);
    s.t.push_back(t);
    s.x.push_back(st);
  }
  return s;
}

}  // namespace

// ---- fastest mode against closed forms ------------------------------------------------------

TEST_CASE("timing: fastest one axis, v and a only, matches the trapezoid and the triangle", "[timing]") {
  struct Case {
    double h, v, a;
  };
  // Both branches of B&M ch. 3: h >= v^2/a (trapezoid) and h < v^2/a (triangle).
  for (const Case c : {Case{10.0, 2.0, 1.0}, Case{2.0, 2.0, 1.0}, Case{0.5, 3.0, 4.0}, Case{40.0, 1.5, 0.6}}) {
    const Plan p = plan_text(one_axis(c.h, c.v, c.a, 0.0));
    const double T = p.trajectory->duration();
    const double ref = trapezoid_time(c.h, c.v, c.a);  // B&M ch. 3
    INFO("h " << c.h << " v " << c.v << " a " << c.a << ": T " << T << " vs " << ref);
    CHECK(T >= ref * (1.0 - 1e-9));  // nothing is faster than the time-optimal profile (B&M ch. 3)
    CHECK(T <= ref * 1.005);         // issue 3: fastest within 0.5%
    const Report r = check_limits(*p.trajectory, p.limits);
    CHECK(r.ok);
    CHECK(r.exact);  // a composed time law on a spline path is piecewise polynomial: checked exactly
    // It ends where it should, at rest (identity: q(u_end) is the last waypoint).
    Eigen::MatrixXd st(1, 4);
    p.trajectory->eval_all(p.trajectory->t_end(), st);
    CHECK(std::abs(st(0, 0) - c.h) <= 1e-12 * c.h);
    CHECK(std::abs(st(0, 1)) <= 1e-12);
    CHECK(std::abs(st(0, 2)) <= 1e-9);
  }
}

TEST_CASE("timing: fastest with a jerk limit matches the double-S profile", "[timing]") {
  // B&M §3.4, double-S with q0 = 0, q1 = 10, v_max = 5, a_max = 10, j_max = 30 (values recalled from
  // memory, recomputed here from the book's equations for the case where a_max and v_max are reached):
  const double h = 10, v = 5, a = 10, j = 30;
  REQUIRE(v * j >= a * a);              // a_max is reached: Tj = a_max / j_max
  const double Tj = a / j;              // 1/3
  const double Ta = Tj + v / a;         // 5/6
  const double Tv = h / v - Ta;         // 7/6 (> 0: v_max is reached)
  REQUIRE(Tv > 0);
  const double T = Ta + Tv + Ta;        // 17/6
  CHECK(Tj == Approx(1.0 / 3.0));
  CHECK(Ta == Approx(5.0 / 6.0));
  CHECK(Tv == Approx(7.0 / 6.0));
  CHECK(T == Approx(17.0 / 6.0));
  const Plan p = plan_text(one_axis(h, v, a, j));
  const double got = p.trajectory->duration();
  INFO("fastest " << got << " vs double-S " << T);
  CHECK(got >= T * (1.0 - 1e-9));  // B&M §3.4: the double-S is time-optimal for these limits
  CHECK(got <= T * 1.01);          // issue 3: within 1%
  const Report r = check_limits(*p.trajectory, p.limits);
  CHECK(r.ok);
  // Every limit is used (the profile of B&M §3.4 reaches all three).
  CHECK(r.peaks[0].vel >= 0.99 * v);
  CHECK(r.peaks[0].acc >= 0.99 * a);
  CHECK(r.peaks[0].jerk >= 0.99 * j);
  // What binds: vel in the middle (B&M §3.4: cruise on [Ta, Ta + Tv]) and acc before it.
  bool vel_mid = false, acc_early = false;
  for (const Binding& b : p.binding) {
    if (b.quantity == Quantity::kVel && b.t_start < 0.5 * got && b.t_end > 0.5 * got) vel_mid = true;
    if (b.quantity == Quantity::kAcc && b.t_end < 0.5 * got) acc_early = true;
  }
  CHECK(vel_mid);
  CHECK(acc_early);
}

TEST_CASE("timing: fastest on a straight line, the slowest axis governs and all arrive together", "[timing]") {
  // Three axes moving by (1, 2, -3) on one straight line: along the path parameter s in [0, 1] the
  // limits are v_s = min(v_a / |h_a|) and a_s = min(a_a / |h_a|) (hand); here axis z governs both.
  const std::string yaml = R"(format: 1
rig:
  axes:
    - {name: x, vel: 4, acc: 8}
    - {name: y, vel: 5, acc: 9}
    - {name: z, vel: 1.5, acc: 2}
timing: {mode: fastest}
waypoints:
  - {x: 0, y: 0, z: 0}
  - {x: 1, y: 2, z: -3}
)";
  const Plan p = plan_text(yaml);
  const double vs = std::min({4.0 / 1, 5.0 / 2, 1.5 / 3}), as = std::min({8.0 / 1, 9.0 / 2, 2.0 / 3});
  REQUIRE(vs == 0.5);
  REQUIRE(as == 2.0 / 3);
  const double ref = trapezoid_time(1.0, vs, as);  // B&M ch. 3 on the governing axis
  const double T = p.trajectory->duration();
  CHECK(T >= ref * (1.0 - 1e-9));
  CHECK(T <= ref * 1.005);
  const Report r = check_limits(*p.trajectory, p.limits);
  CHECK(r.ok);
  CHECK(r.peaks[2].vel >= 0.99 * 1.5);  // z sits at its limit
  CHECK(r.peaks[0].vel < 0.5 * 4);      // the others do not
  // All axes stay on the line (identity: q(t) = s(t) * (1, 2, -3)) and arrive together.
  const Sampled s = sample(*p.trajectory, 200.0);
  for (std::size_t k = 0; k < s.t.size(); ++k) {
    const double f = s.x[k](0, 0);
    C2PATH_CHECK_NEAR("y on the line", k, s.x[k](1, 0), 2 * f, 0.0, 1e-9);
    C2PATH_CHECK_NEAR("z on the line", k, s.x[k](2, 0), -3 * f, 0.0, 1e-9);
  }
  Eigen::MatrixXd end(3, 4);
  p.trajectory->eval_all(p.trajectory->t_end(), end);
  CHECK(end(0, 0) == Approx(1.0).epsilon(1e-12));
  CHECK(end(1, 0) == Approx(2.0).epsilon(1e-12));
  CHECK(end(2, 0) == Approx(-3.0).epsilon(1e-12));
}

namespace {
const char* kThreeAxisTour = R"(format: 1
rig:
  axes:
    - {name: track, unit: m,   vel: 0.8, acc: 1.5}
    - {name: pan,   unit: deg, vel: 60,  acc: 120}
    - {name: tilt,  unit: deg, vel: 40,  acc: 80}
timing: {mode: fastest}
waypoints:
  - {track: 0.2, pan: -30, tilt: 0}
  - {track: 0.7, pan: 10, tilt: 12}
  - {track: 1.3, pan: 40, tilt: -5}
  - {track: 1.1, pan: 5, tilt: -20}
  - {track: 1.9, pan: -25, tilt: 8}
  - {track: 2.2, pan: 0, tilt: 0}
)";
}

TEST_CASE("timing: fastest accel-limited duration converges with the grid", "[timing]") {
  // Convergence of a discretised optimum (identity: refining the grid 10x moves the duration by
  // less than the discretisation error; issue 3 asks for 0.5%).
  const Scene sc = load_scene_text(kThreeAxisTour, "tour.yaml");
  const Plan p = build_path(sc);
  FastestOptions coarse, fine;
  fine.grid_factor = 10;
  const FastestResult a = plan_fastest(*p.path, p.limits, p.holds_s, coarse);
  const FastestResult b = plan_fastest(*p.path, p.limits, p.holds_s, fine);
  REQUIRE(b.grid_points >= 10 * (a.grid_points - 1));
  const double Ta = a.law->t_end() - a.law->t_begin(), Tb = b.law->t_end() - b.law->t_begin();
  INFO("grid " << a.grid_points << ": " << Ta << " s; grid " << b.grid_points << ": " << Tb << " s");
  CHECK(std::abs(Ta - Tb) <= 0.005 * Tb);
}

TEST_CASE("timing: fastest sampled at 10 kHz stays within every limit and is C2", "[timing]") {
  const Plan p = plan_text(kThreeAxisTour);
  const Report r = check_limits(*p.trajectory, p.limits);
  CHECK(r.ok);
  const double h = 1e-4;  // 10 kHz
  const Sampled s = sample(*p.trajectory, 1.0 / h);
  REQUIRE(s.t.size() > 100);
  // Finite differences of the positions: by the mean value theorem a first difference is a
  // velocity somewhere in the step and a second difference h^-2 (q+ - 2q + q-) an acceleration
  // somewhere in [t - h, t + h] (identity), so neither may exceed its limit beyond rounding:
  // |error| <= 2 eps |q| / h and 4 eps |q| / h^2 (hand; eps = 2^-52), plus 1e-9 of the limit.
  const double eps = std::numeric_limits<double>::epsilon();
  for (Index a = 0; a < 3; ++a) {
    const double vmax = *p.limits[std::size_t(a)].vel, amax = *p.limits[std::size_t(a)].acc;
    double qmax = 0;
    for (const auto& x : s.x) qmax = std::max(qmax, std::abs(x(a, 0)));
    const double vtol = 2 * eps * qmax / h + 1e-9 * vmax, atol = 4 * eps * qmax / (h * h) + 1e-9 * amax;
    double worst_v = 0, worst_a = 0;
    for (std::size_t k = 0; k + 1 < s.t.size(); ++k) {
      worst_v = std::max(worst_v, std::abs(s.x[k + 1](a, 0) - s.x[k](a, 0)) / h);
      if (k > 0) worst_a = std::max(worst_a, std::abs(s.x[k + 1](a, 0) - 2 * s.x[k](a, 0) + s.x[k - 1](a, 0)) / (h * h));
    }
    INFO("axis " << a << ": finite-difference vel " << worst_v << " / " << vmax << ", acc " << worst_a << " / " << amax);
    CHECK(worst_v <= vmax + vtol);
    CHECK(worst_a <= amax + atol);
  }
  // C2: no acceleration jumps. Between samples h apart the acceleration changes by at most
  // peak |jerk| * h (mean value theorem, identity); a jump would show as a larger change.
  for (Index a = 0; a < 3; ++a) {
    const double J = r.peaks[std::size_t(a)].jerk;
    double worst = 0;
    for (std::size_t k = 0; k + 1 < s.t.size(); ++k) worst = std::max(worst, std::abs(s.x[k + 1](a, 2) - s.x[k](a, 2)));
    INFO("axis " << a << ": largest acceleration step " << worst << ", bound " << J * h);
    CHECK(worst <= J * h * (1 + 1e-6) + 1e-9);
  }
  // And at every break of the trajectory, from both sides (identity: continuity of q, q', q'').
  Eigen::MatrixXd l(3, 4), rr(3, 4);
  for (double t : p.trajectory->breaks()) {
    if (t <= p.trajectory->t_begin() || t >= p.trajectory->t_end()) continue;
    // The gap as represented. 2e-7 s rather than less: the smoothed law's du/dt is a difference
    // of two base-law values divided by the window, so a velocity carries a rounding error of
    // about 1e-13 here, which must stay far below peak |acc| x gap (hand estimate).
    const double tm = t - 1e-7, tp = t + 1e-7, gap = tp - tm;
    p.trajectory->eval_all(tm, l);
    p.trajectory->eval_all(tp, rr);
    for (Index a = 0; a < 3; ++a) {
      const double J = r.peaks[std::size_t(a)].jerk;
      INFO("break t " << t << " axis " << a);
      CHECK(std::abs(l(a, 2) - rr(a, 2)) <= J * gap * (1 + 1e-6) + 1e-9);
      // |acc| <= the check's peak plus its stated bound on what the samples miss (limits.hpp).
      const double A = r.peaks[std::size_t(a)].acc + r.sample_bound * *p.limits[std::size_t(a)].acc;
      CHECK(std::abs(l(a, 1) - rr(a, 1)) <= A * gap * (1 + 1e-6) + 1e-12);
    }
  }
}

TEST_CASE("timing: fastest plans against scale x limits and checks against the real ones", "[timing]") {
  // Uniform slow-down (identity): at half the limits the trapezoid of B&M ch. 3 takes
  // h/(v/2) + (v/2)/(a/2) = 2h/v + v/a.
  const double h = 10, v = 2, a = 1;
  const Plan full = plan_text(one_axis(h, v, a, 0.0));
  const Plan half = plan_text(one_axis(h, v, a, 0.0, "{mode: fastest, scale: 0.5}"));
  const double ref = trapezoid_time(h, 0.5 * v, 0.5 * a);
  CHECK(half.trajectory->duration() >= ref * (1 - 1e-9));
  CHECK(half.trajectory->duration() <= ref * 1.005);
  const Report r = check_limits(*half.trajectory, half.limits);
  CHECK(r.ok);
  CHECK(r.peaks[0].vel <= 0.5 * v * (1 + 1e-6));  // the real limits leave the rehearsal room
  CHECK(r.peaks[0].vel >= 0.49 * v);
  CHECK(full.trajectory->duration() < half.trajectory->duration());
}

// ---- duration mode --------------------------------------------------------------------------

TEST_CASE("timing: duration mode hits the requested duration", "[timing]") {
  for (double T : {0.37, 4.0, 12.5, 1000.0 / 3.0}) {
    const Plan p = plan_text(one_axis(10.0, 100.0, 100.0, 0.0, "{mode: duration, duration: " + std::to_string(T) + "}"));
    const double want = std::stod(std::to_string(T));  // the value the scene file holds
    CHECK(std::abs(p.trajectory->duration() - want) <= 1e-9);  // issue 3: to 1e-9 s
    CHECK(p.trajectory->t_begin() == 0.0);
  }
  // With holds: the holds are part of the duration.
  const std::string yaml = R"(format: 1
rig:
  axes:
    - {name: x, vel: 10, acc: 10}
    - {name: y, vel: 10, acc: 10}
timing: {mode: duration, duration: 9.25}
waypoints:
  - {x: 0, y: 0, hold: 0.5}
  - {x: 1, y: 2, hold: 1.25}
  - {x: 3, y: 1, stop: true}
  - {x: 2, y: 0, hold: 0.75}
)";
  const Plan p = plan_text(yaml);
  CHECK(std::abs(p.trajectory->duration() - 9.25) <= 1e-9);
  CHECK(p.hold_total_s == Approx(2.5));
  // The quintic profile u = L (10 s^3 - 15 s^4 + 6 s^5) peaks at 15/8 L / T in speed (hand, at s = 1/2).
  const Plan q = plan_text(one_axis(10.0, 100.0, 100.0, 0.0, "{mode: duration, duration: 4}"));
  const Report r = check_limits(*q.trajectory, q.limits);
  CHECK(r.peaks[0].vel == Approx(15.0 / 8.0 * 10.0 / 4.0).epsilon(1e-9));
  // Peak acceleration of the quintic: 10 sqrt(3) / 3 L / T^2 at s = 1/2 - sqrt(3)/6 (hand).
  CHECK(r.peaks[0].acc == Approx(10.0 * std::sqrt(3.0) / 3.0 * 10.0 / 16.0).epsilon(1e-6));
}

TEST_CASE("timing: an infeasible duration is reported with the shortest feasible one", "[timing]") {
  const std::string text = one_axis(10.0, 5.0, 10.0, 30.0, "{mode: duration, duration: 2}");
  const Scene sc = load_scene_text(text, "short.yaml");
  const Plan p = plan(sc);
  const Report r = check_limits(*p.trajectory, p.limits);
  CHECK_FALSE(r.ok);
  const auto Tmin = shortest_duration(p, r);
  REQUIRE(Tmin);
  CHECK(*Tmin > 2.0);
  // The quintic's peak speed 15/8 h / T (hand) alone needs T >= 15/8 * 10 / 5 = 3.75 s.
  CHECK(*Tmin >= 3.75 * (1 - 1e-9));
  // Replanned at the shortest duration (and a hair above) the move is within limits; a little
  // shorter it is not (identity: uniform time scaling, v ~ 1/k, a ~ 1/k^2, j ~ 1/k^3).
  auto at = [&](double T) {
    Scene s2 = sc;
    s2.timing.duration_s = T;
    const Plan p2 = plan(s2);
    return check_limits(*p2.trajectory, p2.limits);
  };
  CHECK(at(*Tmin * (1 + 1e-6)).ok);
  CHECK_FALSE(at(*Tmin * (1 - 1e-3)).ok);
  // The command line: exit 1 and the shortest feasible duration in the table and in the JSON.
  const std::string file = "timing_test_short.yaml";
  std::ofstream(file) << text;
  const std::string cmd = std::string(C2PATH_CLI) + " check " + file + " > timing_test_out.txt 2>&1";
  const int status = std::system(cmd.c_str());
  REQUIRE(WIFEXITED(status));
  CHECK(WEXITSTATUS(status) == 1);
  std::ifstream in("timing_test_out.txt");
  const std::string out((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  CHECK(out.find("shortest feasible duration: ") != std::string::npos);
  const std::string cmdj = std::string(C2PATH_CLI) + " check --json " + file + " > timing_test_out.json 2>&1";
  const int sj = std::system(cmdj.c_str());
  CHECK(WEXITSTATUS(sj) == 1);
  std::ifstream inj("timing_test_out.json");
  const std::string js((std::istreambuf_iterator<char>(inj)), std::istreambuf_iterator<char>());
  CHECK(js.find("\"shortest_duration\":") != std::string::npos);
  CHECK(js.find("\"binding\":[]") != std::string::npos);
  std::remove(file.c_str());
  std::remove("timing_test_out.txt");
  std::remove("timing_test_out.json");
}

// ---- stops and holds --------------------------------------------------------------------------

namespace {
std::string stop_scene(const std::string& timing, bool with_t) {
  auto t = [&](const char* v) { return with_t ? std::string("t: ") + v + ", " : std::string(); };
  return "format: 1\nrig:\n  axes:\n    - {name: x, vel: 2, acc: 4, jerk: 40}\n    - {name: y, vel: 2, acc: 4, jerk: 40}\n"
         "timing: " + timing + "\nwaypoints:\n"
         "  - {" + t("0") + "x: 0, y: 0}\n"
         "  - {" + t("1.5") + "x: 1, y: 0.5}\n"
         "  - {" + t("3") + "x: 2, y: 0, stop: true}\n"
         "  - {" + t("4.5") + "x: 2.5, y: 1, hold: 0.8}\n"
         "  - {" + t("6.5") + "x: 1.5, y: 1.5}\n";
}
}  // namespace

TEST_CASE("timing: stops rest at the waypoint and holds last exactly their time, in every mode", "[timing]") {
  for (const std::string& timing : {std::string("{mode: keyframes}"), std::string("{mode: duration, duration: 9}"),
                                    std::string("{mode: fastest}")}) {
    INFO(timing);
    const Scene sc = load_scene_text(stop_scene(timing, timing == "{mode: keyframes}"), "stops.yaml");
    const Plan p = plan(sc);
    const auto* sp = dynamic_cast<const SplinePath*>(p.path.get());
    REQUIRE(sp);
    REQUIRE(sp->segments().size() == 3);  // split at the stop and at the hold
    const Eigen::MatrixXd q = sc.positions();
    // Both splines meet the waypoint (identity: interpolation).
    for (std::size_t j = 0; j + 1 < sp->segments().size(); ++j) {
      const std::size_t w = j == 0 ? 2 : 3;
      for (Index a = 0; a < 2; ++a) {
        CHECK(sp->segments()[j].eval(sp->segments()[j].u_end(), a) == Approx(q(Index(w), a)).margin(1e-12));
        CHECK(sp->segments()[j + 1].eval(sp->segments()[j + 1].u_begin(), a) == Approx(q(Index(w), a)).margin(1e-12));
      }
    }
    // At the stop and during the hold: at the waypoint, velocity and acceleration zero.
    Eigen::MatrixXd st(2, 4);
    const double t_stop = p.waypoint_times[2], t_hold = p.waypoint_times[3];
    for (double t : {t_stop, t_stop - 1e-12, t_hold, t_hold + 0.4, t_hold + 0.8}) {
      p.trajectory->eval_all(t, st);
      const int w = t < t_hold ? 2 : 3;
      INFO("t " << t);
      for (Index a = 0; a < 2; ++a) {
        CHECK(st(a, 0) == Approx(q(w, a)).margin(1e-9));
        CHECK(std::abs(st(a, 1)) <= 1e-9);
        CHECK(std::abs(st(a, 2)) <= 1e-6);
      }
    }
    // The hold lasts exactly 0.8 s: at rest at t_hold + 0.8 - eps, moving right after.
    p.trajectory->eval_all(t_hold + 0.8 + 1e-3, st);
    CHECK(std::abs(st(0, 0) - q(3, 0)) + std::abs(st(1, 0) - q(3, 1)) > 0.0);
    if (p.time_law) {
      const std::vector<double> pt = p.time_law->part_times();
      bool found = false;
      for (std::size_t k = 0; k + 1 < pt.size(); ++k)
        if (std::abs(pt[k] - t_hold) <= 1e-9) {
          found = true;
          CHECK(std::abs((pt[k + 1] - pt[k]) - 0.8) <= 1e-12);
        }
      CHECK(found);
    } else {
      const auto* pieces = p.trajectory->cubic_pieces();
      REQUIRE(pieces);
      bool found = false;
      for (const auto& piece : *pieces)
        if (std::abs(piece.u_begin() - 4.5) <= 1e-12) {
          found = true;
          CHECK(std::abs(piece.u_end() - piece.u_begin() - 0.8) <= 1e-12);
        }
      CHECK(found);
      // Keyframes: still piecewise cubic, so the exact check applies, and the times are kept.
      CHECK(check_limits(*p.trajectory, p.limits).exact);
      CHECK(p.waypoint_times[4] == 6.5);
      p.trajectory->eval_all(6.5, st);
      CHECK(st(0, 0) == Approx(1.5).margin(1e-12));
    }
    const Report r = check_limits(*p.trajectory, p.limits);
    if (timing != "{mode: keyframes}") CHECK(r.ok);
  }
}

TEST_CASE("timing: a hold longer than the gap to the next keyframe is a located error", "[timing]") {
  const std::string yaml = R"(format: 1
rig:
  axes:
    - {name: x, vel: 2, acc: 4}
timing: {mode: keyframes}
waypoints:
  - {t: 0, x: 0}
  - {t: 1, x: 1, hold: 1.5}
  - {t: 2, x: 2}
)";
  try {
    (void)plan_text(yaml);
    FAIL("no error");
  } catch (const Error& e) {
    CHECK(e.line() == 8);
    CHECK(e.column() > 1);
    CHECK(std::string(e.what()).find("hold") != std::string::npos);
  }
}

TEST_CASE("timing: periodic paths cannot stop on the way", "[timing]") {
  const std::string yaml = R"(format: 1
rig:
  axes:
    - {name: x, vel: 2, acc: 4}
    - {name: y, vel: 2, acc: 4}
path: {ends: periodic}
timing: {mode: fastest}
waypoints:
  - {x: 0, y: 0}
  - {x: 1, y: 0, stop: true}
  - {x: 1, y: 1}
  - {x: 0, y: 0}
)";
  CHECK_THROWS_AS(plan_text(yaml), Error);
}

// ---- the sampled check ------------------------------------------------------------------------

// SineTrajectory (tests/test_util.hpp): every derivative in closed form (identity).
using c2path::test::SineTrajectory;

TEST_CASE("timing: the sampled check finds peaks and crossings within its stated bound", "[timing]") {
  // q = 2 sin(3 t) on [0, 2]: |v| peaks at 6 (t = 0), |a| at 18 (t = pi/6, pi/2), |j| at 54 (t = 0)
  // (identity). With a velocity limit of 5 the first violation is |6 cos 3t| > 5 on
  // [0, acos(5/6)/3] (identity); with an acceleration limit of 17, |18 sin 3t| > 17 around pi/6.
  const SineTrajectory tr(2.0, 3.0, 2.0);
  AxisLimits l;
  l.vel = 5.0;
  l.acc = 17.0;
  l.jerk = 60.0;
  CheckOptions o;
  o.samples_per_piece = 8;  // deliberately coarse: the check must refine by itself
  const Report r = check_limits(tr, {l}, o);
  CHECK_FALSE(r.exact);
  REQUIRE(r.sample_bound >= 0.0);
  CHECK(r.sample_bound <= 1e-3);  // the stated bound, as a fraction of a limit
  // Peaks within the bound (identity values above).
  CHECK(std::abs(r.peaks[0].vel - 6.0) <= r.sample_bound * 5.0 + 1e-12);
  CHECK(std::abs(r.peaks[0].acc - 18.0) <= r.sample_bound * 17.0 + 1e-12);
  // |18 sin 3t| = 18 at t = pi/6 and t = pi/2 (identity): either is the peak's time.
  CHECK(std::min(std::abs(r.peaks[0].t_acc - std::numbers::pi / 6), std::abs(r.peaks[0].t_acc - std::numbers::pi / 2)) <= 1e-3);
  CHECK(std::abs(r.peaks[0].jerk - 54.0) <= 1e-3 * 60.0);
  CHECK(r.peaks[0].pos_max == Approx(2.0).epsilon(1e-9));
  // Violation intervals: vel from 0 to acos(5/6)/3; acc on [asin(17/18)/3, (pi - asin(17/18))/3].
  bool vel = false, acc = false;
  for (const Violation& v : r.violations) {
    if (v.quantity == Quantity::kVel && v.t_start == 0.0) {
      vel = true;
      CHECK(v.t_end == Approx(std::acos(5.0 / 6.0) / 3.0).epsilon(1e-6));
      CHECK(v.peak == Approx(6.0).epsilon(1e-9));
    }
    if (v.quantity == Quantity::kAcc && v.t_start < 1.0) {
      acc = true;
      CHECK(v.t_start == Approx(std::asin(17.0 / 18.0) / 3.0).epsilon(1e-6));
      CHECK(v.t_end == Approx((std::numbers::pi - std::asin(17.0 / 18.0)) / 3.0).epsilon(1e-6));
      CHECK(v.peak == Approx(18.0).epsilon(1e-7));
      CHECK(v.t_peak == Approx(std::numbers::pi / 6).epsilon(1e-4));
    }
  }
  CHECK(vel);
  CHECK(acc);
  // A peak just above the limit between samples is not missed: limit 17.99 on |a| <= 18 (identity).
  AxisLimits tight;
  tight.acc = 17.99;
  CheckOptions coarse;
  coarse.samples_per_piece = 3;
  const Report r2 = check_limits(SineTrajectory(2.0, 3.0, 1.0), {tight}, coarse);
  CHECK_FALSE(r2.ok);
}

// ---- exact checks of composed time laws (PathTrajectory::poly_pieces) ---------------------------

TEST_CASE("timing: duration mode on a line, exact peaks and intervals of the quintic in closed form", "[timing]") {
  // Two waypoints give a straight line, so x(t) = h p(t / T), p(s) = 10 s^3 - 15 s^4 + 6 s^5
  // (limits.hpp's quintic). By hand from p: v = (h/T) 30 s^2 (1-s)^2, peak 15h/(8T) at s = 1/2;
  // a = (h/T^2) 60 s (1-s)(1-2s), peak (10/sqrt 3) h/T^2 at s = (3 -+ sqrt 3)/6;
  // j = (h/T^3) 60 (1 - 6s + 6s^2), peak 60 h/T^3 at s = 0 and 1.
  // |v| > V where s(1-s) > r = sqrt(V T / (30 h)): s in ((1 - sqrt(1-4r))/2, (1 + sqrt(1-4r))/2);
  // |j| > J where 6 s^2 - 6 s + 1 > c = J T^3 / (60 h): s < (6 - sqrt(36 - 24 (1 - c))) / 12 and
  // the mirror image (hand).
  const double h = 2.0, T = 4.0, V = 0.8, J = 1.5;
  const std::string yaml = "format: 1\nrig:\n  axes:\n    - {name: x, unit: m, vel: 0.8, acc: 10, jerk: 1.5}\n"
                           "timing: {mode: duration, duration: 4}\nwaypoints:\n  - {x: 0}\n  - {x: 2}\n";
  const Plan p = plan_text(yaml);
  const Report r = check_limits(*p.trajectory, p.limits);
  REQUIRE(r.exact);
  const AxisPeaks& k = r.peaks[0];
  CHECK(k.pos_min == 0.0);  // at rest on the waypoints: exactly their values
  CHECK(k.pos_max == 2.0);
  CHECK(k.vel == Approx(15.0 * h / (8.0 * T)).epsilon(1e-14));
  CHECK(k.t_vel == Approx(T / 2).epsilon(1e-9));
  CHECK(k.acc == Approx(10.0 / std::sqrt(3.0) * h / (T * T)).epsilon(1e-14));
  CHECK(k.jerk == Approx(60.0 * h / (T * T * T)).epsilon(1e-14));
  const double rr = std::sqrt(V * T / (30.0 * h)), s1 = (1.0 - std::sqrt(1.0 - 4.0 * rr)) / 2.0;
  const double c = J * T * T * T / (60.0 * h), sj = (6.0 - std::sqrt(36.0 - 24.0 * (1.0 - c))) / 12.0;
  int nv = 0, nj = 0;
  for (const Violation& v : r.violations) {
    INFO(to_string(v.quantity) << " " << v.t_start << " .. " << v.t_end);
    if (v.quantity == Quantity::kVel) {
      ++nv;
      CHECK(v.t_start == Approx(s1 * T).epsilon(1e-12));
      CHECK(v.t_end == Approx((1.0 - s1) * T).epsilon(1e-12));
      CHECK(v.peak == Approx(15.0 * h / (8.0 * T)).epsilon(1e-14));
    } else if (v.quantity == Quantity::kJerk) {
      ++nj;
      if (v.t_start == 0.0) CHECK(v.t_end == Approx(sj * T).epsilon(1e-12));
      else CHECK(v.t_start == Approx((1.0 - sj) * T).epsilon(1e-12));
      CHECK(v.peak == Approx(60.0 * h / (T * T * T)).epsilon(1e-14));
    }
  }
  CHECK(nv == 1);
  CHECK(nj == 2);
  CHECK(r.violations.size() == 3);
}

TEST_CASE("timing: the piecewise-polynomial form reproduces the trajectory; exact peaks bound dense samples", "[timing]") {
  // Identity: poly_pieces is the same function as eval_all (chain rule) written as polynomials.
  // Mean value theorem: every sample lies within the exact peaks, and the exact peak lies within
  // (sample spacing / 2) x (peak of the next derivative) of the best sample.
  const char* scenes[] = {kThreeAxisTour, R"(format: 1
rig:
  axes:
    - {name: track, unit: m,   vel: 0.8, acc: 1.5, jerk: 8}
    - {name: pan,   unit: deg, vel: 60,  acc: 120, jerk: 600}
timing: {mode: duration, duration: 9}
waypoints:
  - {track: 0.2, pan: -30}
  - {track: 0.9, pan: 10, hold: 1.25}
  - {track: 1.4, pan: 40, stop: true}
  - {track: 1.1, pan: 5}
  - {track: 2.0, pan: -25}
)", R"(format: 1
rig:
  axes:
    - {name: track, unit: m,   vel: 0.8, acc: 1.5, jerk: 8}
    - {name: pan,   unit: deg, vel: 60,  acc: 120, jerk: 600}
timing: {mode: fastest}
waypoints:
  - {track: 0.2, pan: -30}
  - {track: 0.9, pan: 10, hold: 0.5}
  - {track: 1.4, pan: 40, stop: true}
  - {track: 1.1, pan: 5}
  - {track: 2.0, pan: -25}
)"};
  int which = 0;
  for (const char* text : scenes) {
    INFO("scene " << which++);
    const Plan p = plan_text(text);
    PolyPieces pp;
    REQUIRE(p.trajectory->poly_pieces(pp));
    const Index m = p.trajectory->axes();
    REQUIRE(pp.t.front() == p.trajectory->t_begin());
    REQUIRE(pp.t.back() == p.trajectory->t_end());
    Eigen::MatrixXd st(m, 4);
    double worst = 0.0;
    for (std::size_t k = 0; k < pp.pieces(); ++k) {
      const double h = pp.t[k + 1] - pp.t[k];
      for (const double sg : {0.25, 0.5, 0.75}) {
        p.trajectory->eval_all(pp.t[k] + sg * h, st);
        for (Index a = 0; a < m; ++a) {
          const double* c = pp.coeffs(k, a);
          double v[4] = {0, 0, 0, 0};  // value and sigma-derivatives by Horner
          for (int j = pp.degree; j >= 0; --j) {
            v[3] = v[3] * sg + 3.0 * v[2];
            v[2] = v[2] * sg + 2.0 * v[1];
            v[1] = v[1] * sg + v[0];
            v[0] = v[0] * sg + c[j];
          }
          // v[d] is the d-th sigma-derivative; d/dt = (1/h) d/dsigma.
          for (int d = 0; d < 4; ++d) {
            const double got = v[d] / std::pow(h, d);
            const double want = st(a, d);
            const double scale = std::max({1.0, std::abs(want), *p.limits[std::size_t(a)].vel * (d == 0 ? 1.0 : 0.0)});
            worst = std::max(worst, std::abs(got - want) / scale);
            if (d < 3) C2PATH_CHECK_NEAR("poly vs eval_all", d, got, want, 1e-9, 1e-9 * scale);
          }
        }
      }
    }
    INFO("largest relative difference " << worst);
    const Report r = check_limits(*p.trajectory, p.limits);
    REQUIRE(r.exact);
    const double step = 2e-4;
    const Sampled s = sample(*p.trajectory, 1.0 / step);
    for (Index a = 0; a < m; ++a) {
      const AxisPeaks& k = r.peaks[std::size_t(a)];
      double sv = 0, sa = 0, smin = 1e300, smax = -1e300;
      for (const auto& x : s.x) {
        sv = std::max(sv, std::abs(x(a, 1)));
        sa = std::max(sa, std::abs(x(a, 2)));
        smin = std::min(smin, x(a, 0));
        smax = std::max(smax, x(a, 0));
      }
      const double tol = 1e-12 * std::max(1.0, k.vel + k.acc);
      CHECK(sv <= k.vel + tol);
      CHECK(sa <= k.acc + tol);
      CHECK(smin >= k.pos_min - 1e-12);
      CHECK(smax <= k.pos_max + 1e-12);
      CHECK(k.vel - sv <= k.acc * step / 2 + tol);
      CHECK(k.acc - sa <= k.jerk * step / 2 + tol);
    }
    if (std::string(text).find("fastest") != std::string::npos) CHECK(r.ok);
  }
}
