// Timing benchmarks: the whole fastest plan (TOPP-RA, jerk pass, repairs, verification samples)
// for a long move of a six-axis rig. Waypoints come from a fixed linear congruential sequence, so
// every run plans the same move.

#include <benchmark/benchmark.h>

#include <cstdint>

#include "c2path/limits.hpp"
#include "c2path/time_law.hpp"
#include "c2path/timing.hpp"

namespace {

using namespace c2path;

// A six-axis rig (track, lift, pan, tilt, roll, focus) and n waypoints of a wandering move.
Scene long_move(std::size_t n) {
  Scene s;
  s.file = "bench";
  const char* names[6] = {"track", "lift", "pan", "tilt", "roll", "focus"};
  const double vel[6] = {1.0, 0.5, 90, 60, 45, 2.0};
  const double acc[6] = {2.0, 1.0, 180, 120, 90, 4.0};
  const double jerk[6] = {10.0, 5.0, 900, 600, 450, 20.0};
  for (int a = 0; a < 6; ++a) {
    AxisSpec ax;
    ax.name = names[a];
    ax.vel = vel[a];
    ax.acc = acc[a];
    ax.jerk = jerk[a];
    s.axes.push_back(ax);
  }
  s.timing.mode = TimingMode::kFastest;
  std::uint64_t state = 12345;
  auto next = [&] {
    state = state * 6364136223846793005ull + 1442695040888963407ull;
    return double(state >> 11) / double(1ull << 53);  // [0, 1)
  };
  double q[6] = {0, 0, 0, 0, 0, 0};
  for (std::size_t k = 0; k < n; ++k) {
    Waypoint w;
    for (int a = 0; a < 6; ++a) {
      // Steps of up to about one second at full speed per axis.
      q[a] += vel[a] * (next() - 0.5) * 1.5;
      w.q.push_back(q[a]);
    }
    s.waypoints.push_back(w);
  }
  return s;
}

void BM_plan_fastest(benchmark::State& state) {
  const Scene s = long_move(std::size_t(state.range(0)));
  std::size_t grid = 0;
  double duration = 0;
  for (auto _ : state) {
    Plan p = plan(s);
    grid = p.grid_points;
    duration = p.trajectory->duration();
    benchmark::DoNotOptimize(p.trajectory.get());
  }
  state.counters["grid_points"] = double(grid);
  state.counters["duration_s"] = duration;
}
BENCHMARK(BM_plan_fastest)->Arg(100)->Arg(1000)->Unit(benchmark::kMillisecond);

// The parts of the whole plan: the path alone, and the planner without plan()'s final check.
void BM_build_path(benchmark::State& state) {
  const Scene s = long_move(std::size_t(state.range(0)));
  for (auto _ : state) {
    Plan p = build_path(s);
    benchmark::DoNotOptimize(p.path.get());
  }
}
BENCHMARK(BM_build_path)->Arg(1000)->Unit(benchmark::kMillisecond);

void BM_plan_fastest_planner_only(benchmark::State& state) {
  const Scene s = long_move(std::size_t(state.range(0)));
  const Plan p = build_path(s);
  std::size_t grid = 0;
  for (auto _ : state) {
    FastestResult r = plan_fastest(*p.path, p.limits, p.holds_s);
    grid = r.grid_points;
    benchmark::DoNotOptimize(r.law.get());
  }
  state.counters["grid_points"] = double(grid);
}
BENCHMARK(BM_plan_fastest_planner_only)->Arg(1000)->Unit(benchmark::kMillisecond);

// The independent exact check of that plan (what `c2path check` runs): the time law composed
// with the spline (Trajectory::poly_pieces), peaks, violations.
void BM_check_fastest(benchmark::State& state) {
  const Scene s = long_move(std::size_t(state.range(0)));
  const Plan p = plan(s);
  std::size_t pieces = 0;
  for (auto _ : state) {
    const Report r = check_limits(*p.trajectory, p.limits);
    benchmark::DoNotOptimize(r.peaks.data());
  }
  PolyPieces pp;
  if (p.trajectory->poly_pieces(pp)) pieces = pp.pieces();
  state.counters["pieces"] = double(pieces);
}
BENCHMARK(BM_check_fastest)->Arg(100)->Arg(1000)->Unit(benchmark::kMillisecond);

}  // namespace
