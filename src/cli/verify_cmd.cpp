// `c2path verify SCENE FILE`: the exported file checked against the scene without the planner.

#include <nlohmann/json.hpp>

#include <cmath>
#include <cstdio>

#include "c2path/error.hpp"
#include "c2path/export.hpp"
#include "c2path/scene_yaml.hpp"
#include "c2path/verify.hpp"
#include "commands.hpp"
#include "report.hpp"

namespace c2path::cli {

namespace {
const char* const kTolerance =
    "finite-difference tolerance: each position is trusted to 64 eps (|q| + |v| |t|) (plus half a count for whole counts); "
    "a k-th divided difference may be off by that times the sum of its weights (2^k/h^k on an even grid), "
    "plus 1e-9 of the limit. Differences of samples never exceed the true peak, so no other slack is needed.";
}  // namespace

CLI::App* add_verify_command(CLI::App& app, VerifyArgs& a) {
  auto* v = app.add_subcommand("verify",
                               "check an exported file against the scene without the planner (finite differences of the samples); "
                               "exit 0 fine, 1 violations, 2 unreadable input");
  v->add_option("SCENE", a.scene, "scene file the export was made from")->required();
  v->add_option("FILE", a.file, "exported setpoints (CSV, PVT or JSON Lines), or - for standard input")->required();
  v->add_option("--units", a.units, "native, or counts when exported with --units counts")->check(CLI::IsMember({"native", "counts"}));
  v->add_option("--rate", a.rate, "rate [Hz] of a file without a 't' column (exported with --time index)");
  v->add_option("--fps", a.fps, "frame rate of a file with only a frame column (23.976 .. 60)");
  v->add_flag("--json", a.json, "print one JSON object");
  return v;
}

int run_verify(const VerifyArgs& a) {
  VerifyOptions o;
  o.counts = a.units == "counts";
  if (a.rate && !a.fps.empty()) throw Error("give --rate or --fps, not both");
  if (a.rate) {
    if (!(std::isfinite(*a.rate) && *a.rate > 0.0 && *a.rate == std::floor(*a.rate)))
      throw Error("--rate for verify must be a whole positive number of Hz (use --fps for frame rates)");
    o.rate = Rational{std::int64_t(*a.rate), 1};
  }
  if (!a.fps.empty()) {
    o.rate = parse_frame_rate(a.fps);
    if (!o.rate) throw Error("--fps " + a.fps + " is not a camera frame rate (23.976, 24, 25, 29.97, 30, 48, 50, 59.94, 60)");
  }
  if (a.scene == "-" && a.file == "-") throw Error("only one of SCENE and FILE can be - (standard input)");
  const Scene scene = load_scene_file(a.scene);
  const VerifyResult r = verify_file(scene, a.file, o);
  const std::string name = a.file == "-" ? "<stdin>" : a.file;

  if (a.json) {
    nlohmann::ordered_json j;
    j["ok"] = r.ok;
    j["file"] = name;
    j["format"] = r.format;
    j["rows"] = r.rows;
    j["t_first"] = r.t_first;
    j["t_last"] = r.t_last;
    j["waypoints"] = scene.waypoints.size();
    j["waypoints_passed"] = r.waypoints_passed;
    j["findings_total"] = r.findings_total;
    nlohmann::ordered_json f = nlohmann::ordered_json::array();
    for (const auto& x : r.findings)
      f.push_back({{"row", x.row}, {"line", x.line}, {"axis", x.axis}, {"check", x.check}, {"message", x.message}});
    j["findings"] = f;
    nlohmann::ordered_json axes = nlohmann::ordered_json::array();
    for (const auto& ax : r.axes)
      axes.push_back({{"name", ax.name}, {"pos_min", ax.pos_min}, {"pos_max", ax.pos_max}, {"vel", ax.vel}, {"acc", ax.acc},
                      {"jerk", ax.jerk}, {"decisive", {{"vel", ax.vel_decisive}, {"acc", ax.acc_decisive}, {"jerk", ax.jerk_decisive}}}});
    j["axes"] = axes;
    j["notes"] = r.notes;
    j["tolerance"] = kTolerance;
    j["caution"] = kCaution;
    std::printf("%s\n", j.dump().c_str());
    return r.ok ? 0 : 1;
  }

  std::printf("verify %s against %s: %s (%zu rows, %s, t %s .. %s s, waypoints passed %zu of %zu)\n", name.c_str(),
              scene.file.c_str(), r.ok ? "OK" : "FAILED", r.rows, r.format.c_str(), num(r.t_first, 9).c_str(),
              num(r.t_last, 9).c_str(), r.waypoints_passed, scene.waypoints.size());
  for (const auto& x : r.findings)
    std::printf("%s:%d: row %zu: %s%s%s\n", name.c_str(), x.line, x.row, x.axis.empty() ? "" : "axis '",
                x.axis.empty() ? "" : (x.axis + "': ").c_str(), x.message.c_str());
  if (r.findings_total > r.findings.size())
    std::printf("... and %zu more findings\n", r.findings_total - r.findings.size());
  std::printf("peaks from the samples' differences:\n");
  for (std::size_t i = 0; i < r.axes.size(); ++i) {
    const auto& ax = r.axes[i];
    std::printf("  %-10s pos %s .. %s  |vel| %s  |acc| %s  |jerk| %s\n", ax.name.c_str(), num(ax.pos_min).c_str(),
                num(ax.pos_max).c_str(), num(ax.vel).c_str(), num(ax.acc).c_str(), num(ax.jerk).c_str());
  }
  for (const auto& n : r.notes) std::printf("note: %s\n", n.c_str());
  std::printf("%s\n", kTolerance);
  std::printf("%s\n", kCaution);
  return r.ok ? 0 : 1;
}

}  // namespace c2path::cli
