// Export benchmarks (Google Benchmark), on a generated keyframed move: 8 axes, waypoints every
// 10 s, sampled at 1 kHz. Items are samples (rows); bytes are bytes of output.
//   BM_export_eval/S        evaluate position, velocity, acceleration at every sample (no output)
//   BM_export_csv/S         write_setpoints to a sink that discards the bytes (evaluation + format)
//   BM_export_jsonl/S       the same in JSON Lines
//   BM_reconstruction/S     reconstruction_error (linear and cubic Hermite) at the same rate
//   BM_verify_csv/S         verify_text on the CSV of the same move
//   BM_double_to_chars/V    std::to_chars(first, last, double) per double (items are doubles)
//   BM_double_shortest/V    the exporter's own formatter (detail/shortest_double) on the same doubles,
//                           a row at a time as in the export (shortest_parts, then write_parts)
//   BM_double_shortest_single/V  the same, one write_shortest call per number
// V picks the doubles: 0 the values of the benchmark move (positions, velocities, accelerations
// and times, as in the CSV), 1 random finite bit patterns.
// S is the length of the move in seconds. The whole-process figure (1 hour, 8 axes, 1 kHz to a
// file) is measured with /usr/bin/time -v on `c2path export`; see docs-export.md.
// Run: build/tests/bench/c2path_bench --benchmark_filter='BM_export|BM_reconstruction|BM_verify'

#include <benchmark/benchmark.h>

#include <bit>
#include <charconv>
#include <cmath>
#include <random>
#include <map>
#include <memory>
#include <string>

#include "c2path/export.hpp"
#include "c2path/scene_yaml.hpp"
#include "c2path/timing.hpp"
#include "c2path/verify.hpp"
#include "../../src/lib/detail/shortest_double.hpp"

namespace {

constexpr int kAxes = 8;

std::string scene_text(long seconds) {
  std::string o = "format: 1\nrig:\n  axes:\n";
  for (int a = 0; a < kAxes; ++a)
    o += "    - {name: a" + std::to_string(a) + ", unit: mm, min: -1000, max: 1000, vel: 200, acc: 400, jerk: 4000}\n";
  o += "path:\n  ends: clamped\nwaypoints:\n";
  for (long k = 0; k * 10 <= seconds; ++k) {
    o += "  - {t: " + std::to_string(10 * k);
    for (int a = 0; a < kAxes; ++a) o += ", a" + std::to_string(a) + ": " + std::to_string(300.0 * std::sin(0.37 * double(k) + a));
    o += "}\n";
  }
  return o;
}

struct Move {
  c2path::Scene scene;
  c2path::Plan plan;
  std::vector<std::string> names;
};

const Move& move(long seconds) {
  static std::map<long, std::unique_ptr<Move>> cache;
  auto& m = cache[seconds];
  if (!m) {
    m = std::make_unique<Move>();
    m->scene = c2path::load_scene_text(scene_text(seconds), "bench.yaml");
    m->plan = c2path::plan(m->scene);
    for (const auto& a : m->scene.axes) m->names.push_back(a.name);
  }
  return *m;
}

void BM_export_eval(benchmark::State& state) {
  const Move& m = move(state.range(0));
  const auto& tr = *m.plan.trajectory;
  c2path::ExportOptions o;
  const auto g = c2path::sample_grid(tr.t_begin(), tr.t_end(), o);
  Eigen::MatrixXd st(tr.axes(), 4);
  for (auto _ : state) {
    double sum = 0;
    for (std::size_t k = 0; k < g.count; ++k) {
      tr.eval_all(g.time(k), st);
      sum += st(0, 0);
    }
    benchmark::DoNotOptimize(sum);
  }
  state.SetItemsProcessed(std::int64_t(state.iterations()) * std::int64_t(g.count));
}

void export_format(benchmark::State& state, c2path::ExportFormat f) {
  const Move& m = move(state.range(0));
  c2path::ExportOptions o;
  o.format = f;
  std::size_t rows = 0, bytes = 0;
  for (auto _ : state) {
    bytes = 0;
    rows = c2path::write_setpoints(*m.plan.trajectory, m.names, o, [&](std::string_view s) { bytes += s.size(); });
  }
  state.SetItemsProcessed(std::int64_t(state.iterations()) * std::int64_t(rows));
  state.SetBytesProcessed(std::int64_t(state.iterations()) * std::int64_t(bytes));
}
void BM_export_csv(benchmark::State& state) { export_format(state, c2path::ExportFormat::kCsv); }
void BM_export_jsonl(benchmark::State& state) { export_format(state, c2path::ExportFormat::kJsonl); }

void BM_reconstruction(benchmark::State& state) {
  const Move& m = move(state.range(0));
  c2path::ExportOptions o;
  const auto& tr = *m.plan.trajectory;
  const std::size_t rows = c2path::sample_grid(tr.t_begin(), tr.t_end(), o).count;
  for (auto _ : state) {
    const auto r = c2path::reconstruction_error(tr, o);
    benchmark::DoNotOptimize(r.linear.data());
  }
  state.SetItemsProcessed(std::int64_t(state.iterations()) * std::int64_t(rows));
}

void BM_verify_csv(benchmark::State& state) {
  const Move& m = move(state.range(0));
  c2path::ExportOptions o;
  std::string csv;
  const std::size_t rows = c2path::write_setpoints(*m.plan.trajectory, m.names, o, [&](std::string_view s) { csv.append(s); });
  for (auto _ : state) {
    const auto r = c2path::verify_text(m.scene, csv, "bench.csv");
    if (!r.ok) state.SkipWithError("the benchmark move does not verify");
    benchmark::DoNotOptimize(r.rows);
  }
  state.SetItemsProcessed(std::int64_t(state.iterations()) * std::int64_t(rows));
  state.SetBytesProcessed(std::int64_t(state.iterations()) * std::int64_t(csv.size()));
}

// 65536 doubles: the numbers of the CSV of the 60 s move (every column of every 10th row), or
// random finite bit patterns.
const std::vector<double>& doubles(long which) {
  static std::map<long, std::vector<double>> cache;
  auto& v = cache[which];
  if (v.empty()) {
    if (which == 0) {
      const auto& tr = *move(60).plan.trajectory;
      Eigen::MatrixXd st(tr.axes(), 4);
      for (std::size_t k = 0; v.size() < 65536; k += 10) {
        const double t = double(k) / 1000.0;
        tr.eval_all(std::min(t, tr.t_end()), st);
        v.push_back(t);
        for (int a = 0; a < kAxes; ++a)
          for (int d = 0; d < 3; ++d) v.push_back(st(a, d));
      }
      v.resize(65536);
    } else {
      std::mt19937_64 rng(5);
      while (v.size() < 65536) {
        const double x = std::bit_cast<double>(rng());
        if (std::isfinite(x)) v.push_back(x);
      }
    }
  }
  return v;
}

// Both write the doubles as CSV rows of 25 numbers into a buffer, as the exporter does (the
// exporter's own formatter takes a row's numbers apart in one loop, then writes them).
constexpr std::size_t kRow = 25;

void BM_double_to_chars(benchmark::State& state) {
  const auto& v = doubles(state.range(0));
  static char buf[kRow * 40];
  for (auto _ : state)
    for (std::size_t i = 0; i + kRow <= v.size(); i += kRow) {
      char* p = buf;
      for (std::size_t j = 0; j < kRow; ++j) {
        p = std::to_chars(p, p + 40, v[i + j]).ptr;
        *p++ = ',';
      }
      benchmark::DoNotOptimize(p);
      benchmark::ClobberMemory();
    }
  state.SetItemsProcessed(std::int64_t(state.iterations()) * std::int64_t(v.size() / kRow * kRow));
}

void BM_double_shortest(benchmark::State& state) {
  const auto& v = doubles(state.range(0));
  static char buf[kRow * 40 + c2path::detail::kShortestRoom];
  c2path::detail::ShortestParts parts[kRow];
  for (auto _ : state)
    for (std::size_t i = 0; i + kRow <= v.size(); i += kRow) {
      char* p = buf;
      c2path::detail::shortest_parts(&v[i], kRow, parts);
      for (std::size_t j = 0; j < kRow; ++j) {
        p = c2path::detail::write_parts(p, parts[j]);
        *p++ = ',';
      }
      benchmark::DoNotOptimize(p);
      benchmark::ClobberMemory();
    }
  state.SetItemsProcessed(std::int64_t(state.iterations()) * std::int64_t(v.size() / kRow * kRow));
}

// One number per call (write_shortest), for comparison.
void BM_double_shortest_single(benchmark::State& state) {
  const auto& v = doubles(state.range(0));
  static char buf[kRow * 40 + c2path::detail::kShortestRoom];
  for (auto _ : state)
    for (std::size_t i = 0; i + kRow <= v.size(); i += kRow) {
      char* p = buf;
      for (std::size_t j = 0; j < kRow; ++j) {
        p = c2path::detail::write_shortest(p, v[i + j]);
        *p++ = ',';
      }
      benchmark::DoNotOptimize(p);
      benchmark::ClobberMemory();
    }
  state.SetItemsProcessed(std::int64_t(state.iterations()) * std::int64_t(v.size() / kRow * kRow));
}

}  // namespace

BENCHMARK(BM_double_to_chars)->Arg(0)->Arg(1)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_double_shortest)->Arg(0)->Arg(1)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_double_shortest_single)->Arg(0)->Arg(1)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_export_eval)->Arg(60)->Unit(benchmark::kMillisecond);
// Formatting and reconstruction run on worker threads: rates are per wall-clock second.
BENCHMARK(BM_export_csv)->Arg(60)->Unit(benchmark::kMillisecond)->UseRealTime();
BENCHMARK(BM_export_jsonl)->Arg(60)->Unit(benchmark::kMillisecond)->UseRealTime();
BENCHMARK(BM_reconstruction)->Arg(60)->Unit(benchmark::kMillisecond)->UseRealTime();
BENCHMARK(BM_verify_csv)->Arg(60)->Unit(benchmark::kMillisecond);
