// Profile plots: position, velocity, acceleration and jerk of each axis against time, drawn with
// ImDrawList. Limit lines, violation intervals (from the library's report) shaded, hover readout,
// playhead scrubbing, time zoom and pan. Zoomed out, each pixel column draws the min..max of the
// samples it covers (so no peak is lost); zoomed in, the trajectory is evaluated per column.

#include <imgui.h>

#include <algorithm>
#include <cmath>
#include <string>

#include "app.hpp"
#include "format.hpp"
#include "style.hpp"

namespace c2path::viewer {

namespace {
constexpr const char* kQuantity[] = {"position", "velocity", "acceleration", "jerk"};
constexpr const char* kPer[] = {"", "/s", "/s^2", "/s^3"};

std::optional<double> limit_of(const AxisSpec& a, int d) {
  return d == 1 ? a.vel : d == 2 ? a.acc : d == 3 ? a.jerk : std::nullopt;
}

void dashed_hline(ImDrawList* dl, float x0, float x1, float y, ImU32 c) {
  for (float x = x0; x < x1; x += 14.0f) dl->AddLine({x, y}, {std::min(x + 8.0f, x1), y}, c, 1.0f);
}

inline float cross2(ImVec2 a, ImVec2 b) { return a.x * b.y - a.y * b.x; }

/// Thins a polyline in place by screen-space error: a run from an anchor point is extended while
/// every point of it stays within `tol` pixels of the line from the anchor to the run's end (a
/// cone of admissible directions, narrowed by each point; O(n)). Ends are kept.
void thin_polyline(std::vector<ImVec2>& pts, float tol) {
  if (pts.size() < 3) return;
  std::size_t out = 1, anchor = 0, last = 0;
  bool cone = false;
  ImVec2 L{0, 0}, R{0, 0};
  const float tol2 = tol * tol;
  std::vector<ImVec2>& p = pts;
  for (std::size_t i = 1; i < p.size(); ++i) {
    ImVec2 d{p[i].x - p[anchor].x, p[i].y - p[anchor].y};
    float r2 = d.x * d.x + d.y * d.y;
    if (r2 <= tol2) { last = i; continue; }
    float r = std::sqrt(r2);
    ImVec2 u{d.x / r, d.y / r};
    if (cone && !(cross2(R, u) >= 0.0f && cross2(u, L) >= 0.0f)) {
      p[out++] = p[last];  // the run ends at the last point that fitted
      anchor = out - 1;
      // (p[anchor] now holds the new anchor's coordinates)
      cone = false;
      d = {p[i].x - p[anchor].x, p[i].y - p[anchor].y};
      r2 = d.x * d.x + d.y * d.y;
      if (r2 <= tol2) { last = i; continue; }
      r = std::sqrt(r2);
      u = {d.x / r, d.y / r};
    }
    const float sn = tol / r, cs = std::sqrt(std::max(0.0f, 1.0f - sn * sn));
    const ImVec2 left{u.x * cs - u.y * sn, u.x * sn + u.y * cs}, right{u.x * cs + u.y * sn, -u.x * sn + u.y * cs};
    if (!cone) { L = left; R = right; cone = true; }
    else {
      if (cross2(L, left) < 0.0f) L = left;
      if (cross2(R, right) > 0.0f) R = right;
    }
    last = i;
  }
  p[out++] = p[last];
  p.resize(out);
}

double nice_step(double raw) {
  const double p = std::pow(10.0, std::floor(std::log10(raw)));
  const double m = raw / p;
  return (m < 1.5 ? 1.0 : m < 3.5 ? 2.0 : m < 7.5 ? 5.0 : 10.0) * p;
}
}  // namespace

float App::plot_x(double t, const Rect& r) const {
  return r.min.x + float((t - tv0_) / (tv1_ - tv0_)) * (r.max.x - r.min.x);
}

double App::plot_t(float x, const Rect& r) const {
  return tv0_ + double((x - r.min.x) / (r.max.x - r.min.x)) * (tv1_ - tv0_);
}

void App::draw_plot(ImDrawList* dl, std::size_t axis, int d, const Rect& r, bool bottom) {
  const Planned& p = *doc_.shown();
  const AxisSpec& ax = p.scene.axes[axis];
  const float w = r.max.x - r.min.x, h = r.max.y - r.min.y;
  backdrop(r, axis % 2 ? col::kCanvasAlt : col::kCanvas);
  dl->PushClipRect(r.min, r.max, true);

  // Vertical range: the data, and the limits when they are not far off the data.
  double lo = samples().lo[d][axis], hi = samples().hi[d][axis];
  std::optional<double> lmin, lmax;
  if (d == 0) { lmin = ax.min; lmax = ax.max; }
  else if (auto l = limit_of(ax, d)) { lmin = -*l; lmax = *l; }
  const double span_data = std::max(hi - lo, std::max(std::abs(hi), std::abs(lo)) * 1e-6);
  bool off_lo = false, off_hi = false;
  if (d == 0) {
    if (lmin) { if (*lmin >= lo - 1.5 * span_data) lo = std::min(lo, *lmin); else off_lo = true; }
    if (lmax) { if (*lmax <= hi + 1.5 * span_data) hi = std::max(hi, *lmax); else off_hi = true; }
  } else {
    double m = std::max(std::abs(lo), std::abs(hi));
    if (lmax) { if (*lmax <= 4.0 * m) m = std::max(m, *lmax); else off_lo = off_hi = true; }
    lo = -m;
    hi = m;
  }
  if (!(hi > lo)) { lo -= 1.0; hi += 1.0; }
  const double pad = 0.08 * (hi - lo);
  lo -= pad;
  hi += pad;
  auto Y = [&](double v) { return r.max.y - float((v - lo) / (hi - lo)) * h; };

  // Violation intervals of this axis and quantity.
  for (const Violation& v : p.report.violations) {
    if (std::size_t(v.axis) != axis || int(v.quantity) != d) continue;
    float x0 = plot_x(v.t_start, r), x1 = plot_x(v.t_end, r);
    if (x1 - x0 < 3.0f) { x0 -= 1.5f; x1 += 1.5f; }
    dl->AddRectFilled({x0, r.min.y}, {x1, r.max.y}, col::kViolation);
    dl->AddLine({x0, r.min.y}, {x0, r.max.y}, col::kViolationEdge);
    dl->AddLine({x1, r.min.y}, {x1, r.max.y}, col::kViolationEdge);
  }
  if (d > 0) dl->AddLine({r.min.x, Y(0)}, {r.max.x, Y(0)}, col::kGrid);
  if (lmin && !off_lo) dashed_hline(dl, r.min.x, r.max.x, Y(*lmin), col::kLimit);
  if (lmax && !off_hi) dashed_hline(dl, r.min.x, r.max.x, Y(*lmax), col::kLimit);

  // The curve.
  const ImU32 c = axis_colour(axis);
  line_.clear();
  const int cols = plot_cols_;
  if (zoomed_) {
    for (int j = 0; j <= cols; ++j)
      line_.push_back({r.min.x + float(j) * w / float(cols),
                       Y(zoom_vals_[(std::size_t(j) * samples().axes + axis) * 4 + std::size_t(d)])});
  } else {
    // Each pixel column covers the min..max of its samples and the last value of the column
    // before (so nothing between samples is lost and the curve stays connected). Where that
    // span is small the columns are joined by an anti-aliased line; where it is tall (steep or
    // oscillating parts) it is drawn as a solid 2 px bar, which costs far less to fill than a
    // zigzag line.
    // Neighbouring bars whose ends differ by less than 1.5 px are merged into one rectangle: a
    // software renderer fills one wide rectangle far faster than many 2 px ones.
    const float* sv = samples().series(d, axis);
    float prev_last = sv[col_index_[0]];
    bool bar_open = false;
    ImVec2 bar_min{0, 0}, bar_max{0, 0};
    float bar_top = 0, bar_bot = 0;  // the ends of the bar that opened the run
    auto flush_bar = [&] {
      if (bar_open) dl->AddRectFilled(bar_min, bar_max, c);
      bar_open = false;
    };
    auto flush = [&] {
      thin_polyline(line_, 0.25f);  // once: a second pass could add its error to the first's
      if (line_.size() >= 2) dl->AddPolyline(line_.data(), int(line_.size()), c, 0, 2.0f);
      line_.clear();
    };
    // The min..max per column depends only on the samples and the time range: kept until they change.
    Envelope& env = envelopes_[std::size_t(d) * samples().axes + axis];
    if (env.generation != seen_generation_ || env.t0 != tv0_ || env.t1 != tv1_ || env.cols != cols) {
      env.generation = seen_generation_;
      env.t0 = tv0_;
      env.t1 = tv1_;
      env.cols = cols;
      env.lo.resize(std::size_t(cols));
      env.hi.resize(std::size_t(cols));
      env.last.resize(std::size_t(cols));
      for (int j = 0; j < cols; ++j) {
        const std::size_t i0 = col_index_[std::size_t(j)], i1 = std::max(col_index_[std::size_t(j) + 1], i0 + 1);
        samples().tree[d][axis].query(i0, i1, env.lo[std::size_t(j)], env.hi[std::size_t(j)]);
        env.last[std::size_t(j)] = sv[std::min(i1, samples().n) - 1];
      }
    }
    // Where a line or bar has just been drawn and some columns passed, a new draw command: an
    // edit that changes part of the curve then redraws only that part (present.hpp).
    int split_at = 48;
    auto maybe_split = [&](int j) {
      if (j < split_at) return;
      dl->AddDrawCmd();
      split_at = j + 48;
    };
    for (int j = 0; j < cols; ++j) {
      float a = env.lo[std::size_t(j)], b = env.hi[std::size_t(j)];
      a = std::min(a, prev_last);
      b = std::max(b, prev_last);
      const float last = env.last[std::size_t(j)];
      const float x = r.min.x + (float(j) + 0.5f) * w / float(cols);
      const float ya = Y(a), yb = Y(b);
      if (ya - yb <= 3.0f) {
        if (bar_open) {
          flush_bar();
          maybe_split(j);
        }
        line_.push_back({x, Y(0.5f * (a + b))});
      } else {
        if (line_.size() >= 2) {
          flush();
          maybe_split(j);
        }
        flush();
        if (bar_open && std::abs(yb - bar_top) < 1.5f && std::abs(ya - bar_bot) < 1.5f) {
          bar_max.x = x + 1.0f;
          bar_min.y = std::min(bar_min.y, yb);
          bar_max.y = std::max(bar_max.y, ya);
        } else {
          flush_bar();
          bar_open = true;
          bar_min = {x - 1.0f, yb};
          bar_max = {x + 1.0f, ya};
          bar_top = yb;
          bar_bot = ya;
        }
        line_.push_back({x, Y(last)});
      }
      prev_last = last;
    }
    flush_bar();
    flush();
  }
  thin_polyline(line_, 0.25f);
  if (line_.size() >= 2) dl->AddPolyline(line_.data(), int(line_.size()), c, 0, 2.0f);  // integer widths: textured AA lines, fewer vertices

  // Playhead: a draw command of its own, clipped to a narrow strip, so that moving it changes
  // only that strip of the frame (the rest of the cell is not drawn again, see present.hpp).
  const float xp = plot_x(t_, r);
  dl->PushClipRect({std::floor(xp) - 2.0f, r.min.y}, {std::floor(xp) + 3.0f, r.max.y}, true);
  dl->AddLine({xp, r.min.y}, {xp, r.max.y}, col::kPlayhead, 1.0f);
  dl->PopClipRect();

  // Labels: the exact peak from the report, the scale, off-scale limits. Values far below the
  // axis's range are shown as 0 (display only).
  const AxisPeaks& pk = p.report.peaks[axis];
  const double tiny = 1e-9 * std::max(std::abs(samples().hi[d][axis]), std::abs(samples().lo[d][axis]));
  auto shown_num = [&](double v, int digits) { return fmt::num(std::abs(v) < tiny ? 0.0 : v, digits); };
  const std::string unit = (ax.unit.empty() ? "unit" : ax.unit) + kPer[d];
  std::string lab;
  if (d == 0) lab = shown_num(pk.pos_min, 4) + " .. " + shown_num(pk.pos_max, 4) + " " + unit;
  else {
    const double peak = d == 1 ? pk.vel : d == 2 ? pk.acc : pk.jerk;
    lab = "peak " + fmt::num(peak, 4) + " " + unit;
    if (auto l = limit_of(ax, d)) lab += "  " + fmt::pct(peak, l);
    else lab += "  (no limit)";
  }
  auto text_box = [&](ImVec2 at, ImU32 colr, const std::string& txt) {
    const ImVec2 ts = ImGui::CalcTextSize(txt.c_str());
    dl->AddRectFilled({at.x - 2, at.y}, {at.x + ts.x + 2, at.y + ts.y}, rgba(16, 18, 23, 170), 2.0f);
    dl->AddText(at, colr, txt.c_str());
  };
  text_box({r.min.x + 4, r.min.y + 2}, col::kText, lab);
  const std::string top = shown_num(hi - pad, 3), bot = shown_num(lo + pad, 3);
  text_box({r.max.x - ImGui::CalcTextSize(top.c_str()).x - 4, r.min.y + 2}, col::kTextDim, top);
  text_box({r.max.x - ImGui::CalcTextSize(bot.c_str()).x - 4, r.max.y - 15}, col::kTextDim, bot);
  if ((off_hi || off_lo) && h >= 60.0f) {
    const std::string o = d == 0 ? "travel limits off scale" : "limit \xc2\xb1" + fmt::num(*lmax, 4) + " off scale";
    text_box({r.min.x + 4, r.max.y - 15}, col::kLimit, o);
  }
  dl->PopClipRect();

  if (bottom) {  // time ticks under the bottom row
    const double step = nice_step((tv1_ - tv0_) / std::max(1.0, double(w) / 70.0));
    for (double t = std::ceil(tv0_ / step) * step; t <= tv1_ + 1e-9 * step; t += step) {
      const float x = plot_x(t, r);
      dl->AddLine({x, r.max.y}, {x, r.max.y + 4}, col::kTextDim);
      const std::string s = fmt::num(t, 4);
      const float tw = ImGui::CalcTextSize(s.c_str()).x;
      const float xl = std::clamp(x - tw * 0.5f, r.min.x, r.max.x - tw);  // keep labels inside their cell
      dl->AddText({xl, r.max.y + 4}, col::kTextDim, s.c_str());
    }
  }
}

void App::plots_panel(const ImVec2& pos, const ImVec2& size) {
  ImGui::SetNextWindowPos(pos);
  ImGui::SetNextWindowSize(size);
  ImGui::Begin("##plots", nullptr,
               ImGuiWindowFlags_NoTitleBar | ImGuiWindowFlags_NoResize | ImGuiWindowFlags_NoMove | ImGuiWindowFlags_NoCollapse |
                   ImGuiWindowFlags_NoSavedSettings | ImGuiWindowFlags_NoBringToFrontOnFocus | ImGuiWindowFlags_NoScrollbar);
  const Planned* p = doc_.shown();
  if (!have_samples_ || !p) {
    ImGui::TextColored(ImColor(col::kTextDim), "Profiles appear here once the scene can be planned.");
    plot_rect_ = {};
    ImGui::End();
    return;
  }
  const auto& tr = *p->plan.trajectory;
  if (!(tv1_ > tv0_)) tv1_ = tv0_ + std::max(1.0, tr.duration());  // never a zero-width time axis
  ImGui::AlignTextToFramePadding();
  ImGui::TextUnformatted("Profiles");
  for (int d = 0; d < 4; ++d) {
    ImGui::SameLine();
    ImGui::Checkbox(kQuantity[d], &show_deriv_[d]);
  }
  ImGui::SameLine(0, 16);
  if (ImGui::SmallButton("whole move")) { tv0_ = tr.t_begin(); tv1_ = tr.t_end(); }
  ImGui::SameLine();
  ImGui::TextColored(ImColor(col::kTextDim), "t %s .. %s s   click/drag: playhead  wheel: zoom  right-drag: pan  dashed: limit  shaded: violation",
                     fmt::num(tv0_, 5).c_str(), fmt::num(tv1_, 5).c_str());

  int shown[4], nd = 0;
  for (int d = 0; d < 4; ++d)
    if (show_deriv_[d]) shown[nd++] = d;
  if (nd == 0) { shown[0] = 0; nd = 1; }
  const std::size_t axes = samples().axes;
  const float gutter = 78.0f, head = 16.0f, foot = 18.0f, gap = 6.0f;
  const ImVec2 avail = ImGui::GetContentRegionAvail();
  const float row_h = std::max(54.0f, std::floor((avail.y - head - foot) / float(axes)) - 3.0f);
  const float content_h = head + float(axes) * (row_h + 3.0f) + foot;
  ImGui::BeginChild("##grid", avail, false, ImGuiWindowFlags_NoScrollWithMouse);
  const ImVec2 g0 = ImGui::GetCursorScreenPos();
  const float cell_w = std::floor((avail.x - gutter - gap * float(nd) - (content_h > avail.y ? 14.0f : 0.0f)) / float(nd));
  ImGui::InvisibleButton("##plotarea", {std::max(avail.x - 14.0f, 10.0f), content_h},
                         ImGuiButtonFlags_MouseButtonLeft | ImGuiButtonFlags_MouseButtonRight);
  const bool hovered = ImGui::IsItemHovered(), active = ImGui::IsItemActive();
  ImDrawList* dl = ImGui::GetWindowDrawList();

  // Per-column data shared by every cell: sample index ranges, or exact values when zoomed in.
  plot_cols_ = std::max(1, int(cell_w));
  const auto& T = samples().t;
  const auto i_begin = std::size_t(std::lower_bound(T.begin(), T.end(), tv0_) - T.begin());
  const auto i_end = std::size_t(std::upper_bound(T.begin(), T.end(), tv1_) - T.begin());
  zoomed_ = i_end - i_begin < std::size_t(2 * plot_cols_);
  if (zoomed_) {
    zoom_vals_.resize(std::size_t(plot_cols_ + 1) * axes * 4);
    Eigen::MatrixXd out(tr.axes(), 4);
    for (int j = 0; j <= plot_cols_; ++j) {
      const double t = std::clamp(tv0_ + (tv1_ - tv0_) * double(j) / double(plot_cols_), tr.t_begin(), tr.t_end());
      tr.eval_all(t, out);
      for (std::size_t a = 0; a < axes; ++a)
        for (int d = 0; d < 4; ++d) zoom_vals_[(std::size_t(j) * axes + a) * 4 + std::size_t(d)] = out(Index(a), d);
    }
  } else {
    envelopes_.resize(4 * axes);
    col_index_.resize(std::size_t(plot_cols_) + 1);
    for (int j = 0; j <= plot_cols_; ++j) {
      const double t = tv0_ + (tv1_ - tv0_) * double(j) / double(plot_cols_);
      col_index_[std::size_t(j)] = std::size_t(std::lower_bound(T.begin() + long(i_begin), T.begin() + long(i_end), t) - T.begin());
    }
    col_index_.back() = std::max(col_index_.back(), std::min(i_end, samples().n));
    if (col_index_.back() <= col_index_.front()) col_index_.back() = col_index_.front() + 1;
  }

  // Column headers.
  for (int k = 0; k < nd; ++k) {
    const float x = g0.x + gutter + float(k) * (cell_w + gap);
    dl->AddText({x + 2, g0.y}, col::kTextDim, kQuantity[shown[k]]);
  }
  int hover_axis = -1, hover_d = -1;
  Rect hover_r;
  const ImVec2 m = ImGui::GetIO().MousePos;
  Rect first_cell;
  for (std::size_t a = 0; a < axes; ++a) {
    const float y = g0.y + head + float(a) * (row_h + 3.0f);
    const AxisSpec& ax = p->scene.axes[a];
    dl->AddRectFilled({g0.x, y}, {g0.x + 4, y + row_h}, axis_colour(a));
    dl->AddText({g0.x + 9, y + 4}, col::kText, ax.name.c_str());
    if (!ax.unit.empty()) dl->AddText({g0.x + 9, y + 20}, col::kTextDim, ax.unit.c_str());
    for (int k = 0; k < nd; ++k) {
      const float x = g0.x + gutter + float(k) * (cell_w + gap);
      const Rect r{{x, y}, {x + cell_w, y + row_h}};
      if (a == 0 && k == 0) first_cell = r;
      draw_plot(dl, a, shown[k], r, a + 1 == axes);
      if (hovered && m.x >= r.min.x && m.x < r.max.x && m.y >= r.min.y && m.y < r.max.y) {
        hover_axis = int(a);
        hover_d = shown[k];
        hover_r = r;
      }
    }
  }
  first_cell_ = first_cell;
  const ImVec2 wmin = ImGui::GetWindowPos(), wsize = ImGui::GetWindowSize();
  plot_rect_ = {{g0.x + gutter, std::max(g0.y + head, wmin.y)},
                {g0.x + gutter + float(nd) * (cell_w + gap), std::min(g0.y + content_h - foot, wmin.y + wsize.y)}};

  // Mouse: scrub, zoom, pan.
  ImGuiIO& io = ImGui::GetIO();
  const Rect ref = hover_axis >= 0 ? hover_r : first_cell;
  if (active && ImGui::IsMouseDown(0) && first_cell.valid()) {
    const float x = std::clamp(m.x, ref.min.x, ref.max.x);
    // Map through the first column (all columns share the time axis).
    const float k = (x - ref.min.x) / (ref.max.x - ref.min.x);
    t_ = std::clamp(tv0_ + double(k) * (tv1_ - tv0_), tr.t_begin(), tr.t_end());
  }
  if (hovered && io.MouseWheel != 0.0f && hover_axis >= 0) {
    const double tm = plot_t(m.x, hover_r);
    const double f = std::pow(0.8, double(io.MouseWheel));
    const double min_span = std::max(1e-6, tr.duration() * 1e-6);
    double a = tm - (tm - tv0_) * f, b = tm + (tv1_ - tm) * f;
    if (b - a < min_span) { a = tm - min_span / 2; b = tm + min_span / 2; }
    tv0_ = std::max(tr.t_begin(), a);
    tv1_ = std::min(tr.t_end(), b);
  }
  if (hovered && io.MouseWheel != 0.0f && hover_axis < 0) ImGui::SetScrollY(ImGui::GetScrollY() - io.MouseWheel * row_h);
  if (active && ImGui::IsMouseClicked(1)) {
    plot_pan_anchor_ = m.x;
    plot_pan_t0_ = tv0_;
    plot_pan_t1_ = tv1_;
  }
  if (active && ImGui::IsMouseDown(1) && first_cell.valid()) {
    const double dt = -double(m.x - plot_pan_anchor_) / double(cell_w) * (plot_pan_t1_ - plot_pan_t0_);
    const double span = plot_pan_t1_ - plot_pan_t0_;
    double a = std::clamp(plot_pan_t0_ + dt, tr.t_begin(), tr.t_end() - span);
    tv0_ = a;
    tv1_ = a + span;
  }
  if (hovered && ImGui::IsMouseDoubleClicked(0)) { tv0_ = tr.t_begin(); tv1_ = tr.t_end(); }

  // Hover readout: the library's value at the time under the mouse.
  if (hover_axis >= 0 && !(active && ImGui::IsMouseDown(1))) {
    const double t = std::clamp(plot_t(m.x, hover_r), tr.t_begin(), tr.t_end());
    Eigen::VectorXd v(tr.axes());
    tr.eval(t, hover_d, v);
    const AxisSpec& ax = p->scene.axes[std::size_t(hover_axis)];
    const double val = v[hover_axis];
    const std::string unit = (ax.unit.empty() ? "unit" : ax.unit) + kPer[hover_d];
    std::string tip = "t " + fmt::num(t, 6) + " s\n" + ax.name + " " + kQuantity[hover_d] + " " + fmt::num(val, 6) + " " + unit;
    if (hover_d == 0) {
      if (ax.min && ax.max) {
        const double used = 100.0 * (val - *ax.min) / (*ax.max - *ax.min);
        tip += '\n';
        tip += fmt::num(used, 3) + "% of the travel " + fmt::num(*ax.min) + " .. " + fmt::num(*ax.max);
      }
      if ((ax.min && val < *ax.min) || (ax.max && val > *ax.max)) tip += "\nOUTSIDE the travel range";
    } else if (auto l = limit_of(ax, hover_d)) {
      tip += '\n';
      tip += fmt::num(100.0 * std::abs(val) / *l, 4) + "% of the limit " + fmt::num(*l) + " " + unit;
    } else {
      tip += "\n(no limit given)";
    }
    for (const Violation& vi : p->report.violations)
      if (int(vi.axis) == hover_axis && int(vi.quantity) == hover_d && t >= vi.t_start && t <= vi.t_end) {
        tip += "\nin a violation, t ";
        tip += fmt::num(vi.t_start, 5) + " .. " + fmt::num(vi.t_end, 5) + " s";
      }
    ImGui::SetTooltip("%s", tip.c_str());
    dl->AddLine({m.x, hover_r.min.y}, {m.x, hover_r.max.y}, rgba(255, 255, 255, 70));
  }
  ImGui::EndChild();
  ImGui::End();
}

}  // namespace c2path::viewer
