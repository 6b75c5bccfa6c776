// Tests of the limit check (limits.hpp) on hand-built piecewise-cubic trajectories whose peaks and
// crossing times are known in closed form. The source of every expected value is named beside it:
// "hand" means worked out on paper from the polynomial, "identity" a mathematical identity; the
// cubic roots were also cross-checked with numpy.roots (Debian /usr/bin/python3), as noted.

#include <catch2/catch.hpp>

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <numbers>
#include <random>
#include <vector>

#include "c2path/error.hpp"
#include "c2path/limits.hpp"
#include "c2path/trajectory.hpp"
#include "test_util.hpp"

namespace {

using namespace c2path;
using Poly = std::array<double, 4>;  // p0 + p1 t + p2 t^2 + p3 t^3 in global time t

// Local coefficients of p around a (Taylor shift): c_k = sum_j C(j, k) p_j a^(j-k).
Poly shift(const Poly& p, double a) {
  return {p[0] + a * (p[1] + a * (p[2] + a * p[3])), p[1] + a * (2 * p[2] + 3 * a * p[3]), p[2] + 3 * a * p[3], p[3]};
}

// One CubicSpline per entry of `segments` (each a list of breakpoints), all axes following the
// global polynomials `axes` (one per axis). Consecutive segments must share their end breakpoints.
CubicTrajectory make_traj(const std::vector<Poly>& axes, const std::vector<std::vector<double>>& segments) {
  std::vector<CubicSpline> sp;
  for (const auto& br : segments) {
    std::vector<double> c;
    for (std::size_t i = 0; i + 1 < br.size(); ++i)
      for (const Poly& p : axes) {
        const Poly l = shift(p, br[i]);
        c.insert(c.end(), l.begin(), l.end());
      }
    sp.emplace_back(br, Index(axes.size()), c);
  }
  return CubicTrajectory(std::move(sp));
}

// q(t/k): the same move slowed down uniformly by k (identity: d^j/dt^j q(t/k) = q^(j)(t/k) / k^j).
Poly stretched(const Poly& p, double k) { return {p[0], p[1] / k, p[2] / (k * k), p[3] / (k * k * k)}; }
std::vector<double> scaled(std::vector<double> b, double k) {
  for (double& x : b) x *= k;
  return b;
}

// q = t^3 - 3t (used throughout): q' = 3t^2 - 3, q'' = 6t, q''' = 6.
const Poly kCubic = {0.0, -3.0, 0.0, 1.0};
// The roots of t^3 - 3t = c on [-2, 2] are 2 cos((acos(c/2) + 2 pi m) / 3), m = 0, 1, 2
// (identity: (2 cos x)^3 - 3 (2 cos x) = 2 cos 3x); for c = 1.5 they are -1.38436715, -0.55787470,
// 1.94224185 (cross-checked with numpy.roots([1, 0, -3, -1.5])).
double cubic_root(double c, int m) { return 2.0 * std::cos((std::acos(c / 2.0) + 2.0 * std::numbers::pi * m) / 3.0); }

AxisLimits limits(std::optional<double> min, std::optional<double> max, std::optional<double> vel,
                  std::optional<double> acc, std::optional<double> jerk) {
  AxisLimits l;
  l.min = min;
  l.max = max;
  l.vel = vel;
  l.acc = acc;
  l.jerk = jerk;
  return l;
}

struct Want {
  Index axis;
  Quantity q;
  double t_start, t_end, peak, limit;
};

void check_violations(const Report& r, const std::vector<Want>& want, double tol = 1e-12) {
  REQUIRE(r.violations.size() == want.size());
  for (std::size_t i = 0; i < want.size(); ++i) {
    const Violation& v = r.violations[i];
    INFO("violation " << i << ": axis " << v.axis << " " << to_string(v.quantity) << " [" << v.t_start << ", " << v.t_end
                      << "] peak " << v.peak);
    CHECK(v.axis == want[i].axis);
    CHECK(v.quantity == want[i].q);
    C2PATH_CHECK_NEAR("t_start", i, v.t_start, want[i].t_start, 0.0, tol);
    C2PATH_CHECK_NEAR("t_end", i, v.t_end, want[i].t_end, 0.0, tol);
    C2PATH_CHECK_NEAR("peak", i, v.peak, want[i].peak, tol, tol);
    CHECK(v.limit == want[i].limit);
    CHECK(v.t_peak >= v.t_start);
    CHECK(v.t_peak <= v.t_end);
  }
}

}  // namespace

TEST_CASE("limits: exact peaks of t^3 - 3t on [-2, 2]", "[limits]") {
  // Split into pieces at awkward places: the peaks must not depend on where the breaks are.
  for (const auto& br : {std::vector<double>{-2.0, 2.0}, std::vector<double>{-2.0, -1.3, 0.25, 1.7, 2.0}}) {
    const CubicTrajectory tr = make_traj({kCubic}, {br});
    const Report r = check_limits(tr, {AxisLimits{}});
    REQUIRE(r.peaks.size() == 1);
    const AxisPeaks& p = r.peaks[0];
    // Hand: q(-2) = -2, q(-1) = 2 (local max), q(1) = -2 (local min), q(2) = 2.
    C2PATH_CHECK_NEAR("pos_min", 0, p.pos_min, -2.0, 0.0, 1e-14);
    C2PATH_CHECK_NEAR("pos_max", 0, p.pos_max, 2.0, 0.0, 1e-14);
    CHECK((std::abs(p.t_pos_min + 2.0) < 1e-12 || std::abs(p.t_pos_min - 1.0) < 1e-12));
    CHECK((std::abs(p.t_pos_max + 1.0) < 1e-12 || std::abs(p.t_pos_max - 2.0) < 1e-12));
    // Hand: |q'| = |3t^2 - 3| is largest, 9, at t = +-2; |q''| = |6t| is 12 at t = +-2; q''' = 6.
    C2PATH_CHECK_NEAR("vel", 0, p.vel, 9.0, 0.0, 1e-13);
    CHECK(std::abs(std::abs(p.t_vel) - 2.0) < 1e-14);
    C2PATH_CHECK_NEAR("acc", 0, p.acc, 12.0, 0.0, 1e-13);
    CHECK(std::abs(std::abs(p.t_acc) - 2.0) < 1e-14);
    C2PATH_CHECK_NEAR("jerk", 0, p.jerk, 6.0, 0.0, 1e-13);
    CHECK(r.ok);
    CHECK(r.violations.empty());
    CHECK(r.stretch == 1.0);
    CHECK(r.exact);
    CHECK(r.t_begin == -2.0);
    CHECK(r.t_end == 2.0);
    CHECK(r.duration == 4.0);
  }
}

TEST_CASE("limits: an interior extreme (parabola) and a line", "[limits]") {
  // q = 4 - (t - 1)^2 = 3 + 2t - t^2 on [-1, 3], a break at 0.4: the top, 4 at t = 1, lies inside
  // a piece (hand). q' = 2 - 2t: |q'| = 4 at both ends; q'' = -2; q''' = 0.
  const Poly par = {3.0, 2.0, -1.0, 0.0};
  const CubicTrajectory tr = make_traj({par}, {{-1.0, 0.4, 3.0}});
  Report r = check_limits(tr, {AxisLimits{}});
  const AxisPeaks& p = r.peaks[0];
  C2PATH_CHECK_NEAR("pos_max", 0, p.pos_max, 4.0, 0.0, 1e-14);
  C2PATH_CHECK_NEAR("t_pos_max", 0, p.t_pos_max, 1.0, 0.0, 1e-12);  // the root of q' = 2 - 2t
  C2PATH_CHECK_NEAR("pos_min", 0, p.pos_min, 0.0, 0.0, 1e-14);
  C2PATH_CHECK_NEAR("vel", 0, p.vel, 4.0, 0.0, 1e-14);
  C2PATH_CHECK_NEAR("acc", 0, p.acc, 2.0, 0.0, 1e-14);
  CHECK(p.jerk == 0.0);
  // max 3.75: 4 - (t-1)^2 > 3.75 <=> |t - 1| < 0.5, so [0.5, 1.5], peak 4 (hand). acc at exactly
  // its limit 2 is not a violation.
  r = check_limits(tr, {limits(std::nullopt, 3.75, std::nullopt, 2.0, 1.0)});
  check_violations(r, {{0, Quantity::kPos, 0.5, 1.5, 4.0, 3.75}});
  CHECK(r.pos_violation);
  CHECK(r.stretch == 1.0);  // slowing down cannot fix a position violation
  CHECK_FALSE(r.ok);
  // min 0.5: 3 + 2t - t^2 < 0.5 <=> t < 1 - sqrt(3.5) or t > 1 + sqrt(3.5) (quadratic formula).
  r = check_limits(tr, {limits(0.5, std::nullopt, std::nullopt, std::nullopt, std::nullopt)});
  check_violations(r, {{0, Quantity::kPos, -1.0, 1.0 - std::sqrt(3.5), 0.0, 0.5},
                       {0, Quantity::kPos, 1.0 + std::sqrt(3.5), 3.0, 0.0, 0.5}});

  // A line q = 0.5 + 2t on [0, 4]: vel 2 everywhere, acc and jerk 0 (hand). vel limit 1.5: the whole
  // move, merged across both breaks, and stretch 2 / 1.5.
  const CubicTrajectory line = make_traj({{0.5, 2.0, 0.0, 0.0}}, {{0.0, 1.0, 2.5, 4.0}});
  r = check_limits(line, {limits(0.0, 10.0, 1.5, 1.0, 1.0)});
  check_violations(r, {{0, Quantity::kVel, 0.0, 4.0, 2.0, 1.5}});
  CHECK(r.peaks[0].pos_min == 0.5);
  C2PATH_CHECK_NEAR("pos_max", 0, r.peaks[0].pos_max, 8.5, 0.0, 1e-14);
  CHECK(r.peaks[0].t_pos_max == 4.0);
  CHECK(r.peaks[0].acc == 0.0);
  C2PATH_CHECK_NEAR("stretch", 0, r.stretch, 2.0 / 1.5, 1e-15, 0.0);
  CHECK_FALSE(r.pos_violation);
}

TEST_CASE("limits: exact violation intervals, merged across pieces and segments, sorted", "[limits]") {
  // Two identical axes following t^3 - 3t; breaks inside the intervals so that merging matters;
  // two splines (segments) joined at t = 0.7.
  const CubicTrajectory tr = make_traj({kCubic, kCubic}, {{-2.0, -1.8, -1.0}, {-1.0, 0.7}, {0.7, 1.5, 2.0}});
  const AxisLimits l = limits(-1.5, 1.5, 6.0, 6.0, 5.0);
  const Report r = check_limits(tr, {l, l});
  const double s3 = std::sqrt(3.0);
  // Hand / identity:
  //  pos > 1.5 on (r1, r2) with r1 = cubic_root(1.5, 1) = -1.3844, r2 = cubic_root(1.5, 2) = -0.5579,
  //    and on (cubic_root(1.5, 0) = 1.9422, 2]; peak 2 (at t = -1 and t = 2);
  //  pos < -1.5 on the mirror images (q is odd): [-2, -1.9422) and (0.5579, 1.3844), peak -2;
  //  |vel| = |3t^2 - 3| > 6 <=> |t| > sqrt(3), peak 9 at t = +-2;
  //  |acc| = |6t| > 6 <=> |t| > 1, peak 12 at t = +-2;
  //  jerk 6 > 5 on the whole move: one interval, merged across all pieces and segments.
  const double a = cubic_root(1.5, 0), b = cubic_root(1.5, 1), c = cubic_root(1.5, 2);
  std::vector<Want> want;
  // Sorted by t_start, then axis, then quantity (pos < vel < acc < jerk).
  for (Index ax : {0, 1}) {
    want.push_back({ax, Quantity::kPos, -2.0, -a, -2.0, -1.5});
    want.push_back({ax, Quantity::kVel, -2.0, -s3, 9.0, 6.0});
    want.push_back({ax, Quantity::kAcc, -2.0, -1.0, 12.0, 6.0});
    want.push_back({ax, Quantity::kJerk, -2.0, 2.0, 6.0, 5.0});
  }
  for (Index ax : {0, 1}) want.push_back({ax, Quantity::kPos, b, c, 2.0, 1.5});
  for (Index ax : {0, 1}) want.push_back({ax, Quantity::kPos, -c, -b, -2.0, -1.5});
  for (Index ax : {0, 1}) want.push_back({ax, Quantity::kAcc, 1.0, 2.0, 12.0, 6.0});
  for (Index ax : {0, 1}) want.push_back({ax, Quantity::kVel, s3, 2.0, 9.0, 6.0});
  for (Index ax : {0, 1}) want.push_back({ax, Quantity::kPos, a, 2.0, 2.0, 1.5});
  check_violations(r, want);
  // Where the peaks are (hand): pos max 2 at t = -1 inside (b, c); the -2 of (-c, -b) at t = 1.
  CHECK(std::abs(r.violations[8].t_peak + 1.0) < 1e-12);
  CHECK(std::abs(r.violations[10].t_peak - 1.0) < 1e-12);
  CHECK(std::abs(r.violations[1].t_peak + 2.0) < 1e-14);
  CHECK(r.pos_violation);
  CHECK_FALSE(r.ok);
  // The roots agree with numpy.roots([1, 0, -3, -1.5]) = -1.38436715263814, -0.557874698331525,
  // 1.94224185096967 (SciPy stack, Debian python3-numpy).
  CHECK(std::abs(b + 1.38436715263814) < 1e-13);
  CHECK(std::abs(c + 0.557874698331525) < 1e-13);
  CHECK(std::abs(a - 1.94224185096967) < 1e-13);
  // Stretch (design §3): max(9/6, sqrt(12/6), cbrt(6/5)) = 1.5 (hand).
  C2PATH_CHECK_NEAR("stretch", 0, r.stretch, 1.5, 1e-15, 0.0);
}

TEST_CASE("limits: several intervals of one quantity in one piece, on both signs", "[limits]") {
  // |3t^2 - 3| > 2: above +2 for |t| > sqrt(5/3), below -2 for |t| < sqrt(1/3) (hand); the middle
  // interval's peak is |q'(0)| = 3 at t = 0.
  const CubicTrajectory tr = make_traj({kCubic}, {{-2.0, 2.0}});
  const Report r = check_limits(tr, {limits(std::nullopt, std::nullopt, 2.0, std::nullopt, std::nullopt)});
  const double p = std::sqrt(5.0 / 3.0), m = std::sqrt(1.0 / 3.0);
  check_violations(r, {{0, Quantity::kVel, -2.0, -p, 9.0, 2.0},
                       {0, Quantity::kVel, -m, m, 3.0, 2.0},
                       {0, Quantity::kVel, p, 2.0, 9.0, 2.0}});
  CHECK(std::abs(r.violations[1].t_peak) < 1e-12);
}

TEST_CASE("limits: jerk is piecewise constant, its intervals are whole pieces", "[limits]") {
  // Piece 1 on [0, 1]: q = t^3 (jerk 6); piece 2 on [1, 3]: jerk -2 (c3 = -1/3); piece 3 on
  // [3, 4]: jerk 12 (c3 = 2). Continuity does not matter to the checker; only the pieces do.
  std::vector<double> c = {0, 0, 0, 1.0, 1, 3, 3, -1.0 / 3.0, 5, 1, 1, 2.0};
  const CubicTrajectory tr(std::vector<CubicSpline>{CubicSpline({0.0, 1.0, 3.0, 4.0}, 1, c)});
  Report r = check_limits(tr, {limits(std::nullopt, std::nullopt, std::nullopt, std::nullopt, 5.0)});
  // |jerk| > 5 on [0, 1] (6) and [3, 4] (12); not on [1, 3] (2). Hand.
  check_violations(r, {{0, Quantity::kJerk, 0.0, 1.0, 6.0, 5.0}, {0, Quantity::kJerk, 3.0, 4.0, 12.0, 5.0}});
  CHECK(r.peaks[0].jerk == 12.0);
  CHECK(r.peaks[0].t_jerk >= 3.0);
  // Limit 1: all three pieces, merged into one interval; peak 12.
  r = check_limits(tr, {limits(std::nullopt, std::nullopt, std::nullopt, std::nullopt, 1.0)});
  check_violations(r, {{0, Quantity::kJerk, 0.0, 4.0, 12.0, 1.0}});
  C2PATH_CHECK_NEAR("stretch", 0, r.stretch, std::cbrt(12.0), 1e-15, 0.0);  // cbrt(12/1), design §3
}

TEST_CASE("limits: the stretch factor brings the worst quantity exactly to its limit", "[limits]") {
  // t^3 - 3t on [-2, 2] (peaks v 9, a 12, j 6, hand) against three sets of limits, each binding a
  // different quantity (design §3: k = max(v/vmax, sqrt(a/amax), cbrt(j/jmax))):
  struct Case {
    double vel, acc, jerk, k;
    Quantity binding;
  };
  const Case cases[] = {
      {3.0, 3.0, 6.0, 3.0, Quantity::kVel},              // 9/3 = 3 > sqrt(12/3) = 2 > cbrt(1) = 1
      {9.0, 1.2, 6.0, std::sqrt(10.0), Quantity::kAcc},  // sqrt(12/1.2) = 3.1623 > 9/9 = 1
      {9.0, 12.0, 0.006, 10.0, Quantity::kJerk},         // cbrt(6/0.006) = cbrt(1000) = 10
  };
  const std::vector<double> br = {-2.0, -0.6, 1.1, 2.0};
  for (const Case& cs : cases) {
    INFO("binding " << to_string(cs.binding));
    const AxisLimits l = limits(-5.0, 5.0, cs.vel, cs.acc, cs.jerk);
    const Report r = check_limits(make_traj({kCubic}, {br}), {l});
    CHECK_FALSE(r.ok);
    CHECK_FALSE(r.pos_violation);
    C2PATH_CHECK_NEAR("stretch", 0, r.stretch, cs.k, 1e-14, 0.0);
    // Slow the move down by exactly the reported factor and check again.
    const Report s = check_limits(make_traj({stretched(kCubic, r.stretch)}, {scaled(br, r.stretch)}), {l});
    CHECK(s.ok);
    CHECK(s.violations.empty());
    CHECK(s.stretch == 1.0);
    C2PATH_CHECK_NEAR("duration", 0, s.duration, 4.0 * r.stretch, 1e-15, 0.0);
    // Identity: peaks scale as 1/k, 1/k^2, 1/k^3; the binding one now equals its limit.
    const double ratio[] = {s.peaks[0].vel / cs.vel, s.peaks[0].acc / cs.acc, s.peaks[0].jerk / cs.jerk};
    const int bind = cs.binding == Quantity::kVel ? 0 : cs.binding == Quantity::kAcc ? 1 : 2;
    C2PATH_CHECK_NEAR("binding ratio", bind, ratio[bind], 1.0, 1e-13, 0.0);
    for (int q = 0; q < 3; ++q) CHECK(ratio[q] <= 1.0 + 1e-13);
    // Position is unchanged by a time stretch (identity).
    C2PATH_CHECK_NEAR("pos_max", 0, s.peaks[0].pos_max, 2.0, 0.0, 1e-14);
  }
}

TEST_CASE("limits: stretch over several axes takes the worst axis", "[limits]") {
  // Axis 0: 2 (t^3 - 3t), peaks v 18, a 24, j 12; axis 1: t^3 - 3t, peaks 9, 12, 6 (hand).
  const Poly twice = {0.0, -6.0, 0.0, 2.0};
  const CubicTrajectory tr = make_traj({twice, kCubic}, {{-2.0, 0.0, 2.0}});
  const AxisLimits l0 = limits(std::nullopt, std::nullopt, 20.0, 24.0, 12.0);  // inside (at the limit)
  const AxisLimits l1 = limits(std::nullopt, std::nullopt, 4.5, 12.0, 6.0);    // vel: 9/4.5 = 2
  const Report r = check_limits(tr, {l0, l1});
  C2PATH_CHECK_NEAR("stretch", 0, r.stretch, 2.0, 1e-14, 0.0);
  REQUIRE(r.violations.size() == 2);
  for (const auto& v : r.violations) {
    CHECK(v.axis == 1);
    CHECK(v.quantity == Quantity::kVel);
  }
  // After stretching by 2 every quantity of both axes is inside (identity).
  const Report s = check_limits(make_traj({stretched(twice, 2.0), stretched(kCubic, 2.0)}, {{-4.0, 0.0, 4.0}}), {l0, l1});
  CHECK(s.ok);
  C2PATH_CHECK_NEAR("vel axis 1", 1, s.peaks[1].vel, 4.5, 1e-14, 0.0);
}

TEST_CASE("limits: tolerance at exactly the limit", "[limits]") {
  const CubicTrajectory tr = make_traj({kCubic}, {{-2.0, 2.0}});
  auto vel_limit = [](double v) { return limits(std::nullopt, std::nullopt, v, std::nullopt, std::nullopt); };
  // Peak |vel| is exactly 9 (hand; 9 - 48 + 48 in floating point is exact).
  Report r = check_limits(tr, {vel_limit(9.0)});
  CHECK(r.ok);
  CHECK(r.stretch == 1.0);
  // Beyond by 1e-12 relative: inside the default tolerance (1e-9 of the limit), so not reported,
  // and the stretch factor stays 1 (nothing to stretch).
  r = check_limits(tr, {vel_limit(9.0 * (1.0 - 1e-12))});
  CHECK(r.ok);
  CHECK(r.stretch == 1.0);
  // ... but reported with rel_tol = 0.
  CheckOptions strict;
  strict.rel_tol = 0.0;
  r = check_limits(tr, {vel_limit(9.0 * (1.0 - 1e-12))}, strict);
  CHECK_FALSE(r.ok);
  CHECK(r.violations.size() == 2);
  CHECK(r.stretch > 1.0);
  // Exactly at the limit is never a violation, even with rel_tol = 0.
  CHECK(check_limits(tr, {vel_limit(9.0)}, strict).ok);
  // Beyond by 1e-6 relative: reported, with the interval where 3t^2 - 3 > 9 (1 - 1e-6), i.e.
  // |t| > sqrt(4 - 3e-6) (hand).
  const double L = 9.0 * (1.0 - 1e-6);
  r = check_limits(tr, {vel_limit(L)});
  const double t0 = std::sqrt(4.0 - 3e-6);
  check_violations(r, {{0, Quantity::kVel, -2.0, -t0, 9.0, L}, {0, Quantity::kVel, t0, 2.0, 9.0, L}}, 1e-12);
  // Position tolerance is relative to the span of the axis: max 2 - 1e-10 with span 4 is inside.
  r = check_limits(tr, {limits(-2.0, 2.0 - 1e-10, std::nullopt, std::nullopt, std::nullopt)});
  CHECK(r.ok);
  r = check_limits(tr, {limits(-2.0, 2.0 - 1e-6, std::nullopt, std::nullopt, std::nullopt)});
  CHECK_FALSE(r.ok);
  CHECK(r.pos_violation);
}

TEST_CASE("limits: absent limits are not checked", "[limits]") {
  const CubicTrajectory tr = make_traj({kCubic, kCubic}, {{-2.0, 2.0}});
  // Axis 0 checks nothing; axis 1 only its jerk (6 > 1).
  const Report r = check_limits(tr, {AxisLimits{}, limits(std::nullopt, std::nullopt, std::nullopt, std::nullopt, 1.0)});
  REQUIRE(r.violations.size() == 1);
  CHECK(r.violations[0].axis == 1);
  CHECK(r.violations[0].quantity == Quantity::kJerk);
  // Peaks are still reported for the unchecked axis (hand: 9, 12, 6).
  C2PATH_CHECK_NEAR("vel", 0, r.peaks[0].vel, 9.0, 0.0, 1e-13);
  C2PATH_CHECK_NEAR("acc", 0, r.peaks[0].acc, 12.0, 0.0, 1e-13);
  // Stretch only from the checked limits: cbrt(6/1).
  C2PATH_CHECK_NEAR("stretch", 0, r.stretch, std::cbrt(6.0), 1e-15, 0.0);
  // Only a min: the max side is not checked.
  const Report m = check_limits(tr, {limits(-3.0, std::nullopt, std::nullopt, std::nullopt, std::nullopt), AxisLimits{}});
  CHECK(m.ok);
}

TEST_CASE("limits: scene_limits, to_string and bad arguments", "[limits]") {
  Scene s;
  AxisSpec a;
  a.name = "x";
  a.min = -1.0;
  a.vel = 2.0;
  s.axes.push_back(a);
  const auto l = scene_limits(s);
  REQUIRE(l.size() == 1);
  CHECK(l[0].min == -1.0);
  CHECK_FALSE(l[0].max);
  CHECK(l[0].vel == 2.0);
  CHECK_FALSE(l[0].acc);
  CHECK(std::string(to_string(Quantity::kPos)) == "pos");
  CHECK(std::string(to_string(Quantity::kVel)) == "vel");
  CHECK(std::string(to_string(Quantity::kAcc)) == "acc");
  CHECK(std::string(to_string(Quantity::kJerk)) == "jerk");
  const CubicTrajectory tr = make_traj({kCubic}, {{-2.0, 2.0}});
  CHECK_THROWS_AS(check_limits(tr, {}), Error);  // one set of limits per axis
  CheckOptions bad;
  bad.rel_tol = -1.0;
  CHECK_THROWS_AS(check_limits(tr, {AxisLimits{}}, bad), Error);
  bad.rel_tol = 1e-9;
  bad.samples_per_piece = 1;
  CHECK_THROWS_AS(check_limits(tr, {AxisLimits{}}, bad), Error);
}

TEST_CASE("limits: random piecewise cubics agree with dense sampling", "[limits]") {
  // Independent check by sampling (identity: the exact extreme over a piece is at least every
  // sample, and a sample within h_s of it differs from it by at most max|f'| h_s). Fixed seed: the
  // test is deterministic.
  // The moves are C2 splines (CubicSpline::fit, not-a-knot) through random points, as keyframes
  // produce them: value, slope and curvature join at the breaks, jerk may jump.
  std::size_t total_violations = 0, interior_ends = 0;
  std::mt19937 rng(12345);
  std::uniform_real_distribution<double> pos(-1.5, 1.5), len(0.3, 1.5);
  for (int trial = 0; trial < 40; ++trial) {
    const int n = 1 + trial % 6;
    Eigen::VectorXd u(n + 1), y(n + 1);
    u[0] = -0.5;
    for (int i = 1; i <= n; ++i) u[i] = u[i - 1] + len(rng);
    for (int i = 0; i <= n; ++i) y[i] = pos(rng);
    const CubicSpline sp = CubicSpline::fit(u, y);
    const std::vector<double> br = sp.breaks();
    std::vector<double> c;
    for (Index i = 0; i < sp.pieces(); ++i) c.insert(c.end(), sp.coeffs(i, 0), sp.coeffs(i, 0) + 4);
    const CubicTrajectory tr(std::vector<CubicSpline>{sp});
    const AxisLimits lim = limits(-1.0, 1.0, 2.0, 3.0, 9.0);
    const Report r = check_limits(tr, {lim});
    const AxisPeaks& p = r.peaks[0];
    INFO("trial " << trial);
    // Dense samples of value and derivatives 1-3, piece by piece.
    const int per = 4000;
    double smin = 1e300, smax = -1e300, sv = 0, sa = 0, sj = 0;
    std::vector<double> ts;
    std::vector<std::array<double, 4>> vals;
    for (int i = 0; i < n; ++i) {
      const double h = br[std::size_t(i) + 1] - br[std::size_t(i)];
      for (int k = 0; k <= per; ++k) {
        const double s = h * k / per;
        std::array<double, 4> v{};
        for (int d = 0; d < 4; ++d) v[std::size_t(d)] = cubic_eval(&c[std::size_t(4 * i)], s, d);
        smin = std::min(smin, v[0]);
        smax = std::max(smax, v[0]);
        sv = std::max(sv, std::abs(v[1]));
        sa = std::max(sa, std::abs(v[2]));
        sj = std::max(sj, std::abs(v[3]));
        ts.push_back(br[std::size_t(i)] + s);
        vals.push_back(v);
      }
    }
    // Exact peaks bound every sample (up to rounding) and are reached to within the sample spacing
    // times the size of the next derivative.
    const double slack = 1.5 / per * std::max({1.0, 2 * p.vel, 2 * p.acc, 2 * p.jerk});
    CHECK(p.pos_min <= smin + 1e-12);
    CHECK(p.pos_max >= smax - 1e-12);
    CHECK(p.vel >= sv - 1e-12);
    CHECK(p.acc >= sa - 1e-12);
    CHECK(p.jerk >= sj - 1e-12);
    CHECK(smin - p.pos_min <= slack);
    CHECK(p.pos_max - smax <= slack);
    CHECK(p.vel - sv <= slack);
    CHECK(p.acc - sa <= slack);
    CHECK(p.jerk == sj);  // jerk is constant per piece: sampled exactly
    // The trajectory attains each reported peak at its reported time.
    Eigen::VectorXd x(1);
    tr.eval(p.t_pos_max, 0, x);
    C2PATH_CHECK_NEAR("q(t_pos_max)", trial, x[0], p.pos_max, 1e-12, 1e-12);
    tr.eval(p.t_pos_min, 0, x);
    C2PATH_CHECK_NEAR("q(t_pos_min)", trial, x[0], p.pos_min, 1e-12, 1e-12);
    tr.eval(p.t_vel, 1, x);
    C2PATH_CHECK_NEAR("|q'(t_vel)|", trial, std::abs(x[0]), p.vel, 1e-12, 1e-12);
    tr.eval(p.t_acc, 2, x);
    C2PATH_CHECK_NEAR("|q''(t_acc)|", trial, std::abs(x[0]), p.acc, 1e-12, 1e-12);
    // Every sample beyond a limit lies inside a reported interval of that quantity.
    auto inside = [&](Quantity qn, double t) {
      for (const auto& v : r.violations)
        if (v.quantity == qn && t >= v.t_start - 1e-12 && t <= v.t_end + 1e-12) return true;
      return false;
    };
    std::size_t outside = 0;
    for (std::size_t k = 0; k < ts.size(); ++k) {
      const auto& v = vals[k];
      if ((v[0] > 1.0 + 1e-9 || v[0] < -1.0 - 1e-9) && !inside(Quantity::kPos, ts[k])) ++outside;
      if (std::abs(v[1]) > 2.0 * (1 + 1e-9) && !inside(Quantity::kVel, ts[k])) ++outside;
      if (std::abs(v[2]) > 3.0 * (1 + 1e-9) && !inside(Quantity::kAcc, ts[k])) ++outside;
      if (std::abs(v[3]) > 9.0 * (1 + 1e-9) && !inside(Quantity::kJerk, ts[k])) ++outside;
    }
    CHECK(outside == 0);
    // Interval ends inside the move are crossings: the quantity equals its limit there (jerk may
    // jump at a break, so its intervals end at breaks).
    for (const auto& v : r.violations) {
      const int d = v.quantity == Quantity::kPos ? 0 : v.quantity == Quantity::kVel ? 1 : v.quantity == Quantity::kAcc ? 2 : 3;
      for (double t : {v.t_start, v.t_end}) {
        if (t == br.front() || t == br.back()) continue;
        if (d == 3) {
          CHECK(std::find(br.begin(), br.end(), t) != br.end());
          continue;
        }
        ++interior_ends;
        tr.eval(t, d, x);
        const double val = d == 0 ? x[0] : std::abs(x[0]);
        C2PATH_CHECK_NEAR("quantity at an interval end", trial, val, v.limit, 1e-9, 1e-9);
      }
    }
    total_violations += r.violations.size();
    // Stretch (design §3) from the exact peaks.
    const double k = std::max({1.0, p.vel / 2.0, std::sqrt(p.acc / 3.0), std::cbrt(p.jerk / 9.0)});
    // It is reported when some vel/acc/jerk violation is; a position violation alone leaves it 1.
    const bool dynamic = std::any_of(r.violations.begin(), r.violations.end(),
                                     [](const Violation& v) { return v.quantity != Quantity::kPos; });
    C2PATH_CHECK_NEAR("stretch", trial, r.stretch, dynamic ? k : 1.0, 1e-15, 0.0);
  }
  // The limits were chosen so that the random moves exceed them often (else the checks above
  // would be empty).
  INFO("violations " << total_violations << ", interior interval ends " << interior_ends);
  CHECK(total_violations > 40);
  CHECK(interior_ends > 40);
}

// ---- piecewise-polynomial trajectories of higher degree (Trajectory::poly_pieces) -------------

namespace {

// x(t) = T_n(t) on [-1, 1], the Chebyshev polynomial of the first kind, split into pieces at
// `cuts`; exposes its piecewise-polynomial form (coefficients in sigma = (t - t_k) / h_k).
class ChebyshevTrajectory final : public Trajectory {
 public:
  ChebyshevTrajectory(int n, std::vector<double> cuts) : br_(std::move(cuts)) {
    // Monomial coefficients by T_{k+1} = 2 t T_k - T_{k-1} (identity); integers, exact in double.
    std::vector<double> a{1.0}, b{0.0, 1.0};
    if (n == 0) b = a;
    for (int k = 1; k < n; ++k) {
      std::vector<double> c(std::size_t(k) + 2, 0.0);
      for (std::size_t j = 0; j < b.size(); ++j) c[j + 1] += 2.0 * b[j];
      for (std::size_t j = 0; j < a.size(); ++j) c[j] -= a[j];
      a = b;
      b = c;
    }
    mono_ = b;
  }
  [[nodiscard]] Index axes() const override { return 1; }
  [[nodiscard]] double t_begin() const override { return br_.front(); }
  [[nodiscard]] double t_end() const override { return br_.back(); }
  // d-th derivative of the monomial form at t (Horner on the differentiated coefficients).
  [[nodiscard]] double deriv(double t, int d) const {
    double v = 0.0;
    for (std::size_t j = mono_.size(); j-- > std::size_t(d);) {
      double w = 1.0;
      for (int i = 0; i < d; ++i) w *= double(j - std::size_t(i));
      v = v * t + w * mono_[j];
    }
    return v;
  }
  void eval(double t, int d, Eigen::Ref<Eigen::VectorXd> out) const override { out[0] = deriv(t, d); }
  [[nodiscard]] std::vector<double> breaks() const override { return br_; }
  // How far a root of T_n - L found from the piece polynomials can lie from the true one: Horner's
  // rounding bound |p_computed - p| <= gamma_2n sum |c_j| sigma^j (Higham, Accuracy and Stability
  // of Numerical Algorithms, 2nd ed., eq. 5.3; recalled), divided by the slope |T_n'(t)|.
  [[nodiscard]] double root_tol(double t) const { return value_tol(t) / std::abs(deriv(t, 1)) + 1e-15; }
  // The same bound for a value: on the piece polynomial, and on the monomial form (eval).
  [[nodiscard]] double value_tol(double t) const {
    const double gamma = 2.0 * double(mono_.size() - 1) * std::numeric_limits<double>::epsilon();
    double mono = 0.0;
    for (std::size_t j = 0; j < mono_.size(); ++j) mono += std::abs(mono_[j]) * std::pow(std::abs(t), double(j));
    PolyPieces pp;
    (void)poly_pieces(pp);
    std::size_t k = 0;
    while (k + 2 < br_.size() && t > br_[k + 1]) ++k;
    const double sg = (t - br_[k]) / (br_[k + 1] - br_[k]);
    double sum = 0.0, x = 1.0;
    for (int j = 0; j <= pp.degree; ++j, x *= sg) sum += std::abs(pp.coeffs(k, 0)[j]) * x;
    return 2.0 * gamma * std::max(sum, mono);
  }
  [[nodiscard]] bool poly_pieces(PolyPieces& out) const override {
    const int D = int(mono_.size()) - 1;
    out.degree = D;
    out.axes = 1;
    out.t = br_;
    out.c.clear();
    for (std::size_t k = 0; k + 1 < br_.size(); ++k) {
      const double a = br_[k], h = br_[k + 1] - a;
      double f = 1.0, hk = 1.0;  // Taylor at a: p^(j)(a) / j! h^j (identity)
      for (int j = 0; j <= D; ++j) {
        out.c.push_back(deriv(a, j) / f * hk);
        f *= double(j + 1);
        hk *= h;
      }
    }
    return true;
  }

 private:
  std::vector<double> br_, mono_;
};

}  // namespace

TEST_CASE("limits: degree-15 Chebyshev polynomial, exact peaks and crossings (identities)", "[limits]") {
  // T_15 on [-1, 1] in three pieces. Identities: |T_n| <= 1 with T_n(1) = 1, T_n(-1) = -1;
  // T_n(cos th) = cos(n th), so |T_n(t)| > L exactly on the arcs where |cos(n th)| > L, whose ends
  // are t = cos((j pi +- acos(L)) / n); |T_n'| peaks at the ends, T_n'(1) = n^2.
  const int n = 15;
  const ChebyshevTrajectory tr(n, {-1.0, -0.3, 0.45, 1.0});
  AxisLimits l;
  l.min = -0.9;  // T_15 dips below -0.9 and rises above 0.9 near each of its 16 extrema
  l.max = 0.9;
  l.vel = 200.0;  // |T_15'| = 225 at t = +-1, and above 200 only near the ends
  const Report r = check_limits(tr, {l});
  REQUIRE(r.exact);
  const AxisPeaks& p = r.peaks[0];
  CHECK(std::abs(p.pos_max - 1.0) <= tr.value_tol(p.t_pos_max));
  CHECK(std::abs(p.pos_min + 1.0) <= tr.value_tol(p.t_pos_min));
  CHECK(p.vel == Approx(double(n * n)).epsilon(1e-12));
  CHECK(std::abs(std::abs(p.t_vel) - 1.0) <= 1e-12);
  // Position intervals: above 0.9 where cos(n th) > 0.9, below -0.9 where cos(n th) < -0.9.
  std::vector<std::pair<double, double>> want_hi, want_lo;
  const double w = std::acos(0.9);
  for (int j = 0; j <= n; ++j) {
    const double th0 = std::max(0.0, (j * std::numbers::pi - w) / n), th1 = std::min(std::numbers::pi, (j * std::numbers::pi + w) / n);
    const std::pair<double, double> iv{std::cos(th1), std::cos(th0)};
    (j % 2 == 0 ? want_hi : want_lo).push_back(iv);
  }
  std::vector<std::pair<double, double>> got_hi, got_lo;
  for (const Violation& v : r.violations) {
    if (v.quantity != Quantity::kPos) continue;
    (v.limit > 0 ? got_hi : got_lo).push_back({v.t_start, v.t_end});
    CHECK(std::abs(std::abs(v.peak) - 1.0) <= tr.value_tol(v.t_peak));  // each arc peaks at |T_n| = 1
  }
  auto sorted = [](std::vector<std::pair<double, double>> x) {
    std::sort(x.begin(), x.end());
    return x;
  };
  want_hi = sorted(want_hi);
  want_lo = sorted(want_lo);
  REQUIRE(got_hi.size() == want_hi.size());
  REQUIRE(got_lo.size() == want_lo.size());
  for (std::size_t k = 0; k < got_hi.size(); ++k) {
    C2PATH_CHECK_NEAR("above: start", k, got_hi[k].first, want_hi[k].first, 0, tr.root_tol(want_hi[k].first));
    C2PATH_CHECK_NEAR("above: end", k, got_hi[k].second, want_hi[k].second, 0, tr.root_tol(want_hi[k].second));
  }
  for (std::size_t k = 0; k < got_lo.size(); ++k) {
    C2PATH_CHECK_NEAR("below: start", k, got_lo[k].first, want_lo[k].first, 0, tr.root_tol(want_lo[k].first));
    C2PATH_CHECK_NEAR("below: end", k, got_lo[k].second, want_lo[k].second, 0, tr.root_tol(want_lo[k].second));
  }
  // Velocity: two intervals, touching the ends; each crossing is where |T_15'| = 200, which the
  // trajectory itself confirms (the interval end is a root, found to full precision).
  std::vector<Violation> vel;
  for (const Violation& v : r.violations)
    if (v.quantity == Quantity::kVel) vel.push_back(v);
  REQUIRE(vel.size() == 2);
  CHECK(vel[0].t_start == -1.0);
  CHECK(vel[1].t_end == 1.0);
  CHECK(std::abs(std::abs(tr.deriv(vel[0].t_end, 1)) - 200.0) <= 1e-9);
  CHECK(std::abs(std::abs(tr.deriv(vel[1].t_start, 1)) - 200.0) <= 1e-9);
  CHECK(vel[0].peak == Approx(225.0).epsilon(1e-12));
  // The same trajectory sampled (force_sampled) agrees within the sampled check's stated bound.
  CheckOptions o;
  o.force_sampled = true;
  const Report s = check_limits(tr, {l}, o);
  CHECK_FALSE(s.exact);
  CHECK(std::abs(s.peaks[0].vel - p.vel) <= s.sample_bound * 200.0 + 1e-9);
  CHECK(s.violations.size() == r.violations.size());
}
