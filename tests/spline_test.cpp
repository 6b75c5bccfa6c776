// Tests of c2path::CubicSpline (include/c2path/spline.hpp) against sources outside the project:
// Burden & Faires (textbook examples), GSL 2.7 (natural and periodic cubic splines), SciPy 1.10
// (CubicSpline, not-a-knot and clamped; reference data in tests/data/scipy_cubicspline.txt made by
// tests/make_scipy_reference.py) and mathematical facts about cubic interpolating splines.

#include <catch2/catch.hpp>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_spline.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <limits>
#include <map>
#include <memory>
#include <numeric>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "c2path/error.hpp"
#include "c2path/spline.hpp"
#include "test_util.hpp"

using c2path::CubicSpline;
using c2path::EndCondition;
using c2path::Index;
using c2path::SplineOptions;
using Catch::Matchers::Contains;

namespace {

constexpr double kPi = 3.14159265358979323846;

SplineOptions ends(EndCondition e) {
  SplineOptions o;
  o.ends = e;
  return o;
}

SplineOptions clamped(Eigen::VectorXd start, Eigen::VectorXd end) {
  SplineOptions o;
  o.ends = EndCondition::kClamped;
  o.start_slope = std::move(start);
  o.end_slope = std::move(end);
  return o;
}

Eigen::VectorXd vec(std::initializer_list<double> v) {
  Eigen::VectorXd r(Index(v.size()));
  Index i = 0;
  for (double x : v) r[i++] = x;
  return r;
}

/// Strictly increasing parameters with spacings drawn from [lo, hi) (uneven knots).
Eigen::VectorXd uneven_knots(std::mt19937_64& rng, Index points, double lo = 0.1, double hi = 2.0, double start = 0.0) {
  std::uniform_real_distribution<double> dist(lo, hi);
  Eigen::VectorXd u(points);
  u[0] = start;
  for (Index i = 1; i < points; ++i) u[i] = u[i - 1] + dist(rng);
  return u;
}

Eigen::MatrixXd random_points(std::mt19937_64& rng, Index points, Index axes, double scale = 1.0) {
  std::uniform_real_distribution<double> dist(-scale, scale);
  Eigen::MatrixXd q(points, axes);
  for (Index i = 0; i < points; ++i)
    for (Index a = 0; a < axes; ++a) q(i, a) = dist(rng);
  return q;
}

const char* end_name(EndCondition e) {
  switch (e) {
    case EndCondition::kNotAKnot: return "not-a-knot";
    case EndCondition::kNatural: return "natural";
    case EndCondition::kClamped: return "clamped";
    case EndCondition::kPeriodic: return "periodic";
  }
  return "?";
}

/// A spline of the given end condition through random data (periodic: last row = first row;
/// clamped: random end slopes).
CubicSpline random_spline(std::mt19937_64& rng, Index points, Index axes, EndCondition e, Eigen::VectorXd* u_out = nullptr,
                          Eigen::MatrixXd* q_out = nullptr) {
  Eigen::VectorXd u = uneven_knots(rng, points);
  Eigen::MatrixXd q = random_points(rng, points, axes, 3.0);
  SplineOptions o = ends(e);
  if (e == EndCondition::kPeriodic) q.row(points - 1) = q.row(0);
  if (e == EndCondition::kClamped) o = clamped(random_points(rng, 1, axes).transpose(), random_points(rng, 1, axes).transpose());
  if (u_out) *u_out = u;
  if (q_out) *q_out = q;
  return CubicSpline::fit(u, q, o);
}

// ---- GSL ----------------------------------------------------------------------------------

struct GslSpline {
  GslSpline(const gsl_interp_type* type, const std::vector<double>& x, const std::vector<double>& y)
      : spline(gsl_spline_alloc(type, x.size())), acc(gsl_interp_accel_alloc()) {
    status = gsl_spline_init(spline, x.data(), y.data(), x.size());
  }
  ~GslSpline() {
    gsl_interp_accel_free(acc);
    gsl_spline_free(spline);
  }
  GslSpline(const GslSpline&) = delete;
  GslSpline& operator=(const GslSpline&) = delete;
  double eval(double x, int deriv) {
    double y = std::numeric_limits<double>::quiet_NaN();
    int st = GSL_SUCCESS;
    if (deriv == 0) st = gsl_spline_eval_e(spline, x, acc, &y);
    if (deriv == 1) st = gsl_spline_eval_deriv_e(spline, x, acc, &y);
    if (deriv == 2) st = gsl_spline_eval_deriv2_e(spline, x, acc, &y);
    REQUIRE(st == GSL_SUCCESS);
    return y;
  }
  gsl_spline* spline;
  gsl_interp_accel* acc;
  int status = 0;
};

/// Compares our spline with GSL's on data of `points` points and `axes` axes, axis by axis,
/// values and derivatives 1..2 at the knots, midpoints and random parameters.
void compare_with_gsl(const gsl_interp_type* type, EndCondition e, Index points, Index axes, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  Eigen::VectorXd u = uneven_knots(rng, points, 0.05, 1.5, -1.0);
  Eigen::MatrixXd q = random_points(rng, points, axes, 1.0);
  for (Index a = 0; a < axes; ++a) q.col(a) *= std::pow(10.0, double(a) * 3.0 - 3.0);  // 1e-3 .. 1e3 units
  if (e == EndCondition::kPeriodic) q.row(points - 1) = q.row(0);
  const CubicSpline s = CubicSpline::fit(u, q, ends(e));

  std::vector<double> x(u.data(), u.data() + points);
  std::vector<double> queries = x;
  for (Index i = 0; i + 1 < points; ++i) queries.push_back(0.5 * (u[i] + u[i + 1]));
  std::uniform_real_distribution<double> in(u[0], u[points - 1]);
  for (int k = 0; k < 200; ++k) queries.push_back(in(rng));
  std::sort(queries.begin(), queries.end());

  for (Index a = 0; a < axes; ++a) {
    std::vector<double> y(static_cast<std::size_t>(points), 0.0);
    for (Index i = 0; i < points; ++i) y[std::size_t(i)] = q(i, a);
    GslSpline g(type, x, y);
    REQUIRE(g.status == GSL_SUCCESS);
    for (int d = 0; d <= 2; ++d) {
      // Relative to the data magnitude: the largest |d^d q/du^d| GSL reports over the queries.
      double scale = 0.0;
      for (double t : queries) scale = std::max(scale, std::abs(g.eval(t, d)));
      for (std::size_t k = 0; k < queries.size(); ++k) {
        INFO("GSL " << gsl_spline_name(g.spline) << ", " << points << " points, axis " << a << ", derivative " << d
                    << ", u = " << queries[k]);
        C2PATH_CHECK_NEAR("ours vs GSL", k, s.eval(queries[k], a, d), g.eval(queries[k], d), 0.0, 1e-12 * scale);
      }
    }
  }
}

// ---- SciPy reference data -----------------------------------------------------------------

struct ScipyCase {
  std::string name, bc;
  Index points = 0, axes = 0;
  Eigen::VectorXd u, start_slope, end_slope;
  Eigen::MatrixXd q;
  struct Eval {
    double u;
    int deriv;
    std::vector<double> values;
  };
  std::vector<Eval> evals;
  std::vector<Eval> exact;  // the exact spline at the same queries (cases of up to 40 points)
};

std::vector<ScipyCase> read_scipy_cases(const std::string& path) {
  std::ifstream in(path);
  REQUIRE(in.good());
  std::vector<ScipyCase> cases;
  std::string line;
  ScipyCase* c = nullptr;
  Index p = 0;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#') continue;
    std::istringstream ls(line);
    std::string tag;
    ls >> tag;
    if (tag == "case") {
      cases.emplace_back();
      c = &cases.back();
      std::size_t evals = 0;
      ls >> c->name >> c->bc >> c->points >> c->axes >> evals;
      c->u.resize(c->points);
      c->q.resize(c->points, c->axes);
      c->evals.reserve(evals);
      p = 0;
    } else if (tag == "slopes") {
      REQUIRE(c != nullptr);
      c->start_slope.resize(c->axes);
      c->end_slope.resize(c->axes);
      for (Index a = 0; a < c->axes; ++a) ls >> c->start_slope[a];
      for (Index a = 0; a < c->axes; ++a) ls >> c->end_slope[a];
    } else if (tag == "p") {
      REQUIRE(c != nullptr);
      REQUIRE(p < c->points);
      ls >> c->u[p];
      for (Index a = 0; a < c->axes; ++a) ls >> c->q(p, a);
      ++p;
    } else if (tag == "e" || tag == "x") {
      REQUIRE(c != nullptr);
      ScipyCase::Eval e;
      ls >> e.u >> e.deriv;
      e.values.resize(std::size_t(c->axes));
      for (auto& v : e.values) ls >> v;
      (tag == "e" ? c->evals : c->exact).push_back(std::move(e));
    } else if (tag == "end") {
      REQUIRE(c != nullptr);
      REQUIRE(p == c->points);
      c = nullptr;
    } else {
      FAIL("unknown record '" << tag << "' in " << path);
    }
    REQUIRE_FALSE(ls.fail());
  }
  REQUIRE(c == nullptr);  // the last case was closed
  return cases;
}

}  // namespace

// ---- Burden & Faires ------------------------------------------------------------------------

TEST_CASE("spline: Burden & Faires natural and clamped splines through (1,2),(2,3),(3,5)", "[spline]") {
  // Source: R. L. Burden, J. D. Faires, Numerical Analysis, §3.5 (cubic spline interpolation),
  // the examples through (1,2), (2,3), (3,5): natural, and clamped with S'(1) = 2, S'(3) = 1.
  // Coefficients recalled from memory and recomputed with SciPy 1.10 CubicSpline (bc_type
  // 'natural' and ((1, 2), (1, 1))), which gives exactly these values:
  //   natural: S0 = 2 + 3/4 (x-1) + 1/4 (x-1)^3,     S1 = 3 + 3/2 (x-2) + 3/4 (x-2)^2 - 1/4 (x-2)^3
  //   clamped: S0 = 2 + 2 (x-1) - 5/2 (x-1)^2 + 3/2 (x-1)^3,   S1 = 3 + 3/2 (x-2) + 2 (x-2)^2 - 3/2 (x-2)^3
  const Eigen::VectorXd u = vec({1.0, 2.0, 3.0});
  Eigen::MatrixXd q(3, 1);
  q << 2.0, 3.0, 5.0;
  const double natural[2][4] = {{2.0, 0.75, 0.0, 0.25}, {3.0, 1.5, 0.75, -0.25}};
  const double clamp[2][4] = {{2.0, 2.0, -2.5, 1.5}, {3.0, 1.5, 2.0, -1.5}};
  const CubicSpline sn = CubicSpline::fit(u, q, ends(EndCondition::kNatural));
  const CubicSpline sc = CubicSpline::fit(u, q, clamped(vec({2.0}), vec({1.0})));
  REQUIRE(sn.pieces() == 2);
  REQUIRE(sc.pieces() == 2);
  for (Index i = 0; i < 2; ++i)
    for (int k = 0; k < 4; ++k) {
      C2PATH_CHECK_NEAR("natural coefficient (piece*4+k)", i * 4 + k, sn.coeff(i, 0, k), natural[i][k], 0.0, 1e-14);
      C2PATH_CHECK_NEAR("clamped coefficient (piece*4+k)", i * 4 + k, sc.coeff(i, 0, k), clamp[i][k], 0.0, 1e-14);
    }
}

TEST_CASE("spline: Burden & Faires natural and clamped splines through e^x at 0,1,2,3", "[spline]") {
  // Source: Burden & Faires, Numerical Analysis, §3.5, f(x) = e^x at x = 0, 1, 2, 3: the natural
  // spline, and the clamped spline with S'(0) = e^0, S'(3) = e^3. The book prints 8 digits;
  // those were recalled from memory (e.g. natural b0 = 1.46599761, d0 = 0.25228421; clamped
  // c0 = 0.44468250) and the full-precision values below were recomputed with SciPy 1.10
  // CubicSpline (bc_type 'natural' and ((1, 1), (1, e^3))); both agree to the printed digits.
  const Eigen::VectorXd u = vec({0.0, 1.0, 2.0, 3.0});
  Eigen::MatrixXd q(4, 1);
  for (Index i = 0; i < 4; ++i) q(i, 0) = std::exp(u[i]);
  // c0 c1 c2 c3 per piece (the book's a, b, c, d).
  const double natural[3][4] = {
      {1.0, 1.4659976141747240, 0.0, 0.25228421428432135},
      {2.7182818284590451, 2.2228502570276878, 0.75685264285296894, 1.6910713705909490},
      {7.3890560989306504, 8.8097696545064732, 5.8300667546258182, -1.9433555848752739}};
  const double clamp[3][4] = {{1.0, 1.0, 0.4446824969658292, 0.2735993314932159},
                              {2.718281828459045, 2.710162988411306, 1.265480491445481, 0.6951307906148187},
                              {7.38905609893065, 7.326516343146725, 3.3508728632899345, 2.019091617820358}};
  // The book's 8-digit values, recalled from memory, as a cross-check of the recomputation.
  const double book_natural_b[3] = {1.46599761, 2.22285026, 8.80976965};
  const double book_clamped_c[3] = {0.44468250, 1.26548049, 3.35087286};
  const CubicSpline sn = CubicSpline::fit(u, q, ends(EndCondition::kNatural));
  const CubicSpline sc = CubicSpline::fit(u, q, clamped(vec({1.0}), vec({std::exp(3.0)})));
  for (Index i = 0; i < 3; ++i) {
    for (int k = 0; k < 4; ++k) {
      C2PATH_CHECK_NEAR("natural coefficient (piece*4+k)", i * 4 + k, sn.coeff(i, 0, k), natural[i][k], 1e-13, 1e-14);
      C2PATH_CHECK_NEAR("clamped coefficient (piece*4+k)", i * 4 + k, sc.coeff(i, 0, k), clamp[i][k], 1e-13, 1e-14);
    }
    C2PATH_CHECK_NEAR("book natural b", i, sn.coeff(i, 0, 1), book_natural_b[i], 0.0, 1e-8);
    C2PATH_CHECK_NEAR("book clamped c", i, sc.coeff(i, 0, 2), book_clamped_c[i], 0.0, 1e-8);
  }
}

// ---- GSL -------------------------------------------------------------------------------------

TEST_CASE("spline: natural spline agrees with GSL 2.7 gsl_interp_cspline", "[spline][gsl]") {
  // Source: GSL 2.7 (libgsl-dev), gsl_interp_cspline: the natural cubic spline.
  gsl_set_error_handler_off();
  std::uint64_t seed = 100;
  for (Index points : {3, 4, 5, 6, 9, 33, 250, 2000}) compare_with_gsl(gsl_interp_cspline, EndCondition::kNatural, points, 3, seed++);
}

TEST_CASE("spline: periodic spline agrees with GSL 2.7 gsl_interp_cspline_periodic", "[spline][gsl]") {
  // Source: GSL 2.7 (libgsl-dev), gsl_interp_cspline_periodic: value, slope and curvature
  // continuous around the wrap.
  gsl_set_error_handler_off();
  std::uint64_t seed = 200;
  for (Index points : {3, 4, 5, 6, 9, 33, 250, 2000})
    compare_with_gsl(gsl_interp_cspline_periodic, EndCondition::kPeriodic, points, 3, seed++);
}

TEST_CASE("spline: periodic with first != last is an error (GSL accepts it silently)", "[spline][gsl]") {
  // Source: GSL 2.7 gsl_spline_init with gsl_interp_cspline_periodic returns GSL_SUCCESS for
  // y0 != yN (it ignores yN); c2path refuses such data instead of guessing.
  gsl_set_error_handler_off();
  const std::vector<double> x = {0.0, 1.0, 2.5, 3.0};
  const std::vector<double> y = {1.0, 2.0, -1.0, 1.5};
  GslSpline g(gsl_interp_cspline_periodic, x, y);
  CHECK(g.status == GSL_SUCCESS);
  Eigen::MatrixXd q(4, 2);
  q << 1.0, 0.0, 2.0, 1.0, -1.0, 2.0, 1.5, 0.5;
  CHECK_THROWS_AS(CubicSpline::fit(Eigen::Map<const Eigen::VectorXd>(x.data(), 4), q, ends(EndCondition::kPeriodic)),
                  c2path::Error);
  CHECK_THROWS_WITH(CubicSpline::fit(Eigen::Map<const Eigen::VectorXd>(x.data(), 4), q, ends(EndCondition::kPeriodic)),
                    Contains("first and last point differ on axis 0"));
  q(3, 0) = 1.0;  // axis 0 closes now, axis 1 still does not
  CHECK_THROWS_WITH(CubicSpline::fit(Eigen::Map<const Eigen::VectorXd>(x.data(), 4), q, ends(EndCondition::kPeriodic)),
                    Contains("axis 1"));
  q(3, 1) = 0.0;  // both close
  CHECK_NOTHROW(CubicSpline::fit(Eigen::Map<const Eigen::VectorXd>(x.data(), 4), q, ends(EndCondition::kPeriodic)));
}

// ---- SciPy -----------------------------------------------------------------------------------

TEST_CASE("spline: not-a-knot and clamped agree with SciPy 1.10 CubicSpline", "[spline][scipy]") {
  // Source: SciPy 1.10.1 scipy.interpolate.CubicSpline (Debian 12 python3-scipy), reference
  // values generated by tests/make_scipy_reference.py into tests/data/scipy_cubicspline.txt
  // (breakpoints, midpoints, random interior points and extrapolation, derivatives 0..3).
  const auto cases = read_scipy_cases(std::string(C2PATH_TEST_DATA) + "/scipy_cubicspline.txt");
  REQUIRE(cases.size() == 15);
  std::size_t compared = 0;
  for (const auto& c : cases) {
    INFO("SciPy case " << c.name << " (" << c.bc << ", " << c.points << " points, " << c.axes << " axes)");
    REQUIRE((c.bc == "not-a-knot" || c.bc == "clamped"));
    const SplineOptions o = c.bc == "clamped" ? clamped(c.start_slope, c.end_slope) : SplineOptions{};
    const CubicSpline s = CubicSpline::fit(c.u, c.q, o);
    // Scale per axis and derivative: the largest |reference| of that quantity in the case.
    std::map<std::pair<Index, int>, double> scale;
    for (const auto& e : c.evals)
      for (Index a = 0; a < c.axes; ++a) {
        double& m = scale[{a, e.deriv}];
        m = std::max(m, std::abs(e.values[std::size_t(a)]));
      }
    for (std::size_t k = 0; k < c.evals.size(); ++k) {
      const auto& e = c.evals[k];
      for (Index a = 0; a < c.axes; ++a) {
        INFO("u = " << e.u << ", axis " << a << ", derivative " << e.deriv);
        // 1e-12 relative to the size of the quantity in the case; third derivatives 5e-12: on short
        // pieces (h = 0.02 in cos_zero_slopes) q''' = 6 (s_i + s_{i+1} - 2 m_i) / h^2 amplifies the
        // rounding of the slopes, and both SciPy and c2path are about 1e-12 (relative) away from the
        // exact spline there, in different directions (SciPy 9.8e-13, c2path 1.2e-12; the next
        // test checks both against the exact rational spline); everywhere else both are within a
        // few 1e-14 of it.
        const double tol = (e.deriv == 3 ? 5e-12 : 1e-12) * scale[{a, e.deriv}];
        C2PATH_CHECK_NEAR("ours vs SciPy", k, s.eval(e.u, a, e.deriv), e.values[std::size_t(a)], 0.0, tol);
        ++compared;
      }
    }
  }
  CHECK(compared > 10000);
}

TEST_CASE("spline: not-a-knot and clamped agree with the exact rational spline", "[spline][scipy]") {
  // Source: the exact spline of each case of up to 40 points in tests/data/scipy_cubicspline.txt
  // ('x' records): defined by its interpolation, continuity and end conditions and solved in
  // rational arithmetic (Python's fractions) by tests/make_scipy_reference.py, then rounded once.
  // Both c2path and the SciPy values must be within 1e-12 of it relative to the size of the
  // quantity in the case (third derivatives 2e-12; see the SciPy test above for why they are
  // more sensitive).
  const auto cases = read_scipy_cases(std::string(C2PATH_TEST_DATA) + "/scipy_cubicspline.txt");
  std::size_t with_exact = 0;
  for (const auto& c : cases) {
    if (c.exact.empty()) continue;
    ++with_exact;
    INFO("exact case " << c.name << " (" << c.bc << ", " << c.points << " points, " << c.axes << " axes)");
    REQUIRE(c.exact.size() == c.evals.size());
    const SplineOptions o = c.bc == "clamped" ? clamped(c.start_slope, c.end_slope) : SplineOptions{};
    const CubicSpline s = CubicSpline::fit(c.u, c.q, o);
    std::map<std::pair<Index, int>, double> scale;
    for (const auto& e : c.exact)
      for (Index a = 0; a < c.axes; ++a) {
        double& m = scale[{a, e.deriv}];
        m = std::max(m, std::abs(e.values[std::size_t(a)]));
      }
    for (std::size_t k = 0; k < c.exact.size(); ++k) {
      const auto& x = c.exact[k];
      REQUIRE(x.u == c.evals[k].u);
      REQUIRE(x.deriv == c.evals[k].deriv);
      for (Index a = 0; a < c.axes; ++a) {
        INFO("u = " << x.u << ", axis " << a << ", derivative " << x.deriv);
        const double tol = (x.deriv == 3 ? 2e-12 : 1e-12) * scale[{a, x.deriv}];
        C2PATH_CHECK_NEAR("ours vs exact", k, s.eval(x.u, a, x.deriv), x.values[std::size_t(a)], 0.0, tol);
        C2PATH_CHECK_NEAR("SciPy vs exact", k, c.evals[k].values[std::size_t(a)], x.values[std::size_t(a)], 0.0, tol);
      }
    }
  }
  CHECK(with_exact == 13);
}

// ---- Mathematical facts ----------------------------------------------------------------------

TEST_CASE("spline: not-a-knot reproduces every cubic exactly on uneven knots", "[spline]") {
  // Fact: a cubic satisfies every condition of the not-a-knot system (interpolation, C2, and C3
  // at u_1 and u_{n-1}), and the system has a unique solution (de Boor, A Practical Guide to
  // Splines, ch. IV), so the spline is the cubic itself, extrapolation included.
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> coef(-2.0, 2.0);
  for (Index points : {4, 5, 6, 9, 30, 200}) {
    const Eigen::VectorXd u = uneven_knots(rng, points, 0.05, 1.0, -3.0);
    const Index axes = 3;
    // p_a(x) = sum_k c_ak t^k with t = (x - xc) / L, so that |p| = O(1) on the range.
    const double xc = 0.5 * (u[0] + u[points - 1]), L = 0.5 * (u[points - 1] - u[0]);
    Eigen::MatrixXd c(axes, 4);
    for (Index a = 0; a < axes; ++a)
      for (int k = 0; k < 4; ++k) c(a, k) = coef(rng);
    auto cubic = [&](Index a, double x, int d) {
      const double cc[4] = {c(a, 0), c(a, 1), c(a, 2), c(a, 3)};
      return c2path::cubic_eval(cc, (x - xc) / L, d) / std::pow(L, d);
    };
    double hmin = std::numeric_limits<double>::infinity();
    for (Index i = 0; i + 1 < points; ++i) hmin = std::min(hmin, u[i + 1] - u[i]);
    Eigen::MatrixXd q(points, axes);
    for (Index i = 0; i < points; ++i)
      for (Index a = 0; a < axes; ++a) q(i, a) = cubic(a, u[i], 0);
    // Both the default and the clamped spline with the cubic's own end slopes reproduce it.
    Eigen::VectorXd s0(axes), s1(axes);
    for (Index a = 0; a < axes; ++a) {
      s0[a] = cubic(a, u[0], 1);
      s1[a] = cubic(a, u[points - 1], 1);
    }
    for (const SplineOptions& o : {SplineOptions{}, clamped(s0, s1)}) {
      const CubicSpline s = CubicSpline::fit(u, q, o);
      // Inside the range and extrapolated by up to one end piece (farther out, rounding in the end
      // cubic grows with the cube of the distance).
      std::uniform_real_distribution<double> at(u[0] - (u[1] - u[0]), u[points - 1] + (u[points - 1] - u[points - 2]));
      // Rounding in the data (|p| <= 8 here) reaches the d-th derivative divided by h_min^d: the
      // tolerance is relative to that data magnitude.
      const double mag = 8.0 * std::pow(1.0 + 2.0 / L, 3);
      for (int k = 0; k < 300; ++k) {
        const double x = at(rng);
        for (Index a = 0; a < axes; ++a)
          for (int d = 0; d <= 3; ++d) {
            INFO(points << " points, " << end_name(o.ends) << ", axis " << a << ", derivative " << d << ", u = " << x);
            C2PATH_CHECK_NEAR("spline vs cubic", k, s.eval(x, a, d), cubic(a, x, d), 0.0,
                              1e-12 * mag / std::pow(hmin, d));
          }
      }
    }
  }
}

TEST_CASE("spline: 2 points give the line, 3 points not-a-knot the parabola", "[spline]") {
  // Fact / convention (as SciPy's CubicSpline, see tests/make_scipy_reference.py cases
  // two_points_line and three_points_parabola): the lowest-degree interpolant.
  const Eigen::VectorXd u2 = vec({-0.5, 2.0});
  Eigen::MatrixXd q2(2, 2);
  q2 << 1.0, 10.0, 6.0, -5.0;
  for (EndCondition e : {EndCondition::kNotAKnot, EndCondition::kNatural}) {
    const CubicSpline s = CubicSpline::fit(u2, q2, ends(e));
    REQUIRE(s.pieces() == 1);
    for (Index a = 0; a < 2; ++a) {
      const double m = (q2(1, a) - q2(0, a)) / 2.5;
      INFO(end_name(e) << ", axis " << a);
      CHECK(s.coeff(0, a, 0) == q2(0, a));
      C2PATH_CHECK_NEAR("slope", a, s.coeff(0, a, 1), m, 1e-15, 0.0);
      C2PATH_CHECK_NEAR("c2", a, s.coeff(0, a, 2), 0.0, 0.0, 1e-14);
      C2PATH_CHECK_NEAR("c3", a, s.coeff(0, a, 3), 0.0, 0.0, 1e-14);
      CHECK(s.eval(2.0, a) == q2(1, a));
    }
  }
  // Periodic with two equal points: the constant.
  Eigen::MatrixXd qc(2, 1);
  qc << 3.0, 3.0;
  const CubicSpline sp = CubicSpline::fit(u2, qc, ends(EndCondition::kPeriodic));
  for (double x : {-1.0, 0.0, 1.7, 3.0}) CHECK(sp.eval(x, 0) == 3.0);

  // Three points, uneven: the parabola through them (Lagrange form), outside the range too.
  const Eigen::VectorXd u3 = vec({-1.0, 0.25, 3.0});
  Eigen::MatrixXd q3(3, 2);
  q3 << 2.0, 0.0, -1.0, 1.0, 5.0, 0.0;
  const CubicSpline s3 = CubicSpline::fit(u3, q3);
  auto lagrange = [&](Index a, double x) {
    double v = 0.0;
    for (Index i = 0; i < 3; ++i) {
      double l = 1.0;
      for (Index j = 0; j < 3; ++j)
        if (j != i) l *= (x - u3[j]) / (u3[i] - u3[j]);
      v += q3(i, a) * l;
    }
    return v;
  };
  for (Index a = 0; a < 2; ++a) {
    for (Index i = 0; i < 2; ++i) C2PATH_CHECK_NEAR("c3 of the parabola", i, s3.coeff(i, a, 3), 0.0, 0.0, 1e-14);
    for (int k = 0; k <= 40; ++k) {
      const double x = -2.0 + 0.15 * k;
      C2PATH_CHECK_NEAR("parabola", k, s3.eval(x, a), lagrange(a, x), 0.0, 1e-13);
    }
  }
}

TEST_CASE("spline: clamped with 2 points is the cubic Hermite piece", "[spline]") {
  // Fact: with one piece the clamped conditions are the four Hermite data q0, q1, q0', q1'.
  const Eigen::VectorXd u = vec({1.0, 3.0});
  Eigen::MatrixXd q(2, 1);
  q << 1.0, 2.0;
  const CubicSpline s = CubicSpline::fit(u, q, clamped(vec({-1.0}), vec({4.0})));
  CHECK(s.eval(1.0, 0) == 1.0);
  CHECK(s.eval(3.0, 0) == 2.0);
  C2PATH_CHECK_NEAR("start slope", 0, s.eval(1.0, 0, 1), -1.0, 1e-14, 0.0);
  C2PATH_CHECK_NEAR("end slope", 0, s.eval(3.0, 0, 1), 4.0, 1e-14, 1e-14);
}

TEST_CASE("spline: C0, C1, C2 at interior knots for every end condition, C3 at u_1 and u_{n-1} for not-a-knot",
          "[spline]") {
  // Fact: the defining conditions of the cubic interpolating spline (C2 at interior knots),
  // and of the not-a-knot end condition (de Boor, A Practical Guide to Splines, ch. IV).
  std::mt19937_64 rng(11);
  for (EndCondition e : {EndCondition::kNotAKnot, EndCondition::kNatural, EndCondition::kClamped, EndCondition::kPeriodic})
    for (Index points : {3, 4, 5, 7, 50, 500}) {
      INFO(end_name(e) << ", " << points << " points");
      Eigen::VectorXd u;
      Eigen::MatrixXd q;
      const CubicSpline s = random_spline(rng, points, 3, e, &u, &q);
      // Interpolation: the waypoints exactly at the knots.
      // Interpolation: the waypoints exactly at the knots (c0 of each piece and the end value).
      c2path::test::check_interpolates(s, u, q);
      c2path::test::check_c2(s);
      if (e == EndCondition::kNotAKnot && points >= 4)
        for (Index a = 0; a < 3; ++a) {
          double scale = 1.0;
          for (Index p = 0; p < s.pieces(); ++p) scale = std::max(scale, std::abs(s.coeff(p, a, 3)));
          C2PATH_CHECK_NEAR("C3 at u_1", a, s.coeff(0, a, 3), s.coeff(1, a, 3), 0.0, 1e-10 * scale);
          C2PATH_CHECK_NEAR("C3 at u_{n-1}", a, s.coeff(s.pieces() - 2, a, 3), s.coeff(s.pieces() - 1, a, 3), 0.0,
                            1e-10 * scale);
        }
      if (e == EndCondition::kNatural)
        for (Index a = 0; a < 3; ++a) {
          C2PATH_CHECK_NEAR("q'' at u_0", a, s.eval(u[0], a, 2), 0.0, 0.0, 1e-12);
          C2PATH_CHECK_NEAR("q'' at u_n", a, s.eval(u[points - 1], a, 2), 0.0, 0.0, 1e-12);
        }
    }
}

TEST_CASE("spline: clamped spline takes the given end slopes", "[spline]") {
  std::mt19937_64 rng(12);
  for (Index points : {2, 3, 4, 10}) {
    const Eigen::VectorXd u = uneven_knots(rng, points);
    const Eigen::MatrixXd q = random_points(rng, points, 2);
    const Eigen::VectorXd v0 = vec({1.5, -3.0}), v1 = vec({0.0, 7.0});
    const CubicSpline s = CubicSpline::fit(u, q, clamped(v0, v1));
    for (Index a = 0; a < 2; ++a) {
      C2PATH_CHECK_NEAR("start slope", a, s.eval(u[0], a, 1), v0[a], 1e-13, 1e-13);
      C2PATH_CHECK_NEAR("end slope", a, s.eval(u[points - 1], a, 1), v1[a], 1e-13, 1e-13);
    }
  }
}

TEST_CASE("spline: periodic value, slope and curvature wrap around", "[spline]") {
  // Fact: the periodic spline is C2 on the circle, i.e. also across u_n ~ u_0.
  std::mt19937_64 rng(13);
  for (Index points : {3, 4, 5, 8, 100}) {
    Eigen::VectorXd u;
    Eigen::MatrixXd q;
    const CubicSpline s = random_spline(rng, points, 2, EndCondition::kPeriodic, &u, &q);
    for (Index a = 0; a < 2; ++a)
      for (int d = 0; d <= 2; ++d) {
        double scale = 1.0;
        for (Index i = 0; i < points; ++i) scale = std::max(scale, std::abs(s.eval(u[i], a, d)));
        INFO(points << " points, axis " << a << ", derivative " << d);
        C2PATH_CHECK_NEAR("q at u_0 vs u_n", d, s.eval(u[0], a, d), s.eval(u[points - 1], a, d), 0.0, 1e-12 * scale);
      }
  }
  // A periodic sample of a trigonometric polynomial is reproduced closely (it is smooth on the circle).
  const Index n = 64;
  Eigen::VectorXd u(n + 1);
  Eigen::MatrixXd q(n + 1, 1);
  for (Index i = 0; i <= n; ++i) {
    u[i] = 2.0 * kPi * double(i) / double(n);
    q(i, 0) = std::sin(u[i]) + 0.5 * std::cos(2.0 * u[i]);
  }
  q(n, 0) = q(0, 0);
  const CubicSpline s = CubicSpline::fit(u, q, ends(EndCondition::kPeriodic));
  for (int k = 0; k < 500; ++k) {
    const double x = 2.0 * kPi * (k + 0.37) / 500.0;
    C2PATH_CHECK_NEAR("periodic vs sin + cos", k, s.eval(x, 0), std::sin(x) + 0.5 * std::cos(2.0 * x), 0.0, 2e-5);
  }
}

namespace {

// Smooth test functions on [0, 3] with their first derivative (for clamped ends).
struct Smooth {
  const char* name;
  double (*f)(double);
  double (*df)(double);
};
const Smooth kExp{"e^x", [](double x) { return std::exp(x); }, [](double x) { return std::exp(x); }};
const Smooth kSinExp{"sin(2x) + e^(x/2)", [](double x) { return std::sin(2.0 * x) + std::exp(0.5 * x); },
                     [](double x) { return 2.0 * std::cos(2.0 * x) + 0.5 * std::exp(0.5 * x); }};

/// Max error of the spline through n + 1 uniform nodes on [0, 3] (dense sampling).
double convergence_error(const Smooth& fn, Index n, bool clamp) {
  Eigen::VectorXd u(n + 1);
  Eigen::MatrixXd q(n + 1, 1);
  for (Index i = 0; i <= n; ++i) {
    u[i] = 3.0 * double(i) / double(n);
    q(i, 0) = fn.f(u[i]);
  }
  const SplineOptions o = clamp ? clamped(vec({fn.df(0.0)}), vec({fn.df(3.0)})) : SplineOptions{};
  const CubicSpline s = CubicSpline::fit(u, q, o);
  double err = 0.0;
  const int samples = 20000;
  for (int k = 0; k <= samples; ++k) {
    const double x = 3.0 * double(k) / samples;
    err = std::max(err, std::abs(s.eval(x, 0) - fn.f(x)));
  }
  return err;
}

}  // namespace

TEST_CASE("spline: fourth-order convergence on a smooth function", "[spline]") {
  // Fact: for f in C^4 the not-a-knot and the (exactly) clamped spline converge as O(h^4) in the
  // max norm (de Boor, A Practical Guide to Splines, ch. IV/V). For e^x on [0, 3] the
  // least-squares slope of log(error) against log(n) over n = 16..256 uniform nodes is -4 +- 0.2.
  // Before the asymptotic regime the slope depends on f: for sin(2x) + e^(x/2) it is -4.27 over
  // the same n for not-a-knot (SciPy 1.10 CubicSpline gives the same -4.27); there the slope of the
  // last doubling, 128 -> 256, is checked instead (SciPy: -4.11).
  const std::vector<Index> ns = {16, 32, 64, 128, 256};
  for (bool clamp : {false, true}) {
    std::vector<double> ln, le;
    for (Index n : ns) {
      ln.push_back(std::log(double(n)));
      le.push_back(std::log(convergence_error(kExp, n, clamp)));
    }
    const double mn = std::accumulate(ln.begin(), ln.end(), 0.0) / double(ln.size());
    const double me = std::accumulate(le.begin(), le.end(), 0.0) / double(le.size());
    double sxy = 0.0, sxx = 0.0;
    for (std::size_t k = 0; k < ln.size(); ++k) {
      sxy += (ln[k] - mn) * (le[k] - me);
      sxx += (ln[k] - mn) * (ln[k] - mn);
    }
    const double slope = sxy / sxx;
    INFO(kExp.name << ", " << (clamp ? "clamped" : "not-a-knot") << ": log-log slope " << slope);
    CHECK(slope > -4.2);
    CHECK(slope < -3.8);

    const double last = std::log(convergence_error(kSinExp, 256, clamp) / convergence_error(kSinExp, 128, clamp)) /
                        std::log(2.0);
    INFO(kSinExp.name << ", " << (clamp ? "clamped" : "not-a-knot") << ": slope of the last doubling " << last);
    CHECK(last > -4.2);
    CHECK(last < -3.8);
  }
}

TEST_CASE("spline: clamped error below 5/384 h^4 max|f''''| (Hall & Meyer 1976)", "[spline]") {
  // Source: C. A. Hall, W. W. Meyer, "Optimal error bounds for cubic spline interpolation",
  // J. Approx. Theory 16 (1976): for the clamped (complete) cubic spline with exact end slopes,
  // |f - s| <= 5/384 h^4 max|f''''| with h the largest knot spacing, on any knots.
  struct Fn {
    const char* name;
    double (*f)(double);
    double (*df)(double);
    double d4max;  // max |f''''| on the interval
    double a, b;
  };
  const Fn fns[] = {
      {"sin", [](double x) { return std::sin(x); }, [](double x) { return std::cos(x); }, 1.0, 0.0, 2.0 * kPi},
      {"exp", [](double x) { return std::exp(x); }, [](double x) { return std::exp(x); }, std::exp(2.0), 0.0, 2.0},
      {"x^4", [](double x) { return x * x * x * x; }, [](double x) { return 4.0 * x * x * x; }, 24.0, -1.0, 1.5},
  };
  std::mt19937_64 rng(14);
  for (const Fn& fn : fns)
    for (Index n : {5, 10, 40, 160}) {
      for (bool uneven : {false, true}) {
        Eigen::VectorXd u(n + 1);
        if (uneven) {
          u = uneven_knots(rng, n + 1, 0.2, 1.0);
          u = (fn.a + (u.array() - u[0]) * (fn.b - fn.a) / (u[n] - u[0])).matrix();
          u[n] = fn.b;
        } else {
          for (Index i = 0; i <= n; ++i) u[i] = fn.a + (fn.b - fn.a) * double(i) / double(n);
        }
        Eigen::MatrixXd q(n + 1, 1);
        for (Index i = 0; i <= n; ++i) q(i, 0) = fn.f(u[i]);
        const CubicSpline s = CubicSpline::fit(u, q, clamped(vec({fn.df(fn.a)}), vec({fn.df(fn.b)})));
        double h = 0.0;
        for (Index i = 0; i < n; ++i) h = std::max(h, u[i + 1] - u[i]);
        const double bound = 5.0 / 384.0 * std::pow(h, 4) * fn.d4max;
        double err = 0.0;
        for (int k = 0; k <= 20000; ++k) {
          const double x = fn.a + (fn.b - fn.a) * k / 20000.0;
          err = std::max(err, std::abs(s.eval(x, 0) - fn.f(x)));
        }
        INFO(fn.name << ", " << n << " pieces, " << (uneven ? "uneven" : "uniform") << ": error " << err << ", bound "
                     << bound);
        CHECK(err <= bound + 4.0 * std::numeric_limits<double>::epsilon() * (1.0 + std::abs(q.maxCoeff())));
        // The bound is sharp in order: the error is not tiny compared to it (uniform knots).
        if (!uneven && n <= 40) CHECK(err > 1e-3 * bound);
      }
    }
}

TEST_CASE("spline: derivatives agree with finite differences", "[spline]") {
  // Fact: central differences (f(x+e) - f(x-e)) / 2e approximate f' to O(e^2).
  std::mt19937_64 rng(15);
  for (EndCondition e : {EndCondition::kNotAKnot, EndCondition::kNatural, EndCondition::kClamped, EndCondition::kPeriodic}) {
    Eigen::VectorXd u;
    Eigen::MatrixXd q;
    const CubicSpline s = random_spline(rng, 12, 2, e, &u, &q);
    std::uniform_real_distribution<double> at(u[0] - 0.5, u[11] + 0.5);
    const double eps = 1e-5;
    int checked = 0;
    while (checked < 300) {
      const double x = at(rng);
      const Index p = s.find_piece(x);
      // Stay inside one piece (or the extrapolated end cubics) so that q''' is continuous there.
      if ((p > 0 && x - eps <= u[p]) || (p + 1 < s.pieces() && x + eps >= u[p + 1])) continue;
      ++checked;
      INFO(end_name(e));
      c2path::test::check_fd_derivatives(s, x, eps, 1e-6);
      for (Index a = 0; a < 2; ++a) CHECK(s.eval(x, a, 4) == 0.0);
    }
  }
}

TEST_CASE("spline: Cursor on sorted queries gives the same as eval", "[spline]") {
  std::mt19937_64 rng(16);
  Eigen::VectorXd u;
  Eigen::MatrixXd q;
  const CubicSpline s = random_spline(rng, 300, 2, EndCondition::kNotAKnot, &u, &q);
  std::uniform_real_distribution<double> at(u[0] - 2.0, u[299] + 2.0);
  std::vector<double> xs;
  for (int k = 0; k < 5000; ++k) xs.push_back(at(rng));
  for (Index i = 0; i < 300; ++i) xs.push_back(u[i]);  // the knots themselves
  std::sort(xs.begin(), xs.end());
  CubicSpline::Cursor cur(s);
  for (std::size_t k = 0; k < xs.size(); ++k) {
    INFO("ascending, u = " << xs[k]);
    REQUIRE(cur.piece(xs[k]) == s.find_piece(xs[k]));
    for (int d = 0; d <= 3; ++d) CHECK(cur.eval(xs[k], 1, d) == s.eval(xs[k], 1, d));
  }
  // Descending, and far jumps, also agree.
  for (std::size_t k = xs.size(); k-- > 0;) REQUIRE(cur.piece(xs[k]) == s.find_piece(xs[k]));
  std::shuffle(xs.begin(), xs.end(), rng);
  for (double x : xs) REQUIRE(cur.piece(x) == s.find_piece(x));
  // find_piece contract: u_i <= u < u_{i+1}, clamped to [0, n-1].
  for (Index i = 0; i + 1 < 300; ++i) CHECK(s.find_piece(u[i]) == std::min<Index>(i, s.pieces() - 1));
  CHECK(s.find_piece(u[299]) == s.pieces() - 1);
  CHECK(s.find_piece(u[0] - 100.0) == 0);
  CHECK(s.find_piece(u[299] + 100.0) == s.pieces() - 1);
  // The all-axes evaluation agrees with the per-axis one.
  Eigen::VectorXd out(2);
  for (int k = 0; k < 100; ++k) {
    const double x = xs[std::size_t(k)];
    for (int d = 0; d <= 3; ++d) {
      s.eval(x, d, out);
      for (Index a = 0; a < 2; ++a) CHECK(out[a] == s.eval(x, a, d));
    }
  }
  s.eval(u[299], 0, out);
  CHECK(out[0] == q(299, 0));
  CHECK(out[1] == q(299, 1));
}

TEST_CASE("spline: piece_range gives the exact extremes", "[spline]") {
  // Hand-built piece: q(s) = s^3 - 3 s on [u_0, u_0 + 3] = [1, 4]: q' = 3 s^2 - 3 vanishes at
  // s = 1 (min -2); the max 18 is at the end s = 3; q' ranges over [-3, 24], q'' = 6 s over [0, 18].
  {
    const CubicSpline s({1.0, 4.0}, 1, {0.0, -3.0, 0.0, 1.0});
    const auto r0 = s.piece_range(0, 0, 0);
    CHECK(r0.min == Approx(-2.0).epsilon(1e-15));
    CHECK(r0.u_min == Approx(2.0).epsilon(1e-12));
    CHECK(r0.max == Approx(18.0).epsilon(1e-15));
    CHECK(r0.u_max == 4.0);
    const auto r1 = s.piece_range(0, 0, 1);
    CHECK(r1.min == Approx(-3.0).epsilon(1e-15));
    CHECK(r1.u_min == 1.0);
    CHECK(r1.max == Approx(24.0).epsilon(1e-15));
    const auto r2 = s.piece_range(0, 0, 2);
    CHECK(r2.min == 0.0);
    CHECK(r2.max == Approx(18.0).epsilon(1e-15));
    const auto r3 = s.piece_range(0, 0, 3);
    CHECK(r3.min == 6.0);
    CHECK(r3.max == 6.0);
  }
  // q(s) = -(s - 1)^2 (s - 4) = -s^3 + 6 s^2 - 9 s + 4 on [0, 3.5]: critical points s = 1 (local
  // min 0) and s = 3 (local max 4); q(0) = 4 too, q(3.5) = 3.125. q' = -3 s^2 + 12 s - 9 has its
  // max 3 at s = 2 (q'' = 0) and its min -9 at s = 0 (q'(3.5) = -3.75).
  {
    const CubicSpline s({0.0, 3.5}, 1, {4.0, -9.0, 6.0, -1.0});
    const auto r0 = s.piece_range(0, 0, 0);
    CHECK(r0.min == Approx(0.0).margin(1e-14));
    CHECK(r0.u_min == Approx(1.0).epsilon(1e-14));  // a simple root of q'
    CHECK(r0.max == Approx(4.0).epsilon(1e-15));
    CHECK((r0.u_max == 0.0 || r0.u_max == Approx(3.0).epsilon(1e-14)));
    const auto r1 = s.piece_range(0, 0, 1);
    CHECK(r1.max == Approx(3.0).epsilon(1e-15));
    CHECK(r1.u_max == Approx(2.0).epsilon(1e-15));
    CHECK(r1.min == Approx(-9.0).epsilon(1e-15));
    CHECK(r1.u_min == 0.0);
  }
  // Random splines: the range contains every dense sample, its extremes are attained where it
  // says, and agree with the analytic critical points (quadratic formula) and the piece ends.
  std::mt19937_64 rng(17);
  for (EndCondition e : {EndCondition::kNotAKnot, EndCondition::kNatural, EndCondition::kClamped, EndCondition::kPeriodic}) {
    Eigen::VectorXd u;
    Eigen::MatrixXd q;
    const CubicSpline s = random_spline(rng, 25, 2, e, &u, &q);
    for (Index p = 0; p < s.pieces(); ++p)
      for (Index a = 0; a < 2; ++a)
        for (int d = 0; d <= 3; ++d) {
          INFO(end_name(e) << ", piece " << p << ", axis " << a << ", derivative " << d);
          const c2path::Range r = s.piece_range(p, a, d);
          const double h = u[p + 1] - u[p];
          const double* c = s.coeffs(p, a);
          double scale = 1e-300;
          // Candidates: the ends and the roots of the next derivative (analytic).
          std::vector<double> cand = {0.0, h};
          if (d == 0) {
            const double A = 3.0 * c[3], B = 2.0 * c[2], C = c[1];
            const double disc = B * B - 4.0 * A * C;
            if (A != 0.0 && disc >= 0.0) {
              cand.push_back((-B + std::sqrt(disc)) / (2.0 * A));
              cand.push_back((-B - std::sqrt(disc)) / (2.0 * A));
            }
          } else if (d == 1 && c[3] != 0.0) {
            cand.push_back(-c[2] / (3.0 * c[3]));
          }
          double amin = std::numeric_limits<double>::infinity(), amax = -amin;
          for (double t : cand)
            if (t >= 0.0 && t <= h) {
              const double v = c2path::cubic_eval(c, t, d);
              amin = std::min(amin, v);
              amax = std::max(amax, v);
              scale = std::max(scale, std::abs(v));
            }
          const double tol = 1e-13 * scale;
          C2PATH_CHECK_NEAR("min vs analytic", p, r.min, amin, 0.0, tol);
          C2PATH_CHECK_NEAR("max vs analytic", p, r.max, amax, 0.0, tol);
          CHECK(r.u_min >= u[p]);
          CHECK(r.u_min <= u[p + 1]);
          CHECK(r.u_max >= u[p]);
          CHECK(r.u_max <= u[p + 1]);
          C2PATH_CHECK_NEAR("value at u_min", p, s.eval_piece(p, r.u_min, a, d), r.min, 0.0, tol);
          C2PATH_CHECK_NEAR("value at u_max", p, s.eval_piece(p, r.u_max, a, d), r.max, 0.0, tol);
          double smin = std::numeric_limits<double>::infinity(), smax = -smin;
          for (int k = 0; k <= 2000; ++k) {
            const double v = c2path::cubic_eval(c, h * k / 2000.0, d);
            smin = std::min(smin, v);
            smax = std::max(smax, v);
          }
          CHECK(r.min <= smin + tol);
          CHECK(r.max >= smax - tol);
          // Dense sampling gets within O(step^2) of the exact extremes.
          const double close = 1e-5 * std::max(scale, std::abs(smax - smin));
          CHECK(smin - r.min <= close);
          CHECK(r.max - smax <= close);
        }
  }
}

TEST_CASE("spline: extrapolation continues the end cubics", "[spline]") {
  // Documented in spline.hpp: outside [u_0, u_n] the first and last piece continue.
  std::mt19937_64 rng(18);
  for (EndCondition e : {EndCondition::kNotAKnot, EndCondition::kNatural, EndCondition::kClamped, EndCondition::kPeriodic}) {
    Eigen::VectorXd u;
    Eigen::MatrixXd q;
    const CubicSpline s = random_spline(rng, 8, 2, e, &u, &q);
    const Index last = s.pieces() - 1;
    for (double dx : {1e-9, 0.1, 1.0, 10.0})
      for (Index a = 0; a < 2; ++a)
        for (int d = 0; d <= 3; ++d) {
          CHECK(s.eval(u[0] - dx, a, d) == c2path::cubic_eval(s.coeffs(0, a), -dx, d));
          CHECK(s.eval(u[7] + dx, a, d) == c2path::cubic_eval(s.coeffs(last, a), u[7] + dx - u[last], d));
        }
    // At u_n exactly: the last waypoint, not the rounded value of the last cubic.
    for (Index a = 0; a < 2; ++a) {
      CHECK(s.eval(u[7], a) == q(7, a));
      CHECK(s.end_value(a) == q(7, a));
    }
  }
}

TEST_CASE("spline: invalid input is an error", "[spline]") {
  Eigen::MatrixXd q(3, 2);
  q << 0.0, 1.0, 2.0, 3.0, 4.0, 5.0;
  // Fewer than 2 points.
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0}), q.topRows(1)), Contains("at least 2 points"));
  CHECK_THROWS_AS(CubicSpline::fit(Eigen::VectorXd(0), Eigen::MatrixXd(0, 2)), c2path::Error);
  // Non-increasing parameters: equal and decreasing, named by their points.
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, 1.0, 1.0}), q), Contains("increase strictly") && Contains("points 1 and 2"));
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, -1.0, 2.0}), q), Contains("points 0 and 1"));
  // Size mismatch between parameters and points.
  CHECK_THROWS_AS(CubicSpline::fit(vec({0.0, 1.0}), q), c2path::Error);
  // Non-finite data.
  const double inf = std::numeric_limits<double>::infinity(), nan = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, nan, 2.0}), q), Contains("not finite"));
  CHECK_THROWS_AS(CubicSpline::fit(vec({0.0, 1.0, inf}), q), c2path::Error);
  for (double bad : {nan, inf, -inf}) {
    Eigen::MatrixXd qb = q;
    qb(1, 1) = bad;
    CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, 1.0, 2.0}), qb), Contains("finite"));
  }
  // Periodic with first != last.
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, 1.0, 2.0}), q, ends(EndCondition::kPeriodic)), Contains("periodic"));
  // Clamped slopes of the wrong size, or not finite.
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, 1.0, 2.0}), q, clamped(vec({1.0}), vec({1.0, 2.0}))),
                    Contains("one value per axis (2)") && Contains("got 1 and 2"));
  CHECK_THROWS_AS(CubicSpline::fit(vec({0.0, 1.0, 2.0}), q, SplineOptions{EndCondition::kClamped, {}, {}}), c2path::Error);
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, 1.0, 2.0}), q, clamped(vec({1.0, nan}), vec({1.0, 2.0}))),
                    Contains("finite"));
  // Options validate on their own too.
  CHECK_THROWS_AS(clamped(vec({1.0}), vec({1.0})).validate(2), c2path::Error);
  CHECK_NOTHROW(clamped(vec({1.0, 0.0}), vec({1.0, 0.0})).validate(2));
  CHECK_NOTHROW(ends(EndCondition::kNatural).validate(2));
  // A hand-built spline checks its shape.
  CHECK_THROWS_AS(CubicSpline({0.0, 1.0}, 1, {1.0, 2.0, 3.0}), c2path::Error);
  CHECK_THROWS_AS(CubicSpline({0.0, 0.0}, 1, {1.0, 2.0, 3.0, 4.0}), c2path::Error);
}

TEST_CASE("spline: extreme knot spacing ratios give finite coefficients that interpolate", "[spline]") {
  // Spacing ratios up to 1e6 between neighbouring pieces, and 1e12 across the spline.
  std::mt19937_64 rng(19);
  std::vector<std::vector<double>> spacings = {
      {1.0, 1e-6, 1.0, 1e-6, 1.0},
      {1e-6, 1.0, 1.0, 1.0, 1e-6},
      {1e6, 1.0, 1e-6, 1.0, 1e6, 1.0},
      {1e-3, 1e3, 1e-3, 1e3, 1e-3, 1e3, 1e-3},
      {1.0, 1e6},
      {1e6, 1.0, 1e-6},
  };
  for (const auto& sp : spacings)
    for (EndCondition e : {EndCondition::kNotAKnot, EndCondition::kNatural, EndCondition::kClamped, EndCondition::kPeriodic}) {
      const Index points = Index(sp.size()) + 1;
      Eigen::VectorXd u(points);
      u[0] = 0.0;
      for (Index i = 1; i < points; ++i) u[i] = u[i - 1] + sp[std::size_t(i - 1)];
      Eigen::MatrixXd q = random_points(rng, points, 2, 5.0);
      if (e == EndCondition::kPeriodic) q.row(points - 1) = q.row(0);
      const SplineOptions o = e == EndCondition::kClamped ? clamped(vec({1.0, -1.0}), vec({0.0, 2.0})) : ends(e);
      const CubicSpline s = CubicSpline::fit(u, q, o);
      INFO(end_name(e) << ", " << points << " points, first spacing " << sp[0]);
      for (Index p = 0; p < s.pieces(); ++p)
        for (Index a = 0; a < 2; ++a)
          for (int k = 0; k < 4; ++k) CHECK(std::isfinite(s.coeff(p, a, k)));
      for (Index i = 0; i < points; ++i)
        for (Index a = 0; a < 2; ++a) {
          CHECK(s.eval(u[i], a) == (i + 1 < points ? s.coeff(i, a, 0) : s.end_value(a)));
          C2PATH_CHECK_NEAR("interpolation", i, s.eval(u[i], a), q(i, a), 0.0, 1e-12 * 5.0);
          // The end of each piece reaches the next point, up to the rounding of the power-basis
          // terms c_k h^k (a slope of 5e6 across a piece of length 1e6 makes terms of 5e12).
          if (i > 0) {
            const double* c = s.coeffs(i - 1, a);
            const double h = u[i] - u[i - 1];
            const double terms = std::abs(c[0]) + std::abs(c[1]) * h + std::abs(c[2]) * h * h + std::abs(c[3]) * h * h * h;
            C2PATH_CHECK_NEAR("piece end", i, c2path::cubic_eval(c, h, 0), q(i, a), 0.0, 1e-14 * terms);
          }
        }
    }
}

TEST_CASE("spline: the fit is linear in the data and shift invariant in the parameter", "[spline]") {
  // Fact: the spline is a linear function of the data; shifting u shifts it.
  std::mt19937_64 rng(20);
  for (EndCondition e : {EndCondition::kNotAKnot, EndCondition::kNatural, EndCondition::kPeriodic}) {
    Eigen::VectorXd u = uneven_knots(rng, 20);
    Eigen::MatrixXd q = random_points(rng, 20, 2);
    if (e == EndCondition::kPeriodic) q.row(19) = q.row(0);
    const CubicSpline s = CubicSpline::fit(u, q, ends(e));
    const CubicSpline big = CubicSpline::fit(u, 1e9 * q, ends(e));
    const CubicSpline tiny = CubicSpline::fit(u, 1e-9 * q, ends(e));
    const Eigen::VectorXd us = (u.array() + 1000.0).matrix();
    const CubicSpline shifted = CubicSpline::fit(us, q, ends(e));
    for (int k = 0; k < 100; ++k) {
      const double x = u[0] + (u[19] - u[0]) * (k + 0.5) / 100.0;
      for (Index a = 0; a < 2; ++a) {
        C2PATH_CHECK_NEAR("1e9 q", k, big.eval(x, a), 1e9 * s.eval(x, a), 1e-12, 1e-3);
        C2PATH_CHECK_NEAR("1e-9 q", k, tiny.eval(x, a), 1e-9 * s.eval(x, a), 1e-12, 1e-21);
        C2PATH_CHECK_NEAR("shifted u", k, shifted.eval(x + 1000.0, a), s.eval(x, a), 0.0, 1e-9);
      }
    }
  }
}

TEST_CASE("spline: every axis count gives the per-axis splines; strided input", "[spline]") {
  // Fact: the axes are independent; the fit solves them together (with code specialised for 1, 2,
  // 3, 4 and 6 axes and a general path), so an m-axis spline equals m one-axis splines.
  std::mt19937_64 rng(21);
  for (EndCondition e : {EndCondition::kNotAKnot, EndCondition::kNatural, EndCondition::kClamped, EndCondition::kPeriodic})
    for (Index axes : {1, 2, 3, 4, 5, 6, 7, 9})
      for (Index points : {2, 3, 4, 11}) {
        if (e == EndCondition::kPeriodic && points == 2) continue;
        const Eigen::VectorXd u = uneven_knots(rng, points);
        Eigen::MatrixXd q = random_points(rng, points, axes);
        if (e == EndCondition::kPeriodic) q.row(points - 1) = q.row(0);
        const Eigen::VectorXd v0 = random_points(rng, 1, axes).transpose(), v1 = random_points(rng, 1, axes).transpose();
        const SplineOptions o = e == EndCondition::kClamped ? clamped(v0, v1) : ends(e);
        const CubicSpline all = CubicSpline::fit(u, q, o);
        // The same data as a block of a larger matrix (outer stride != rows).
        Eigen::MatrixXd big = Eigen::MatrixXd::Constant(points + 5, axes + 1, 1e300);
        big.block(2, 1, points, axes) = q;
        const CubicSpline strided = CubicSpline::fit(u, big.block(2, 1, points, axes), o);
        for (Index a = 0; a < axes; ++a) {
          SplineOptions oa = o;
          if (e == EndCondition::kClamped) oa = clamped(v0.segment(a, 1), v1.segment(a, 1));
          const CubicSpline one = CubicSpline::fit(u, q.col(a), oa);
          for (Index p = 0; p < all.pieces(); ++p)
            for (int k = 0; k < 4; ++k) {
              INFO(end_name(e) << ", " << axes << " axes, " << points << " points, axis " << a << ", piece " << p);
              C2PATH_CHECK_NEAR("m axes vs one axis", k, all.coeff(p, a, k), one.coeff(p, 0, k), 1e-14, 1e-14);
              CHECK(strided.coeff(p, a, k) == all.coeff(p, a, k));
            }
        }
      }
}

TEST_CASE("spline: large splines (bulk storage) agree with GSL and copy correctly", "[spline][gsl]") {
  // Source: GSL 2.7 gsl_interp_cspline. 300001 points: the coefficients (9.6 MB) live in the
  // huge-page bulk storage of detail::BulkAllocator.
  gsl_set_error_handler_off();
  const Index points = 300001;
  std::mt19937_64 rng(22);
  const Eigen::VectorXd u = uneven_knots(rng, points, 0.5, 1.5);
  Eigen::MatrixXd q(points, 1);
  std::uniform_real_distribution<double> dq(-1.0, 1.0);
  q(0, 0) = 0.0;
  for (Index i = 1; i < points; ++i) q(i, 0) = q(i - 1, 0) + dq(rng);
  CubicSpline s = CubicSpline::fit(u, q, ends(EndCondition::kNatural));
  const CubicSpline copy = s;  // NOLINT(performance-unnecessary-copy-initialization): the copy is tested
  std::vector<double> x(u.data(), u.data() + points), y(q.data(), q.data() + points);
  GslSpline g(gsl_interp_cspline, x, y);
  REQUIRE(g.status == GSL_SUCCESS);
  double scale[3] = {0.0, 0.0, 0.0};
  std::vector<double> queries;
  for (Index i = 0; i < points; i += 997) queries.push_back(u[i] + 0.3 * (u[std::min(i + 1, points - 1)] - u[i]));
  for (int d = 0; d <= 2; ++d)
    for (double t : queries) scale[d] = std::max(scale[d], std::abs(g.eval(t, d)));
  CubicSpline::Cursor cur(copy);
  for (std::size_t k = 0; k < queries.size(); ++k)
    for (int d = 0; d <= 2; ++d) {
      const double ref = g.eval(queries[k], d);
      C2PATH_CHECK_NEAR("large spline vs GSL", k, s.eval(queries[k], 0, d), ref, 0.0, 1e-12 * scale[d]);
      CHECK(cur.eval(queries[k], 0, d) == s.eval(queries[k], 0, d));
    }
  // Moving keeps the storage.
  const double* before = s.coeffs(0, 0);
  const CubicSpline moved = std::move(s);
  CHECK(moved.coeffs(0, 0) == before);
  CHECK(moved.eval(u[points - 1], 0) == q(points - 1, 0));
}

TEST_CASE("spline: overflowing steps or slopes are an error", "[spline]") {
  // Finite data whose differences overflow (u from -1e308 to 1e308, or q jumping by 2e308).
  Eigen::MatrixXd q(3, 1);
  q << 0.0, 1.0, 2.0;
  CHECK_THROWS_WITH(CubicSpline::fit(vec({-1e308, 1e308, 1.5e308}), q), Contains("overflow"));
  q << -1e308, 1e308, 0.0;
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, 1.0, 2.0}), q), Contains("overflow"));
  CHECK_THROWS_WITH(CubicSpline::fit(vec({0.0, 1.0, 2.0}), q, ends(EndCondition::kNatural)), Contains("overflow"));
  // Large but representable data is fine.
  q << -1e300, 1e300, 0.0;
  const CubicSpline s = CubicSpline::fit(vec({0.0, 1.0, 2.0}), q);
  CHECK(s.eval(1.0, 0) == 1e300);
}

TEST_CASE("spline: end conditions hold exactly at the last breakpoint", "[spline]") {
  // Identity: a clamped spline's slope at u_n is the given slope, a natural spline's curvature
  // at u_n is 0 and a periodic spline's slope and curvature at u_n are those at u_0 — exactly,
  // not up to the rounding of evaluating the last cubic at its far end.
  Eigen::VectorXd u(5);
  u << 0.0, 0.7, 1.9, 2.3, 3.1;
  Eigen::MatrixXd q(5, 2);
  q << 0.2, -35, 0.65, -20, 1.2, 0.1, 1.75, 18, 0.2, -35;
  c2path::SplineOptions clamped;
  clamped.ends = c2path::EndCondition::kClamped;
  clamped.start_slope = Eigen::VectorXd::Zero(2);
  clamped.end_slope = Eigen::VectorXd::Zero(2);
  const auto sc = c2path::CubicSpline::fit(u, q, clamped);
  c2path::SplineOptions natural;
  natural.ends = c2path::EndCondition::kNatural;
  const auto sn = c2path::CubicSpline::fit(u, q, natural);
  c2path::SplineOptions periodic;
  periodic.ends = c2path::EndCondition::kPeriodic;
  const auto sp = c2path::CubicSpline::fit(u, q, periodic);
  Eigen::VectorXd out(2);
  for (Index a = 0; a < 2; ++a) {
    CHECK(sc.eval(3.1, a, 1) == 0.0);
    CHECK(sc.eval(3.1, a, 0) == q(4, a));
    CHECK(sn.eval(3.1, a, 2) == 0.0);
    CHECK(sp.eval(3.1, a, 1) == sp.eval(0.0, a, 1));
    CHECK(sp.eval(3.1, a, 2) == sp.eval(0.0, a, 2));
    c2path::CubicSpline::Cursor cur(sc);
    CHECK(cur.eval(3.1, a, 1) == 0.0);
    // A copy made from the parts keeps them when they are passed on.
    std::vector<double> c(std::size_t(sc.pieces() * 2 * 4)), e, ed;
    for (Index p = 0; p < sc.pieces(); ++p)
      for (Index b = 0; b < 2; ++b)
        for (int k = 0; k < 4; ++k) c[std::size_t((p * 2 + b) * 4 + k)] = sc.coeff(p, b, k);
    for (Index b = 0; b < 2; ++b) {
      e.push_back(sc.end_value(b));
      ed.push_back(sc.end_deriv(b, 1));
      ed.push_back(sc.end_deriv(b, 2));
    }
    const c2path::CubicSpline copy(sc.breaks(), 2, c, e, ed);
    CHECK(copy.eval(3.1, a, 1) == 0.0);
  }
  sc.eval(3.1, 1, out);
  CHECK(out[0] == 0.0);
  CHECK(out[1] == 0.0);
}
