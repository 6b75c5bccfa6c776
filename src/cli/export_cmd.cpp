// `c2path export`: setpoints in CSV, JSON Lines or PVT, with units, frame rates and the
// reconstruction error a controller makes from them.

#include <nlohmann/json.hpp>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <numeric>
#include <unistd.h>

#include "c2path/error.hpp"
#include "c2path/export.hpp"
#include "commands.hpp"
#include "report.hpp"

namespace c2path::cli {

namespace {

bool same_file(const std::string& a, const std::string& b) {
  std::error_code ec;
  return std::filesystem::exists(a, ec) && std::filesystem::exists(b, ec) && std::filesystem::equivalent(a, b, ec);
}

std::string join_names(const std::vector<std::string>& v) {
  std::string o;
  for (std::size_t i = 0; i < v.size(); ++i) o += (i ? ", " : "") + v[i];
  return o;
}

// A spacing in seconds as an exact rate when it is a whole number of microseconds.
std::optional<Rational> spacing_rate(double s) {
  const double us = s * 1e6;
  const double r = std::round(us);
  if (!(r >= 1.0) || std::abs(us - r) > 1e-6 * r || r > 1e12) return std::nullopt;
  const auto m = std::int64_t(r);
  const std::int64_t g = std::gcd(m, std::int64_t(1'000'000));
  return Rational{1'000'000 / g, m / g};
}

std::string text(double v) { return num(v, 9); }

}  // namespace

CLI::App* add_export_command(CLI::App& app, ExportArgs& a) {
  auto* exp = app.add_subcommand("export", "write setpoints sampled at the controller's rate (refuses a move with violations)");
  exp->add_option("SCENE", a.scene, "scene file, or - for standard input")->required();
  exp->add_option("-o,--output", a.out, "output file (written atomically)")->required();
  exp->add_option("--rate", a.rate, "samples per second [Hz]; overrides export: rate in the scene");
  exp->add_option("--format", a.format, "csv (default), jsonl (one JSON object per sample) or pvt (points for cubic Hermite controllers)")
      ->check(CLI::IsMember({"csv", "jsonl", "pvt"}));
  exp->add_option("--columns", a.columns, "per-axis columns, any of pos,vel,acc,jerk (default pos,vel,acc; pvt: pos,vel)");
  exp->add_option("--time", a.time, "time column: seconds (t) or index (sample or frame number)")->check(CLI::IsMember({"seconds", "index"}));
  exp->add_option("--units", a.units, "native (the scene's units) or counts (counts_per_unit and offset of each axis)")
      ->check(CLI::IsMember({"native", "counts"}));
  exp->add_option("--fps", a.fps, "camera frames: 23.976, 24, 25, 29.97, 30, 48, 50, 59.94 or 60 (exact rationals); adds a frame column");
  exp->add_option("--spacing", a.spacing, "seconds between samples (PVT point spacing); instead of --rate");
  exp->add_option("--max-error", a.max_error,
                  "choose the lowest rate (widest PVT spacing; with --fps the lowest frame rate) whose reconstruction keeps every axis within this many of its units");
  exp->add_flag("--json", a.json, "print a JSON summary instead of text");
  exp->add_flag("--allow-violations", a.allow, "export even when limits are exceeded");
  return exp;
}

int run_export(const ExportArgs& a) {
  ExportOptions o;
  o.format = a.format == "jsonl" ? ExportFormat::kJsonl : a.format == "pvt" ? ExportFormat::kPvt : ExportFormat::kCsv;
  if (!a.columns.empty()) {
    if (o.format == ExportFormat::kPvt) throw Error("--columns: PVT files always hold position and velocity; drop --columns");
    o.columns = parse_columns(a.columns);
  }
  o.time = a.time == "index" ? TimeColumn::kIndex : TimeColumn::kSeconds;
  o.units = a.units == "counts" ? ExportUnits::kCounts : ExportUnits::kNative;
  const int rate_sources = int(a.rate.has_value()) + int(a.spacing.has_value()) + int(!a.fps.empty()) + int(a.max_error.has_value() && a.fps.empty());
  if (rate_sources > 1) throw Error("give only one of --rate, --spacing, --fps and --max-error (--max-error may go with --fps)");
  if (a.rate && !(std::isfinite(*a.rate) && *a.rate > 0.0)) throw Error("--rate must be a positive number of Hz");
  if (a.spacing && !(std::isfinite(*a.spacing) && *a.spacing > 0.0)) throw Error("--spacing must be a positive number of seconds");
  if (a.max_error && !(std::isfinite(*a.max_error) && *a.max_error > 0.0)) throw Error("--max-error must be a positive number");
  if (!a.fps.empty()) {
    const auto fr = parse_frame_rate(a.fps);
    if (!fr) throw Error("--fps " + a.fps + " is not a camera frame rate; valid: " + join_names(frame_rate_names()));
    o.frames = true;
    o.exact_rate = *fr;
  }
  if (a.scene != "-" && same_file(a.scene, a.out)) throw Error(a.out, SourceLoc{}, "is the scene file itself; choose another output file");

  const Loaded l = load_and_check(a.scene);
  if (!l.report.ok && !a.allow) {
    std::fprintf(stderr, "c2path: the move exceeds its limits; nothing written (use --allow-violations to export anyway)\n");
    print_violations(stderr, l);
    print_stretch(stderr, l);
    std::fprintf(stderr, "%s\n", kCaution);
    return 1;
  }
  const Trajectory& tr = *l.plan.trajectory;
  std::vector<std::string> names;
  for (const auto& ax : l.scene.axes) names.push_back(ax.name);
  if (o.units == ExportUnits::kCounts)
    for (const auto& ax : l.scene.axes) {
      if (!ax.counts_per_unit)
        throw Error(l.scene.file, ax.loc, "axis '" + ax.name + "' has no counts_per_unit; add it to the axis to export in counts");
      o.counts.push_back({*ax.counts_per_unit, ax.offset.value_or(0.0)});
    }
  if (a.rate) o.rate_hz = *a.rate;
  else if (a.spacing) {
    if (auto r = spacing_rate(*a.spacing)) o.exact_rate = *r;
    else o.rate_hz = 1.0 / *a.spacing;
  } else if (!o.frames) o.rate_hz = l.scene.exports.rate_hz ? *l.scene.exports.rate_hz : kDefaultRateHz;
  o.validate();

  std::optional<RateChoice> choice;
  if (a.max_error) {
    choice = choose_rate(tr, o, *a.max_error);
    if (!choice->found)
      throw Error("--max-error " + text(*a.max_error) + ": " + choice->message + "; nothing written");
    o.exact_rate = choice->exact;
    o.rate_hz = choice->rate_hz;
  }

  const bool tty = ::isatty(2) != 0 && !a.json;
  int shown = -1;
  if (tty)
    o.progress = [&](std::size_t done, std::size_t total) {
      const int pct = int(100.0 * double(done) / double(std::max<std::size_t>(total, 1)));
      if (pct != shown) {
        shown = pct;
        std::fprintf(stderr, "\rexporting %s: %3d%%", a.out.c_str(), pct);
        std::fflush(stderr);
      }
    };
  // Too many samples for one export: say where the rate comes from (the scene's `export: rate`,
  // or the move's timing when the default rate applies); a command-line rate names its option.
  const bool rate_from_scene = !a.rate && !a.spacing && !a.max_error && !o.frames;
  const ExportResult w = [&] {
    try {
      return export_to_file(tr, names, o, a.out);
    } catch (const Error& e) {
      if (!e.file().empty() || e.message().find("one export may write") == std::string::npos) throw;
      if (!rate_from_scene) throw;
      const Scene& sc = l.scene;
      if (sc.exports.rate_hz) throw Error(sc.file, sc.exports.rate_loc, e.message());
      const SourceLoc at = sc.timing.mode == TimingMode::kDuration ? sc.timing.duration_loc
                           : sc.timing.loc.line > 0                  ? sc.timing.loc
                                                                     : sc.waypoints.front().loc;
      throw Error(sc.file, at, e.message() + " (the default " + text(kDefaultRateHz) + " Hz; add 'export: {rate: HZ}' or give --rate)");
    }
  }();
  if (tty) std::fprintf(stderr, "\r%*s\r", int(a.out.size()) + 20, "");
  const Reconstruction rec = choice ? choice->error : reconstruction_error(tr, o);
  const std::vector<double> round = rounding_error(o);
  const SampleGrid& g = w.grid;
  const double t_last = g.time(g.count - 1);
  const bool end_in = t_last == g.t_end;
  const std::string rate_text = g.exact ? to_string(*g.exact) : text(g.rate_hz);

  if (a.json) {
    nlohmann::ordered_json j;
    j["file"] = a.out;
    j["format"] = to_string(o.format);
    j["rows"] = w.rows;
    j["rate_hz"] = g.rate_hz;
    j["rate"] = rate_text;
    if (o.frames) j["fps"] = to_string(*o.exact_rate);
    j["time"] = a.time;
    j["units"] = a.units;
    j["t_begin"] = g.t_begin;
    j["t_end"] = g.t_end;
    j["t_last"] = t_last;
    j["end_included"] = end_in;
    j["ok"] = l.report.ok;
    if (a.max_error) {
      j["max_error"] = *a.max_error;
      j["chosen_by"] = choice->message;
    }
    j["reconstruction"] = rec.exact ? "exact largest deviation (piecewise-cubic move), in scene units"
                                    : "largest deviation found at the quarter points and midpoint of every interval (16 points where the trajectory has a break), in scene units";
    j["reconstruction_exact"] = rec.exact;
    nlohmann::ordered_json axes = nlohmann::ordered_json::array();
    for (std::size_t i = 0; i < names.size(); ++i) {
      nlohmann::ordered_json ax;
      ax["name"] = names[i];
      ax["unit"] = l.scene.axes[i].unit;
      ax["linear"] = rec.linear[i];
      ax["hermite"] = rec.hermite[i];
      if (o.units == ExportUnits::kCounts) ax["rounding"] = round[i];
      axes.push_back(ax);
    }
    j["axes"] = axes;
    j["caution"] = kCaution;
    std::printf("%s\n", j.dump().c_str());
    return 0;
  }

  std::printf("wrote %s: %zu %s at %s Hz (%s), t %s .. %s s (%s)\n", a.out.c_str(), w.rows,
              o.frames ? "frames" : o.format == ExportFormat::kPvt ? "PVT points" : "setpoints", rate_text.c_str(),
              to_string(o.format), text(g.t_begin).c_str(), text(g.t_end).c_str(),
              l.report.ok ? "within limits" : "LIMITS EXCEEDED, exported with --allow-violations");
  if (a.max_error) std::printf("rate chosen for --max-error %s: %s\n", text(*a.max_error).c_str(), choice->message.c_str());
  if (end_in) std::printf("last sample at the end of the move, t %s s\n", text(t_last).c_str());
  else
    std::printf("last %s %zu at t %s s, the last whole %s at or before the end (%s s earlier than t %s s)\n",
                o.frames ? "frame" : "sample", g.count - 1, text(t_last).c_str(), o.frames ? "frame" : "sample period",
                text(g.t_end - t_last).c_str(), text(g.t_end).c_str());
  std::printf("reconstruction error from these samples (%s, scene units):\n",
              rec.exact ? "exact largest deviation" : "largest deviation found at 3 points per interval, an estimate from below");
  std::printf("  %-10s %-8s %14s %14s%s\n", "axis", "unit", "linear", "cubic Hermite", o.units == ExportUnits::kCounts ? "  rounding to counts" : "");
  for (std::size_t i = 0; i < names.size(); ++i) {
    std::printf("  %-10s %-8s %14s %14s", names[i].c_str(), l.scene.axes[i].unit.c_str(), num(rec.linear[i], 4).c_str(),
                num(rec.hermite[i], 4).c_str());
    if (o.units == ExportUnits::kCounts) std::printf("  %s (0.5 count)", num(round[i], 4).c_str());
    std::printf("\n");
  }
  if (!l.report.ok) print_violations(stdout, l);
  std::printf("%s\n", kCaution);
  return 0;
}

}  // namespace c2path::cli
