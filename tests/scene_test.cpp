// Tests of the scene loader (scene.hpp, scene_yaml.hpp): every part of format 1 (design §4), and
// every kind of bad input giving exactly one line `FILE:LINE:COL: error: ...` at the right place.
//
// Expected line and column are found in the test text itself by `place_of` (a plain substring
// search, independent of yaml-cpp), so each check says where a human would point in the file.

#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <limits>
#include <sstream>
#include <string>
#include <unistd.h>

#include "c2path/error.hpp"
#include "c2path/scene.hpp"
#include "c2path/scene_yaml.hpp"
#include "c2path/timing.hpp"
#include "test_util.hpp"

namespace {

using namespace c2path;

// 1-based line and column of the `nth` (0-based) occurrence of `needle` in `text`.
SourceLoc place_of(const std::string& text, const std::string& needle, int nth = 0) {
  std::size_t pos = text.find(needle);
  for (int k = 0; k < nth && pos != std::string::npos; ++k) pos = text.find(needle, pos + 1);
  REQUIRE(pos != std::string::npos);
  int line = 1, col = 1;
  for (std::size_t i = 0; i < pos; ++i) {
    if (text[i] == '\n') {
      ++line;
      col = 1;
    } else {
      ++col;
    }
  }
  return {line, col};
}

// The place just after the first occurrence of `prefix` (where the value following it starts).
SourceLoc after(const std::string& text, const std::string& prefix) {
  SourceLoc l = place_of(text, prefix);
  REQUIRE(prefix.find('\n') == std::string::npos);
  l.col += int(prefix.size());
  return l;
}

// Loads `text` expecting an error at `loc` whose message contains `contains`; the whole message
// must be the single line "scene.yaml:LINE:COL: error: ...".
void expect_error(const std::string& text, SourceLoc loc, const std::string& contains) {
  INFO("scene text:\n" << text);
  try {
    (void)load_scene_text(text, "scene.yaml");
    FAIL("the scene was accepted; expected an error containing: " << contains);
  } catch (const Error& e) {
    const std::string what = e.what();
    INFO("message: " << what);
    CHECK(what.find('\n') == std::string::npos);
    CHECK(what.find('\r') == std::string::npos);
    CHECK(e.file() == "scene.yaml");
    CHECK(e.line() == loc.line);
    CHECK(e.column() == loc.col);
    const std::string prefix = "scene.yaml:" + std::to_string(loc.line) + ":" + std::to_string(loc.col) + ": error: ";
    CHECK(what.rfind(prefix, 0) == 0);
    CHECK(what.find(contains) != std::string::npos);
  }
}

// A valid two-axis keyframed scene; tests replace parts of it.
const std::string kRig =
    "format: 1\n"
    "rig:\n"
    "  axes:\n"
    "    - {name: x, unit: m, min: 0, max: 2, vel: 1, acc: 2, jerk: 10}\n"
    "    - {name: y, unit: deg, vel: 30}\n";
const std::string kWaypoints =
    "waypoints:\n"
    "  - {t: 0, x: 0.1, y: 0}\n"
    "  - {t: 1, x: 0.5, y: 10}\n"
    "  - {t: 2.5, x: 1.2, y: 5}\n";

// A scene that uses every key of format 1.
const std::string kFull =
    "# every key of format 1\n"
    "format: 1\n"
    "name: \"Full \\\"quoted\\\" scene: with colon\"\n"
    "rig:\n"
    "  axes:\n"
    "    - {name: track, unit: m, min: -0.5, max: 2.4, vel: 0.8, acc: 1.5, jerk: 8}\n"
    "    - name: pan\n"
    "      unit: \"deg # not a comment\"\n"
    "      min: -170\n"
    "      max: 170\n"
    "      vel: 60\n"
    "      acc: 120\n"
    "      jerk: 600\n"
    "    - {name: _focus2}\n"
    "path:\n"
    "  knots: centripetal\n"
    "  ends: clamped\n"
    "  start: {track: 0.25, pan: -3}\n"
    "  end: {pan: 1.5e-3}\n"
    "  weights: {track: 1.25, pan: 0.0167, _focus2: 0}\n"
    "timing:\n"
    "  mode: keyframes\n"
    "  duration: 8.0\n"
    "  scale: 0.75\n"
    "waypoints:\n"
    "  - {t: 0.0, track: 0.2, pan: -30, _focus2: 1}\n"
    "  - t: 3.0\n"
    "    track: 1.1\n"
    "    pan: +0\n"
    "    _focus2: 1.5\n"
    "    hold: 1.5\n"
    "  - {t: 7.5, track: 2.2, pan: 25, _focus2: -1e-3, stop: true}\n"
    "  - {t: 9, track: 2.3, pan: 26, _focus2: 2, stop: false, hold: 0}\n"
    "export:\n"
    "  rate: 250\n";

}  // namespace

TEST_CASE("scene: every part of format 1 is read", "[scene]") {
  const Scene s = load_scene_text(kFull, "full.yaml");
  CHECK(s.file == "full.yaml");
  CHECK(s.format == 1);
  CHECK(s.name == "Full \"quoted\" scene: with colon");
  REQUIRE(s.axes.size() == 3);
  // Values as written in kFull (identity: the text above).
  CHECK(s.axes[0].name == "track");
  CHECK(s.axes[0].unit == "m");
  CHECK(*s.axes[0].min == -0.5);
  CHECK(*s.axes[0].max == 2.4);
  CHECK(*s.axes[0].vel == 0.8);
  CHECK(*s.axes[0].acc == 1.5);
  CHECK(*s.axes[0].jerk == 8.0);
  CHECK(s.axes[1].name == "pan");
  CHECK(s.axes[1].unit == "deg # not a comment");
  CHECK(*s.axes[1].min == -170.0);
  CHECK(*s.axes[1].max == 170.0);
  CHECK(*s.axes[1].vel == 60.0);
  CHECK(*s.axes[1].acc == 120.0);
  CHECK(*s.axes[1].jerk == 600.0);
  CHECK(s.axes[2].name == "_focus2");
  CHECK(s.axes[2].unit.empty());
  CHECK_FALSE(s.axes[2].min);
  CHECK_FALSE(s.axes[2].max);
  CHECK_FALSE(s.axes[2].vel);
  CHECK_FALSE(s.axes[2].acc);
  CHECK_FALSE(s.axes[2].jerk);
  CHECK(s.axes[0].loc.line == place_of(kFull, "{name: track").line);
  CHECK(s.axes[0].loc.col == place_of(kFull, "{name: track").col);
  CHECK(s.axis_index("pan") == 1);
  CHECK(s.axis_index("_focus2") == 2);
  CHECK(s.axis_index("tilt") == -1);

  CHECK(s.path.knots == KnotType::kCentripetal);
  CHECK(s.path.ends == EndCondition::kClamped);
  REQUIRE(s.path.start);
  REQUIRE(s.path.end);
  REQUIRE(s.path.weights);
  // start gives track and pan; the omitted _focus2 is 0. end gives only pan.
  CHECK((*s.path.start)[0] == 0.25);
  CHECK((*s.path.start)[1] == -3.0);
  CHECK((*s.path.start)[2] == 0.0);
  CHECK((*s.path.end)[0] == 0.0);
  CHECK((*s.path.end)[1] == 1.5e-3);
  CHECK((*s.path.end)[2] == 0.0);
  CHECK((*s.path.weights)[0] == 1.25);
  CHECK((*s.path.weights)[1] == 0.0167);
  CHECK((*s.path.weights)[2] == 0.0);

  CHECK(s.timing.mode == TimingMode::kKeyframes);
  REQUIRE(s.timing.duration_s);
  CHECK(*s.timing.duration_s == 8.0);
  CHECK(s.timing.scale == 0.75);
  CHECK(s.timing.scale_loc.line == place_of(kFull, "0.75").line);
  CHECK(s.timing.scale_loc.col == place_of(kFull, "0.75").col);

  REQUIRE(s.waypoints.size() == 4);
  CHECK(*s.waypoints[0].t == 0.0);
  CHECK(*s.waypoints[1].t == 3.0);
  CHECK(*s.waypoints[2].t == 7.5);
  CHECK(*s.waypoints[3].t == 9.0);
  CHECK(s.waypoints[0].q == std::vector<double>{0.2, -30.0, 1.0});
  CHECK(s.waypoints[1].q == std::vector<double>{1.1, 0.0, 1.5});
  CHECK(s.waypoints[2].q == std::vector<double>{2.2, 25.0, -1e-3});
  CHECK(s.waypoints[3].q == std::vector<double>{2.3, 26.0, 2.0});
  CHECK(s.waypoints[1].hold_s == 1.5);
  CHECK(s.waypoints[0].hold_s == 0.0);
  CHECK(s.waypoints[3].hold_s == 0.0);
  CHECK_FALSE(s.waypoints[0].stop);
  CHECK(s.waypoints[2].stop);
  CHECK_FALSE(s.waypoints[3].stop);
  // Places of values: waypoint 2 is a block mapping, its t on the line "  - t: 3.0".
  CHECK(s.waypoints[1].loc.line == place_of(kFull, "t: 3.0").line);
  CHECK(s.waypoints[1].t_loc.line == place_of(kFull, "3.0").line);
  CHECK(s.waypoints[1].t_loc.col == place_of(kFull, "3.0").col);
  CHECK(s.waypoints[1].q_loc[2].line == place_of(kFull, "1.5\n    hold").line);
  CHECK(s.waypoints[1].q_loc[2].col == place_of(kFull, "1.5\n    hold").col);
  CHECK(s.waypoints[2].stop_loc.line == place_of(kFull, "true}").line);
  CHECK(s.waypoints[2].stop_loc.col == place_of(kFull, "true}").col);

  REQUIRE(s.exports.rate_hz);
  CHECK(*s.exports.rate_hz == 250.0);

  // positions() is waypoints x axes; times() the t column.
  const Eigen::MatrixXd q = s.positions();
  REQUIRE(q.rows() == 4);
  REQUIRE(q.cols() == 3);
  CHECK(q(2, 1) == 25.0);
  CHECK(q(3, 0) == 2.3);
  const Eigen::VectorXd t = s.times();
  CHECK(t[2] == 7.5);
}

TEST_CASE("scene: defaults when optional blocks are omitted", "[scene]") {
  const Scene s = load_scene_text(kRig + kWaypoints, "min.yaml");
  CHECK(s.name.empty());
  CHECK(s.path.knots == KnotType::kChord);          // design §4 default
  CHECK(s.path.ends == EndCondition::kNotAKnot);    // design §4 default
  CHECK_FALSE(s.path.start);
  CHECK_FALSE(s.path.end);
  CHECK_FALSE(s.path.weights);
  CHECK(s.timing.mode == TimingMode::kKeyframes);
  CHECK_FALSE(s.timing.duration_s);
  CHECK(s.timing.scale == 1.0);
  CHECK_FALSE(s.exports.rate_hz);
  CHECK_FALSE(s.axes[1].min);
  CHECK_FALSE(s.axes[1].acc);
}

TEST_CASE("scene: knot weights default to 1/vel, fall back to 1, or follow path.weights", "[scene]") {
  Scene s = load_scene_text(kRig + kWaypoints, "w.yaml");
  bool fallback = true;
  // Both axes have vel (1 and 30): weights 1/1 and 1/30 (design §3).
  Eigen::VectorXd w = knot_weights(s, &fallback);
  CHECK_FALSE(fallback);
  CHECK(w[0] == 1.0);
  CHECK(w[1] == 1.0 / 30.0);
  s.axes[1].vel.reset();  // an axis without vel: every axis weight 1, and the fallback is reported
  w = knot_weights(s, &fallback);
  CHECK(fallback);
  CHECK(w[0] == 1.0);
  CHECK(w[1] == 1.0);
  s.path.weights = Eigen::Vector2d(2.0, 0.5);
  w = knot_weights(s, &fallback);
  CHECK_FALSE(fallback);
  CHECK(w[0] == 2.0);
  CHECK(w[1] == 0.5);
}

// Planning of duration/fastest modes, stop and hold arrives in a later issue: until then plan()
// refuses them with a "not supported yet" error at the value. The loader reads them already.
template <class F>
void expect_supported_or_refused(F&& run, SourceLoc at, const std::string& key) {
  try {
    run();
  } catch (const Error& e) {
    INFO(e.what());
    CHECK(std::string(e.what()).find(key + " is not supported yet") != std::string::npos);
    CHECK(e.line() == at.line);
    CHECK(e.column() == at.col);
  }
}

TEST_CASE("scene: duration and fastest modes, stop and hold load; planning them works or refuses clearly", "[scene]") {
  const std::string dur = kRig +
                          "timing: {mode: duration, duration: 4}\n"
                          "waypoints:\n"
                          "  - {x: 0.1, y: 0}\n"
                          "  - {x: 0.5, y: 10}\n";
  const Scene s = load_scene_text(dur, "d.yaml");
  CHECK(s.timing.mode == TimingMode::kDuration);
  CHECK(*s.timing.duration_s == 4.0);
  CHECK_FALSE(s.waypoints[0].t);
  expect_supported_or_refused([&] { (void)plan(s); }, place_of(dur, "duration,"), "mode duration");
  const std::string fast = kRig + "timing: {mode: fastest}\nwaypoints:\n  - {x: 0.1, y: 0}\n  - {x: 0.5, y: 10}\n";
  CHECK(load_scene_text(fast, "f.yaml").timing.mode == TimingMode::kFastest);

  const std::string stop = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: 10, stop: true}\n  - {t: 2, x: 1, y: 0}\n";
  const Scene st = load_scene_text(stop, "s.yaml");
  CHECK(st.waypoints[1].stop);
  expect_supported_or_refused([&] { (void)plan(st); }, place_of(stop, "true"), "'stop'");
  const std::string hold = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0, hold: 0.5}\n  - {t: 1, x: 0.5, y: 10}\n";
  const Scene ho = load_scene_text(hold, "h.yaml");
  CHECK(ho.waypoints[0].hold_s == 0.5);
  expect_supported_or_refused([&] { (void)plan(ho); }, place_of(hold, "0.5}"), "'hold'");
}

TEST_CASE("scene: YAML syntax errors give the place yaml-cpp stops at", "[scene]") {
  // An unclosed flow mapping: the parser reaches the end of the text (line 4 of 3 lines + newline).
  expect_error("format: 1\nrig: {axes: [{name: x}]\n", {3, 1}, "YAML syntax");
  // A list item indented less than its siblings: the parser stops at the '-' of line 7.
  const std::string bad_indent = kRig + "waypoints:\n  - {t: 0, x: 0, y: 0}\n - {t: 1, x: 1, y: 1}\n";
  expect_error(bad_indent, place_of(bad_indent, "- {t: 1"), "YAML syntax");
  // A ']' closing a '{': the parser stops at the ']'.
  const std::string bad_close = kRig + "waypoints:\n  - {t: 0, x: 0, y: 0}\n  - {t: 1, x: 1, y: 1]\n";
  expect_error(bad_close, place_of(bad_close, "]\n"), "YAML syntax");
  // A tab used for indentation.
  expect_error("format: 1\nrig:\n\taxes: []\n", {3, 6}, "YAML syntax");
  // An unclosed quote: yaml-cpp 0.7 lets it swallow the rest of the file without an error; the
  // loader points at the opening quote instead of reporting a missing 'rig'.
  const std::string uq = "format: 1\nname: \"unclosed\nrig:\n  axes:\n    - {name: x}\n";
  expect_error(uq, place_of(uq, "\""), "a quoted text is never closed");
  const std::string uq2 = "format: 1\nname: 'it''s open\n" + kRig.substr(10) + kWaypoints;
  expect_error(uq2, place_of(uq2, "'it"), "never closed: add the closing '");
  // Closed quotes with escapes inside are fine.
  const std::string ok = "format: 1\nname: \"a \\\" b\"\nrig:\n  axes:\n    - {name: x, unit: 'it''s'}\n"
                         "waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n";
  const Scene sq = load_scene_text(ok, "q.yaml");
  CHECK(sq.name == "a \" b");
  CHECK(sq.axes[0].unit == "it's");
  // Each syntax message says what to do.
  expect_error("format: 1\nrig:\n\taxes: []\n", {3, 6}, "indent with spaces, not tabs");
  expect_error("format: 1\nrig: {axes: [{name: x}]\n", {3, 1}, "a '{' is not closed: add the '}'");
  expect_error("a: [1, 2\n", {2, 1}, "a '[' is not closed: add the ']'");
  expect_error(bad_close, place_of(bad_close, "]\n"), "check the brackets match");
  expect_error(bad_indent, place_of(bad_indent, "- {t: 1"), "check the indentation");
  const std::string esc = "format: 1\nname: \"a\\qb\"\n";
  // yaml-cpp stops just after the bad escape \q, at the 'b'.
  expect_error(esc, place_of(esc, "b\""), "write a backslash as");
}

TEST_CASE("scene: empty input, several documents, unsupported format", "[scene]") {
  expect_error("", {1, 1}, "empty");
  expect_error("# nothing but a comment\n\n", {1, 1}, "empty");
  expect_error("   \n", {1, 1}, "empty");
  const std::string two = kRig + kWaypoints + "---\nformat: 1\n";
  expect_error(two, place_of(two, "---"), "more than one YAML document");
  const std::string f2 = "format: 2\n" + kRig.substr(10) + kWaypoints;
  expect_error(f2, place_of(f2, "2"), "unsupported format 2");
  const std::string fx = "format: one\n" + kRig.substr(10) + kWaypoints;
  expect_error(fx, place_of(fx, "one"), "'format' must be a number");
  const std::string nofmt = kRig.substr(10) + kWaypoints;
  expect_error(nofmt, {1, 1}, "'format' is missing");
  expect_error("format: 1\n" + kWaypoints, {1, 1}, "'rig' is missing");
  expect_error(kRig, {1, 1}, "'waypoints' is missing");
  expect_error("- 1\n- 2\n", {1, 1}, "the scene must be a mapping");
}

TEST_CASE("scene: duplicate keys are detected (yaml-cpp 0.7 keeps the first silently)", "[scene]") {
  // Top level.
  const std::string top = kRig + kWaypoints + "format: 1\n";
  expect_error(top, place_of(top, "format", 1), "duplicate key 'format'");
  // In a block mapping of an axis.
  const std::string axis = "format: 1\nrig:\n  axes:\n    - name: x\n      vel: 1\n      vel: 2\n" +
                           std::string("waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n");
  expect_error(axis, place_of(axis, "vel", 1), "duplicate key 'vel'");
  // In a flow mapping of a waypoint: the second 'x', with the first one's line named.
  const std::string wp = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0, x: 0.3}\n  - {t: 1, x: 0.5, y: 10}\n";
  const SourceLoc second_x = place_of(wp, "x: 0.3");
  expect_error(wp, second_x, "duplicate key 'x' (first given at line " + std::to_string(second_x.line) + ")");
  // Written once plain and once quoted: the same key.
  const std::string quoted = kRig + "path: {ends: natural, \"ends\": periodic}\n" + kWaypoints;
  expect_error(quoted, place_of(quoted, "\"ends\""), "duplicate key 'ends'");
  // In path.start (a per-axis map).
  const std::string start = kRig + "path:\n  ends: clamped\n  start: {x: 0, x: 1}\n" + kWaypoints;
  expect_error(start, place_of(start, "x: 1}"), "duplicate key 'x'");
  // The value yaml-cpp would have kept must not matter: the file is refused either way.
  const std::string same = kRig + "timing:\n  mode: keyframes\n  mode: keyframes\n" + kWaypoints;
  expect_error(same, place_of(same, "mode", 1), "duplicate key 'mode'");
}

TEST_CASE("scene: unknown keys name the nearest valid key", "[scene]") {
  const std::string top = kRig + kWaypoints + "exprt: {rate: 100}\n";
  expect_error(top, place_of(top, "exprt"), "unknown key 'exprt'; did you mean 'export'?");
  const std::string ax = "format: 1\nrig:\n  axes:\n    - {name: x, vell: 3}\n" + std::string("waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n");
  expect_error(ax, place_of(ax, "vell"), "did you mean 'vel'?");
  const std::string jerk = "format: 1\nrig:\n  axes:\n    - {name: x, jrek: 3}\n" + std::string("waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n");
  expect_error(jerk, place_of(jerk, "jrek"), "did you mean 'jerk'?");
  const std::string path = kRig + "path: {knot: chord}\n" + kWaypoints;
  expect_error(path, place_of(path, "knot:"), "did you mean 'knots'?");
  const std::string timing = kRig + "timing: {mdoe: keyframes}\n" + kWaypoints;
  expect_error(timing, place_of(timing, "mdoe"), "did you mean 'mode'?");
  const std::string rate = kRig + kWaypoints + "export: {rates: 100}\n";
  expect_error(rate, place_of(rate, "rates"), "did you mean 'rate'?");
  // A waypoint key that is neither t/hold/stop nor an axis: the nearest axis name.
  const std::string wp = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5, yy: 10}\n";
  expect_error(wp, place_of(wp, "yy"), "did you mean 'y'?");
  const std::string hold = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0, hodl: 1}\n  - {t: 1, x: 0.5, y: 10}\n";
  expect_error(hold, place_of(hold, "hodl"), "did you mean 'hold'?");
  // Values of choices are checked the same way.
  const std::string ends = kRig + "path: {ends: clampd}\n" + kWaypoints;
  expect_error(ends, place_of(ends, "clampd"), "did you mean 'clamped'?");
  const std::string knots = kRig + "path: {knots: centripedal}\n" + kWaypoints;
  expect_error(knots, place_of(knots, "centripedal"), "did you mean 'centripetal'?");
  const std::string mode = kRig + "timing: {mode: keyframe}\n" + kWaypoints;
  expect_error(mode, place_of(mode, "keyframe}"), "did you mean 'keyframes'?");
  // path.weights / start / end take axis names only.
  const std::string wt = kRig + "path: {weights: {x: 1, z: 2}}\n" + kWaypoints;
  expect_error(wt, place_of(wt, "z: 2"), "unknown key 'z'");
}

TEST_CASE("scene: wrong types", "[scene]") {
  const std::string W = "waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n";
  auto axis = [&](const std::string& fields) { return "format: 1\nrig:\n  axes:\n    - {name: x, " + fields + "}\n" + W; };
  std::string s = axis("vel: fast");
  expect_error(s, place_of(s, "fast"), "'vel' must be a number, not 'fast'");
  s = axis("vel: \"3\"");
  expect_error(s, place_of(s, "\"3\""), "must be a number, not the quoted text");
  s = axis("acc: [3]");
  expect_error(s, place_of(s, "[3]"), "'acc' must be a number, not a list");
  s = axis("min: {a: 1}");
  expect_error(s, place_of(s, "{a: 1}"), "'min' must be a number, not a mapping");
  s = axis("unit: [m]");
  expect_error(s, place_of(s, "[m]"), "'unit' must be text");
  s = axis("max: 0x10");  // YAML 1.2 hex is not a scene number
  expect_error(s, place_of(s, "0x10"), "must be a number");
  s = axis("max: 1.5.2");
  expect_error(s, place_of(s, "1.5.2"), "must be a number");
  s = "format: 1\nrig: [x]\n" + W;
  expect_error(s, place_of(s, "[x]"), "'rig' must be a mapping");
  s = "format: 1\nrig:\n  axes: {name: x}\n" + W;
  expect_error(s, place_of(s, "{name: x}"), "'axes' must be a list");
  s = "format: 1\nrig:\n  axes:\n    - x\n" + W;
  expect_error(s, place_of(s, "x\n"), "axis 1 must be a mapping");
  s = "format: 1\nrig:\n  axes:\n    - {name: 3d}\n" + W;
  expect_error(s, place_of(s, "3d"), "must be an identifier");
  s = "format: 1\nrig:\n  axes:\n    - {name: t}\n" + W;
  expect_error(s, place_of(s, "t}"), "'t' is a waypoint key");
  s = "format: 1\nrig:\n  axes:\n    - {unit: m}\n" + W;
  expect_error(s, place_of(s, "{unit"), "'name' is missing");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\n    - {name: x}\n" + W;
  expect_error(s, place_of(s, "x}", 1), "another axis is already called 'x'");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints: {t: 0}\n";
  expect_error(s, place_of(s, "{t: 0}"), "'waypoints' must be a list");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints:\n  - {t: 0, x: 0}\n  - [1, 1]\n";
  expect_error(s, place_of(s, "[1, 1]"), "waypoint 2 must be a mapping");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints:\n  - {t: 0, x: ~}\n  - {t: 1, x: 1}\n";
  expect_error(s, place_of(s, "x: ~"), "'x' has no value");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints:\n  - {t: 0, x: 0, stop: yes}\n  - {t: 1, x: 1}\n";
  expect_error(s, place_of(s, "yes"), "'stop' must be true or false");
  s = kRig + "path: {ends: clamped, start: [0, 0]}\n" + kWaypoints;
  expect_error(s, place_of(s, "[0, 0]"), "path: start must be a mapping");
  s = kRig + "path: {weights: {x: 1}}\n" + kWaypoints;
  expect_error(s, place_of(s, "{x: 1}"), "'y' is missing");
  s = kRig + "name: [a]\n" + kWaypoints;
  expect_error(s, place_of(s, "[a]"), "'name' must be text");
}

TEST_CASE("scene: empty values and empty list entries are pointed at where they are written", "[scene]") {
  // yaml-cpp marks an empty value at the next token (often the next line); the loader points at
  // the key, or at the '-' of an empty list entry (positions from place_of in the text itself).
  const std::string W = "waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n";
  std::string s = "format: 1\nrig:\n  axes:\n    - name: x\n      vel:\n" + W;
  expect_error(s, place_of(s, "vel:"), "'vel' has no value");
  s = "format: 1\nrig:\n  axes:\n    - {name: x, acc: }\n" + W;
  expect_error(s, place_of(s, "acc:"), "'acc' has no value");
  s = "format:\nrig:\n  axes:\n    - {name: x}\n" + W;
  expect_error(s, {1, 1}, "'format' has no value");
  s = "format: 1\nrig:\n" + W;
  expect_error(s, place_of(s, "rig:"), "'rig' has no value");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints:\n";
  expect_error(s, place_of(s, "waypoints:"), "'waypoints' has no value");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints:\n  -\n  - {t: 1, x: 1}\n";
  expect_error(s, place_of(s, "-\n"), "waypoint 1 is empty");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints:\n  - {t: 0, x: 0}\n  -   # later\n  # more\n  - {t: 1, x: 1}\n";
  expect_error(s, place_of(s, "-   #"), "waypoint 2 is empty");
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n  -\n";
  expect_error(s, place_of(s, "-\n"), "waypoint 3 is empty");
  s = "format: 1\nrig:\n  axes:\n    -\n" + W;
  expect_error(s, place_of(s, "-\n"), "axis 1 is empty");
  // An explicit null is marked where it is written.
  s = "format: 1\nrig:\n  axes:\n    - {name: x}\nwaypoints: [{t: 0, x: 0}, ~]\n";
  expect_error(s, place_of(s, "~"), "waypoint 2 is empty");
  s = "format: 1\nrig:\n  axes:\n    - {name: x, jerk: ~}\n" + W;
  expect_error(s, place_of(s, "jerk"), "'jerk' has no value");
}

TEST_CASE("scene: every message is one line even when the file quotes a newline", "[scene]") {
  const std::string W = "waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n";
  std::string s = "format: 1\nrig:\n  axes:\n    - {name: \"a\\nb\"}\n" + W;
  expect_error(s, place_of(s, "\"a\\nb\""), "must be an identifier");
  s = "format: 1\nrig:\n  axes:\n    - {name: x, \"v\\nel\": 1}\n" + W;
  expect_error(s, place_of(s, "\"v\\nel\""), "unknown key 'v\\nel'");
  s = "format: 1\nrig:\n  axes:\n    - {name: x, vel: \"fa\\r\\nst\\u0007\"}\n" + W;
  expect_error(s, place_of(s, "\"fa"), "\"fa\\r\\nst\\x07\"");
}

TEST_CASE("scene: waypoints must give every axis, once, as finite numbers", "[scene]") {
  std::string s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5}\n";
  expect_error(s, place_of(s, "{t: 1"), "waypoint 2: 'y' is missing");
  s = kRig + "waypoints:\n  - {t: 0, y: 0}\n  - {t: 1, x: 0.5, y: 1}\n";
  expect_error(s, place_of(s, "{t: 0"), "waypoint 1: 'x' is missing");
  // Non-finite numbers in every spelling YAML 1.2 has, and ones that overflow a double.
  for (const std::string bad : {".inf", "-.inf", "+.Inf", ".INF", ".nan", ".NaN", ".NAN", "inf", "nan", "1e400", "-1e309"}) {
    s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: " + bad + "}\n  - {t: 1, x: 0.5, y: 1}\n";
    expect_error(s, place_of(s, bad + "}"), "'y'");
  }
  s = "format: 1\nrig:\n  axes:\n    - {name: x, min: .nan}\nwaypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n";
  expect_error(s, place_of(s, ".nan"), "'min' must be a finite number");
  s = "format: 1\nrig:\n  axes:\n    - {name: x, vel: .inf}\nwaypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n";
  expect_error(s, place_of(s, ".inf"), "'vel' must be a finite number");
  s = kRig + "timing: {scale: .nan}\n" + kWaypoints;
  expect_error(s, place_of(s, ".nan"), "finite");
  s = kRig + kWaypoints + "export: {rate: .inf}\n";
  expect_error(s, place_of(s, ".inf"), "finite");
  s = kRig + "path: {ends: clamped, end: {x: -.inf}}\n" + kWaypoints;
  expect_error(s, place_of(s, "-.inf"), "finite");
  // Beyond the magnitude cap (scene.hpp kMaxMagnitude = 1e12).
  s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 2e12}\n  - {t: 1, x: 0.5, y: 1}\n";
  expect_error(s, place_of(s, "2e12"), "largest magnitude");
}

TEST_CASE("scene: keyframe times are required and strictly increasing", "[scene]") {
  std::string s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {x: 0.5, y: 10}\n";
  expect_error(s, place_of(s, "{x: 0.5"), "waypoint 2: 't' is missing");
  s = kRig + "waypoints:\n  - {x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: 10}\n";
  expect_error(s, place_of(s, "{x: 0.1"), "waypoint 1: 't' is missing");
  // Equal times.
  s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1.5, x: 0.5, y: 10}\n  - {t: 1.5, x: 1, y: 0}\n";
  expect_error(s, place_of(s, "1.5", 1), "waypoint 3: 't' must be greater than the previous waypoint's (1.5)");
  // Decreasing times: the first waypoint that goes back is named.
  s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 2, x: 0.5, y: 10}\n  - {t: 1, x: 1, y: 0}\n  - {t: 0.5, x: 1.5, y: 0}\n";
  expect_error(s, place_of(s, "1, x: 1,"), "waypoint 3: 't' must be greater");
  // Negative times are fine as long as they increase.
  s = kRig + "waypoints:\n  - {t: -2, x: 0.1, y: 0}\n  - {t: -0.5, x: 0.5, y: 10}\n";
  CHECK(load_scene_text(s, "neg.yaml").waypoints[1].t == -0.5);
  s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: .nan, x: 0.5, y: 10}\n";
  expect_error(s, place_of(s, ".nan"), "'t' must be a finite number");
  // t is forbidden outside keyframes mode.
  s = kRig + "timing: {mode: fastest}\nwaypoints:\n  - {x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: 10}\n";
  expect_error(s, place_of(s, "1, x"), "'t' is only allowed in keyframes mode");
}

TEST_CASE("scene: limits: min below max, vel/acc/jerk above 0", "[scene]") {
  const std::string W = "waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n";
  auto axis = [&](const std::string& fields) { return "format: 1\nrig:\n  axes:\n    - {name: x, " + fields + "}\n" + W; };
  std::string s = axis("min: 2, max: 1");
  expect_error(s, place_of(s, "1}"), "max must be above min (min 2, max 1)");
  s = axis("min: 1, max: 1");
  expect_error(s, after(s, "max: "), "max must be above min");
  s = axis("max: -3, min: 4");  // order in the file does not matter: the max value is pointed at
  expect_error(s, place_of(s, "-3"), "max must be above min");
  for (const std::string key : {"vel", "acc", "jerk"}) {
    s = axis(key + ": 0");
    expect_error(s, after(s, key + ": "), "'" + key + "' must be greater than 0");
    s = axis(key + ": -1.5");
    expect_error(s, place_of(s, "-1.5"), "'" + key + "' must be greater than 0");
  }
  s = axis("vel: 1e-10");  // below kMinLimit = 1e-9 (scene.hpp)
  expect_error(s, place_of(s, "1e-10"), "below the smallest limit");
  s = kRig + "timing: {scale: 0}\n" + kWaypoints;
  expect_error(s, after(s, "scale: "), "'scale' must be greater than 0 and at most 1");
  s = kRig + "timing: {scale: 1.01}\n" + kWaypoints;
  expect_error(s, place_of(s, "1.01"), "'scale'");
  s = kRig + "timing: {mode: duration, duration: -1}\nwaypoints:\n  - {x: 0.1, y: 0}\n  - {x: 0.5, y: 10}\n";
  expect_error(s, place_of(s, "-1"), "'duration' must be greater than 0");
  s = kRig + kWaypoints + "export: {rate: 0}\n";
  expect_error(s, after(s, "rate: "), "'rate' must be greater than 0");
  s = kRig + "path: {weights: {x: -1, y: 1}}\n" + kWaypoints;
  expect_error(s, place_of(s, "{x: -1"), "weights must be 0 or more");
  s = kRig + "path: {weights: {x: 0, y: 0}}\n" + kWaypoints;
  expect_error(s, place_of(s, "{x: 0,"), "at least one weight must be greater than 0");
}

TEST_CASE("scene: at least 2 waypoints", "[scene]") {
  std::string s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n";
  expect_error(s, place_of(s, "- {t: 0"), "at least 2 waypoints, the scene has 1");
  s = kRig + "waypoints: []\n";
  expect_error(s, place_of(s, "[]"), "at least 2 waypoints, the scene has 0");
  s = "format: 1\nrig:\n  axes: []\n" + kWaypoints;
  expect_error(s, place_of(s, "[]"), "'axes' must be a list of axes");
}

TEST_CASE("scene: periodic ends need the last waypoint equal to the first", "[scene]") {
  std::string s = kRig + "path: {ends: periodic}\nwaypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: 10}\n  - {t: 2, x: 0.1, y: 0.5}\n";
  expect_error(s, place_of(s, "{t: 2"), "'y' is 0.5 instead of 0");
  s = kRig + "path: {ends: periodic}\nwaypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: 10}\n  - {t: 2, x: 0.1, y: 0}\n";
  const Scene ok = load_scene_text(s, "p.yaml");
  CHECK(ok.path.ends == EndCondition::kPeriodic);
}

TEST_CASE("scene: coincident consecutive waypoints name both", "[scene]") {
  std::string s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: 10}\n  - {t: 2, x: 0.5, y: 10}\n  - {t: 3, x: 1, y: 0}\n";
  expect_error(s, place_of(s, "{t: 2"), "waypoint 3 coincides with waypoint 2");
  // Not consecutive: returning to an earlier position is fine.
  s = kRig + "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: 10}\n  - {t: 2, x: 0.1, y: 0}\n";
  CHECK(load_scene_text(s, "back.yaml").waypoints.size() == 3);
  // With explicit weights an axis of weight 0 does not count: under weights (0, 1) two waypoints
  // that differ only in x coincide.
  s = kRig + "path: {weights: {x: 0, y: 1}}\nwaypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: 0}\n";
  expect_error(s, place_of(s, "{t: 1"), "waypoint 2 coincides with waypoint 1");
}

TEST_CASE("scene: validate_scene checks edits made after loading (the viewer's path)", "[scene]") {
  const std::string text = kRig + kWaypoints;
  Scene s = load_scene_text(text, "edit.yaml");
  CHECK_NOTHROW(validate_scene(s));
  Scene t = s;
  t.waypoints[2].t = 0.5;  // before waypoint 2 (t = 1)
  try {
    validate_scene(t);
    FAIL("accepted");
  } catch (const Error& e) {
    CHECK(e.line() == place_of(text, "2.5").line);
    CHECK(e.column() == place_of(text, "2.5").col);
    CHECK(std::string(e.what()).find("waypoint 3: 't' must be greater than the previous waypoint's (1)") != std::string::npos);
  }
  t = s;
  t.axes[0].min = 3.0;
  CHECK_THROWS_AS(validate_scene(t), Error);
  t = s;
  t.axes[1].acc = -1.0;
  CHECK_THROWS_AS(validate_scene(t), Error);
  t = s;
  t.waypoints[1].q[0] = std::numeric_limits<double>::infinity();
  CHECK_THROWS_AS(validate_scene(t), Error);
  t = s;
  t.waypoints.resize(1);
  try {
    validate_scene(t);
    FAIL("accepted");
  } catch (const Error& e) {
    CHECK(e.line() > 0);  // still a place in the file
    CHECK(std::string(e.what()).find("at least 2 waypoints") != std::string::npos);
  }
}

TEST_CASE("scene: scene_to_yaml round trip gives identical values", "[scene]") {
  // Numbers that are awkward in decimal: shortest round-trip printing must keep every bit.
  Scene a = load_scene_text(kFull, "full.yaml");
  a.waypoints[0].q[0] = 0.1 + 0.2;                 // 0.30000000000000004
  a.waypoints[1].q[1] = -1.0 / 3.0;
  a.waypoints[3].q[2] = 1e-300;
  a.axes[1].unit = "deg \"quoted\" \\ back";
  a.name = "a: b # c\nsecond line";
  validate_scene(a);
  const std::string y = scene_to_yaml(a);
  const Scene b = load_scene_text(y, "again.yaml");
  INFO(y);
  CHECK(b.name == a.name);
  REQUIRE(b.axes.size() == a.axes.size());
  for (std::size_t i = 0; i < a.axes.size(); ++i) {
    CHECK(b.axes[i].name == a.axes[i].name);
    CHECK(b.axes[i].unit == a.axes[i].unit);
    CHECK(b.axes[i].min == a.axes[i].min);
    CHECK(b.axes[i].max == a.axes[i].max);
    CHECK(b.axes[i].vel == a.axes[i].vel);
    CHECK(b.axes[i].acc == a.axes[i].acc);
    CHECK(b.axes[i].jerk == a.axes[i].jerk);
  }
  CHECK(b.path.knots == a.path.knots);
  CHECK(b.path.ends == a.path.ends);
  REQUIRE(b.path.start);
  REQUIRE(b.path.end);
  REQUIRE(b.path.weights);
  CHECK(*b.path.start == *a.path.start);
  CHECK(*b.path.end == *a.path.end);
  CHECK(*b.path.weights == *a.path.weights);
  CHECK(b.timing.mode == a.timing.mode);
  CHECK(b.timing.duration_s == a.timing.duration_s);
  CHECK(b.timing.scale == a.timing.scale);
  REQUIRE(b.waypoints.size() == a.waypoints.size());
  for (std::size_t k = 0; k < a.waypoints.size(); ++k) {
    CHECK(b.waypoints[k].t == a.waypoints[k].t);
    CHECK(b.waypoints[k].q == a.waypoints[k].q);  // bit-identical doubles
    CHECK(b.waypoints[k].hold_s == a.waypoints[k].hold_s);
    CHECK(b.waypoints[k].stop == a.waypoints[k].stop);
  }
  CHECK(b.exports.rate_hz == a.exports.rate_hz);
  // Saving again gives the same text (a fixed point).
  CHECK(scene_to_yaml(b) == y);

  // Duration mode (no t on the waypoints, a duration, natural ends, uniform knots) round-trips too.
  const std::string dur = kRig + "path: {knots: uniform, ends: natural}\ntiming: {mode: duration, duration: 6.25}\n"
                                 "waypoints:\n  - {x: 0.1, y: 0}\n  - {x: 0.7, y: -3.5, stop: true}\n  - {x: 1.9, y: 12}\n";
  const Scene d1 = load_scene_text(dur, "dur.yaml");
  const Scene d2 = load_scene_text(scene_to_yaml(d1), "dur2.yaml");
  CHECK(d2.timing.mode == TimingMode::kDuration);
  CHECK(d2.timing.duration_s == 6.25);
  CHECK(d2.path.knots == KnotType::kUniform);
  CHECK(d2.path.ends == EndCondition::kNatural);
  CHECK_FALSE(d2.waypoints[0].t);
  CHECK(d2.waypoints[1].stop);
  CHECK(d2.positions() == d1.positions());

  // A minimal scene stays minimal: no optional block appears from nowhere.
  const Scene m = load_scene_text(kRig + kWaypoints, "min.yaml");
  const Scene m2 = load_scene_text(scene_to_yaml(m), "min2.yaml");
  CHECK_FALSE(m2.path.start);
  CHECK_FALSE(m2.path.weights);
  CHECK_FALSE(m2.timing.duration_s);
  CHECK_FALSE(m2.exports.rate_hz);
  CHECK_FALSE(m2.axes[1].min);
  CHECK(m2.positions() == m.positions());
  CHECK(m2.times() == m.times());
}

TEST_CASE("scene: save_scene_file and load_scene_file", "[scene]") {
  namespace fs = std::filesystem;
  const fs::path dir = fs::temp_directory_path() / ("c2path_scene_test_" + std::to_string(::getpid()));
  fs::remove_all(dir);
  fs::create_directories(dir);
  const std::string path = (dir / "saved.yaml").string();
  const Scene a = load_scene_text(kFull, "full.yaml");
  save_scene_file(a, path);
  const Scene b = load_scene_file(path);
  CHECK(b.file == path);
  CHECK(b.positions() == a.positions());
  CHECK(b.times() == a.times());
  // Nothing but the file itself is left in the directory (the temporary was renamed).
  int entries = 0;
  for (const auto& e : fs::directory_iterator(dir)) {
    (void)e;
    ++entries;
  }
  CHECK(entries == 1);
  // A missing file and a directory are errors naming the path.
  try {
    (void)load_scene_file((dir / "missing.yaml").string());
    FAIL("a missing file loaded");
  } catch (const Error& e) {
    CHECK(e.file() == (dir / "missing.yaml").string());
    CHECK(std::string(e.what()).find("cannot open") != std::string::npos);
  }
  // A directory opens as a stream on Linux and reports a huge size: it must be named as a directory.
  try {
    (void)load_scene_file(dir.string());
    FAIL("a directory loaded");
  } catch (const Error& e) {
    CHECK(e.file() == dir.string());
    CHECK(std::string(e.what()).find("is a directory") != std::string::npos);
  }
  // Errors in a file carry the file's path.
  const std::string bad = (dir / "bad.yaml").string();
  {
    std::ofstream(bad) << kRig << "waypoints:\n  - {t: 0, x: 0.1, y: 0}\n  - {t: 1, x: 0.5, y: .nan}\n";
  }
  try {
    (void)load_scene_file(bad);
    FAIL("accepted");
  } catch (const Error& e) {
    // Line 8, column 23: the ".nan" (counted by hand in the text written above).
    CHECK(std::string(e.what()).rfind(bad + ":8:23: error: ", 0) == 0);
  }
  fs::remove_all(dir);
}

TEST_CASE("scene: every demo scene loads and plans", "[scene]") {
  namespace fs = std::filesystem;
  int n = 0;
  for (const auto& e : fs::directory_iterator(C2PATH_SCENES)) {
    if (e.path().extension() != ".yaml") continue;
    INFO(e.path().string());
    const Scene s = load_scene_file(e.path().string());
    CHECK(s.waypoints.size() >= 2);
    // The round trip holds for the demo scenes too.
    const Scene r = load_scene_text(scene_to_yaml(s), "again.yaml");
    CHECK(r.positions() == s.positions());
    REQUIRE(r.waypoints.size() == s.waypoints.size());
    for (std::size_t k = 0; k < s.waypoints.size(); ++k) CHECK(r.waypoints[k].t == s.waypoints[k].t);  // optional: absent in other modes
    ++n;
  }
  CHECK(n >= 4);  // issue 2 part 8: at least three moves and one that violates a limit
}
