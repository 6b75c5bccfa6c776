// Side panel tabs: the waypoint table (edit, add, delete, reorder), the report (the same table and
// violations as `c2path check`; a click on a violation moves the playhead), the view and timing
// options.

#include <imgui.h>

#include <algorithm>
#include <cfloat>
#include <cmath>
#include <filesystem>
#include <string>

#include "app.hpp"
#include "format.hpp"
#include "style.hpp"

namespace c2path::viewer {

namespace {
std::string pad_unit(const AxisSpec& a, const char* per) { return (a.unit.empty() ? std::string("unit") : a.unit) + per; }
}  // namespace

void App::waypoint_table() {
  if (!doc_.has_scene()) {
    ImGui::TextColored(ImColor(col::kTextDim), "No scene loaded.");
    return;
  }
  const Scene& s = doc_.scene();
  const int n = int(s.waypoints.size());
  const bool keyed = s.timing.mode == TimingMode::kKeyframes;
  if (selected_ >= n) selected_ = n - 1;

  // Structural edits act on the selected waypoint.
  int action = 0;  // 1 add, 2 delete, 3 up, 4 down
  if (ImGui::Button("Add after")) action = 1;
  if (ImGui::IsItemHovered()) ImGui::SetTooltip("insert a waypoint after the selected one (A)");
  ImGui::SameLine();
  ImGui::BeginDisabled(selected_ < 0);
  if (ImGui::Button("Delete")) action = 2;
  ImGui::SameLine();
  if (ImGui::Button("Up")) action = 3;
  if (ImGui::IsItemHovered()) ImGui::SetTooltip("swap positions with the previous waypoint (times stay)");
  ImGui::SameLine();
  if (ImGui::Button("Down")) action = 4;
  ImGui::EndDisabled();
  ImGui::SameLine();
  ImGui::TextColored(ImColor(col::kTextDim), "%d waypoints%s", n,
                     selected_ >= 0 ? (", #" + std::to_string(selected_ + 1) + " selected").c_str() : "");
  if (!doc_.edit_error().empty()) {
    ImGui::PushTextWrapPos(0.0f);
    ImGui::TextColored(ImColor(col::kWarn), "%s", doc_.edit_error().c_str());
    ImGui::PopTextWrapPos();
  }

  const int ncols = 1 + (keyed ? 1 : 0) + int(s.axes.size()) + 2;
  const ImGuiTableFlags tf = ImGuiTableFlags_ScrollY | ImGuiTableFlags_ScrollX | ImGuiTableFlags_RowBg |
                             ImGuiTableFlags_BordersInnerV | ImGuiTableFlags_SizingFixedFit;
  if (ncols <= 64 && ImGui::BeginTable("##wp", ncols, tf, ImGui::GetContentRegionAvail())) {
    ImGui::TableSetupScrollFreeze(1, 1);
    ImGui::TableSetupColumn("#", ImGuiTableColumnFlags_WidthFixed, 34.0f);
    if (keyed) ImGui::TableSetupColumn("t [s]", ImGuiTableColumnFlags_WidthFixed, 56.0f);
    for (const AxisSpec& a : s.axes) {
      const std::string h = a.unit.empty() ? a.name : a.name + " [" + a.unit + "]";
      ImGui::TableSetupColumn(h.c_str(), ImGuiTableColumnFlags_WidthFixed, 66.0f);
    }
    ImGui::TableSetupColumn("hold [s]", ImGuiTableColumnFlags_WidthFixed, 50.0f);
    ImGui::TableSetupColumn("stop", ImGuiTableColumnFlags_WidthFixed, 32.0f);
    ImGui::TableHeadersRow();
    const float row_h = ImGui::GetFrameHeight() + 2.0f * ImGui::GetStyle().CellPadding.y;
    if (scroll_to_selected_ && selected_ >= 0) {
      const float y = float(selected_) * row_h, top = ImGui::GetScrollY(), vis = ImGui::GetWindowHeight() - 2.0f * row_h;
      if (y < top || y > top + vis) ImGui::SetScrollY(std::max(0.0f, y - vis * 0.5f));
      scroll_to_selected_ = false;
    }
    ImGuiListClipper clip;
    clip.Begin(n, row_h);
    while (clip.Step()) {
      for (int k = clip.DisplayStart; k < clip.DisplayEnd; ++k) {
        ImGui::PushID(k);
        ImGui::TableNextRow(ImGuiTableRowFlags_None, row_h);
        ImGui::TableSetColumnIndex(0);
        const std::string lab = std::to_string(k + 1);
        if (ImGui::Selectable(lab.c_str(), selected_ == k, ImGuiSelectableFlags_SpanAllColumns | ImGuiSelectableFlags_AllowItemOverlap,
                              {0, row_h - 2.0f * ImGui::GetStyle().CellPadding.y}))
          selected_ = (selected_ == k) ? -1 : k;
        auto edit_value = [&](const char* id, double cur, auto&& apply) {
          double v = cur;
          ImGui::SetNextItemWidth(-FLT_MIN);
          if (ImGui::InputDouble(id, &v, 0.0, 0.0, "%.6g") && std::isfinite(v) && v != cur) {
            doc_.begin_gesture();
            apply(v);
            doc_.changed_waypoint(std::size_t(k));
          }
          if (ImGui::IsItemActivated()) selected_ = k;
          if (ImGui::IsItemDeactivated()) doc_.end_gesture();
        };
        int c = 1;
        if (keyed) {
          ImGui::TableSetColumnIndex(c++);
          edit_value("##t", s.waypoints[std::size_t(k)].t.value_or(0.0),
                     [&](double v) { doc_.edit().waypoints[std::size_t(k)].t = v; });
        }
        for (std::size_t a = 0; a < s.axes.size(); ++a) {
          ImGui::TableSetColumnIndex(c++);
          ImGui::PushID(int(a));
          const double cur = a < s.waypoints[std::size_t(k)].q.size() ? s.waypoints[std::size_t(k)].q[a] : 0.0;
          edit_value("##q", cur, [&](double v) { doc_.edit().waypoints[std::size_t(k)].q[a] = v; });
          ImGui::PopID();
        }
        ImGui::TableSetColumnIndex(c++);
        edit_value("##hold", s.waypoints[std::size_t(k)].hold_s,
                   [&](double v) { doc_.edit().waypoints[std::size_t(k)].hold_s = v; });
        ImGui::TableSetColumnIndex(c++);
        bool stop = s.waypoints[std::size_t(k)].stop;
        if (ImGui::Checkbox("##stop", &stop)) {
          doc_.begin_gesture();
          doc_.edit().waypoints[std::size_t(k)].stop = stop;
          doc_.changed_waypoint(std::size_t(k));
          doc_.end_gesture();
        }
        ImGui::PopID();
      }
    }
    ImGui::EndTable();
  }
  if (action == 1) {
    const int at = selected_ >= 0 ? selected_ : n - 1;
    doc_.add_waypoint_after(at);
    selected_ = at + 1;
    scroll_to_selected_ = true;
  } else if (action == 2 && selected_ >= 0) {
    doc_.delete_waypoint(selected_);
    selected_ = std::min(selected_, int(doc_.scene().waypoints.size()) - 1);
  } else if (action == 3 && selected_ > 0) {
    doc_.move_waypoint(selected_, -1);
    --selected_;
    scroll_to_selected_ = true;
  } else if (action == 4 && selected_ >= 0 && selected_ + 1 < n) {
    doc_.move_waypoint(selected_, +1);
    ++selected_;
    scroll_to_selected_ = true;
  }
}

void App::report_tab() {
  const Planned* p = doc_.shown();
  if (!p) {
    ImGui::TextColored(ImColor(col::kBad), "No plan: %s", doc_.edit_error().c_str());
    return;
  }
  const Scene& s = p->scene;
  const Report& r = p->report;
  ImGui::BeginChild("##report", ImGui::GetContentRegionAvail(), false, ImGuiWindowFlags_HorizontalScrollbar);
  if (!doc_.edit_error().empty())
    ImGui::TextColored(ImColor(col::kWarn), "Report of the last valid plan (the edited scene cannot be planned).");
  ImGui::PushTextWrapPos(0.0f);
  const std::string file = std::filesystem::path(s.file).filename().string();  // the full path: hover the file name above
  ImGui::Text("scene %s%s: %s mode, %zu waypoints, %zu axes, t %s .. %s s (duration %s s)", file.c_str(),
              s.name.empty() ? "" : (" \"" + s.name + "\"").c_str(), to_string(s.timing.mode), s.waypoints.size(), s.axes.size(),
              fmt::num(r.t_begin).c_str(), fmt::num(r.t_end).c_str(), fmt::num(r.duration).c_str());
  for (const auto& note : p->plan.notes) ImGui::TextColored(ImColor(col::kTextDim), "note: %s", note.c_str());
  ImGui::PopTextWrapPos();

  // The `check` table, one column per axis (it fits the side panel): travel used, allowed range,
  // peak |vel|, |acc|, |jerk| with % of limit; "!" and red where a limit is exceeded.
  const int na = int(std::min<std::size_t>(s.axes.size(), 63));
  const ImGuiTableFlags tf = ImGuiTableFlags_RowBg | ImGuiTableFlags_BordersInnerV | ImGuiTableFlags_SizingFixedFit |
                             ImGuiTableFlags_ScrollX;
  const float table_h = 6.0f * (ImGui::GetTextLineHeight() + 2.0f * ImGui::GetStyle().CellPadding.y + 1.0f) + 16.0f;
  if (ImGui::BeginTable("##peaks", na + 1, tf, {0, table_h})) {
    ImGui::TableSetupScrollFreeze(1, 0);
    ImGui::TableSetupColumn("axis");
    for (int a = 0; a < na; ++a) {
      const AxisSpec& ax = s.axes[std::size_t(a)];
      const std::string h = ax.unit.empty() ? ax.name : ax.name + " " + ax.unit;
      ImGui::TableSetupColumn(h.c_str());
    }
    ImGui::TableHeadersRow();
    auto show = [](const std::string& txt, bool bad) {
      if (bad) ImGui::TextColored(ImColor(col::kBad), "%s", txt.c_str());
      else ImGui::TextUnformatted(txt.c_str());
    };
    auto cell = [&](double v, const std::optional<double>& lim) {
      const bool bad = lim && v > *lim * (1 + 1e-9);
      show(fmt::num(v, 4) + (lim ? " (" + fmt::pct(v, lim) + ")" : " (-)") + (bad ? " !" : ""), bad);
    };
    static const char* kRows[] = {"travel used", "allowed", "peak |vel|", "peak |acc|", "peak |jerk|"};
    for (int row = 0; row < 5; ++row) {
      ImGui::TableNextRow();
      ImGui::TableNextColumn();
      ImGui::TextColored(ImColor(col::kTextDim), "%s", kRows[row]);
      for (int a = 0; a < na; ++a) {
        const AxisSpec& ax = s.axes[std::size_t(a)];
        const AxisPeaks& pk = r.peaks[std::size_t(a)];
        ImGui::TableNextColumn();
        if (row == 0) {
          bool pos_bad = (ax.min && pk.pos_min < *ax.min) || (ax.max && pk.pos_max > *ax.max);
          for (const auto& v : r.violations)
            if (v.axis == Index(a) && v.quantity == Quantity::kPos) pos_bad = true;
          show(fmt::num(pk.pos_min) + " .. " + fmt::num(pk.pos_max) + (pos_bad ? " !" : ""), pos_bad);
        } else if (row == 1) {
          ImGui::Text("%s .. %s", ax.min ? fmt::num(*ax.min).c_str() : "-inf", ax.max ? fmt::num(*ax.max).c_str() : "+inf");
        } else if (row == 2) cell(pk.vel, ax.vel);
        else if (row == 3) cell(pk.acc, ax.acc);
        else cell(pk.jerk, ax.jerk);
      }
    }
    ImGui::EndTable();
  }
  const std::vector<std::string> unchecked = unchecked_limits(s);
  if (!unchecked.empty()) {
    std::string list;
    for (const auto& u : unchecked) list += (list.empty() ? "" : ", ") + u;
    ImGui::TextColored(ImColor(col::kWarn), "not checked (no limit given): %s", list.c_str());
  }
  ImGui::Spacing();
  if (r.violations.empty()) ImGui::TextColored(ImColor(col::kOk), "violations: none");
  else {
    ImGui::TextColored(ImColor(col::kBad), "violations (%zu):", r.violations.size());
    ImGui::SameLine();
    ImGui::TextColored(ImColor(col::kTextDim), "click one to move the playhead to its peak");
    ImGuiListClipper clip;
    clip.Begin(int(r.violations.size()));
    while (clip.Step())
      for (int i = clip.DisplayStart; i < clip.DisplayEnd; ++i) {
        const Violation& v = r.violations[std::size_t(i)];
        const AxisSpec& ax = s.axes[std::size_t(v.axis)];
        const char* per = v.quantity == Quantity::kPos ? "" : v.quantity == Quantity::kVel ? "/s" : v.quantity == Quantity::kAcc ? "/s^2" : "/s^3";
        std::string how;
        if (v.quantity == Quantity::kPos) how = std::string(v.peak > v.limit ? "above max " : "below min ") + fmt::num(v.limit);
        else how = "limit " + fmt::num(v.limit) + ", " + fmt::num(100.0 * v.peak / v.limit, 4) + "%";
        const std::string line = ax.name + " " + to_string(v.quantity) + "  t " + fmt::num(v.t_start, 7) + " .. " +
                                 fmt::num(v.t_end, 7) + " s\n    peak " + fmt::num(v.peak) + " " + pad_unit(ax, per) + " at t " +
                                 fmt::num(v.t_peak, 7) + " s  (" + how + ")";
        ImGui::PushID(i);
        const bool here = t_ >= v.t_start && t_ <= v.t_end;
        if (ImGui::Selectable(line.c_str(), here)) {
          t_ = v.t_peak;
          playing_ = false;
          if (t_ < tv0_ || t_ > tv1_) {
            tv0_ = p->plan.trajectory->t_begin();
            tv1_ = p->plan.trajectory->t_end();
          }
        }
        ImGui::PopID();
      }
  }
  ImGui::PushTextWrapPos(0.0f);
  if (r.stretch > 1.0)
    ImGui::Text("stretch factor %s: slowed down uniformly to %s s (from %s s), the move keeps its velocity, acceleration and "
                "jerk limits",
                fmt::num(r.stretch).c_str(), fmt::num(r.duration * r.stretch).c_str(), fmt::num(r.duration).c_str());
  else
    ImGui::TextUnformatted("stretch factor 1: velocity, acceleration and jerk are within their limits");
  if (r.pos_violation)
    ImGui::TextColored(ImColor(col::kWarn), "note: slowing down cannot fix a position (travel) violation; move the waypoints");
  ImGui::PopTextWrapPos();
  if (r.ok) ImGui::TextColored(ImColor(col::kOk), "result: within limits");
  else ImGui::TextColored(ImColor(col::kBad), "result: LIMITS EXCEEDED");
  ImGui::EndChild();
}

void App::view_tab() {
  if (!doc_.has_scene()) return;
  const Scene& s = doc_.scene();
  ImGui::TextColored(ImColor(col::kCaution), "Timing");
  int mode = int(s.timing.mode);
  static const char* kModes[] = {"keyframes", "duration", "fastest"};
  ImGui::SetNextItemWidth(140);
  if (ImGui::Combo("mode", &mode, kModes, 3) && mode != int(s.timing.mode)) {
    doc_.begin_gesture();
    Scene& e = doc_.edit();
    const Planned* p = doc_.shown();
    const bool times_ok = p && std::size_t(p->plan.waypoint_times.size()) == e.waypoints.size();
    if (TimingMode(mode) == TimingMode::kKeyframes) {
      for (std::size_t k = 0; k < e.waypoints.size(); ++k)
        e.waypoints[k].t = times_ok ? p->plan.waypoint_times[Index(k)] : double(k);
    } else {
      for (auto& w : e.waypoints) w.t.reset();
      if (!e.timing.duration_s) e.timing.duration_s = p ? std::max(p->report.duration, 1e-3) : 10.0;
    }
    e.timing.mode = TimingMode(mode);
    doc_.changed();
    doc_.end_gesture();
  }
  if (s.timing.mode == TimingMode::kDuration) {
    double d = s.timing.duration_s.value_or(10.0);
    ImGui::SetNextItemWidth(140);
    if (ImGui::InputDouble("duration [s]", &d, 0.0, 0.0, "%.6g") && std::isfinite(d)) {
      doc_.begin_gesture();
      doc_.edit().timing.duration_s = d;
      doc_.changed();
    }
    if (ImGui::IsItemDeactivated()) doc_.end_gesture();
  }
  double scale = s.timing.scale;
  ImGui::SetNextItemWidth(140);
  if (ImGui::InputDouble("limit scale", &scale, 0.0, 0.0, "%.6g") && std::isfinite(scale)) {
    doc_.begin_gesture();
    doc_.edit().timing.scale = scale;
    doc_.changed();
  }
  if (ImGui::IsItemDeactivated()) doc_.end_gesture();
  if (ImGui::IsItemHovered()) ImGui::SetTooltip("fraction of every limit the planner aims for (duration / fastest modes); the check uses the full limits");

  ImGui::TextColored(ImColor(col::kCaution), "Path");
  int knots = int(s.path.knots), ends = int(s.path.ends);
  static const char* kKnots[] = {"uniform", "chord", "centripetal"};
  static const char* kEnds[] = {"not-a-knot", "natural", "clamped", "periodic"};
  ImGui::SetNextItemWidth(140);
  ImGui::BeginDisabled(s.timing.mode == TimingMode::kKeyframes);
  if (ImGui::Combo("knots", &knots, kKnots, 3)) {
    doc_.begin_gesture();
    doc_.edit().path.knots = KnotType(knots);
    doc_.changed();
    doc_.end_gesture();
  }
  ImGui::EndDisabled();
  ImGui::SetNextItemWidth(140);
  if (ImGui::Combo("ends", &ends, kEnds, 4)) {
    doc_.begin_gesture();
    doc_.edit().path.ends = EndCondition(ends);
    doc_.changed();
    doc_.end_gesture();
  }

  ImGui::TextColored(ImColor(col::kCaution), "Display");
  ImGui::Text("samples drawn from: %zu   path segments after thinning: %zu", samples().n, drawn_segments_);
  ImGui::Text("frame time %.2f ms", frame_ms_);
  ImGui::TextColored(ImColor(col::kTextDim), "X, Y, Z mapping and colour: above the 3D view.");
}

}  // namespace c2path::viewer
