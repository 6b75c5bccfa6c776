// Tests of the `c2path` command (design §5), run as a real process on scenes written to a temporary
// directory: exit codes, the --json fields, CSV header and rows, error messages, atomic export.
//
// The test scene is keyframed through (0, 0), (1, 1), (2, 4) for x and (0, 0), (1, 10), (2, 20) for
// y with not-a-knot ends: three points with not-a-knot give the parabola through them (design §3),
// so x = t^2 (x' = 2t, x'' = 2, x''' = 0) and y = 10 t (hand computation from the waypoints).

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <regex>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "test_util.hpp"

namespace {

namespace fs = std::filesystem;

struct Run {
  int rc = -1;
  std::string out, err;
};

std::string read_file(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

void write_file(const fs::path& p, const std::string& text) {
  std::ofstream out(p, std::ios::binary);
  out << text;
}

std::string q(const fs::path& p) { return "'" + p.string() + "'"; }

// A temporary directory for one test case, removed afterwards.
struct TempDir {
  fs::path path;
  TempDir() {
    static int counter = 0;
    path = fs::temp_directory_path() / ("c2path_cli_test_" + std::to_string(::getpid()) + "_" + std::to_string(++counter));
    fs::remove_all(path);
    fs::create_directories(path);
  }
  ~TempDir() {
    std::error_code ec;
    fs::remove_all(path, ec);
  }
  fs::path operator/(const std::string& name) const { return path / name; }
  // Names of the files in the directory, sorted.
  std::vector<std::string> entries() const {
    std::vector<std::string> v;
    for (const auto& e : fs::directory_iterator(path)) v.push_back(e.path().filename().string());
    std::sort(v.begin(), v.end());
    return v;
  }
};

// Runs `c2path ARGS` through the shell (ARGS already quoted), capturing both streams.
Run run_cli(const TempDir& dir, const std::string& args, const std::string& stdin_file = "") {
  const fs::path out = dir.path / ".stdout", err = dir.path / ".stderr";
  std::string cmd = q(C2PATH_CLI) + " " + args + " > " + q(out) + " 2> " + q(err);
  if (!stdin_file.empty()) cmd += " < " + q(stdin_file);
  else cmd += " < /dev/null";
  const int status = std::system(cmd.c_str());
  Run r;
  REQUIRE(status != -1);
  REQUIRE(WIFEXITED(status));
  r.rc = WEXITSTATUS(status);
  r.out = read_file(out);
  r.err = read_file(err);
  fs::remove(out);
  fs::remove(err);
  return r;
}

std::vector<std::string> lines_of(const std::string& s) {
  std::vector<std::string> v;
  std::istringstream in(s);
  for (std::string line; std::getline(in, line);) v.push_back(line);
  return v;
}

// x = t^2, y = 10 t on [0, 2] (see the top of the file); limits set per test.
std::string scene(const std::string& x_limits, const std::string& extra = "") {
  return "format: 1\n"
         "name: test move\n"
         "rig:\n"
         "  axes:\n"
         "    - {name: x, unit: m" + x_limits + "}\n"
         "    - {name: y, unit: deg, min: -1, max: 30, vel: 20, acc: 5, jerk: 5}\n"
         "waypoints:\n"
         "  - {t: 0, x: 0, y: 0}\n"
         "  - {t: 1, x: 1, y: 10}\n"
         "  - {t: 2, x: 4, y: 20}\n" + extra;
}
// Within limits: peaks x 0..4, |x'| 4, |x''| 2; y 0..20, |y'| 10.
const std::string kOk = scene(", min: -1, max: 5, vel: 5, acc: 3");
// x exceeds vel 3 where 2t > 3: t in [1.5, 2] (hand); jerk is not limited on x.
const std::string kViolating = scene(", min: -1, max: 5, vel: 3, acc: 3");

}  // namespace

TEST_CASE("cli: --help and --version exit 0; no command or a wrong option exit 2", "[cli]") {
  TempDir d;
  Run r = run_cli(d, "--help");
  CHECK(r.rc == 0);
  CHECK(r.out.find("check") != std::string::npos);
  CHECK(r.out.find("export") != std::string::npos);
  r = run_cli(d, "check --help");
  CHECK(r.rc == 0);
  CHECK(r.out.find("--json") != std::string::npos);
  r = run_cli(d, "export --help");
  CHECK(r.rc == 0);
  CHECK(r.out.find("--allow-violations") != std::string::npos);
  CHECK(r.out.find("--rate") != std::string::npos);
  r = run_cli(d, "--version");
  CHECK(r.rc == 0);
  CHECK(std::regex_search(r.out, std::regex("^c2path [0-9]+\\.[0-9]+\\.[0-9]+")));
  r = run_cli(d, "");
  CHECK(r.rc == 2);
  CHECK(lines_of(r.err).size() == 1);
  r = run_cli(d, "check");
  CHECK(r.rc == 2);
  CHECK(lines_of(r.err).size() == 1);
  r = run_cli(d, "frobnicate x.yaml");
  CHECK(r.rc == 2);
  r = run_cli(d, "check x.yaml --no-such-option");
  CHECK(r.rc == 2);
  CHECK(lines_of(r.err).size() == 1);
}

TEST_CASE("cli: check exits 0 within limits, 1 with violations, 2 for bad input", "[cli]") {
  TempDir d;
  write_file(d / "ok.yaml", kOk);
  write_file(d / "bad.yaml", kViolating);
  Run r = run_cli(d, "check " + q(d / "ok.yaml"));
  CHECK(r.rc == 0);
  CHECK(r.err.empty());
  CHECK(r.out.find("violations: none") != std::string::npos);
  CHECK(r.out.find("result: within limits") != std::string::npos);
  CHECK(r.out.find("CAUTION") != std::string::npos);
  // The table names each axis with its unit, and says which limits are not checked.
  CHECK(r.out.find("x m") != std::string::npos);
  CHECK(r.out.find("y deg") != std::string::npos);
  CHECK(r.out.find("not checked (no limit given): x jerk") != std::string::npos);

  r = run_cli(d, "check " + q(d / "bad.yaml"));
  CHECK(r.rc == 1);
  CHECK(r.out.find("violations (1)") != std::string::npos);
  CHECK(r.out.find("LIMITS EXCEEDED") != std::string::npos);
  CHECK(r.out.find("stretch factor 1.33333") != std::string::npos);  // 4 / 3 (hand)
  CHECK(r.out.find("CAUTION") != std::string::npos);
  // The order of the report: table, violations, stretch factor, caution line (design §5).
  const auto viol = r.out.find("violations (1)"), stretch = r.out.find("stretch factor"), caution = r.out.find("CAUTION");
  CHECK(r.out.find("peak |vel|") < viol);
  CHECK(viol < stretch);
  CHECK(stretch < caution);

  write_file(d / "broken.yaml", kOk + "bogus: 1\n");
  r = run_cli(d, "check " + q(d / "broken.yaml"));
  CHECK(r.rc == 2);
  CHECK(r.out.empty());
  r = run_cli(d, "check " + q(d / "missing.yaml"));
  CHECK(r.rc == 2);
  CHECK(r.out.empty());
  CHECK(lines_of(r.err).size() == 1);
  CHECK(r.err.find((d / "missing.yaml").string() + ": error: ") == 0);
}

TEST_CASE("cli: the table marks a bound with ! only when check reports a violation", "[cli]") {
  TempDir d;
  // A symmetric bump (0, 0), (0.1, 0.7), (0.2, 0): not-a-knot gives the parabola with its top at
  // the middle waypoint, exactly at max 0.7 (hand). Rounding puts the computed top a few ulp above
  // 0.7, well inside the check's tolerance: exit 0, and the travel cell carries no "!".
  write_file(d / "top.yaml",
             "format: 1\nrig:\n  axes:\n    - {name: x, min: -1, max: 0.7}\n"
             "waypoints:\n  - {t: 0, x: 0}\n  - {t: 0.1, x: 0.7}\n  - {t: 0.2, x: 0}\n");
  Run r = run_cli(d, "check " + q(d / "top.yaml"));
  CHECK(r.rc == 0);
  std::string row;
  for (const auto& line : lines_of(r.out))
    if (line.rfind("x ", 0) == 0) row = line;
  INFO(r.out);
  REQUIRE(!row.empty());
  CHECK(row.find('!') == std::string::npos);
  // Just beyond the tolerance (max 0.7 - 1e-6 with a span of 1.7): marked and exit 1.
  write_file(d / "over.yaml",
             "format: 1\nrig:\n  axes:\n    - {name: x, min: -1, max: 0.699999}\n"
             "waypoints:\n  - {t: 0, x: 0}\n  - {t: 0.1, x: 0.7}\n  - {t: 0.2, x: 0}\n");
  r = run_cli(d, "check " + q(d / "over.yaml"));
  CHECK(r.rc == 1);
  row.clear();
  for (const auto& line : lines_of(r.out))
    if (line.rfind("x ", 0) == 0) row = line;
  CHECK(row.find(" !") != std::string::npos);
}

TEST_CASE("cli: bad input gives one line FILE:LINE:COL: error: ...", "[cli]") {
  TempDir d;
  struct Case {
    std::string text;
    int line, col;
    std::string contains;
  };
  const std::vector<Case> cases = {
      // Line 11, column 1: the unknown top-level key appended after the 10 lines of the scene.
      {kOk + "exprt: {rate: 10}\n", 11, 1, "did you mean 'export'?"},
      // Line 8 is "  - {t: 0, x: 0, y: 0}"; with y removed the waypoint starts at column 5.
      {scene(", vel: 5").replace(scene(", vel: 5").find(", y: 0}"), 7, "}"), 8, 5, "'y' is missing"},
      // Line 5 is "    - {name: x, unit: m, vel: 0}": the 0 is at column 31 (counted by hand).
      {scene(", vel: 0"), 5, 31, "'vel' must be greater than 0"},
      {kOk + "waypoints: []\n", 11, 1, "duplicate key 'waypoints'"},
      {"format: 1\nrig: {axes: [{name: x}]\n", 3, 1, "YAML syntax"},
      {"", 1, 1, "empty"},
  };
  for (std::size_t i = 0; i < cases.size(); ++i) {
    INFO("case " << i << ":\n" << cases[i].text);
    const fs::path p = d / ("case" + std::to_string(i) + ".yaml");
    write_file(p, cases[i].text);
    for (const std::string& cmd : std::vector<std::string>{"check ", "check --json ", "export -o " + q(d / "out.csv") + " "}) {
      INFO(cmd);
      const Run r = run_cli(d, cmd + q(p));
      CHECK(r.rc == 2);
      CHECK(r.out.empty());
      const auto lines = lines_of(r.err);
      REQUIRE(lines.size() == 1);
      CHECK(r.err.back() == '\n');
      const std::string prefix = p.string() + ":" + std::to_string(cases[i].line) + ":" + std::to_string(cases[i].col) + ": error: ";
      CHECK(lines[0].rfind(prefix, 0) == 0);
      CHECK(lines[0].find(cases[i].contains) != std::string::npos);
      CHECK_FALSE(fs::exists(d / "out.csv"));
    }
  }
}

TEST_CASE("cli: - reads the scene from standard input", "[cli]") {
  TempDir d;
  write_file(d / "ok.yaml", kOk);
  write_file(d / "bad.yaml", kViolating);
  write_file(d / "broken.yaml", kOk + "bogus: 1\n");
  Run r = run_cli(d, "check -", (d / "ok.yaml").string());
  CHECK(r.rc == 0);
  CHECK(r.out.find("<stdin>") != std::string::npos);
  r = run_cli(d, "check - --json", (d / "bad.yaml").string());
  CHECK(r.rc == 1);
  CHECK(nlohmann::json::parse(r.out)["ok"] == false);
  r = run_cli(d, "check -", (d / "broken.yaml").string());
  CHECK(r.rc == 2);
  CHECK(r.err.rfind("<stdin>:11:1: error: ", 0) == 0);  // the 11th line is "bogus: 1"
  r = run_cli(d, "export - -o " + q(d / "in.csv"), (d / "ok.yaml").string());
  CHECK(r.rc == 0);
  CHECK(fs::exists(d / "in.csv"));
  // Identical to exporting the file itself.
  r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "file.csv"));
  CHECK(r.rc == 0);
  CHECK(read_file(d / "in.csv") == read_file(d / "file.csv"));
}

TEST_CASE("cli: check --json has exactly the fields of design §5, with the right values", "[cli]") {
  TempDir d;
  write_file(d / "bad.yaml", kViolating);
  const Run r = run_cli(d, "check --json " + q(d / "bad.yaml"));
  CHECK(r.rc == 1);
  CHECK(r.err.empty());
  REQUIRE(lines_of(r.out).size() == 1);  // one object, nothing else on stdout
  const nlohmann::json j = nlohmann::json::parse(r.out);
  REQUIRE(j.is_object());
  auto keys_of = [](const nlohmann::json& o) {
    std::set<std::string> k;
    for (auto it = o.begin(); it != o.end(); ++it) k.insert(it.key());
    return k;
  };
  // Design §5 fields. The timing work adds a "binding" list; it is the only extra field allowed.
  std::set<std::string> top = keys_of(j);
  top.erase("binding");
  CHECK(top == std::set<std::string>{"ok", "duration", "stretch", "knots", "axes", "violations"});
  CHECK(j["ok"] == false);
  CHECK(j["duration"].get<double>() == 2.0);
  C2PATH_CHECK_NEAR("stretch", 0, j["stretch"].get<double>(), 4.0 / 3.0, 1e-14, 0.0);  // peak |x'| 4 / limit 3
  CHECK(j["knots"] == nlohmann::json::array({0.0, 1.0, 2.0}));  // keyframes: the knots are the times
  REQUIRE(j["axes"].size() == 2);
  for (const auto& ax : j["axes"]) {
    CHECK(keys_of(ax) == std::set<std::string>{"name", "unit", "peak", "limit"});
    CHECK(keys_of(ax["peak"]) == std::set<std::string>{"pos_min", "pos_max", "vel", "acc", "jerk"});
    CHECK(keys_of(ax["limit"]) == std::set<std::string>{"min", "max", "vel", "acc", "jerk"});
  }
  const auto& x = j["axes"][0];
  CHECK(x["name"] == "x");
  CHECK(x["unit"] == "m");
  // x = t^2 on [0, 2] (hand): 0 .. 4, |x'| 4, |x''| 2, x''' 0.
  C2PATH_CHECK_NEAR("x pos_min", 0, x["peak"]["pos_min"].get<double>(), 0.0, 0.0, 1e-13);
  C2PATH_CHECK_NEAR("x pos_max", 0, x["peak"]["pos_max"].get<double>(), 4.0, 0.0, 1e-13);
  C2PATH_CHECK_NEAR("x vel", 0, x["peak"]["vel"].get<double>(), 4.0, 0.0, 1e-13);
  C2PATH_CHECK_NEAR("x acc", 0, x["peak"]["acc"].get<double>(), 2.0, 0.0, 1e-13);
  C2PATH_CHECK_NEAR("x jerk", 0, x["peak"]["jerk"].get<double>(), 0.0, 0.0, 1e-12);
  CHECK(x["limit"]["min"] == -1.0);
  CHECK(x["limit"]["max"] == 5.0);
  CHECK(x["limit"]["vel"] == 3.0);
  CHECK(x["limit"]["acc"] == 3.0);
  CHECK(x["limit"]["jerk"].is_null());  // absent limit: null, not checked
  const auto& y = j["axes"][1];
  CHECK(y["name"] == "y");
  CHECK(y["unit"] == "deg");
  C2PATH_CHECK_NEAR("y vel", 0, y["peak"]["vel"].get<double>(), 10.0, 0.0, 1e-12);  // y = 10 t
  C2PATH_CHECK_NEAR("y pos_max", 0, y["peak"]["pos_max"].get<double>(), 20.0, 0.0, 1e-12);
  CHECK(y["limit"]["jerk"] == 5.0);
  // One violation: 2t > 3 on [1.5, 2], peak 4 at t = 2 (hand).
  REQUIRE(j["violations"].size() == 1);
  const auto& v = j["violations"][0];
  CHECK(keys_of(v) == std::set<std::string>{"axis", "quantity", "t_start", "t_end", "peak", "t_peak", "limit"});
  CHECK(v["axis"] == "x");
  CHECK(v["quantity"] == "vel");
  C2PATH_CHECK_NEAR("t_start", 0, v["t_start"].get<double>(), 1.5, 0.0, 1e-12);
  C2PATH_CHECK_NEAR("t_end", 0, v["t_end"].get<double>(), 2.0, 0.0, 1e-12);
  C2PATH_CHECK_NEAR("peak", 0, v["peak"].get<double>(), 4.0, 0.0, 1e-12);
  C2PATH_CHECK_NEAR("t_peak", 0, v["t_peak"].get<double>(), 2.0, 0.0, 1e-12);
  CHECK(v["limit"] == 3.0);

  // Within limits: ok true, stretch 1, no violations; quantity names follow design §5 for pos too.
  write_file(d / "ok.yaml", kOk);
  Run o = run_cli(d, "check --json " + q(d / "ok.yaml"));
  CHECK(o.rc == 0);
  nlohmann::json k = nlohmann::json::parse(o.out);
  CHECK(k["ok"] == true);
  CHECK(k["stretch"] == 1.0);
  CHECK(k["violations"].empty());
  write_file(d / "pos.yaml", scene(", min: -1, max: 3.5"));  // t^2 > 3.5 on [sqrt(3.5), 2] (hand)
  o = run_cli(d, "check --json " + q(d / "pos.yaml"));
  CHECK(o.rc == 1);
  k = nlohmann::json::parse(o.out);
  REQUIRE(k["violations"].size() == 1);
  CHECK(k["violations"][0]["quantity"] == "pos");
  C2PATH_CHECK_NEAR("t_start", 0, k["violations"][0]["t_start"].get<double>(), std::sqrt(3.5), 0.0, 1e-12);
  CHECK(k["violations"][0]["limit"] == 3.5);
  CHECK(k["stretch"] == 1.0);  // slowing down cannot fix a position violation
}

TEST_CASE("cli: CSV header, rows at t = k / rate plus the exact end, values", "[cli]") {
  TempDir d;
  write_file(d / "ok.yaml", kOk);
  Run r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "out.csv") + " --rate 10");
  REQUIRE(r.rc == 0);
  CHECK(r.out.find("CAUTION") != std::string::npos);
  const auto rows = lines_of(read_file(d / "out.csv"));
  REQUIRE(!rows.empty());
  CHECK(rows[0] == "t,x,x.vel,x.acc,y,y.vel,y.acc");
  // Duration 2 s at 10 Hz: t = 0, 0.1, ..., 1.9 before the end, then 2 itself: 21 rows (export.cpp).
  REQUIRE(rows.size() == 1 + 21);
  for (std::size_t k = 1; k < rows.size(); ++k) {
    std::vector<double> f;
    std::istringstream in(rows[k]);
    for (std::string cell; std::getline(in, cell, ',');) f.push_back(std::stod(cell));
    REQUIRE(f.size() == 7);
    const double t = k + 1 == rows.size() ? 2.0 : double(k - 1) / 10.0;
    CHECK(f[0] == t);
    // x = t^2, x' = 2t, x'' = 2; y = 10 t, y' = 10, y'' = 0 (hand).
    C2PATH_CHECK_NEAR("x", k, f[1], t * t, 1e-13, 1e-14);
    C2PATH_CHECK_NEAR("x.vel", k, f[2], 2 * t, 1e-13, 1e-14);
    C2PATH_CHECK_NEAR("x.acc", k, f[3], 2.0, 1e-13, 1e-14);
    C2PATH_CHECK_NEAR("y", k, f[4], 10 * t, 1e-13, 1e-13);
    C2PATH_CHECK_NEAR("y.vel", k, f[5], 10.0, 1e-13, 1e-13);
    C2PATH_CHECK_NEAR("y.acc", k, f[6], 0.0, 0.0, 1e-12);
  }
  // The printed t is the shortest round-trip text of k / 10: "0.1", not "0.10000000000000001".
  CHECK(rows[2].rfind("0.1,", 0) == 0);
  CHECK(rows[4].rfind("0.3,", 0) == 0);
  CHECK(rows.back().rfind("2,", 0) == 0);

  // The scene's export rate is used when --rate is not given; --rate overrides it.
  write_file(d / "rate.yaml", kOk + "export: {rate: 4}\n");
  r = run_cli(d, "export " + q(d / "rate.yaml") + " -o " + q(d / "r4.csv"));
  CHECK(r.rc == 0);
  CHECK(lines_of(read_file(d / "r4.csv")).size() == 1 + 9);  // 0, 0.25, ..., 1.75, then 2
  r = run_cli(d, "export " + q(d / "rate.yaml") + " -o " + q(d / "r3.csv") + " --rate 3");
  CHECK(r.rc == 0);
  // 2 s at 3 Hz: 0, 1/3, ..., 5/3 (6 samples before the end), then 2: 7 rows.
  const auto r3 = lines_of(read_file(d / "r3.csv"));
  REQUIRE(r3.size() == 1 + 7);
  CHECK(r3[6].rfind("1.6666666666666667,", 0) == 0);  // 5/3 shortest round trip
  CHECK(r3[7].rfind("2,", 0) == 0);
  // Without either: the default 1000 Hz, 2000 samples before the end, then the end.
  r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "r1000.csv"));
  CHECK(r.rc == 0);
  CHECK(lines_of(read_file(d / "r1000.csv")).size() == 1 + 2001);

  // A duration that is not a whole number of samples: t 0 .. 2.05 at 10 Hz gives 0 .. 2.0 (21
  // samples) before the end, then 2.05: 22 rows.
  std::string late = kOk;
  late.replace(late.find("t: 2,"), 5, "t: 2.05,");
  write_file(d / "late.yaml", late);
  r = run_cli(d, "export " + q(d / "late.yaml") + " -o " + q(d / "late.csv") + " --rate 10");
  CHECK(r.rc == 0);
  const auto lr = lines_of(read_file(d / "late.csv"));
  REQUIRE(lr.size() == 1 + 22);
  CHECK(lr[21].rfind("2,", 0) == 0);
  CHECK(lr[22].rfind("2.05,", 0) == 0);
}

TEST_CASE("cli: --rate must be a positive finite number", "[cli]") {
  TempDir d;
  write_file(d / "ok.yaml", kOk);
  for (const std::string bad : {"0", "-5", "nan", "inf", "abc", "1e400"}) {
    INFO("--rate " << bad);
    const Run r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "out.csv") + " --rate " + bad);
    CHECK(r.rc == 2);
    CHECK(lines_of(r.err).size() == 1);
    CHECK(r.err.find("error") != std::string::npos);
    CHECK_FALSE(fs::exists(d / "out.csv"));
  }
  CHECK(d.entries() == std::vector<std::string>{"ok.yaml"});
}

TEST_CASE("cli: a failed export writes nothing and leaves an earlier file untouched", "[cli]") {
  TempDir d;
  write_file(d / "ok.yaml", kOk);
  write_file(d / "bad.yaml", kViolating);
  write_file(d / "broken.yaml", kOk + "bogus: 1\n");
  // Violations: exit 1, no file.
  Run r = run_cli(d, "export " + q(d / "bad.yaml") + " -o " + q(d / "new.csv"));
  CHECK(r.rc == 1);
  CHECK(r.err.find("nothing written") != std::string::npos);
  CHECK(r.err.find("vel") != std::string::npos);  // the violations are listed
  CHECK_FALSE(fs::exists(d / "new.csv"));
  // Bad input: exit 2, no file.
  r = run_cli(d, "export " + q(d / "broken.yaml") + " -o " + q(d / "new.csv"));
  CHECK(r.rc == 2);
  CHECK_FALSE(fs::exists(d / "new.csv"));
  // An earlier file stays byte-identical after either failure.
  const std::string earlier = "an earlier export\n1,2,3\n";
  write_file(d / "old.csv", earlier);
  r = run_cli(d, "export " + q(d / "bad.yaml") + " -o " + q(d / "old.csv"));
  CHECK(r.rc == 1);
  CHECK(read_file(d / "old.csv") == earlier);
  r = run_cli(d, "export " + q(d / "broken.yaml") + " -o " + q(d / "old.csv"));
  CHECK(r.rc == 2);
  CHECK(read_file(d / "old.csv") == earlier);
  r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "old.csv") + " --rate -1");
  CHECK(r.rc == 2);
  CHECK(read_file(d / "old.csv") == earlier);
  // No temporary file is left behind.
  CHECK(d.entries() == std::vector<std::string>{"bad.yaml", "broken.yaml", "ok.yaml", "old.csv"});
  // An output in a directory that does not exist, or a directory: exit 2.
  r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "no" / "such.csv"));
  CHECK(r.rc == 2);
  CHECK(lines_of(r.err).size() == 1);
  fs::create_directory(d / "sub");
  r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "sub"));
  CHECK(r.rc == 2);
  CHECK(fs::is_directory(d / "sub"));
  CHECK(fs::is_empty(d / "sub"));
  // A good export replaces the earlier file.
  r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "old.csv"));
  CHECK(r.rc == 0);
  CHECK(read_file(d / "old.csv").rfind("t,x,", 0) == 0);
}

TEST_CASE("cli: --allow-violations exports a move that exceeds its limits", "[cli]") {
  TempDir d;
  write_file(d / "bad.yaml", kViolating);
  const Run r = run_cli(d, "export " + q(d / "bad.yaml") + " -o " + q(d / "out.csv") + " --rate 10 --allow-violations");
  CHECK(r.rc == 0);
  CHECK(r.out.find("LIMITS EXCEEDED") != std::string::npos);
  CHECK(r.out.find("CAUTION") != std::string::npos);
  CHECK(lines_of(read_file(d / "out.csv")).size() == 1 + 21);
}

TEST_CASE("cli: export refuses to overwrite the scene itself", "[cli]") {
  TempDir d;
  write_file(d / "ok.yaml", kOk);
  fs::create_directory(d / "sub");
  for (const fs::path& out : {d / "ok.yaml", d / "sub" / ".." / "ok.yaml", d / "." / "ok.yaml"}) {
    INFO(out.string());
    const Run r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(out));
    CHECK(r.rc == 2);
    CHECK(lines_of(r.err).size() == 1);
    CHECK(r.err.find("scene file itself") != std::string::npos);
    CHECK(read_file(d / "ok.yaml") == kOk);
  }
  // Also through a hard link.
  fs::create_hard_link(d / "ok.yaml", d / "link.yaml");
  const Run r = run_cli(d, "export " + q(d / "ok.yaml") + " -o " + q(d / "link.yaml"));
  CHECK(r.rc == 2);
  CHECK(read_file(d / "ok.yaml") == kOk);
}

TEST_CASE("cli: outputs are deterministic", "[cli]") {
  TempDir d;
  write_file(d / "bad.yaml", kViolating);
  Run a = run_cli(d, "export " + q(d / "bad.yaml") + " -o " + q(d / "a.csv") + " --allow-violations");
  Run b = run_cli(d, "export " + q(d / "bad.yaml") + " -o " + q(d / "b.csv") + " --allow-violations");
  CHECK(a.rc == 0);
  CHECK(b.rc == 0);
  const std::string ca = read_file(d / "a.csv");
  CHECK(!ca.empty());
  CHECK(ca == read_file(d / "b.csv"));
  a = run_cli(d, "check --json " + q(d / "bad.yaml"));
  b = run_cli(d, "check --json " + q(d / "bad.yaml"));
  CHECK(a.out == b.out);
  a = run_cli(d, "check " + q(d / "bad.yaml"));
  b = run_cli(d, "check " + q(d / "bad.yaml"));
  CHECK(a.out == b.out);
}

TEST_CASE("cli: every demo scene: the exit code agrees with --json ok", "[cli]") {
  TempDir d;
  int n = 0;
  for (const auto& e : fs::directory_iterator(C2PATH_SCENES)) {
    if (e.path().extension() != ".yaml") continue;
    INFO(e.path().string());
    const Run r = run_cli(d, "check --json " + q(e.path()));
    REQUIRE((r.rc == 0 || r.rc == 1));
    const nlohmann::json j = nlohmann::json::parse(r.out);
    CHECK(j["ok"] == (r.rc == 0));
    CHECK((r.rc == 1) == (e.path().filename().string().find("violation") != std::string::npos));
    CHECK(j["violations"].empty() == (r.rc == 0));
    ++n;
  }
  CHECK(n >= 4);
}

TEST_CASE("cli: too many samples for one export points at the rate's place in the scene", "[cli]") {
  TempDir d;
  // 1000 s at the scene's 1 MHz: 1e9 samples, beyond kMaxExportSamples (2e8); the error points at
  // the value of `rate` (line 6, column 9). Without an export rate the default 1000 Hz applies, a
  // 300,000 s move is too long, and the error points at the waypoint list's first entry.
  write_file(d / "rate.yaml", "format: 1\nrig:\n  axes:\n    - {name: x, unit: m}\nexport:\n  rate: 1000000\nwaypoints:\n"
                              "  - {t: 0, x: 0}\n  - {t: 1000, x: 1}\n");
  write_file(d / "long.yaml", "format: 1\nrig:\n  axes:\n    - {name: x, unit: m}\nwaypoints:\n  - {t: 0, x: 0}\n"
                              "  - {t: 300000, x: 1}\n");
  write_file(d / "old.csv", "earlier\n");
  Run r = run_cli(d, "export " + q(d / "rate.yaml") + " -o " + q(d / "old.csv"));
  CHECK(r.rc == 2);
  REQUIRE(lines_of(r.err).size() == 1);
  CHECK(r.err.rfind((d / "rate.yaml").string() + ":6:9: error: ", 0) == 0);
  CHECK(r.err.find("lower the rate") != std::string::npos);
  r = run_cli(d, "export " + q(d / "long.yaml") + " -o " + q(d / "old.csv"));
  CHECK(r.rc == 2);
  REQUIRE(lines_of(r.err).size() == 1);
  CHECK(r.err.rfind((d / "long.yaml").string() + ":6:5: error: ", 0) == 0);
  CHECK(r.err.find("default 1000 Hz") != std::string::npos);
  // A rate given on the command line is the option's fault: no scene place.
  r = run_cli(d, "export " + q(d / "long.yaml") + " -o " + q(d / "old.csv") + " --rate 1e6");
  CHECK(r.rc == 2);
  CHECK(r.err.rfind("c2path: error: export: ", 0) == 0);
  CHECK(read_file(d / "old.csv") == "earlier\n");
  CHECK(d.entries() == std::vector<std::string>{"long.yaml", "old.csv", "rate.yaml"});
}
