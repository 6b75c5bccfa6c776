// Tests of verify.hpp and `c2path verify`: an exported file checked against its scene without the
// planner.

#include <charconv>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <sys/wait.h>
#include <unistd.h>
#include <vector>

#include "c2path/export.hpp"
#include "c2path/scene_yaml.hpp"
#include "c2path/timing.hpp"
#include "c2path/verify.hpp"
#include "test_util.hpp"

using namespace c2path;
namespace fs = std::filesystem;

namespace {

std::string slurp(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

void put(const fs::path& p, const std::string& s) { std::ofstream(p, std::ios::binary) << s; }

// Removes this process's scratch directory and captured output when the tests end.
struct ScratchCleanup {
  ~ScratchCleanup() {
    std::error_code ec;
    fs::remove_all(fs::temp_directory_path() / ("c2path_verify_test_" + std::to_string(::getpid())), ec);
    fs::remove(fs::temp_directory_path() / ("c2path_verify_test_" + std::to_string(::getpid()) + ".out"), ec);
  }
} scratch_cleanup;

fs::path scratch(const std::string& name) {
  const fs::path d = fs::temp_directory_path() / ("c2path_verify_test_" + std::to_string(::getpid())) / name;
  fs::remove_all(d);
  fs::create_directories(d);
  return d;
}

int run(const std::string& cmd, std::string* out = nullptr) {
  const fs::path o = fs::temp_directory_path() / ("c2path_verify_test_" + std::to_string(::getpid()) + ".out");
  const int rc = std::system((cmd + " > " + o.string() + " 2>&1").c_str());
  if (out) *out = slurp(o.string());
  return WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
}

std::string csv_of(const Scene& s, ExportOptions o) {
  const Plan p = plan(s);
  std::vector<std::string> names;
  for (const auto& a : s.axes) names.push_back(a.name);
  std::string out;
  write_setpoints(*p.trajectory, names, o, [&](std::string_view c) { out.append(c); });
  return out;
}

std::vector<std::string> lines_of(const std::string& s) {
  std::vector<std::string> v;
  std::istringstream in(s);
  for (std::string l; std::getline(in, l);) v.push_back(l);
  return v;
}

std::string joined(const std::vector<std::string>& ls) {
  std::string o;
  for (const auto& l : ls) o += l + "\n";
  return o;
}

// Moves field `col` of data row `row` (0-based, after the header) by `delta`.
std::string perturb(const std::string& csv, std::size_t row, std::size_t col, double delta) {
  auto ls = lines_of(csv);
  std::vector<std::string> f;
  {
    std::istringstream in(ls[row + 1]);
    for (std::string x; std::getline(in, x, ',');) f.push_back(x);
  }
  double v = 0;
  std::from_chars(f[col].data(), f[col].data() + f[col].size(), v);
  char buf[32];
  f[col].assign(buf, std::to_chars(buf, buf + 32, v + delta).ptr);
  std::string l;
  for (std::size_t i = 0; i < f.size(); ++i) l += (i ? "," : "") + f[i];
  ls[row + 1] = l;
  return joined(ls);
}

std::vector<fs::path> demo_scenes() {
  std::vector<fs::path> v;
  for (const auto& e : fs::directory_iterator(C2PATH_SCENES))
    if (e.path().extension() == ".yaml") v.push_back(e.path());
  std::sort(v.begin(), v.end());
  return v;
}

const std::string kSlider = std::string(C2PATH_SCENES) + "/slider_pan.yaml";

}  // namespace

TEST_CASE("verify: export -> verify passes on every demo scene, in every format", "[verify][cli]") {
  const fs::path d = scratch("roundtrip");
  const std::string cli = C2PATH_CLI;
  const auto scenes = demo_scenes();
  REQUIRE(scenes.size() >= 1);
  struct Variant {
    const char* export_args;
    const char* verify_args;
  };
  const Variant variants[] = {
      {"", ""},
      {" --format jsonl", ""},
      {" --format pvt --spacing 0.02", ""},
      {" --columns pos --rate 500", ""},
      {" --columns pos,vel,acc,jerk", ""},
      {" --fps 23.976", ""},
      {" --fps 25 --time index", " --fps 25"},
      {" --time index --rate 200", " --rate 200"},
  };
  for (const auto& scene : scenes) {
    const bool violation = scene.filename().string().find("violation") != std::string::npos;
    for (const auto& v : variants) {
      const std::string file = (d / (scene.stem().string() + ".out")).string();
      std::string out;
      const int erc = run(cli + " export " + scene.string() + " -o " + file + v.export_args + (violation ? " --allow-violations" : ""), &out);
      INFO(scene.filename().string() << v.export_args << "\n" << out);
      REQUIRE(erc == 0);
      const int vrc = run(cli + " verify " + scene.string() + " " + file + v.verify_args, &out);
      INFO(out);
      CHECK(vrc == (violation ? 1 : 0));
      CHECK(out.find("CAUTION") != std::string::npos);
      if (!violation) CHECK(out.find(": OK (") != std::string::npos);
    }
  }
  fs::remove_all(d);
}

TEST_CASE("verify: one sample moved by a small amount fails at that row", "[verify]") {
  const Scene s = load_scene_file(kSlider);
  ExportOptions o;
  o.rate_hz = 250;
  const std::string csv = csv_of(s, o);
  REQUIRE(verify_text(s, csv, "good.csv").ok);
  // pan is column 4 (t, track, track.vel, track.acc, pan, ...). 1e-3 deg is 3e-6 of its travel;
  // at 250 Hz its third difference is 1e-3 / (4 ms)^3 = 15625 deg/s^3, far above the 600 allowed.
  for (std::size_t row : {std::size_t(3), std::size_t(500), std::size_t(2400)}) {
    const VerifyResult r = verify_text(s, perturb(csv, row, 4, 1e-3), "moved.csv");
    INFO("row " << row);
    CHECK_FALSE(r.ok);
    REQUIRE_FALSE(r.findings.empty());
    CHECK(r.findings.front().row == row);
    CHECK(r.findings.front().line == int(row) + 2);
    CHECK(r.findings.front().axis == "pan");
  }
  SECTION("positions only: the jerk of the differences finds it") {
    o.columns = parse_columns("pos");
    const std::string pos = csv_of(s, o);
    REQUIRE(verify_text(s, pos, "pos.csv").ok);
    const VerifyResult r = verify_text(s, perturb(pos, 700, 2, 1e-3), "pos.csv");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.front().row == 700);
    CHECK(r.findings.front().check == "jerk");
  }
  SECTION("the CLI names the row") {
    const fs::path d = scratch("moved");
    put(d / "moved.csv", perturb(csv, 500, 4, 1e-3));
    std::string out;
    CHECK(run(std::string(C2PATH_CLI) + " verify " + kSlider + " " + (d / "moved.csv").string(), &out) == 1);
    INFO(out);
    CHECK(out.find("moved.csv:502: row 500: axis 'pan':") != std::string::npos);
    fs::remove_all(d);
  }
}

TEST_CASE("verify: PVT velocities and dt, JSON Lines rows", "[verify]") {
  const Scene s = load_scene_file(kSlider);
  ExportOptions o;
  o.format = ExportFormat::kPvt;
  o.rate_hz = 50;
  const std::string pvt = csv_of(s, o);
  REQUIRE(verify_text(s, pvt, "ok.pvt").ok);
  SECTION("a velocity a controller would follow off the path") {
    // pan.vel is column 5 (t, dt, track, track.vel, pan, pan.vel). 0.1 deg/s moves the trapezoid
    // step by h * 0.1 / 2 = 1e-3 deg; the jerk limit allows h^3 * 600 / 12 = 4e-4 deg at h = 20 ms.
    const VerifyResult r = verify_text(s, perturb(pvt, 123, 5, 0.1), "vel.pvt");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.front().row == 123);
    CHECK(r.findings.front().check == "vel-column");
    CHECK(r.format == "pvt");
  }
  SECTION("a dt that is not the time since the previous point") {
    const VerifyResult r = verify_text(s, perturb(pvt, 40, 1, 1e-3), "dt.pvt");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.front().row == 40);
    CHECK(r.findings.front().check == "dt");
  }
  SECTION("JSON Lines: a moved sample is found at its row") {
    ExportOptions j;
    j.format = ExportFormat::kJsonl;
    j.rate_hz = 250;
    auto ls = lines_of(csv_of(s, j));
    REQUIRE(verify_text(s, joined(ls), "ok.jsonl").ok);
    const std::string key = "\"tilt\":";
    const std::size_t at = ls[900].find(key) + key.size();
    const std::size_t end = ls[900].find(',', at);
    double v = 0;
    std::from_chars(ls[900].data() + at, ls[900].data() + end, v);
    char buf[32];
    ls[900].replace(at, end - at, std::string(buf, std::to_chars(buf, buf + 32, v - 2e-3).ptr));
    const VerifyResult r = verify_text(s, joined(ls), "moved.jsonl");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.front().row == 900);
    CHECK(r.findings.front().line == 901);
    CHECK(r.findings.front().axis == "tilt");
  }
}

TEST_CASE("verify: a file from a different scene fails", "[verify]") {
  const Scene s = load_scene_file(kSlider);
  ExportOptions o;
  o.rate_hz = 100;
  const std::string csv = csv_of(s, o);
  SECTION("same axes, one waypoint moved") {
    std::string yaml = slurp(kSlider);
    const std::string from = "{t: 5.0, track: 1.20, pan:   0, tilt: -10}";
    REQUIRE(yaml.find(from) != std::string::npos);
    yaml.replace(yaml.find(from), from.size(), "{t: 5.0, track: 1.20, pan:   4, tilt: -10}");
    const Scene other = load_scene_text(yaml, "other.yaml");
    const VerifyResult r = verify_text(other, csv, "slider.csv");
    CHECK_FALSE(r.ok);
    bool waypoint = false;
    for (const auto& f : r.findings) waypoint |= f.check == "waypoint";
    CHECK(waypoint);
  }
  SECTION("same axes and waypoints, one keyframe time moved") {
    std::string yaml = slurp(kSlider);
    const std::string from = "{t: 5.0, ";
    REQUIRE(yaml.find(from) != std::string::npos);
    yaml.replace(yaml.find(from), from.size(), "{t: 5.3, ");
    const VerifyResult r = verify_text(load_scene_text(yaml, "retimed.yaml"), csv, "slider.csv");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.front().check == "keyframe");
    CHECK(r.findings.front().row == 530);  // the row at t = 5.3 s (530 / 100 Hz)
  }
  SECTION("same axes, different start") {
    std::string yaml = slurp(kSlider);
    const std::string from = "{t: 0.0, track: 0.20";
    yaml.replace(yaml.find(from), from.size(), "{t: 0.0, track: 0.25");
    const VerifyResult r = verify_text(load_scene_text(yaml, "other.yaml"), csv, "slider.csv");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.front().check == "start");
    CHECK(r.findings.front().row == 0);
  }
  SECTION("other axes: the columns do not match (exit 1)") {
    const fs::path d = scratch("other");
    put(d / "slider.csv", csv);
    std::string out;
    CHECK(run(std::string(C2PATH_CLI) + " verify " + C2PATH_SCENES + "/arm_joint_sweep.yaml " + (d / "slider.csv").string(), &out) == 1);
    CHECK(out.find("is not an axis of the scene") != std::string::npos);
    fs::remove_all(d);
  }
}

TEST_CASE("verify: limits from divided differences and the file's columns", "[verify]") {
  const Scene s = load_scene_text(
      "format: 1\nrig:\n  axes:\n    - {name: x, unit: m, min: -1, max: 10, vel: 1, acc: 2, jerk: 5}\n"
      "waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 0.5}\n",
      "lim.yaml");
  SECTION("a velocity beyond the limit between two rows") {
    // x: 0, 0.001, 0.003 at 1 ms: the second step is 2 m/s.
    const VerifyResult r = verify_text(s, "t,x\n0,0\n0.001,0.0005\n0.002,0.0025\n0.003,0.003\n", "v.csv");
    REQUIRE_FALSE(r.ok);
    bool vel = false;
    for (const auto& f : r.findings)
      if (f.check == "vel") {
        vel = true;
        CHECK(f.row == 2);
        CHECK(f.line == 3 + 1);
      }
    CHECK(vel);
  }
  SECTION("time must increase") {
    const VerifyResult r = verify_text(s, "t,x\n0,0\n0.5,0.25\n0.5,0.25\n1,0.5\n", "t.csv");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.front().check == "time");
    CHECK(r.findings.front().row == 2);
  }
  SECTION("a velocity column that disagrees with the positions") {
    // Constant speed 0.5 m/s; the velocity column says 0.9 at row 2.
    const VerifyResult r = verify_text(s, "t,x,x.vel\n0,0,0.5\n0.25,0.125,0.5\n0.5,0.25,0.9\n0.75,0.375,0.5\n1,0.5,0.5\n", "c.csv");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.front().check == "vel-column");
    CHECK(r.findings.front().row == 2);
  }
  SECTION("a straight constant-speed file passes (start, end, waypoints, limits)") {
    const VerifyResult r = verify_text(s, "t,x,x.vel\n0,0,0.5\n0.25,0.125,0.5\n0.5,0.25,0.5\n0.75,0.375,0.5\n1,0.5,0.5\n", "ok.csv");
    INFO((r.findings.empty() ? "" : r.findings.front().message));
    CHECK(r.ok);
    CHECK(r.waypoints_passed == 2);
  }
  SECTION("a file that stops short of the end") {
    // Half way at 0.1 s spacing: more than the motion possible in one spacing short of the end.
    const VerifyResult r = verify_text(s, "t,x\n0,0\n0.1,0.05\n0.2,0.1\n0.3,0.15\n0.4,0.2\n0.5,0.25\n", "short.csv");
    REQUIRE_FALSE(r.ok);
    CHECK(r.findings.back().check == "end");
  }
}

TEST_CASE("verify: controller counts round trip", "[verify][cli]") {
  const fs::path d = scratch("counts");
  std::string yaml = slurp(kSlider);
  const std::string a = "vel: 0.8, acc: 1.5, jerk: 8.0}", b = "vel: 60,  acc: 120, jerk: 600}", c = "vel: 40,  acc: 80,  jerk: 400}";
  yaml.replace(yaml.find(a), a.size(), "vel: 0.8, acc: 1.5, jerk: 8.0, counts_per_unit: 200000, offset: 1000}");
  yaml.replace(yaml.find(b), b.size(), "vel: 60,  acc: 120, jerk: 600, counts_per_unit: 1000}");
  yaml.replace(yaml.find(c), c.size(), "vel: 40,  acc: 80,  jerk: 400, counts_per_unit: -500, offset: -7}");
  put(d / "counts.yaml", yaml);
  const std::string cli = C2PATH_CLI, scene = (d / "counts.yaml").string(), file = (d / "counts.csv").string();
  std::string out;
  REQUIRE(run(cli + " export " + scene + " -o " + file + " --units counts --rate 100", &out) == 0);
  INFO(out);
  CHECK(out.find("rounding to counts") != std::string::npos);
  CHECK(run(cli + " verify " + scene + " " + file + " --units counts", &out) == 0);
  INFO(out);
  // Half a count of 1/1000 deg at 100 Hz is 4000 deg/s^3 of jerk tolerance against 600 (and
  // 20 deg/s^2 of acceleration tolerance against 120): said so.
  CHECK(out.find("axis 'pan': the acc jerk check is not decisive") != std::string::npos);
  // Read as scene units, the counts are nowhere near the scene.
  CHECK(run(cli + " verify " + scene + " " + file, &out) == 1);
  fs::remove_all(d);
}

TEST_CASE("verify: unreadable input is one line FILE:LINE:COL: error, exit 2", "[verify][cli]") {
  const fs::path d = scratch("bad");
  const std::string cli = C2PATH_CLI;
  struct Bad {
    const char* text;
    const char* where;
  };
  const Bad bad[] = {
      {"t,track,pan,tilt\n0,0.2,-35,-5\n0.1,0.2,abc,-5\n", ":3:9: error: expected a number"},
      {"t,track,pan,tilt\n0,0.2,-35,-5\n0.1,0.2,-35\n", ":3:12: error: the row has 3 fields, the header 4"},
      {"{\"t\":0,\"track\":0.2,\"pan\":-35,\"tilt\":-5}\n{\"t\":0.1,\"track\":0.2,\"pan\":-35,\"tilt\":-5\n", ":2:41: error: expected '}'"},
      {"", ":1:1: error: the file is empty"},
      {"track,pan,tilt\n0.2,-35,-5\n", ":1:1: error: the file has no time column"},
      {"t,track,pan,tilt\n0,0.2,nan,-5\n", ":2:7: error: expected a finite number"},
  };
  int i = 0;
  for (const auto& b : bad) {
    const std::string f = (d / ("bad" + std::to_string(++i) + ".csv")).string();
    put(f, b.text);
    std::string out;
    CHECK(run(cli + " verify " + kSlider + " " + f, &out) == 2);
    INFO(out);
    CHECK(out.rfind(f + b.where, 0) == 0);
    CHECK(std::count(out.begin(), out.end(), '\n') == 1);
  }
  std::string out;
  CHECK(run(cli + " verify " + kSlider + " " + (d / "missing.csv").string(), &out) == 2);
  CHECK(std::count(out.begin(), out.end(), '\n') == 1);
  fs::remove_all(d);
}

TEST_CASE("verify: keyframe times are checked with holds too (arrival at t, still there at t + hold)", "[verify]") {
  // scenes/pick_place_stop.yaml: waypoint 3 is keyed at t 2.4 with a 0.6 s hold, waypoint 6 at
  // 6.4 with 0.8 s. The move reaches each waypoint at its own t and leaves when the hold ends.
  const std::string path = std::string(C2PATH_SCENES) + "/pick_place_stop.yaml";
  const Scene s = load_scene_file(path);
  ExportOptions o;
  o.rate_hz = 100;
  const std::string csv = csv_of(s, o);
  const VerifyResult ok = verify_text(s, csv, "pick.csv");
  CHECK(ok.ok);
  for (const auto& n : ok.notes) CHECK(n.find("keyframe times not checked") == std::string::npos);
  // The same file against a scene whose first hold lasts 0.9 s: at t 3.3 the file has long left
  // waypoint 3 (it leaves at 3.0), so the hold's end fails; the finding names the hold.
  std::string yaml = slurp(path);
  const std::string from = "stop: true, hold: 0.6}";
  REQUIRE(yaml.find(from) != std::string::npos);
  yaml.replace(yaml.find(from), from.size(), "stop: true, hold: 0.9}");
  const VerifyResult r = verify_text(load_scene_text(yaml, "longer_hold.yaml"), csv, "pick.csv");
  REQUIRE_FALSE(r.ok);
  bool hold_end = false;
  for (const auto& f : r.findings)
    if (f.check == "keyframe" && f.message.find("waypoint 3's hold ends at t 3.3") != std::string::npos) {
      hold_end = true;
      CHECK(f.row == 330);  // the first row at or after t = 3.3 s at 100 Hz
    }
  CHECK(hold_end);
}
