// Tests of export.hpp: formats, units, frame times, reconstruction error, atomic and streaming writes.

#include <nlohmann/json.hpp>

#include <charconv>
#include <chrono>
#include <cmath>
#include <array>
#include <csignal>
#include <cstdio>
#include <fcntl.h>
#include <filesystem>
#include <fstream>
#include <limits>
#include <memory>
#include <random>
#include <sstream>
#include <string>
#include <sys/wait.h>
#include <thread>
#include <unistd.h>
#include <vector>

#include "c2path/export.hpp"
#include "c2path/scene_yaml.hpp"
#include "c2path/timing.hpp"
#include "detail/atomic_file.hpp"
#include "test_util.hpp"

using namespace c2path;
namespace fs = std::filesystem;

namespace {

// One cubic per axis on [0, T]: q_a(t) = c[a][0] + c[a][1] t + c[a][2] t^2 + c[a][3] t^3.
std::shared_ptr<CubicTrajectory> cubic(double T, const std::vector<std::array<double, 4>>& c) {
  std::vector<double> coeffs;
  for (const auto& a : c) coeffs.insert(coeffs.end(), a.begin(), a.end());
  return std::make_shared<CubicTrajectory>(std::vector<CubicSpline>{CubicSpline({0.0, T}, Index(c.size()), coeffs)});
}

// SineTrajectory (tests/test_util.hpp): smooth, not piecewise cubic.
using c2path::test::SineTrajectory;

// A trajectory seen only through eval (cubic_pieces() is nullptr), so that reconstruction_error
// compares at points instead of using its exact piecewise-cubic analysis.
class Opaque final : public Trajectory {
 public:
  explicit Opaque(const Trajectory& t) : t_(t) {}
  [[nodiscard]] Index axes() const override { return t_.axes(); }
  [[nodiscard]] double t_begin() const override { return t_.t_begin(); }
  [[nodiscard]] double t_end() const override { return t_.t_end(); }
  void eval(double t, int d, Eigen::Ref<Eigen::VectorXd> out) const override { t_.eval(t, d, out); }
  [[nodiscard]] std::vector<double> breaks() const override { return t_.breaks(); }

 private:
  const Trajectory& t_;
};

std::string write(const Trajectory& tr, const std::vector<std::string>& names, const ExportOptions& o) {
  std::string s;
  write_setpoints(tr, names, o, [&](std::string_view c) { s.append(c); });
  return s;
}

std::vector<std::string> lines_of(const std::string& s) {
  std::vector<std::string> v;
  std::istringstream in(s);
  for (std::string l; std::getline(in, l);) v.push_back(l);
  return v;
}

std::vector<std::string> split(const std::string& s, char sep = ',') {
  std::vector<std::string> v;
  std::string f;
  std::istringstream in(s);
  while (std::getline(in, f, sep)) v.push_back(f);
  return v;
}

double parse(const std::string& s) {
  double v = 0;
  const auto r = std::from_chars(s.data(), s.data() + s.size(), v);
  REQUIRE(r.ec == std::errc());
  REQUIRE(r.ptr == s.data() + s.size());
  return v;
}

std::string slurp(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

int run(const std::string& cmd, std::string* out = nullptr) {
  const std::string full = cmd + " > " + (fs::temp_directory_path() / ("c2path_export_test_" + std::to_string(::getpid()) + ".out")).string() + " 2>&1";
  const int rc = std::system(full.c_str());
  if (out) *out = slurp((fs::temp_directory_path() / ("c2path_export_test_" + std::to_string(::getpid()) + ".out")).string());
  return WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
}

// Removes this process's scratch directory and captured output when the tests end.
struct ScratchCleanup {
  ~ScratchCleanup() {
    std::error_code ec;
    fs::remove_all(fs::temp_directory_path() / ("c2path_export_test_" + std::to_string(::getpid())), ec);
    fs::remove(fs::temp_directory_path() / ("c2path_export_test_" + std::to_string(::getpid()) + ".out"), ec);
  }
} scratch_cleanup;

fs::path scratch(const std::string& name) {
  const fs::path d = fs::temp_directory_path() / ("c2path_export_test_" + std::to_string(::getpid())) / name;
  fs::remove_all(d);
  fs::create_directories(d);
  return d;
}

// The CSV writer of the core slice (commit 345753a), reproduced as the reference the default
// CSV must still match byte for byte.
std::string reference_csv(const Trajectory& tr, const std::vector<std::string>& names, double rate) {
  const std::size_t n = sample_count(tr.t_begin(), tr.t_end(), rate);
  std::string buf = "t";
  for (const auto& nm : names) buf += "," + nm + "," + nm + ".vel," + nm + ".acc";
  buf += "\n";
  auto put = [&](double v) {
    char b[32];
    if (v == 0.0) v = 0.0;
    const auto r = std::to_chars(b, b + sizeof b, v);
    buf.append(b, r.ptr);
  };
  Eigen::MatrixXd st(tr.axes(), 4);
  for (std::size_t k = 0; k < n; ++k) {
    const double t = sample_time(k, n, tr.t_begin(), tr.t_end(), rate);
    tr.eval_all(t, st);
    put(t);
    for (Index a = 0; a < tr.axes(); ++a)
      for (int d = 0; d < 3; ++d) {
        buf += ',';
        put(st(a, d));
      }
    buf += '\n';
  }
  return buf;
}

}  // namespace

TEST_CASE("export: default CSV is byte-identical to the core slice's writer", "[export]") {
  const Scene s = load_scene_file(std::string(C2PATH_SCENES) + "/slider_pan.yaml");
  const Plan p = plan(s);
  const std::vector<std::string> names = {"track", "pan", "tilt"};
  for (double rate : {250.0, 1000.0, 333.3, 7.0, 5000.0}) {  // 5000 Hz: 50001 rows, formatted by several threads
    ExportOptions o;
    o.rate_hz = rate;
    INFO("rate " << rate);
    CHECK(write(*p.trajectory, names, o) == reference_csv(*p.trajectory, names, rate));
  }
}

TEST_CASE("export: linear reconstruction error of a parabola is h^2/8 max|q''|", "[export]") {
  // Standard bound for piecewise linear interpolation: |f - p| <= h^2/8 max|f''| (the Lagrange
  // remainder with n = 1, e.g. Burden & Faires, Numerical Analysis, Thm 3.3; recalled). A
  // parabola attains it at the midpoint of every interval.
  const double c = 0.7;  // q = c t^2, q'' = 2c
  const auto tr = cubic(10.0, {{0.0, 0.0, c, 0.0}});
  for (double rate : {10.0, 100.0, 1000.0}) {
    ExportOptions o;
    o.rate_hz = rate;
    const Reconstruction r = reconstruction_error(*tr, o);
    const double h = 1.0 / rate;
    const double bound = h * h / 8.0 * 2.0 * c;
    C2PATH_CHECK_NEAR("linear error vs h^2/8 q''", rate, r.linear[0], bound, 1e-6, 0.0);
    // Within the bound up to the round-off of evaluating q (|q| <= 70 here): 16 eps |q|.
    CHECK(r.linear[0] <= bound * (1 + 1e-9) + 16 * std::numeric_limits<double>::epsilon() * 70.0);
    // The same through the sampled path (quarter points and midpoint): the midpoint is the maximum.
    const Reconstruction rs = reconstruction_error(Opaque(*tr), o);
    C2PATH_CHECK_NEAR("sampled linear error vs h^2/8 q''", rate, rs.linear[0], bound, 1e-6, 0.0);
    // A parabola is a cubic: Hermite reconstruction is exact (see below), up to round-off.
    CHECK(rs.hermite[0] <= 1e-12 * 70.0);
  }
}

TEST_CASE("export: linear error of a spline move stays within h^2/8 max|q''|", "[export]") {
  // Same bound (Burden & Faires Thm 3.3, recalled), with max|q''| from the exact limit check's peaks.
  const Scene s = load_scene_file(std::string(C2PATH_SCENES) + "/slider_pan.yaml");
  const Plan p = plan(s);
  const Report rep = check_limits(*p.trajectory, p.limits);
  for (double rate : {25.0, 250.0}) {
    ExportOptions o;
    o.rate_hz = rate;
    const Reconstruction r = reconstruction_error(*p.trajectory, o);
    const double h = 1.0 / rate;
    for (std::size_t a = 0; a < 3; ++a) {
      const double bound = h * h / 8.0 * rep.peaks[a].acc;
      INFO("axis " << a << " rate " << rate << ": " << r.linear[a] << " <= " << bound);
      CHECK(r.linear[a] <= bound * (1 + 1e-9));
      CHECK(r.linear[a] >= 0.2 * bound);  // and of the same size: the bound is sharp for slowly varying q''
    }
  }
}

TEST_CASE("export: reconstruction error of a piecewise-cubic move is exact", "[export]") {
  // Against brute force: the deviation evaluated at 400 points of every interval, from the
  // trajectory itself and the two interpolation formulas written out here (linear; cubic Hermite
  // with the basis h00 = 2s^3 - 3s^2 + 1, h10 = s^3 - 2s^2 + s, h01 = -2s^3 + 3s^2, h11 = s^3 - s^2,
  // e.g. Burden & Faires, Numerical Analysis, sec. 3.4; recalled). The dense maximum can only be
  // below the exact one and, at 400 points, within a few 1e-5 of it.
  const Scene s = load_scene_file(std::string(C2PATH_SCENES) + "/slider_pan.yaml");
  const Plan p = plan(s);
  const Trajectory& tr = *p.trajectory;
  REQUIRE(tr.cubic_pieces());
  for (double rate : {3.0, 7.0}) {  // 2.5 s keyframes: 3 and 7 Hz put the breaks inside intervals
    ExportOptions o;
    o.rate_hz = rate;
    const Reconstruction r = reconstruction_error(tr, o);
    const SampleGrid g = sample_grid(tr.t_begin(), tr.t_end(), o);
    std::vector<double> lin(3, 0.0), her(3, 0.0);
    Eigen::MatrixXd a(3, 4), b(3, 4);
    Eigen::VectorXd q(3);
    for (std::size_t k = 0; k + 1 < g.count; ++k) {
      const double t0 = g.time(k), t1 = g.time(k + 1), h = t1 - t0;
      tr.eval_all(t0, a);
      tr.eval_all(t1, b);
      for (int i = 1; i < 400; ++i) {
        const double x = double(i) / 400.0;
        tr.eval(t0 + x * h, 0, q);
        const double h00 = 2 * x * x * x - 3 * x * x + 1, h10 = x * x * x - 2 * x * x + x, h01 = -2 * x * x * x + 3 * x * x,
                     h11 = x * x * x - x * x;
        for (Index ax = 0; ax < 3; ++ax) {
          lin[std::size_t(ax)] = std::max(lin[std::size_t(ax)], std::abs(q[ax] - (a(ax, 0) + x * (b(ax, 0) - a(ax, 0)))));
          her[std::size_t(ax)] = std::max(her[std::size_t(ax)], std::abs(q[ax] - (h00 * a(ax, 0) + h10 * h * a(ax, 1) +
                                                                                   h01 * b(ax, 0) + h11 * h * b(ax, 1))));
        }
      }
    }
    for (std::size_t ax = 0; ax < 3; ++ax) {
      INFO("rate " << rate << " axis " << ax << ": linear " << r.linear[ax] << " vs dense " << lin[ax] << ", hermite "
                   << r.hermite[ax] << " vs dense " << her[ax]);
      CHECK(lin[ax] <= r.linear[ax] * (1 + 1e-9) + 1e-13);
      CHECK(lin[ax] >= r.linear[ax] * (1 - 1e-4));
      CHECK(her[ax] <= r.hermite[ax] * (1 + 1e-9) + 1e-13);
      CHECK(her[ax] >= r.hermite[ax] * (1 - 1e-4));
      CHECK(r.hermite[ax] > 1e-9);  // the breaks inside intervals make Hermite inexact here
    }
  }
}

TEST_CASE("export: cubic Hermite reconstruction of a cubic is exact", "[export]") {
  // Cubic Hermite interpolation reproduces every cubic (its remainder has f'''' in it; e.g.
  // Burden & Faires, Numerical Analysis, Thm 3.9; recalled).
  const auto tr = cubic(4.0, {{1.0, -2.0, 0.5, 0.3}, {-3.0, 0.25, -1.5, 0.125}});
  ExportOptions o;
  o.rate_hz = 3.0;
  o.format = ExportFormat::kPvt;
  // Through the sampled path, so the Hermite formula itself is what is checked (the exact path
  // knows a single cubic piece has no Hermite error and reports 0).
  const Reconstruction r = reconstruction_error(Opaque(*tr), o);
  CHECK(reconstruction_error(*tr, o).hermite[0] == 0.0);
  for (std::size_t a = 0; a < 2; ++a) {
    INFO("axis " << a << " hermite " << r.hermite[a] << " linear " << r.linear[a]);
    CHECK(r.hermite[a] <= 1e-13 * 30.0);
    CHECK(r.linear[a] > 1e-3);  // linear is not exact for it
  }
}

TEST_CASE("export: cubic Hermite error of a smooth move is fourth order", "[export]") {
  // Remainder of cubic Hermite interpolation: f''''(xi)/4! (x - x0)^2 (x - x1)^2, at most
  // h^4/384 max|f''''| (Burden & Faires Thm 3.9, recalled): halving h divides the error by 16.
  const double A = 2.0, w = 3.0;
  const SineTrajectory tr(A, w, 5.0);
  std::vector<double> err;
  for (double rate : {20.0, 40.0, 80.0, 160.0}) {
    ExportOptions o;
    o.rate_hz = rate;
    const Reconstruction r = reconstruction_error(tr, o);
    const double h = 1.0 / rate;
    CHECK(r.hermite[0] <= h * h * h * h / 384.0 * A * w * w * w * w * (1 + 1e-9));
    CHECK(r.linear[0] <= h * h / 8.0 * A * w * w * (1 + 1e-9));
    err.push_back(r.hermite[0]);
  }
  for (std::size_t i = 1; i < err.size(); ++i) {
    const double order = std::log2(err[i - 1] / err[i]);
    INFO("order between rates " << i - 1 << " and " << i << ": " << order);
    CHECK(order > 3.8);
    CHECK(order < 4.2);
  }
}

TEST_CASE("export: frame 1001 at 24000/1001 fps lies at exactly 1001*1001/24000 s", "[export]") {
  // 23.976 fps is 24000/1001 exactly (NTSC-derived rates; SMPTE practice, recalled). Frame k
  // lies at k * 1001 / 24000 s; the file holds the double nearest that rational.
  const auto r = parse_frame_rate("23.976");
  REQUIRE(r);
  CHECK(*r == Rational{24000, 1001});
  CHECK(*parse_frame_rate("29.97") == Rational{30000, 1001});
  CHECK(*parse_frame_rate("59.94") == Rational{60000, 1001});
  CHECK(*parse_frame_rate("25") == Rational{25, 1});
  CHECK_FALSE(parse_frame_rate("23.97"));
  const double T = 50.0;
  const auto tr = cubic(T, {{0.0, 0.1, 0.0, 0.0}});
  ExportOptions o;
  o.frames = true;
  o.exact_rate = *r;
  const auto ls = lines_of(write(*tr, {"x"}, o));
  REQUIRE(ls[0] == "frame,t,x,x.vel,x.acc");
  const auto f = split(ls[1 + 1001]);
  CHECK(f[0] == "1001");
  CHECK(parse(f[1]) == 1002001.0 / 24000.0);
  // The last frame is the last whole frame at or before the end: floor(50 * 24000/1001) = 1198.
  const auto last = split(ls.back());
  CHECK(last[0] == "1198");
  CHECK(parse(last[1]) == 1198.0 * 1001.0 / 24000.0);
  CHECK(parse(last[1]) <= T);
  CHECK(1199.0 * 1001.0 / 24000.0 > T);
  CHECK(ls.size() == 1 + 1199);
  // Position in the row is the trajectory at that exact time.
  CHECK(parse(f[2]) == 0.1 * (1002001.0 / 24000.0));
}

TEST_CASE("export: a frame export whose end falls on a frame includes the end", "[export]") {
  const auto tr = cubic(2.0, {{0.0, 1.0, 0.0, 0.0}});
  ExportOptions o;
  o.frames = true;
  o.exact_rate = Rational{25, 1};
  const auto ls = lines_of(write(*tr, {"x"}, o));
  CHECK(ls.size() == 1 + 51);
  CHECK(split(ls.back())[1] == "2");
}

TEST_CASE("export: JSON Lines, PVT, column choice and time index", "[export]") {
  const auto tr = cubic(1.0, {{0.5, 1.0, -0.25, 0.125}, {-1.0, 0.0, 2.0, -1.0}});
  const std::vector<std::string> names = {"a", "b"};
  Eigen::MatrixXd st(2, 4);
  SECTION("JSON Lines: one object per sample, keys as the CSV columns") {
    ExportOptions o;
    o.rate_hz = 4;
    o.format = ExportFormat::kJsonl;
    o.columns = parse_columns("jerk,pos");
    const auto ls = lines_of(write(*tr, names, o));
    REQUIRE(ls.size() == 5);
    CHECK(ls[0] == R"({"t":0,"a":0.5,"a.jerk":0.75,"b":-1,"b.jerk":-6})");
    for (std::size_t k = 0; k < ls.size(); ++k) {
      const auto j = nlohmann::json::parse(ls[k]);  // an independent JSON parser reads it
      const double t = j["t"].get<double>();
      CHECK(t == double(k) / 4.0);
      tr->eval_all(t, st);
      CHECK(j["a"].get<double>() == st(0, 0));
      CHECK(j["b.jerk"].get<double>() == st(1, 3));
      CHECK(j.size() == 5);
    }
  }
  SECTION("PVT: t, dt, position and velocity") {
    ExportOptions o;
    o.rate_hz = 3;  // 1/3 s spacing, last segment shorter? 1.0 * 3 = 3 exactly: points 0, 1/3, 2/3, 1
    o.format = ExportFormat::kPvt;
    const auto ls = lines_of(write(*tr, names, o));
    REQUIRE(ls[0] == "t,dt,a,a.vel,b,b.vel");
    REQUIRE(ls.size() == 5);
    double prev = 0;
    for (std::size_t k = 1; k < ls.size(); ++k) {
      const auto f = split(ls[k]);
      REQUIRE(f.size() == 6);
      const double t = parse(f[0]);
      CHECK(parse(f[1]) == (k == 1 ? 0.0 : t - prev));
      tr->eval_all(t, st);
      CHECK(parse(f[2]) == st(0, 0));
      CHECK(parse(f[3]) == st(0, 1));
      CHECK(parse(f[5]) == st(1, 1));
      prev = t;
    }
    CHECK(parse(split(ls.back())[0]) == 1.0);
  }
  SECTION("time as sample index: grid points only") {
    ExportOptions o;
    o.rate_hz = 8;
    o.time = TimeColumn::kIndex;
    o.columns = parse_columns("pos");
    const auto ls = lines_of(write(*tr, names, o));
    REQUIRE(ls[0] == "sample,a,b");
    CHECK(ls.size() == 1 + 9);
    CHECK(split(ls[4])[0] == "3");
    tr->eval_all(3.0 / 8.0, st);
    CHECK(parse(split(ls[4])[1]) == st(0, 0));
  }
  SECTION("bad columns are refused") {
    CHECK_THROWS_AS(parse_columns("pos,speed"), Error);
    CHECK_THROWS_AS(parse_columns(""), Error);
  }
}

TEST_CASE("export: controller counts round positions and report the bound", "[export]") {
  const auto tr = cubic(1.0, {{0.1, 0.3, 0.0, 0.0}});
  ExportOptions o;
  o.rate_hz = 10;
  o.units = ExportUnits::kCounts;
  o.counts = {{4096.0, 100.0}};
  const auto ls = lines_of(write(*tr, {"x"}, o));
  Eigen::MatrixXd st(1, 4);
  for (std::size_t k = 1; k < ls.size(); ++k) {
    const auto f = split(ls[k]);
    tr->eval_all(parse(f[0]), st);
    const double c = parse(f[1]);
    CHECK(c == std::round(4096.0 * st(0, 0) + 100.0));
    CHECK(std::abs((c - 100.0) / 4096.0 - st(0, 0)) <= 0.5 / 4096.0);
    CHECK(parse(f[2]) == 4096.0 * st(0, 1));
  }
  CHECK(rounding_error(o)[0] == 0.5 / 4096.0);
}

TEST_CASE("export: counts_per_unit and offset in the scene", "[export][scene]") {
  const std::string yaml =
      "format: 1\nrig:\n  axes:\n    - {name: x, unit: mm, vel: 100, counts_per_unit: 80, offset: -12.5}\n"
      "waypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 10}\n";
  const Scene s = load_scene_text(yaml, "mem.yaml");
  REQUIRE(s.axes[0].counts_per_unit);
  CHECK(*s.axes[0].counts_per_unit == 80.0);
  CHECK(*s.axes[0].offset == -12.5);
  const Scene again = load_scene_text(scene_to_yaml(s), "again.yaml");
  CHECK(*again.axes[0].counts_per_unit == 80.0);
  CHECK(*again.axes[0].offset == -12.5);
  try {
    (void)load_scene_text("format: 1\nrig:\n  axes:\n    - {name: x, counts_per_unit: 0}\nwaypoints:\n  - {t: 0, x: 0}\n  - {t: 1, x: 1}\n",
                          "zero.yaml");
    FAIL("counts_per_unit 0 was accepted");
  } catch (const Error& e) {
    CHECK(std::string(e.what()).rfind("zero.yaml:4:", 0) == 0);
  }
}

TEST_CASE("export: --max-error picks the lowest rate", "[export]") {
  SECTION("linear: the parabola's error c/(4 N^2) gives N = ceil(sqrt(c / (4 E)))") {
    const double c = 0.7;
    const auto tr = cubic(3.0, {{0.0, 0.0, c, 0.0}});
    for (double E : {1e-3, 1e-5, 3e-7}) {
      ExportOptions o;
      const RateChoice ch = choose_rate(*tr, o, E);
      REQUIRE(ch.found);
      const double want = std::ceil(std::sqrt(c / (4.0 * E)));
      INFO("E " << E << " chosen " << ch.rate_hz << " analytic " << want);
      CHECK(std::abs(ch.rate_hz - want) <= 1.0);  // the midpoint error is exact up to round-off near a boundary
      CHECK(ch.error.linear[0] <= E);
    }
  }
  SECTION("PVT: the widest spacing whose Hermite error is within the bound") {
    const SineTrajectory tr(2.0, 3.0, 5.0);
    ExportOptions o;
    o.format = ExportFormat::kPvt;
    const double E = 1e-6;
    const RateChoice ch = choose_rate(tr, o, E);
    REQUIRE(ch.found);
    CHECK(ch.error.hermite[0] <= E);
    o.exact_rate = Rational{std::int64_t(ch.rate_hz) - 1, 1};
    CHECK(reconstruction_error(tr, o).hermite[0] > E);
  }
  SECTION("frames: the lowest camera frame rate") {
    const auto tr = cubic(3.0, {{0.0, 0.0, 0.7, 0.0}});
    ExportOptions o;
    o.frames = true;
    const RateChoice ch = choose_rate(*tr, o, 0.7 / (4.0 * 49.0 * 49.0));  // 48 fps too coarse, 50 enough
    REQUIRE(ch.found);
    CHECK(*ch.exact == Rational{50, 1});
  }
}

TEST_CASE("export: CLI formats, determinism, bad input", "[export][cli]") {
  const fs::path d = scratch("cli");
  const std::string cli = C2PATH_CLI;
  const std::string scene = std::string(C2PATH_SCENES) + "/slider_pan.yaml";
  std::string out;
  SECTION("same scene and options give byte-identical files") {
    for (const char* extra : {"", " --format jsonl --columns pos,jerk", " --format pvt --spacing 0.05", " --fps 29.97 --time index"}) {
      const std::string a = (d / "a.out").string(), b = (d / "b.out").string();
      REQUIRE(run(cli + " export " + scene + " -o " + a + extra) == 0);
      REQUIRE(run(cli + " export " + scene + " -o " + b + extra, &out) == 0);
      INFO(extra << "\n" << out);
      CHECK(out.find("CAUTION") != std::string::npos);
      CHECK(out.find("reconstruction error") != std::string::npos);
      CHECK(slurp(a) == slurp(b));
      CHECK(slurp(a).size() > 1000);
    }
  }
  SECTION("--json summary") {
    REQUIRE(run(cli + " export " + scene + " -o " + (d / "s.csv").string() + " --fps 23.976 --json", &out) == 0);
    const auto j = nlohmann::json::parse(out);
    CHECK(j["fps"] == "24000/1001");
    CHECK(j["rows"].get<int>() == 240);  // floor(10 * 24000/1001) = 239, frames 0..239
    CHECK(j["end_included"] == false);
    CHECK(j["axes"].size() == 3);
    CHECK(j["axes"][0]["linear"].get<double>() > 0);
    CHECK(j["caution"].get<std::string>().find("CAUTION") == 0);
  }
  SECTION("--max-error chooses the rate, the file meets it") {
    REQUIRE(run(cli + " export " + scene + " -o " + (d / "m.csv").string() + " --max-error 1e-4 --json", &out) == 0);
    const auto j = nlohmann::json::parse(out);
    for (const auto& ax : j["axes"]) CHECK(ax["linear"].get<double>() <= 1e-4);
    const double rate = j["rate_hz"].get<double>();
    CHECK(rate == std::floor(rate));
    CHECK(rate > 1);
  }
  SECTION("bad input: one line FILE:LINE:COL: error, exit 2, nothing written") {
    const std::string target = (d / "never.csv").string();
    CHECK(run(cli + " export " + scene + " -o " + target + " --fps 23.97", &out) == 2);
    CHECK(out.find("error: --fps 23.97 is not a camera frame rate") != std::string::npos);
    CHECK(std::count(out.begin(), out.end(), '\n') == 1);
    CHECK(run(cli + " export " + scene + " -o " + target + " --units counts", &out) == 2);
    INFO(out);
    CHECK(out.rfind(scene + ":7:7: error: axis 'track' has no counts_per_unit", 0) == 0);
    CHECK(std::count(out.begin(), out.end(), '\n') == 1);
    CHECK(run(cli + " export " + scene + " -o " + target + " --format pvt --columns pos", &out) == 2);
    CHECK(run(cli + " export " + scene + " -o " + target + " --rate 100 --fps 25", &out) == 2);
    CHECK_FALSE(fs::exists(target));
    for (const auto& e : fs::directory_iterator(d)) CHECK(e.path().filename().string().find("never") == std::string::npos);
  }
  fs::remove_all(d);
}

TEST_CASE("export: SIGKILL in the middle of a long export leaves the earlier file intact", "[export][cli]") {
  // A long move: 2 axes, 400 s, exported at 20 kHz (8 M rows) is killed once its temporary file
  // has grown past 2 MB. The target must keep the earlier content byte for byte; the only other
  // file may be the hidden temporary `.NAME.tmp-XXXXXX` (it cannot be mistaken for output).
  const fs::path d = scratch("kill");
  const fs::path scene = d / "long.yaml";
  {
    std::ofstream s(scene);
    s << "format: 1\nrig:\n  axes:\n    - {name: x, unit: m, vel: 1, acc: 1, jerk: 10}\n    - {name: y, unit: m}\n"
         "path:\n  ends: clamped\nwaypoints:\n";
    for (int k = 0; k <= 40; ++k) s << "  - {t: " << 10 * k << ", x: " << (k % 2) * 0.5 << ", y: " << 0.01 * k << "}\n";
  }
  const fs::path target = d / "out.csv";
  const std::string earlier = "earlier file, must survive\n1,2,3\n";
  { std::ofstream(target) << earlier; }
  const pid_t pid = ::fork();
  REQUIRE(pid >= 0);
  if (pid == 0) {
    const int devnull = ::open("/dev/null", O_WRONLY);
    ::dup2(devnull, 1);
    ::dup2(devnull, 2);
    ::execl(C2PATH_CLI, C2PATH_CLI, "export", scene.c_str(), "-o", target.c_str(), "--rate", "20000", (char*)nullptr);
    ::_exit(127);
  }
  bool killed_midway = false;
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(60);
  while (std::chrono::steady_clock::now() < deadline) {
    for (const auto& e : fs::directory_iterator(d)) {
      const std::string n = e.path().filename().string();
      std::error_code ec;
      if (n.rfind(".out.csv.tmp-", 0) == 0 && fs::file_size(e.path(), ec) > (2u << 20)) killed_midway = true;
    }
    if (killed_midway) break;
    int st = 0;
    if (::waitpid(pid, &st, WNOHANG) == pid) FAIL("the export finished before it could be killed");
    std::this_thread::sleep_for(std::chrono::milliseconds(2));
  }
  REQUIRE(killed_midway);
  ::kill(pid, SIGKILL);
  int st = 0;
  REQUIRE(::waitpid(pid, &st, 0) == pid);
  CHECK(WIFSIGNALED(st));
  CHECK(slurp(target.string()) == earlier);
  std::size_t others = 0;
  for (const auto& e : fs::directory_iterator(d)) {
    const std::string n = e.path().filename().string();
    if (n == "out.csv" || n == "long.yaml") continue;
    ++others;
    INFO("left beside the target: " << n);
    CHECK(n.rfind(".out.csv.tmp-", 0) == 0);  // hidden, named after the target, marked tmp
    CHECK(n.size() == std::string(".out.csv.tmp-XXXXXX").size());
  }
  CHECK(others <= 1);
  // A complete export afterwards replaces the target atomically.
  REQUIRE(run(std::string(C2PATH_CLI) + " export " + scene.string() + " -o " + target.string() + " --rate 10") == 0);
  CHECK(slurp(target.string()).rfind("t,x,x.vel,x.acc,y,y.vel,y.acc\n", 0) == 0);
  fs::remove_all(d);
}

TEST_CASE("export: the atomic file writes every byte, O_DIRECT or buffered, at any length", "[export]") {
  // Lengths around the 4 KiB blocks of O_DIRECT and the 4 MiB write blocks, written in chunks of
  // random sizes; the file must hold exactly those bytes (the padded tail of a direct write is cut
  // back by ftruncate). On disk (the test's scratch directory) and on tmpfs (/dev/shm) when there.
  std::vector<fs::path> dirs = {scratch("atomic")};
  std::error_code ec;
  if (fs::is_directory("/dev/shm", ec)) {
    const fs::path shm = fs::path("/dev/shm") / ("c2path_export_test_" + std::to_string(::getpid()));
    fs::create_directories(shm, ec);
    if (!ec) dirs.push_back(shm);
  }
  constexpr std::size_t B = detail::AtomicFile::kBlockBytes;
  std::mt19937_64 rng(3);
  for (const auto& d : dirs) {
    for (std::size_t len : {std::size_t(0), std::size_t(1), std::size_t(511), std::size_t(4095), std::size_t(4096),
                            std::size_t(4097), B - 1, B, B + 1, 2 * B + 12345}) {
      std::string bytes(len, '\0');
      for (auto& ch : bytes) ch = char('a' + rng() % 26);
      const fs::path target = d / "out.bin";
      bool direct = false;
      {
        detail::AtomicFile f(target.string());
        std::size_t at = 0;
        while (at < len) {
          const std::size_t n = std::min<std::size_t>(len - at, 1 + rng() % 700000);
          f.write(std::string_view(bytes).substr(at, n));
          at += n;
        }
        direct = f.direct();
        f.commit();
      }
      INFO(target << ", " << len << " bytes, O_DIRECT " << direct);
      REQUIRE(fs::file_size(target) == len);
      REQUIRE(slurp(target.string()) == bytes);
      std::size_t files = 0;
      for (const auto& e : fs::directory_iterator(d)) {
        (void)e;
        ++files;
      }
      CHECK(files == 1);  // no temporary left beside it
    }
  }
  if (dirs.size() > 1) fs::remove_all(dirs[1], ec);
}

TEST_CASE("export: an error in a worker thread or in the sink of a long export reaches the caller", "[export]") {
  // q(t) = t on [0, 100] s at 1 kHz: 100,001 rows, 25 blocks, formatted on worker threads where the
  // machine has more than one core. At 1e14 counts per unit the counts pass 2^53 at t = 90.07 s
  // (block 22): the writer must stop with that error, not hang or write past it.
  const auto tr = cubic(100.0, {{0.0, 1.0, 0.0, 0.0}});
  ExportOptions o;
  o.rate_hz = 1000;
  o.units = ExportUnits::kCounts;
  o.counts = {{1e14, 0.0}};
  std::size_t bytes = 0;
  try {
    write_setpoints(*tr, {"x"}, o, [&](std::string_view s) { bytes += s.size(); });
    FAIL("no error for counts beyond 2^53");
  } catch (const Error& e) {
    CHECK(std::string(e.what()).find("beyond the integers a double holds exactly") != std::string::npos);
  }
  CHECK(bytes > 0);
  // The rows before the first bad one were all written in order: at most those 90,071 rows (t up
  // to 90.07 s); a row is at least "t,counts,vel,acc\n" = 8 bytes.
  CHECK(bytes < 90072u * 64u);
  // A sink that fails (a full disk) on its 10th block: the error comes out, the workers stop.
  o.units = ExportUnits::kNative;
  o.counts.clear();
  int calls = 0;
  try {
    write_setpoints(*tr, {"x"}, o, [&](std::string_view) {
      if (++calls == 10) throw std::runtime_error("disk full (simulated)");
    });
    FAIL("the sink's error was lost");
  } catch (const std::runtime_error& e) {
    CHECK(std::string(e.what()) == "disk full (simulated)");
  }
  CHECK(calls == 10);
}
