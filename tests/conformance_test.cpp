// Conformance of the real `c2path` command with an independent reference: for every scene of
// tests/data/conformance (invented test data, made by tests/make_conformance_reference.py with
// fixed seeds), `c2path check --json` and `c2path export --allow-violations --rate R` are compared
// with what SciPy 1.10 (scipy.interpolate.CubicSpline, Debian python3-scipy) and the script's own
// root finding on SciPy's piecewise polynomial give: peaks, violation intervals, stretch factor,
// exit codes, and the exported positions, velocities and accelerations. The reference never uses
// c2path's code or output; see the script's docstring for the method and the file format.
//
// Tolerances, and why they are not tighter or looser:
//  * Both sides work in double precision on the same doubles (the scene's numbers are short
//    decimals, parsed identically). The spline coefficients differ only by the rounding of two
//    different O(n) banded solves (SciPy's LAPACK banded solve vs c2path's tridiagonal/cyclic
//    solve): relative differences of about cond * 1e-16, a few 1e-14 for these uneven times.
//  * Root finding is done to about 1e-15 on both sides (the script bisects to the last bit).
//    A crossing time moves by (coefficient error) / |slope of quantity - limit| at the crossing;
//    the generator keeps every local extreme at least 1e-6 (relative) away from every bound, so
//    crossings are transversal and that sensitivity stays below ~1e-10 s.
//  * Hence: values to 1e-9 relative to the axis's magnitude (the JSON `scale` of each quantity:
//    the peak, or the position size divided by the mean piece length to the power d when larger,
//    so a parabola's zero jerk is compared against the axis's size, not its own noise); times to
//    1e-9 s; the stretch factor to 1e-9 relative. Limits, knots and the sample times are inputs
//    passed through and must come back exactly (sample times: t0 + k / R, the same operation).
//  * c2path reports a quantity as beyond its limit only when it exceeds it by more than 1e-9 of
//    the limit (of the axis span for positions; limits.hpp CheckOptions::rel_tol). With the
//    generator's 1e-6 margin no peak sits in that band, so which intervals exist is unambiguous,
//    and the violations must match one for one.

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iomanip>
#include <map>
#include <sstream>
#include <string>
#include <vector>

namespace {

namespace fs = std::filesystem;
using json = nlohmann::json;

constexpr double kRel = 1e-9;    // values, relative to the quantity's scale
constexpr double kTimeS = 1e-9;  // interval ends and peak times [s]

std::string read_text(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

std::string sh_quote(const fs::path& p) {
  std::string s(1, '\'');  // appended piece by piece: GCC 12 warns (-Wrestrict) on "'" + s + "'"
  s.append(p.string());
  s.push_back('\'');
  return s;
}

struct Run {
  int rc = -1;
  std::string out, err;
};

struct Work {
  fs::path dir;
  Work() {
    dir = fs::temp_directory_path() / ("c2path_conformance_" + std::to_string(::getpid()));
    fs::remove_all(dir);
    fs::create_directories(dir);
  }
  ~Work() {
    std::error_code ec;
    fs::remove_all(dir, ec);
  }
  Run cli(const std::string& args) const {
    const fs::path out = dir / "stdout", err = dir / "stderr";
    const std::string cmd = sh_quote(C2PATH_CLI) + " " + args + " > " + sh_quote(out) + " 2> " + sh_quote(err) + " < /dev/null";
    const int status = std::system(cmd.c_str());
    Run r;
    REQUIRE(status != -1);
    REQUIRE(WIFEXITED(status));
    r.rc = WEXITSTATUS(status);
    r.out = read_text(out);
    r.err = read_text(err);
    return r;
  }
};

fs::path corpus() { return fs::path(C2PATH_TEST_DATA) / "conformance"; }

// The reference files, sorted by name.
std::vector<fs::path> references() {
  std::vector<fs::path> v;
  for (const auto& e : fs::directory_iterator(corpus()))
    if (e.path().extension() == ".json") v.push_back(e.path());
  std::sort(v.begin(), v.end());
  return v;
}

json load(const fs::path& p) { return json::parse(read_text(p)); }

std::string show(double x) {
  std::ostringstream s;
  s << std::setprecision(17) << x;
  return s.str();
}

// |got - want| <= tol, with both values in the message when not.
#define CONF_CHECK_CLOSE(what, got, want, tol)                                                                  \
  do {                                                                                                          \
    const double g_ = (got), w_ = (want), t_ = (tol);                                                           \
    INFO(what << ": c2path " << show(g_) << ", SciPy reference " << show(w_) << " (diff " << show(std::abs(g_ - w_)) \
              << ", tolerance " << show(t_) << ")");                                                          \
    CHECK(std::abs(g_ - w_) <= t_);                                                                             \
  } while (0)

// A limit of the reference: null or a number, and c2path's JSON must say the same exactly.
void check_limit_field(const std::string& what, const json& got, const json& want) {
  INFO(what << ": c2path " << got.dump() << ", scene " << want.dump());
  if (want.is_null()) {
    CHECK(got.is_null());
  } else {
    REQUIRE(got.is_number());
    CHECK(got.get<double>() == want.get<double>());
  }
}

int quantity_rank(const std::string& q) { return q == "pos" ? 0 : q == "vel" ? 1 : q == "acc" ? 2 : 3; }

std::vector<std::string> split(const std::string& s, char sep) {
  std::vector<std::string> v;
  std::string cur;
  for (char c : s) {
    if (c == sep) {
      v.push_back(cur);
      cur.clear();
    } else {
      cur += c;
    }
  }
  v.push_back(cur);
  return v;
}

double parse_number(const std::string& s) {
  double x = 0;
  const auto [p, ec] = std::from_chars(s.data(), s.data() + s.size(), x);
  if (ec != std::errc() || p != s.data() + s.size()) FAIL("CSV field '" << s << "' is not a number");
  return x;
}

}  // namespace

TEST_CASE("conformance: the corpus is there and covers every end condition", "[conformance]") {
  const auto refs = references();
  REQUIRE(refs.size() >= 30);
  std::map<std::string, int> ends;
  int violating = 0, within = 0;
  for (const auto& p : refs) {
    const json r = load(p);
    INFO(p.filename().string());
    REQUIRE(fs::exists(corpus() / r.at("scene").get<std::string>()));
    ++ends[r.at("ends").get<std::string>()];
    if (r.contains("expect_error")) continue;
    (r.at("ok").get<bool>() ? within : violating)++;
  }
  for (const char* e : {"not-a-knot", "natural", "clamped", "periodic"}) {
    INFO(e);
    CHECK(ends[e] >= 5);
  }
  CHECK(violating >= 10);
  CHECK(within >= 10);
}

TEST_CASE("conformance: check --json agrees with SciPy 1.10 (peaks, violations, stretch, exit code)", "[conformance]") {
  Work w;
  for (const auto& ref_path : references()) {
    const json ref = load(ref_path);
    const fs::path scene = corpus() / ref.at("scene").get<std::string>();
    INFO("scene " << scene.filename().string());
    if (ref.contains("expect_error")) continue;  // see the bad-input test case below
    const Run r = w.cli("check --json " + sh_quote(scene));
    INFO("stderr: " << r.err);
    // design §5: exit 0 within limits, 1 violations.
    CHECK(r.rc == ref.at("exit_code").get<int>());
    json got;
    REQUIRE_NOTHROW(got = json::parse(r.out));
    CHECK(got.at("ok").get<bool>() == ref.at("ok").get<bool>());
    // Keyframes: the knots are the waypoint times, passed through.
    REQUIRE(got.at("knots").size() == ref.at("knots").size());
    for (std::size_t k = 0; k < ref.at("knots").size(); ++k) {
      INFO("knot " << k);
      CHECK(got.at("knots")[k].get<double>() == ref.at("knots")[k].get<double>());
    }
    CONF_CHECK_CLOSE("duration", got.at("duration").get<double>(), ref.at("duration").get<double>(),
                     1e-12 * std::abs(ref.at("duration").get<double>()));
    CONF_CHECK_CLOSE("stretch", got.at("stretch").get<double>(), ref.at("stretch").get<double>(), kRel * ref.at("stretch").get<double>());

    // Axes: names, units, limits passed through; peaks to 1e-9 of the axis's scale (SciPy 1.10).
    const json& ga = got.at("axes");
    const json& ra = ref.at("axes");
    REQUIRE(ga.size() == ra.size());
    std::map<std::string, json> scale_of;
    for (std::size_t a = 0; a < ra.size(); ++a) {
      const std::string name = ra[a].at("name").get<std::string>();
      INFO("axis " << name);
      CHECK(ga[a].at("name").get<std::string>() == name);
      CHECK(ga[a].at("unit").get<std::string>() == ra[a].at("unit").get<std::string>());
      const json& sc = ra[a].at("scale");
      scale_of[name] = sc;
      for (const char* f : {"min", "max", "vel", "acc", "jerk"})
        check_limit_field(std::string("limit.") + f, ga[a].at("limit").at(f), ra[a].at("limit").at(f));
      for (const char* f : {"pos_min", "pos_max", "vel", "acc", "jerk"}) {
        const char* sq = f[0] == 'p' ? "pos" : f;
        CONF_CHECK_CLOSE(std::string("peak.") + f, ga[a].at("peak").at(f).get<double>(), ra[a].at("peak").at(f).get<double>(),
                         kRel * sc.at(sq).get<double>());
      }
    }

    // Violations: the same set, matched by (axis, quantity) and time order; reference intervals
    // from the roots of (quantity - bound) on SciPy 1.10's PPoly, merged at breakpoints.
    const json& gv = got.at("violations");
    const json& rv = ref.at("violations");
    std::map<std::pair<std::string, std::string>, std::vector<json>> gmap, rmap;
    for (const auto& v : gv) gmap[{v.at("axis").get<std::string>(), v.at("quantity").get<std::string>()}].push_back(v);
    for (const auto& v : rv) rmap[{v.at("axis").get<std::string>(), v.at("quantity").get<std::string>()}].push_back(v);
    {
      std::ostringstream listing;
      for (const auto& [key, list] : gmap) listing << key.first << " " << key.second << " x" << list.size() << "; ";
      listing << " vs reference ";
      for (const auto& [key, list] : rmap) listing << key.first << " " << key.second << " x" << list.size() << "; ";
      INFO("violations by (axis, quantity): c2path " << listing.str());
      CHECK(gv.size() == rv.size());
      for (const auto& [key, list] : rmap) CHECK(gmap[key].size() == list.size());
      for (const auto& [key, list] : gmap) CHECK(rmap[key].size() == list.size());
    }
    for (auto& [key, want] : rmap) {
      std::vector<json>& have = gmap[key];
      auto by_start = [](const json& x, const json& y) { return x.at("t_start").get<double>() < y.at("t_start").get<double>(); };
      std::sort(have.begin(), have.end(), by_start);
      std::sort(want.begin(), want.end(), by_start);
      const json& sc = scale_of.at(key.first);
      const double vscale = sc.at(key.second).get<double>();
      for (std::size_t i = 0; i < std::min(have.size(), want.size()); ++i) {
        const json& g = have[i];
        const json& v = want[i];
        INFO("violation " << key.first << " " << key.second << " #" << i << ": c2path " << g.dump() << "; reference " << v.dump());
        CONF_CHECK_CLOSE("t_start", g.at("t_start").get<double>(), v.at("t_start").get<double>(), kTimeS);
        CONF_CHECK_CLOSE("t_end", g.at("t_end").get<double>(), v.at("t_end").get<double>(), kTimeS);
        CONF_CHECK_CLOSE("peak", g.at("peak").get<double>(), v.at("peak").get<double>(), kRel * vscale);
        CHECK(g.at("limit").get<double>() == v.at("limit").get<double>());
        // t_peak: where the peak is attained; where the quantity is constant on a piece (jerk,
        // or velocity on a line) any time of that piece is right.
        const double tp = g.at("t_peak").get<double>();
        bool in_range = false;
        for (const auto& range : v.at("t_peak_ok"))
          in_range = in_range || (tp >= range[0].get<double>() - kTimeS && tp <= range[1].get<double>() + kTimeS);
        INFO("t_peak " << show(tp) << " vs reference " << show(v.at("t_peak").get<double>()) << " (allowed " << v.at("t_peak_ok").dump() << ")");
        CHECK(in_range);
        CHECK(g.at("t_start").get<double>() <= tp + kTimeS);
        CHECK(tp <= g.at("t_end").get<double>() + kTimeS);
      }
    }
    // The order limits.hpp documents: by t_start, then axis (scene order), then quantity.
    std::map<std::string, std::size_t> axis_index;
    for (std::size_t a = 0; a < ra.size(); ++a) axis_index[ra[a].at("name").get<std::string>()] = a;
    for (std::size_t i = 1; i < gv.size(); ++i) {
      const json& x = gv[i - 1];
      const json& y = gv[i];
      INFO("violations " << i - 1 << ", " << i << " out of order: " << x.dump() << " then " << y.dump());
      const auto kx = std::make_tuple(x.at("t_start").get<double>(), axis_index[x.at("axis").get<std::string>()],
                                      quantity_rank(x.at("quantity").get<std::string>()));
      const auto ky = std::make_tuple(y.at("t_start").get<double>(), axis_index[y.at("axis").get<std::string>()],
                                      quantity_rank(y.at("quantity").get<std::string>()));
      CHECK_FALSE(ky < kx);
    }
  }
}

TEST_CASE("conformance: export --allow-violations agrees with SciPy 1.10 at the sample times", "[conformance]") {
  Work w;
  for (const auto& ref_path : references()) {
    const json ref = load(ref_path);
    const fs::path scene = corpus() / ref.at("scene").get<std::string>();
    INFO("scene " << scene.filename().string());
    if (ref.contains("expect_error")) continue;
    const json& ex = ref.at("export");
    const fs::path csv = w.dir / "out.csv";
    fs::remove(csv);
    const Run r = w.cli("export " + sh_quote(scene) + " --allow-violations --rate " + std::to_string(ex.at("rate").get<int>()) +
                        " -o " + sh_quote(csv));
    INFO("stderr: " << r.err);
    REQUIRE(r.rc == 0);
    REQUIRE(fs::exists(csv));
    std::vector<std::string> lines;
    {
      std::istringstream in(read_text(csv));
      for (std::string line; std::getline(in, line);) lines.push_back(line);
    }
    REQUIRE(!lines.empty());
    // design §5: header t, then per axis NAME, NAME.vel, NAME.acc.
    std::string header = "t";
    for (const auto& a : ref.at("axes")) {
      const std::string n = a.at("name").get<std::string>();
      header += "," + n + "," + n + ".vel," + n + ".acc";
    }
    CHECK(lines[0] == header);
    // Rows at t0 + k / rate before the end, then one at exactly the end.
    CHECK(lines.size() - 1 == ex.at("rows").get<std::size_t>());
    const std::size_t m = ref.at("axes").size();
    // A move within its limits (per the SciPy reference) exports setpoints within them: every row,
    // to the check's 1e-9 tolerance (of the span for positions).
    if (ref.at("ok").get<bool>()) {
      for (std::size_t a = 0; a < m; ++a) {
        const json& lim = ref.at("axes")[a].at("limit");
        auto bound = [&](const char* k, double fallback) { return lim.at(k).is_null() ? fallback : lim.at(k).get<double>(); };
        const double inf = HUGE_VAL;
        const double lo = bound("min", -inf), hi = bound("max", inf), vmax = bound("vel", inf), amax = bound("acc", inf);
        const double span = std::isfinite(lo) && std::isfinite(hi) ? hi - lo : 1.0;
        std::size_t worst_row = 0;
        double worst = 0;  // largest excess over a bound, relative as the check's tolerance
        for (std::size_t row = 1; row < lines.size(); ++row) {
          const auto f = split(lines[row], ',');
          if (f.size() != 1 + 3 * m) FAIL("CSV row " << row << " has " << f.size() << " fields: " << lines[row]);
          const double x = parse_number(f[1 + 3 * a]), v = parse_number(f[2 + 3 * a]), acc = parse_number(f[3 + 3 * a]);
          const double e = std::max({(lo - x) / span, (x - hi) / span, std::abs(v) / vmax - 1, std::abs(acc) / amax - 1});
          if (e > worst) {
            worst = e;
            worst_row = row;
          }
        }
        INFO("axis " << a << ": worst row " << worst_row << " exceeds a bound by " << show(worst) << " (relative): "
                     << (worst_row ? lines[worst_row] : std::string("-")));
        CHECK(worst <= 1e-9);
      }
    }
    // Without --allow-violations: written when within limits; refused (exit 1, nothing written)
    // otherwise (design §5).
    {
      const fs::path plain = w.dir / "plain.csv";
      fs::remove(plain);
      const Run p = w.cli("export " + sh_quote(scene) + " --rate " + std::to_string(ex.at("rate").get<int>()) + " -o " + sh_quote(plain));
      INFO("export without --allow-violations, stderr: " << p.err);
      CHECK(p.rc == ref.at("exit_code").get<int>());
      CHECK(fs::exists(plain) == ref.at("ok").get<bool>());
      if (ref.at("ok").get<bool>()) CHECK(read_text(plain) == read_text(csv));
    }
    // Reference values: SciPy 1.10 CubicSpline(t) and its derivatives 1, 2 at the row times.
    for (const auto& s : ex.at("samples")) {
      const std::size_t k = s.at("k").get<std::size_t>();
      INFO("row k = " << k << " at t " << show(s.at("t").get<double>()));
      REQUIRE(k + 1 < lines.size());
      const auto f = split(lines[k + 1], ',');
      REQUIRE(f.size() == 1 + 3 * m);
      CHECK(parse_number(f[0]) == s.at("t").get<double>());
      for (std::size_t a = 0; a < m; ++a) {
        const json& sc = ref.at("axes")[a].at("scale");
        const std::string n = ref.at("axes")[a].at("name").get<std::string>();
        CONF_CHECK_CLOSE(n + " pos", parse_number(f[1 + 3 * a]), s.at("pos")[a].get<double>(), kRel * sc.at("pos").get<double>());
        CONF_CHECK_CLOSE(n + " vel", parse_number(f[2 + 3 * a]), s.at("vel")[a].get<double>(), kRel * sc.at("vel").get<double>());
        CONF_CHECK_CLOSE(n + " acc", parse_number(f[3 + 3 * a]), s.at("acc")[a].get<double>(), kRel * sc.at("acc").get<double>());
      }
    }
  }
}

TEST_CASE("conformance: scenes that are input errors exit 2 with one FILE:LINE:COL line", "[conformance]") {
  Work w;
  int seen = 0;
  for (const auto& ref_path : references()) {
    const json ref = load(ref_path);
    if (!ref.contains("expect_error")) continue;
    ++seen;
    const fs::path scene = corpus() / ref.at("scene").get<std::string>();
    const json& e = ref.at("expect_error");
    const std::string prefix =
        scene.string() + ":" + std::to_string(e.at("line").get<int>()) + ":" + std::to_string(e.at("col").get<int>()) + ": error: ";
    for (const std::string& args : std::vector<std::string>{"check --json " + sh_quote(scene), "export " + sh_quote(scene) + " -o " + sh_quote(w.dir / "e.csv")}) {
      const Run r = w.cli(args);
      INFO("c2path " << args << "\nstderr: " << r.err);
      CHECK(r.rc == 2);
      CHECK(std::count(r.err.begin(), r.err.end(), '\n') == 1);
      CHECK(r.err.rfind(prefix, 0) == 0);
      CHECK(r.err.find(e.at("text").get<std::string>()) != std::string::npos);
      CHECK_FALSE(fs::exists(w.dir / "e.csv"));
    }
  }
  CHECK(seen >= 1);
}
