// Printing of `check` reports (table and JSON).

#include "report.hpp"

#include <nlohmann/json.hpp>

#include <iostream>
#include <vector>

#include "c2path/scene_yaml.hpp"

namespace c2path::cli {

namespace {

std::string pct(double value, const std::optional<double>& limit) {
  if (!limit) return "";
  return num(100.0 * value / *limit, 3) + "%";
}

std::string pad(std::string s, std::size_t w) {
  if (s.size() < w) s.append(w - s.size(), ' ');
  return s;
}

nlohmann::ordered_json opt(const std::optional<double>& v) { return v ? nlohmann::ordered_json(*v) : nlohmann::ordered_json(); }
}  // namespace

const char* const kCaution =
    "CAUTION: c2path checks the limits it is given, not the machine. Rehearse at reduced speed with the "
    "working area clear and an emergency stop at hand; follow the machine's manual, local codes and "
    "qualified practice.";

std::string num(double v, int digits) {
  if (v == 0.0) v = 0.0;
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, v);
  return buf;
}



Loaded load_and_check(const std::string& path) {
  Loaded l;
  l.scene = load_scene_file(path);
  l.plan = c2path::plan(l.scene);
  l.report = check_limits(*l.plan.trajectory, l.plan.limits);
  return l;
}

static std::string unit_of(const AxisSpec& a, const char* per) {
  if (a.unit.empty()) return std::string("unit") + per;
  return a.unit + per;
}

void print_violations(std::FILE* out, const Loaded& l) {
  const auto& r = l.report;
  if (r.violations.empty()) {
    std::fprintf(out, "violations: none\n");
    return;
  }
  std::fprintf(out, "violations (%zu):\n", r.violations.size());
  for (const auto& v : r.violations) {
    const AxisSpec& ax = l.scene.axes[std::size_t(v.axis)];
    const char* per = v.quantity == Quantity::kPos ? "" : v.quantity == Quantity::kVel ? "/s" : v.quantity == Quantity::kAcc ? "/s^2" : "/s^3";
    std::string how;
    if (v.quantity == Quantity::kPos)
      how = std::string(v.peak > v.limit ? "above max " : "below min ") + num(v.limit);
    else
      how = "limit " + num(v.limit) + ", " + num(100.0 * v.peak / v.limit, 4) + "%";
    std::fprintf(out, "  %s %-4s t %s .. %s s  peak %s %s at t %s s  (%s)\n", pad(ax.name, 8).c_str(), to_string(v.quantity),
                 num(v.t_start, 7).c_str(), num(v.t_end, 7).c_str(), num(v.peak).c_str(), unit_of(ax, per).c_str(),
                 num(v.t_peak, 7).c_str(), how.c_str());
  }
}

void print_stretch(std::FILE* out, const Loaded& l) {
  const auto& r = l.report;
  if (r.stretch > 1.0)
    std::fprintf(out, "stretch factor %s: slowed down uniformly to %s s (from %s s), the move keeps its velocity, "
                      "acceleration and jerk limits\n",
                 num(r.stretch).c_str(), num(r.duration * r.stretch).c_str(), num(r.duration).c_str());
  else
    std::fprintf(out, "stretch factor 1: velocity, acceleration and jerk are within their limits\n");
  if (r.pos_violation) std::fprintf(out, "note: slowing down cannot fix a position (travel) violation; move the waypoints\n");
}

// Duration mode: the shortest feasible duration; fastest mode: grid, stretch and binding intervals.
static void print_timing(std::FILE* out, const Loaded& l) {
  const Plan& p = l.plan;
  if (const auto T = shortest_duration(p, l.report))
    std::fprintf(out, "shortest feasible duration: %s s (requested %s s, holds %s s)\n", num(*T).c_str(),
                 num(l.report.duration).c_str(), num(p.hold_total_s).c_str());
  if (p.mode != TimingMode::kFastest) return;
  std::fprintf(out, "fastest plan: %zu grid points, scale %s%s\n", p.grid_points, num(l.scene.timing.scale).c_str(),
               p.fastest_stretch > 1.0 ? (", stretched by " + num(p.fastest_stretch) + " after the repairs").c_str() : "");
  if (p.binding.empty()) {
    std::fprintf(out, "binding: none\n");
    return;
  }
  std::fprintf(out, "binding (%zu intervals, at >= 99%% of scale x limit):\n", p.binding.size());
  const std::size_t shown = std::min<std::size_t>(p.binding.size(), 40);
  for (std::size_t k = 0; k < shown; ++k) {
    const Binding& b = p.binding[k];
    std::fprintf(out, "  %s %-4s t %s .. %s s\n", pad(l.scene.axes[std::size_t(b.axis)].name, 8).c_str(), to_string(b.quantity),
                 num(b.t_start, 7).c_str(), num(b.t_end, 7).c_str());
  }
  if (shown < p.binding.size()) std::fprintf(out, "  ... %zu more (see --json)\n", p.binding.size() - shown);
}

void print_table(const Loaded& l) {
  const Scene& s = l.scene;
  const Report& r = l.report;
  std::printf("scene %s%s: %s mode, %zu waypoints, %zu axes, t %s .. %s s (duration %s s)\n", s.file.c_str(),
              s.name.empty() ? "" : (" \"" + s.name + "\"").c_str(), to_string(s.timing.mode), s.waypoints.size(),
              s.axes.size(), num(r.t_begin).c_str(), num(r.t_end).c_str(), num(r.duration).c_str());
  for (const auto& n : l.plan.notes) std::printf("note: %s\n", n.c_str());
  std::printf("\n%s%s%s%s%s%s\n", pad("axis", 10).c_str(), pad("travel used", 24).c_str(), pad("allowed", 22).c_str(),
              pad("peak |vel|", 20).c_str(), pad("peak |acc|", 20).c_str(), "peak |jerk|");
  for (std::size_t a = 0; a < s.axes.size(); ++a) {
    const AxisSpec& ax = s.axes[a];
    const AxisPeaks& p = r.peaks[a];
    const std::string unit = ax.unit.empty() ? "" : " " + ax.unit;
    std::string allowed = (ax.min ? num(*ax.min) : "-inf") + " .. " + (ax.max ? num(*ax.max) : "+inf");
    auto cell = [&](double v, const std::optional<double>& lim) {
      return num(v, 4) + (lim ? " (" + pct(v, lim) + ")" : " (-)") + (lim && v > *lim * (1 + 1e-9) ? " !" : "");
    };
    // Marked from the violations only, so rounding at exactly a bound (within the check's
    // tolerance) is not flagged while the result says "within limits".
    bool pos_bad = false;
    for (const auto& v : r.violations)
      if (v.axis == Index(a) && v.quantity == Quantity::kPos) pos_bad = true;
    std::printf("%s%s%s%s%s%s\n", pad(ax.name + unit, 10).c_str(),
                pad(num(p.pos_min) + " .. " + num(p.pos_max) + (pos_bad ? " !" : ""), 24).c_str(), pad(allowed, 22).c_str(),
                pad(cell(p.vel, ax.vel), 20).c_str(), pad(cell(p.acc, ax.acc), 20).c_str(), cell(p.jerk, ax.jerk).c_str());
  }
  const std::vector<std::string> unchecked = unchecked_limits(s);
  if (!unchecked.empty()) {
    std::string list;
    for (const auto& u : unchecked) list += (list.empty() ? "" : ", ") + u;
    std::printf("not checked (no limit given): %s\n", list.c_str());
  }
  std::printf("\n");
  print_violations(stdout, l);
  print_stretch(stdout, l);
  print_timing(stdout, l);
  std::printf("%s\n", r.ok ? "result: within limits" : "result: LIMITS EXCEEDED");
  std::printf("%s\n", kCaution);
}


void print_json(const Loaded& l) {
  using J = nlohmann::ordered_json;
  const Report& r = l.report;
  J j;
  j["ok"] = r.ok;
  j["duration"] = r.duration;
  j["stretch"] = r.stretch;
  J knots = J::array();
  for (Index k = 0; k < l.plan.knots.size(); ++k) knots.push_back(l.plan.knots[k]);
  j["knots"] = knots;
  J axes = J::array();
  for (std::size_t a = 0; a < l.scene.axes.size(); ++a) {
    const AxisSpec& ax = l.scene.axes[a];
    const AxisPeaks& p = r.peaks[a];
    J e;
    e["name"] = ax.name;
    e["unit"] = ax.unit;
    e["peak"] = J{{"pos_min", p.pos_min}, {"pos_max", p.pos_max}, {"vel", p.vel}, {"acc", p.acc}, {"jerk", p.jerk}};
    e["limit"] = J{{"min", opt(ax.min)}, {"max", opt(ax.max)}, {"vel", opt(ax.vel)}, {"acc", opt(ax.acc)}, {"jerk", opt(ax.jerk)}};
    axes.push_back(e);
  }
  j["axes"] = axes;
  J vs = J::array();
  for (const auto& v : r.violations)
    vs.push_back(J{{"axis", l.scene.axes[std::size_t(v.axis)].name},
                   {"quantity", to_string(v.quantity)},
                   {"t_start", v.t_start},
                   {"t_end", v.t_end},
                   {"peak", v.peak},
                   {"t_peak", v.t_peak},
                   {"limit", v.limit}});
  j["violations"] = vs;
  // Timing additions (issue 3): where a fastest plan sits at a limit, and for duration mode the
  // shortest duration that keeps every limit.
  J bs = J::array();
  for (const auto& b : l.plan.binding)
    bs.push_back(J{{"axis", l.scene.axes[std::size_t(b.axis)].name},
                   {"quantity", to_string(b.quantity)},
                   {"t_start", b.t_start},
                   {"t_end", b.t_end}});
  j["binding"] = bs;
  if (const auto T = shortest_duration(l.plan, r)) j["shortest_duration"] = *T;
  std::cout << j.dump() << "\n";
}

}  // namespace c2path::cli
