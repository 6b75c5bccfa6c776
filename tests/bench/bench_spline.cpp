// Spline benchmarks (Google Benchmark), names fixed by issue 2 so the figures compare over time:
//   BM_fit/N             c2path not-a-knot fit, N waypoints x 3 axes, one banded solve
//   BM_fit_gsl/N         GSL 2.7 natural cubic splines on the same data, axis after axis (alloc +
//                        init + free, as BM_fit returns a new spline); BM_fit_gsl_init/N: init only
//   BM_fit_dense/N       the same not-a-knot spline as a dense 4n x 4n system, Eigen PartialPivLU
//                        (only here, as the baseline the banded solve is measured against)
//   BM_eval_sorted       10^6 sorted position evaluations on 1 axis of a 10^5-point spline (Cursor)
//   BM_eval_sorted_gsl   the same with gsl_spline_eval and a gsl_interp_accel
// Run: build/tests/bench/c2path_bench --benchmark_filter='BM_fit|BM_eval'

#include <benchmark/benchmark.h>
#include <gsl/gsl_spline.h>

#include <Eigen/Dense>
#include <cmath>
#include <map>
#include <random>
#include <vector>

#include "c2path/spline.hpp"

namespace {

/// Uneven knots and random-walk data, N points x axes, the same for every benchmark of size N.
struct FitData {
  Eigen::VectorXd u;
  Eigen::MatrixXd q;                          // N x axes, column-major (one column per axis)
  std::vector<std::vector<double>> columns;   // the same per axis, for GSL
};

const FitData& fit_data(long points, long axes = 3) {
  static std::map<std::pair<long, long>, FitData> cache;
  auto [it, fresh] = cache.try_emplace({points, axes});
  FitData& d = it->second;
  if (fresh) {
    std::mt19937_64 rng(std::uint64_t(points * 31 + axes));
    std::uniform_real_distribution<double> step(0.5, 1.5), dq(-1.0, 1.0);
    d.u.resize(points);
    d.q.resize(points, axes);
    d.u[0] = 0.0;
    for (long i = 1; i < points; ++i) d.u[i] = d.u[i - 1] + step(rng);
    for (long a = 0; a < axes; ++a) {
      d.q(0, a) = 0.0;
      for (long i = 1; i < points; ++i) d.q(i, a) = d.q(i - 1, a) + dq(rng);
      d.columns.emplace_back(d.q.col(a).data(), d.q.col(a).data() + points);
    }
  }
  return d;
}

void BM_fit(benchmark::State& state) {
  const FitData& d = fit_data(state.range(0));
  for (auto _ : state) {
    c2path::CubicSpline s = c2path::CubicSpline::fit(d.u, d.q);
    benchmark::DoNotOptimize(s.coeffs(0, 0));
    benchmark::ClobberMemory();
  }
  state.SetItemsProcessed(state.iterations() * state.range(0));
}
BENCHMARK(BM_fit)->Arg(1000)->Arg(10000)->Arg(100000)->Arg(1000000)->Unit(benchmark::kMillisecond);

void BM_fit_gsl(benchmark::State& state) {
  // Like BM_fit, which returns a freshly allocated spline, each iteration builds the three GSL
  // splines from scratch: gsl_spline_alloc + gsl_spline_init (copies the data, solves for the
  // second derivatives; GSL forms the other coefficients only when it evaluates) + gsl_spline_free.
  const FitData& d = fit_data(state.range(0));
  const auto n = std::size_t(state.range(0));
  for (auto _ : state) {
    for (const auto& column : d.columns) {
      gsl_spline* s = gsl_spline_alloc(gsl_interp_cspline, n);
      gsl_spline_init(s, d.u.data(), column.data(), n);
      benchmark::DoNotOptimize(s);
      benchmark::ClobberMemory();
      gsl_spline_free(s);
    }
  }
  state.SetItemsProcessed(state.iterations() * state.range(0));
}
BENCHMARK(BM_fit_gsl)->Arg(1000)->Arg(10000)->Arg(100000)->Arg(1000000)->Unit(benchmark::kMillisecond);

void BM_fit_gsl_init(benchmark::State& state) {
  // For reference: gsl_spline_init alone, on splines allocated once outside the timed loop.
  const FitData& d = fit_data(state.range(0));
  const auto n = std::size_t(state.range(0));
  std::vector<gsl_spline*> splines;
  for (std::size_t a = 0; a < d.columns.size(); ++a) splines.push_back(gsl_spline_alloc(gsl_interp_cspline, n));
  for (auto _ : state) {
    for (std::size_t a = 0; a < d.columns.size(); ++a) {
      gsl_spline_init(splines[a], d.u.data(), d.columns[a].data(), n);
      benchmark::DoNotOptimize(splines[a]);
    }
    benchmark::ClobberMemory();
  }
  for (gsl_spline* s : splines) gsl_spline_free(s);
  state.SetItemsProcessed(state.iterations() * state.range(0));
}
BENCHMARK(BM_fit_gsl_init)->Arg(1000)->Arg(1000000)->Unit(benchmark::kMillisecond);

/// The not-a-knot spline through (u, q) as one dense system: unknowns c0..c3 of every piece,
/// rows = interpolation at both piece ends (2n), C1 and C2 at interior knots (2(n-1)), C3 at u_1
/// and u_{n-1} (2). Returns the coefficients, (4n) x axes.
Eigen::MatrixXd dense_fit(const Eigen::VectorXd& u, const Eigen::MatrixXd& q) {
  const Eigen::Index n = u.size() - 1;
  Eigen::MatrixXd A = Eigen::MatrixXd::Zero(4 * n, 4 * n);
  Eigen::MatrixXd b = Eigen::MatrixXd::Zero(4 * n, q.cols());
  Eigen::Index r = 0;
  for (Eigen::Index i = 0; i < n; ++i) {
    const double h = u[i + 1] - u[i];
    const Eigen::Index c = 4 * i;
    A(r, c) = 1.0;
    b.row(r++) = q.row(i);
    A(r, c) = 1.0, A(r, c + 1) = h, A(r, c + 2) = h * h, A(r, c + 3) = h * h * h;
    b.row(r++) = q.row(i + 1);
    if (i + 1 < n) {
      A(r, c + 1) = 1.0, A(r, c + 2) = 2.0 * h, A(r, c + 3) = 3.0 * h * h, A(r, c + 5) = -1.0;
      ++r;
      A(r, c + 2) = 2.0, A(r, c + 3) = 6.0 * h, A(r, c + 6) = -2.0;
      ++r;
    }
  }
  A(r, 3) = 1.0, A(r, 7) = -1.0;
  ++r;
  A(r, 4 * n - 5) = 1.0, A(r, 4 * n - 1) = -1.0;
  return Eigen::PartialPivLU<Eigen::MatrixXd>(A).solve(b);
}

void BM_fit_dense(benchmark::State& state) {
  const FitData& d = fit_data(state.range(0));
  Eigen::MatrixXd c;
  for (auto _ : state) {
    c = dense_fit(d.u, d.q);
    benchmark::DoNotOptimize(c.data());
    benchmark::ClobberMemory();
  }
  // The dense solution is the same spline as ours (otherwise the comparison means nothing).
  const c2path::CubicSpline s = c2path::CubicSpline::fit(d.u, d.q);
  double worst = 0.0;
  for (Eigen::Index i = 0; i < s.pieces(); ++i)
    for (Eigen::Index a = 0; a < s.axes(); ++a)
      for (int k = 0; k < 2; ++k) worst = std::max(worst, std::abs(c(4 * i + k, a) - s.coeff(i, a, k)));
  state.counters["max_diff_c0c1"] = worst;
  if (!(worst < 1e-8)) state.SkipWithError("the dense solution differs from c2path's spline");
  state.SetItemsProcessed(state.iterations() * state.range(0));
}
BENCHMARK(BM_fit_dense)->Arg(100)->Arg(300)->Arg(1000)->Unit(benchmark::kMillisecond);

constexpr long kEvalPoints = 100000;
constexpr long kEvalQueries = 1000000;

std::vector<double> sorted_queries(const FitData& d) {
  std::vector<double> x(static_cast<std::size_t>(kEvalQueries), 0.0);
  const double u0 = d.u[0], u1 = d.u[d.u.size() - 1];
  for (long k = 0; k < kEvalQueries; ++k) x[std::size_t(k)] = u0 + (u1 - u0) * double(k) / double(kEvalQueries - 1);
  return x;
}

void BM_eval_sorted(benchmark::State& state) {
  const FitData& d = fit_data(kEvalPoints, 1);
  const c2path::CubicSpline s = c2path::CubicSpline::fit(d.u, d.q);
  const std::vector<double> x = sorted_queries(d);
  for (auto _ : state) {
    c2path::CubicSpline::Cursor cur(s);
    double sum = 0.0;
    for (double t : x) sum += cur.eval(t, 0);
    benchmark::DoNotOptimize(sum);
  }
  state.SetItemsProcessed(state.iterations() * kEvalQueries);
}
BENCHMARK(BM_eval_sorted)->Unit(benchmark::kMillisecond);

void BM_eval_sorted_gsl(benchmark::State& state) {
  const FitData& d = fit_data(kEvalPoints, 1);
  gsl_spline* s = gsl_spline_alloc(gsl_interp_cspline, std::size_t(kEvalPoints));
  gsl_spline_init(s, d.u.data(), d.columns[0].data(), std::size_t(kEvalPoints));
  const std::vector<double> x = sorted_queries(d);
  for (auto _ : state) {
    gsl_interp_accel* acc = gsl_interp_accel_alloc();
    double sum = 0.0;
    for (double t : x) sum += gsl_spline_eval(s, t, acc);
    benchmark::DoNotOptimize(sum);
    gsl_interp_accel_free(acc);
  }
  gsl_spline_free(s);
  state.SetItemsProcessed(state.iterations() * kEvalQueries);
}
BENCHMARK(BM_eval_sorted_gsl)->Unit(benchmark::kMillisecond);

}  // namespace
