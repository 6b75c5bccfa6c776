// Tests of the knot (spline parameter) computation, include/c2path/knots.hpp, on hand-computed
// examples: du_k = |W dq_k|^alpha with alpha = 0 (uniform), 1/2 (centripetal), 1 (chord length);
// design §3. (The default weights 1/vel are chosen by the scene code and tested there; here the
// weights are explicit.)

#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <string>

#include "c2path/error.hpp"
#include "c2path/knots.hpp"
#include "test_util.hpp"

using c2path::compute_knots;
using c2path::find_coincident;
using c2path::KnotType;
using c2path::weighted_chords;
using Catch::Matchers::Contains;

namespace {

Eigen::VectorXd ones(Eigen::Index axes) { return Eigen::VectorXd::Ones(axes); }

// Waypoints whose steps are 3-4-5, 5-12-13 and 8-15-17 right triangles (hand-computed chords
// 5, 13, 17), then a step along one axis of length 2.
Eigen::MatrixXd triangle_path() {
  Eigen::MatrixXd q(5, 2);
  q << 0.0, 0.0,   //
      3.0, 4.0,    // + (3, 4): 5
      -2.0, 16.0,  // + (-5, 12): 13
      6.0, 1.0,    // + (8, -15): 17
      6.0, 3.0;    // + (0, 2): 2
  return q;
}

}  // namespace

TEST_CASE("knots: chord lengths of 3-4-5 style triangles", "[knots]") {
  // Hand-computed: Pythagorean triples 3-4-5, 5-12-13, 8-15-17.
  const Eigen::MatrixXd q = triangle_path();
  const Eigen::VectorXd d = weighted_chords(q, ones(2));
  REQUIRE(d.size() == 4);
  CHECK(d[0] == 5.0);
  CHECK(d[1] == 13.0);
  CHECK(d[2] == 17.0);
  CHECK(d[3] == 2.0);

  const Eigen::VectorXd chord = compute_knots(q, KnotType::kChord, ones(2));
  const double expect_chord[5] = {0.0, 5.0, 18.0, 35.0, 37.0};
  REQUIRE(chord.size() == 5);
  for (int k = 0; k < 5; ++k) C2PATH_CHECK_NEAR("chord knot", k, chord[k], expect_chord[k], 1e-15, 0.0);

  const Eigen::VectorXd cen = compute_knots(q, KnotType::kCentripetal, ones(2));
  const double expect_cen[5] = {0.0, std::sqrt(5.0), std::sqrt(5.0) + std::sqrt(13.0),
                                std::sqrt(5.0) + std::sqrt(13.0) + std::sqrt(17.0),
                                std::sqrt(5.0) + std::sqrt(13.0) + std::sqrt(17.0) + std::sqrt(2.0)};
  for (int k = 0; k < 5; ++k) C2PATH_CHECK_NEAR("centripetal knot", k, cen[k], expect_cen[k], 1e-15, 0.0);

  const Eigen::VectorXd uni = compute_knots(q, KnotType::kUniform, ones(2));
  for (int k = 0; k < 5; ++k) CHECK(uni[k] == double(k));
}

TEST_CASE("knots: the start parameter shifts all knots", "[knots]") {
  const Eigen::MatrixXd q = triangle_path();
  const Eigen::VectorXd u = compute_knots(q, KnotType::kChord, ones(2), 2.5);
  CHECK(u[0] == 2.5);
  CHECK(u[1] == 7.5);
  CHECK(u[4] == 39.5);
  const Eigen::VectorXd un = compute_knots(q, KnotType::kUniform, ones(2), -1.0);
  CHECK(un[0] == -1.0);
  CHECK(un[4] == 3.0);
}

TEST_CASE("knots: per-axis weights scale each axis before the norm", "[knots]") {
  // Hand-computed: axis 0 in metres at 0.5 m/s (weight 2), axis 1 in degrees at 60 deg/s (weight
  // 1/60). Steps (0.6, 48) and (1.5, -120) weigh (1.2, 0.8) and (3, -2): chords sqrt(2.08) and sqrt(13).
  Eigen::MatrixXd q(3, 2);
  q << 0.0, 0.0, 0.6, 48.0, 2.1, -72.0;
  Eigen::VectorXd w(2);
  w << 2.0, 1.0 / 60.0;
  const Eigen::VectorXd d = weighted_chords(q, w);
  C2PATH_CHECK_NEAR("weighted chord", 0, d[0], std::sqrt(1.2 * 1.2 + 0.8 * 0.8), 1e-15, 0.0);
  C2PATH_CHECK_NEAR("weighted chord", 1, d[1], std::sqrt(13.0), 1e-15, 0.0);
  const Eigen::VectorXd u = compute_knots(q, KnotType::kChord, w);
  C2PATH_CHECK_NEAR("chord knot", 2, u[2], std::sqrt(2.08) + std::sqrt(13.0), 1e-15, 0.0);
  const Eigen::VectorXd c = compute_knots(q, KnotType::kCentripetal, w);
  C2PATH_CHECK_NEAR("centripetal knot", 2, c[2], std::pow(2.08, 0.25) + std::pow(13.0, 0.25), 1e-15, 0.0);

  // A zero weight ignores an axis: a 3-4-5 triangle in axes 0 and 2, axis 1 moves but weighs 0.
  Eigen::MatrixXd q3(2, 3);
  q3 << 1.0, 100.0, 2.0, 4.0, -250.0, 6.0;
  Eigen::VectorXd w3(3);
  w3 << 1.0, 0.0, 1.0;
  CHECK(weighted_chords(q3, w3)[0] == 5.0);
  // Weights scale chord knots linearly: doubling every weight doubles the parameter steps.
  const Eigen::VectorXd u2 = compute_knots(q, KnotType::kChord, 2.0 * w);
  C2PATH_CHECK_NEAR("doubled weights", 2, u2[2], 2.0 * u[2], 1e-15, 0.0);
}

TEST_CASE("knots: a single axis gives the absolute differences", "[knots]") {
  Eigen::MatrixXd q(4, 1);
  q << 1.0, -2.0, 0.5, 0.25;
  const Eigen::VectorXd u = compute_knots(q, KnotType::kChord, ones(1));
  CHECK(u[1] == 3.0);
  CHECK(u[2] == 5.5);
  CHECK(u[3] == 5.75);
  const Eigen::VectorXd c = compute_knots(q, KnotType::kCentripetal, ones(1));
  C2PATH_CHECK_NEAR("centripetal", 3, c[3], std::sqrt(3.0) + std::sqrt(2.5) + 0.5, 1e-15, 0.0);
}

TEST_CASE("knots: coincident consecutive waypoints are an error naming both", "[knots]") {
  Eigen::MatrixXd q(4, 2);
  q << 0.0, 0.0, 1.0, 1.0, 1.0, 1.0, 2.0, 0.0;
  for (KnotType t : {KnotType::kUniform, KnotType::kChord, KnotType::kCentripetal}) {
    // Even uniform knots refuse them: the path would stop at a point with a kink.
    CHECK_THROWS_AS(compute_knots(q, t, ones(2)), c2path::Error);
    CHECK_THROWS_WITH(compute_knots(q, t, ones(2)), Contains("waypoints 1 and 2") && Contains("coincide"));
  }
  CHECK(find_coincident(q, ones(2)) == Eigen::Index(1));
  // The first pair and the last pair are found too.
  Eigen::MatrixXd q0(3, 1);
  q0 << 5.0, 5.0, 6.0;
  CHECK_THROWS_WITH(compute_knots(q0, KnotType::kChord, ones(1)), Contains("waypoints 0 and 1"));
  q0 << 5.0, 6.0, 6.0;
  CHECK_THROWS_WITH(compute_knots(q0, KnotType::kChord, ones(1)), Contains("waypoints 1 and 2"));
  // All waypoints equal.
  Eigen::MatrixXd qs = Eigen::MatrixXd::Constant(3, 2, 7.0);
  CHECK_THROWS_WITH(compute_knots(qs, KnotType::kChord, ones(2)), Contains("waypoints 0 and 1"));
  // Coincident under the weights: they differ only on an axis of weight zero.
  Eigen::MatrixXd qw(3, 2);
  qw << 0.0, 0.0, 1.0, 0.0, 1.0, 30.0;
  Eigen::VectorXd w(2);
  w << 1.0, 0.0;
  CHECK_THROWS_WITH(compute_knots(qw, KnotType::kChord, w), Contains("waypoints 1 and 2"));
  // Relative tolerance (kCoincidentRelTol): a step 1e-13 of the largest counts as coincident, 1e-9 not.
  Eigen::MatrixXd qr(3, 1);
  qr << 0.0, 1.0, 1.0 + 1e-13;
  CHECK(find_coincident(qr, ones(1)) == Eigen::Index(1));
  qr(2, 0) = 1.0 + 1e-9;
  CHECK_FALSE(find_coincident(qr, ones(1)).has_value());
  CHECK_NOTHROW(compute_knots(qr, KnotType::kChord, ones(1)));
}

TEST_CASE("knots: invalid arguments", "[knots]") {
  const Eigen::MatrixXd q = triangle_path();
  CHECK_THROWS_WITH(compute_knots(q, KnotType::kChord, ones(3)), Contains("one weight per axis"));
  CHECK_THROWS_WITH(compute_knots(q.topRows(1), KnotType::kChord, ones(2)), Contains("at least 2 waypoints"));
  CHECK(weighted_chords(q.topRows(1), ones(2)).size() == 0);
  // Weights must be finite and non-negative; waypoints finite.
  Eigen::VectorXd w(2);
  w << 1.0, -0.5;
  CHECK_THROWS_WITH(compute_knots(q, KnotType::kChord, w), Contains("weight of axis 1"));
  w << std::numeric_limits<double>::quiet_NaN(), 1.0;
  CHECK_THROWS_WITH(compute_knots(q, KnotType::kChord, w), Contains("weight of axis 0"));
  w << std::numeric_limits<double>::infinity(), 1.0;
  CHECK_THROWS_WITH(compute_knots(q, KnotType::kUniform, w), Contains("weight of axis 0"));
  Eigen::MatrixXd qn = q;
  qn(3, 1) = std::numeric_limits<double>::infinity();
  CHECK_THROWS_WITH(compute_knots(qn, KnotType::kChord, ones(2)), Contains("waypoint 3 is not finite"));
  CHECK_FALSE(find_coincident(q.topRows(1), ones(2)).has_value());
}

TEST_CASE("knots: huge and tiny units neither overflow nor underflow", "[knots]") {
  // A 3-4-5 triangle scaled by 10^e for e = -6..6, and weights 10^e as well: the naive sum of
  // squares would overflow or underflow at the extreme combinations (1e6 * 1e200 squared), the
  // scaled 2-norm gives 5 * scale.
  Eigen::MatrixXd base(3, 2);
  base << 0.0, 0.0, 3.0, 4.0, 3.0, 4.0 + 1.0;
  for (int e = -6; e <= 6; ++e) {
    const double unit = std::pow(10.0, e);
    for (double magnitude : {1.0, 1e150, 1e-150, 1e200, 1e-200}) {
      const Eigen::MatrixXd q = base * magnitude;
      Eigen::VectorXd w(2);
      w << unit, unit;
      const Eigen::VectorXd d = weighted_chords(q, w);
      INFO("unit 1e" << e << ", magnitude " << magnitude);
      REQUIRE(std::isfinite(d[0]));
      C2PATH_CHECK_NEAR("3-4-5 chord", 0, d[0], 5.0 * unit * magnitude, 1e-15, 0.0);
      C2PATH_CHECK_NEAR("unit step", 1, d[1], unit * magnitude, 1e-15, 0.0);
      const Eigen::VectorXd u = compute_knots(q, KnotType::kChord, w);
      REQUIRE(std::isfinite(u[2]));
      CHECK(u[2] > u[1]);
      const Eigen::VectorXd c = compute_knots(q, KnotType::kCentripetal, w);
      C2PATH_CHECK_NEAR("centripetal", 1, c[1], std::sqrt(5.0 * unit * magnitude), 1e-15, 0.0);
    }
  }
  // Axes of very different units side by side: 1e-6 and 1e6 weights.
  Eigen::MatrixXd q(2, 2);
  q << 0.0, 0.0, 3e6, 4e-6;
  Eigen::VectorXd w(2);
  w << 1e-6, 1e6;
  C2PATH_CHECK_NEAR("mixed units", 0, weighted_chords(q, w)[0], 5.0, 1e-15, 0.0);
}
