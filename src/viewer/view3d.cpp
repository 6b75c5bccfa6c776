// The 3D (or 2D) view of the path: axis mapping, orbit/pan/zoom, numbered waypoint handles that
// can be dragged in the view plane, the path coloured by % of limit or speed, the pose at the
// playhead. Only drawing math here: positions come from the library's trajectory.

#include <imgui.h>

#include <algorithm>
#include <cmath>
#include <string>
#include <unordered_map>

#include "app.hpp"
#include "format.hpp"
#include "style.hpp"

namespace c2path::viewer {

namespace {
constexpr ImGuiWindowFlags kPanel = ImGuiWindowFlags_NoTitleBar | ImGuiWindowFlags_NoResize | ImGuiWindowFlags_NoMove |
                                    ImGuiWindowFlags_NoCollapse | ImGuiWindowFlags_NoSavedSettings |
                                    ImGuiWindowFlags_NoBringToFrontOnFocus | ImGuiWindowFlags_NoScrollbar |
                                    ImGuiWindowFlags_NoScrollWithMouse;
constexpr float kPi = 3.14159265358979f;
inline float cross(ImVec2 a, ImVec2 b) { return a.x * b.y - a.y * b.x; }
inline float dist2(ImVec2 a, ImVec2 b) { return (a.x - b.x) * (a.x - b.x) + (a.y - b.y) * (a.y - b.y); }

std::string coord_label(const Scene& s, int m) {
  if (m == kMapTime) return "time [s]";
  if (m < 0) return "";
  const AxisSpec& a = s.axes[std::size_t(m)];
  return a.unit.empty() ? a.name : a.name + " [" + a.unit + "]";
}
}  // namespace

void App::frame_all() {
  zoom_ = 1.0f;
  pan_ = {0, 0};
  if (!have_samples_) return;
  double lo[3], hi[3];
  for (int c = 0; c < 3; ++c) {
    const int m = map_[c];
    if (m >= 0) {
      lo[c] = samples().lo[0][m];
      hi[c] = samples().hi[0][m];
    } else if (m == kMapTime) {
      lo[c] = samples().t.front();
      hi[c] = samples().t.back();
    } else {
      lo[c] = hi[c] = 0.0;
    }
    centre_[c] = 0.5 * (lo[c] + hi[c]);
    half_[c] = 0.5 * (hi[c] - lo[c]);
  }
  if (equal_scale_) {
    double h = 0;
    for (int c = 0; c < 3; ++c)
      if (map_[c] >= 0) h = std::max(h, half_[c]);
    for (int c = 0; c < 3; ++c)
      if (map_[c] >= 0) half_[c] = h;
  }
  for (int c = 0; c < 3; ++c)
    if (!(half_[c] > 1e-12 * std::max(1.0, std::abs(centre_[c])))) half_[c] = std::max(1e-3, 0.1 * std::abs(centre_[c]));
}

void App::coords_of_sample(std::size_t i, double c[3]) const {
  for (int k = 0; k < 3; ++k) {
    const int m = map_[k];
    double v = 0.0;
    if (m >= 0) v = samples().q[0][std::size_t(m) * samples().n + i];
    else if (m == kMapTime) v = samples().t[i];
    c[k] = m == kMapNone ? 0.0 : (v - centre_[k]) / half_[k];
  }
}

void App::coords_of_point(const std::vector<double>& q, double t, double c[3]) const {
  for (int k = 0; k < 3; ++k) {
    const int m = map_[k];
    double v = 0.0;
    if (m >= 0 && std::size_t(m) < q.size()) v = q[std::size_t(m)];
    else if (m == kMapTime) v = t;
    c[k] = m == kMapNone ? 0.0 : (v - centre_[k]) / half_[k];
  }
}

void App::update_xform() {
  // Orthographic view: yaw about Z, then pitch about the screen's horizontal axis.
  const float yaw = is_3d() ? yaw_ : 0.0f, pitch = is_3d() ? pitch_ : kPi / 2;
  const float cy = std::cos(yaw), sy = std::sin(yaw), cp = std::cos(pitch), sp = std::sin(pitch);
  // screen x = (x1 + pan.x) * scale, screen up = (cp z + sp y1 + pan.y) * scale,
  // x1 = cy x - sy y, y1 = sy x + cy y.
  xf_[0][0] = cy * scale_;
  xf_[0][1] = -sy * scale_;
  xf_[0][2] = 0.0f;
  xf_[1][0] = -sp * sy * scale_;
  xf_[1][1] = -sp * cy * scale_;
  xf_[1][2] = -cp * scale_;
  xf_o_ = {origin_.x + pan_.x * scale_, origin_.y - pan_.y * scale_};
}

ImVec2 App::project(const double c[3]) const {
  const float x = float(c[0]), y = float(c[1]), z = float(c[2]);
  return {xf_o_.x + xf_[0][0] * x + xf_[0][1] * y + xf_[0][2] * z, xf_o_.y + xf_[1][0] * x + xf_[1][1] * y + xf_[1][2] * z};
}

void App::update_speed() {
  if (speed_generation_ == seen_generation_ && std::equal(map_, map_ + 3, speed_map_)) return;
  speed_generation_ = seen_generation_;
  std::copy(map_, map_ + 3, speed_map_);
  const std::size_t n = samples().n;
  speed_.assign(n, 0.0f);
  for (int c = 0; c < 3; ++c) {
    if (map_[c] < 0) continue;
    const float* v = samples().series(1, std::size_t(map_[c]));
    for (std::size_t i = 0; i < n; ++i) speed_[i] += v[i] * v[i];
  }
  speed_max_ = 0.0f;
  for (auto& s : speed_) {
    s = std::sqrt(s);
    speed_max_ = std::max(speed_max_, s);
  }
}

void App::draw_grid(ImDrawList* dl) {
  const Scene& s = doc_.shown()->scene;
  const int kLines = 8;
  const double z0 = is_3d() ? -1.0 : 0.0;
  for (int i = 0; i <= kLines; ++i) {
    const double f = -1.0 + 2.0 * double(i) / kLines;
    const double a[3] = {f, -1, z0}, b[3] = {f, 1, z0}, c[3] = {-1, f, z0}, d[3] = {1, f, z0};
    const ImU32 colr = (i == 0 || i == kLines) ? col::kGridStrong : col::kGrid;
    dl->AddLine(project(a), project(b), colr, 1.0f);
    dl->AddLine(project(c), project(d), colr, 1.0f);
  }
  // The three edges from the low corner, labelled with the mapped quantity and its range.
  const double o[3] = {-1, -1, z0};
  for (int c = 0; c < 3; ++c) {
    if (map_[c] == kMapNone) continue;
    double e[3] = {-1, -1, z0};
    e[c] = 1.0;
    if (c == 2) e[2] = 1.0;
    const ImVec2 po = project(o), pe = project(e);
    dl->AddLine(po, pe, col::kGridStrong, 1.0f);
    const std::string name = coord_label(s, map_[c]);
    const std::string lo = fmt::num(centre_[c] - half_[c], 4), hi = fmt::num(centre_[c] + half_[c], 4);
    const char* which = c == 0 ? "X " : c == 1 ? "Y " : "Z ";
    dl->AddText({pe.x + 4, pe.y - 6}, col::kText, (which + name).c_str());
    dl->AddText({pe.x + 4, pe.y + 7}, col::kTextDim, hi.c_str());
    dl->AddText({po.x - 60.0f, po.y - 6.0f + 13.0f * float(c)}, col::kTextDim, (which + lo).c_str());
  }
}

void App::draw_path(ImDrawList* dl) {
  const std::size_t n = samples().n;
  if (n < 2) return;
  // The thinned path depends only on the plan, the mapping, the camera and the colouring: when
  // none changed since the last frame, the segments are drawn again as they are.
  std::vector<float> key = {float(seen_generation_), float(map_[0]), float(map_[1]), float(map_[2]), xf_[0][0], xf_[0][1],
                            xf_[0][2], xf_[1][0], xf_[1][1], xf_[1][2], xf_o_.x, xf_o_.y, float(colour_),
                            float(centre_[0]), float(centre_[1]), float(centre_[2]), float(half_[0]), float(half_[1]), float(half_[2])};
  if (key != path_key_) {
    path_key_ = key;
    thin_path();
  }
  // Draw runs of one colour as polylines (joined), beyond-limit runs thicker.
  const auto& segs = segs_;
  std::size_t i = 0, since_split = 0;
  while (i < segs.size()) {
    // Every few dozen segments (between runs, so the strokes stay as they are) a new draw
    // command: an edit that changes part of the path then redraws only that part (present.hpp).
    if (since_split >= 48) {
      dl->AddDrawCmd();
      since_split = 0;
    }
    const ImU32 colr = ramp(segs[i].v);
    const bool beyond = segs[i].v > 1.0f;
    dl->PathLineTo(segs[i].a);
    std::size_t j = i;
    while (j < segs.size() && ramp(segs[j].v) == colr && (j == i || dist2(segs[j].a, segs[j - 1].b) < 0.01f)) {
      dl->PathLineTo(segs[j].b);
      ++j;
    }
    dl->PathStroke(colr, 0, beyond ? 4.0f : 3.0f);  // integer widths: textured AA lines
    since_split += j - i;
    i = j;
  }
}

ThinParams App::thin_params() const {
  ThinParams tp;
  std::copy(map_, map_ + 3, tp.map);
  tp.speed = colour_ == ColourBy::kSpeed;
  std::copy(centre_, centre_ + 3, tp.centre);
  std::copy(half_, half_ + 3, tp.half);
  tp.step = std::floor(std::log2(std::max(scale_, 1e-6f)) * 2.0f);
  return tp;
}

void App::thin_path() {
  // The view-independent thinning: usually done on the planning thread with the parameters of
  // the frame the plan started in (see App::App); again here when they changed since.
  const ThinParams tp = thin_params();
  if (!(tp == pre_params_) || pre_generation_ != seen_generation_) {
    const Planned* p = doc_.shown();
    std::shared_ptr<const PathThin> thin = p ? p->thin : nullptr;
    if (!thin || !(thin->params == tp) || p->samples != samples_p_) thin = std::make_shared<const PathThin>(thin_path_3d(samples(), tp));
    pre_params_ = tp;
    pre_generation_ = seen_generation_;
    pre_idx_ = thin->idx;
    pre_val_ = thin->val;
  }
  const std::size_t n = pre_idx_.size();
  proj_.resize(n);
  double c[3];
  for (std::size_t k = 0; k < n; ++k) {
    coords_of_sample(pre_idx_[k], c);
    proj_[k] = project(c);
  }
  const std::vector<float>& val = pre_val_;  // colour value per kept point
  auto level = [](float v) { return v > 1.0f ? 1000 : int(v * 40.0f); };

  // Thinning by screen-space error: a run from the anchor is extended while every point stays
  // within kTol pixels of the line from the anchor to the run's end (a cone of admissible
  // directions, narrowed by each point; O(n)). A run also ends where the colour changes.
  constexpr float kTol = 0.3f, kTol2 = kTol * kTol;  // plus at most 0.3 px from prethin_path()
  auto& segs = segs_;
  segs.clear();
  std::size_t anchor = 0, last = 0;
  float run_max = val[0];
  int run_level = level(val[0]);
  bool cone = false;
  ImVec2 L{0, 0}, R{0, 0};
  for (std::size_t i = 1; i < n; ++i) {
    ImVec2 d{proj_[i].x - proj_[anchor].x, proj_[i].y - proj_[anchor].y};
    float r2 = d.x * d.x + d.y * d.y;
    if (r2 <= kTol2) {
      last = i;
      run_max = std::max(run_max, val[i]);
      continue;
    }
    float r = std::sqrt(r2);
    ImVec2 u{d.x / r, d.y / r};
    const int li = level(val[i]);
    const bool inside = cone && cross(R, u) >= 0.0f && cross(u, L) >= 0.0f;
    if (li != run_level || (cone && !inside)) {
      if (last != anchor) segs.push_back({proj_[anchor], proj_[last], run_max});
      anchor = last;
      run_level = li;
      run_max = val[i];
      cone = false;
      d = {proj_[i].x - proj_[anchor].x, proj_[i].y - proj_[anchor].y};
      r2 = d.x * d.x + d.y * d.y;
      if (r2 <= kTol2) {
        last = i;
        continue;
      }
      r = std::sqrt(r2);
      u = {d.x / r, d.y / r};
    }
    const float sn = kTol / r, cs = std::sqrt(std::max(0.0f, 1.0f - sn * sn));
    const ImVec2 left{u.x * cs - u.y * sn, u.x * sn + u.y * cs}, right{u.x * cs + u.y * sn, -u.x * sn + u.y * cs};
    if (!cone) {
      L = left;
      R = right;
      cone = true;
    } else {
      if (cross(L, left) < 0.0f) L = left;
      if (cross(R, right) > 0.0f) R = right;
    }
    last = i;
    run_max = std::max(run_max, val[i]);
  }
  if (last != anchor) segs.push_back({proj_[anchor], proj_[last], run_max});
  drawn_segments_ = segs.size();
}

void App::move_waypoint_live(std::size_t k, const std::vector<double>& q) {
  if (!doc_.has_scene() || k >= doc_.scene().waypoints.size() || q.size() != doc_.scene().waypoints[k].q.size()) return;
  if (q == doc_.scene().waypoints[k].q) return;
  doc_.begin_gesture();  // no-op inside the gesture already open
  // Only this waypoint moves: its normalised coordinates are updated alone (the others and the
  // handle pre-selection are kept until the gesture ends).
  const bool coords_current = handle_c3_edits_ == doc_.edits() && 3 * k + 2 < handle_c3_.size();
  Waypoint& w = doc_.edit().waypoints[k];
  w.q = q;
  doc_.changed_waypoint(k);
  if (coords_current) {
    const Planned* p = doc_.shown();
    const bool times_ok = p && std::size_t(p->plan.waypoint_times.size()) == doc_.scene().waypoints.size();
    double c[3];
    coords_of_point(w.q, times_ok ? p->plan.waypoint_times[Index(k)] : w.t.value_or(0.0), c);
    for (int j = 0; j < 3; ++j) handle_c3_[3 * k + std::size_t(j)] = float(c[j]);
    handle_c3_edits_ = doc_.edits();
    handles_stale_ = true;
  }
}

void App::end_live_edit() {
  doc_.end_gesture();
  if (handles_stale_) {
    handles_stale_ = false;
    ++handle_c3_version_;
  }
}

ImVec2 App::handle_pos(std::size_t k) const {
  if (3 * k + 2 >= handle_c3_.size()) return {-1, -1};
  const float* c = &handle_c3_[3 * k];
  return {xf_o_.x + xf_[0][0] * c[0] + xf_[0][1] * c[1] + xf_[0][2] * c[2], xf_o_.y + xf_[1][0] * c[0] + xf_[1][1] * c[1] + xf_[1][2] * c[2]};
}

void App::update_handle_coords() {
  const Scene& s = doc_.scene();
  const Planned* p = doc_.shown();
  const std::size_t n = s.waypoints.size();
  // Normalised coordinates change only with the scene, the mapping and (when time is mapped)
  // the plan's waypoint times.
  std::vector<float> ckey;
  for (int k = 0; k < 3; ++k) {
    ckey.push_back(float(map_[k]));
    ckey.push_back(float(centre_[k]));
    ckey.push_back(float(half_[k]));
  }
  ckey.push_back(float(n));
  if (map_[0] == kMapTime || map_[1] == kMapTime || map_[2] == kMapTime) ckey.push_back(float(seen_generation_));
  if (ckey == handle_ckey_ && handle_c3_edits_ == doc_.edits() && handle_c3_.size() == 3 * n) return;
  handle_ckey_ = ckey;
  handle_c3_edits_ = doc_.edits();
  ++handle_c3_version_;
  handle_c3_.resize(3 * n);
  const bool times_ok = p && std::size_t(p->plan.waypoint_times.size()) == n;
  double c[3];
  for (std::size_t k = 0; k < n; ++k) {
    const Waypoint& w = s.waypoints[k];
    const double t = times_ok ? p->plan.waypoint_times[Index(k)] : w.t.value_or(0.0);
    coords_of_point(w.q, t, c);
    for (int j = 0; j < 3; ++j) handle_c3_[3 * k + std::size_t(j)] = float(c[j]);
  }
}

void App::preselect_handles() {
  // View-independent pre-selection: an orthographic view maps a 3D distance d to at most
  // d * scale pixels, so a waypoint within r = kReach / (the largest scale of this zoom step) of
  // a chosen one is drawn within kReach px of it whatever the orientation. Greedy in waypoint
  // order over a 3D grid of cells r wide; every other waypoint joins the chosen one it is near.
  // The chosen ones are grouped in runs of kBlock with a bounding sphere, so a frame projects
  // only runs that can reach the view.
  const float step = std::floor(std::log2(std::max(scale_, 1e-6f)) * 2.0f);
  const std::vector<float> key = {float(handle_c3_version_), step};
  if (key == sel_key_) return;
  sel_key_ = key;
  const std::size_t n = handle_c3_.size() / 3;
  const float r = kHandleReach / std::exp2((step + 1.0f) * 0.5f), r2 = r * r;
  sel_.clear();
  sel_count_.clear();
  std::vector<std::uint32_t> owner(n, 0);
  std::unordered_map<std::uint64_t, std::vector<std::uint32_t>> grid;  // cell -> chosen (positions in sel_)
  auto cell = [&](const float* c, int dx, int dy, int dz) {
    const auto q = [&](float v, int d) { return std::uint64_t(std::int64_t(std::floor(v / r)) + d + (1 << 20)) & 0x1fffff; };
    return q(c[0], dx) << 42 | q(c[1], dy) << 21 | q(c[2], dz);
  };
  auto choose = [&](std::size_t k) {
    owner[k] = std::uint32_t(sel_.size());
    grid[cell(&handle_c3_[3 * k], 0, 0, 0)].push_back(std::uint32_t(sel_.size()));
    sel_.push_back(std::uint32_t(k));
    sel_count_.push_back(1);
  };
  if (n > 0) choose(0);
  if (n > 1) choose(n - 1);
  for (std::size_t k = 1; k + 1 < n; ++k) {
    const float* c = &handle_c3_[3 * k];
    int near = -1;
    for (int dz = -1; dz <= 1 && near < 0; ++dz)
      for (int dy = -1; dy <= 1 && near < 0; ++dy)
        for (int dx = -1; dx <= 1 && near < 0; ++dx) {
          const auto it = grid.find(cell(c, dx, dy, dz));
          if (it == grid.end()) continue;
          for (std::uint32_t si : it->second) {
            const float* o = &handle_c3_[3 * sel_[si]];
            if ((c[0] - o[0]) * (c[0] - o[0]) + (c[1] - o[1]) * (c[1] - o[1]) + (c[2] - o[2]) * (c[2] - o[2]) <= r2) {
              near = int(si);
              break;
            }
          }
        }
    if (near >= 0) {
      owner[k] = std::uint32_t(near);
      ++sel_count_[std::size_t(near)];
    } else {
      choose(k);
    }
  }
  // Members of each chosen waypoint (for the hover search), in waypoint order.
  member_start_.assign(sel_.size() + 1, 0);
  for (std::size_t k = 0; k < n; ++k) ++member_start_[owner[k] + 1];
  for (std::size_t i = 0; i < sel_.size(); ++i) member_start_[i + 1] += member_start_[i];
  members_.resize(n);
  std::vector<std::uint32_t> fill(member_start_.begin(), member_start_.end() - 1);
  for (std::size_t k = 0; k < n; ++k) members_[fill[owner[k]]++] = std::uint32_t(k);
  // Runs of chosen waypoints with bounding spheres (centre: the box centre).
  blocks_.clear();
  for (std::size_t b = 0; b < sel_.size(); b += kBlock) {
    const std::size_t e = std::min(sel_.size(), b + kBlock);
    float lo[3] = {1e30f, 1e30f, 1e30f}, hi[3] = {-1e30f, -1e30f, -1e30f};
    for (std::size_t i = b; i < e; ++i)
      for (int j = 0; j < 3; ++j) {
        lo[j] = std::min(lo[j], handle_c3_[3 * sel_[i] + std::size_t(j)]);
        hi[j] = std::max(hi[j], handle_c3_[3 * sel_[i] + std::size_t(j)]);
      }
    Block blk;
    for (int j = 0; j < 3; ++j) blk.c[j] = 0.5f * (lo[j] + hi[j]);
    float rad2 = 0.0f;
    for (std::size_t i = b; i < e; ++i) {
      const float* c = &handle_c3_[3 * sel_[i]];
      rad2 = std::max(rad2, (c[0] - blk.c[0]) * (c[0] - blk.c[0]) + (c[1] - blk.c[1]) * (c[1] - blk.c[1]) + (c[2] - blk.c[2]) * (c[2] - blk.c[2]));
    }
    blk.r = std::sqrt(rad2);
    blocks_.push_back(blk);
  }
}

void App::draw_handles(ImDrawList* dl, bool hovered_canvas) {
  const Scene& s = doc_.scene();
  const std::size_t n = s.waypoints.size();
  const ImVec2 mouse = ImGui::GetMousePos();
  const Rect& vr = view_rect_;
  auto in_view = [&](ImVec2 pt) { return pt.x >= vr.min.x && pt.x < vr.max.x && pt.y >= vr.min.y && pt.y < vr.max.y; };
  auto proj = [&](const float* c) {
    return ImVec2{xf_o_.x + xf_[0][0] * c[0] + xf_[0][1] * c[1] + xf_[0][2] * c[2], xf_o_.y + xf_[1][0] * c[0] + xf_[1][1] * c[1] + xf_[1][2] * c[2]};
  };
  update_handle_coords();
  preselect_handles();

  // Which handles to draw: cached while the waypoints, the mapping and the camera stay the same.
  // Screen-space thinning of the pre-selected waypoints: a handle is drawn only where no other
  // handle is within a cell's reach; crowded views (many waypoints in view) get small dots.
  std::vector<float> key(path_key_.begin() + 1, path_key_.end());
  key.push_back(float(handle_c3_version_));
  key.push_back(sel_key_[1]);
  key.push_back(vr.min.x);
  key.push_back(vr.min.y);
  key.push_back(vr.max.x);
  key.push_back(vr.max.y);
  if (key != handle_key_) {
    handle_key_ = key;
    sel_proj_.resize(sel_.size());
    block_live_.assign(blocks_.size(), 0);
    std::size_t visible = 0;  // waypoints in view, counted through the ones they joined
    for (std::size_t b = 0; b < blocks_.size(); ++b) {
      const ImVec2 pc = proj(blocks_[b].c);
      const float rr = blocks_[b].r * scale_ + kHandleReach + 12.0f;  // reach of the run on screen, plus a handle
      if (pc.x + rr < vr.min.x || pc.x - rr > vr.max.x || pc.y + rr < vr.min.y || pc.y - rr > vr.max.y) continue;
      block_live_[b] = 1;
      for (std::size_t i = b * kBlock; i < std::min(sel_.size(), (b + 1) * kBlock); ++i) {
        sel_proj_[i] = proj(&handle_c3_[3 * sel_[i]]);
        if (in_view(sel_proj_[i])) visible += sel_count_[i];
      }
    }
    handles_dense_ = visible > 300;
    // A grid of cells D / sqrt(2) wide holds at most one drawn handle each; a new handle is drawn
    // when no drawn handle within 2 cells is closer than D.
    const float dmin = handles_dense_ ? 12.0f : 18.0f, cell = dmin / 1.41421356f;
    const int gw = std::max(1, int((vr.max.x - vr.min.x) / cell) + 1), gh = std::max(1, int((vr.max.y - vr.min.y) / cell) + 1);
    occupied_.assign(std::size_t(gw) * std::size_t(gh), 0u);  // position in sel_ + 1 of the handle in the cell
    auto cell_of = [&](ImVec2 pt, int& cx, int& cy) {
      cx = std::clamp(int((pt.x - vr.min.x) / cell), 0, gw - 1);
      cy = std::clamp(int((pt.y - vr.min.y) / cell), 0, gh - 1);
    };
    auto free_at = [&](ImVec2 pt) {
      int cx = 0, cy = 0;
      cell_of(pt, cx, cy);
      if (occupied_[std::size_t(cy * gw + cx)]) return false;  // same cell: closer than D (the common case)
      for (int y = std::max(0, cy - 2); y <= std::min(gh - 1, cy + 2); ++y)
        for (int x = std::max(0, cx - 2); x <= std::min(gw - 1, cx + 2); ++x) {
          const std::uint32_t o = occupied_[std::size_t(y * gw + x)];
          if (o && dist2(sel_proj_[o - 1], pt) < dmin * dmin) return false;
        }
      return true;
    };
    auto take = [&](std::size_t i) {
      int cx = 0, cy = 0;
      cell_of(sel_proj_[i], cx, cy);
      occupied_[std::size_t(cy * gw + cx)] = std::uint32_t(i + 1);
    };
    handle_list_.clear();
    // sel_[0] is the first waypoint, sel_[1] the last.
    if (!sel_.empty() && block_live_[0] && in_view(sel_proj_[0])) take(0);
    if (sel_.size() > 1 && block_live_[0] && in_view(sel_proj_[1]) && free_at(sel_proj_[1])) take(1);
    for (std::size_t i = 2; i < sel_.size(); ++i) {
      if (!block_live_[i / kBlock]) continue;
      const ImVec2 pt = sel_proj_[i];
      if (!in_view(pt) || !free_at(pt)) continue;
      take(i);
      handle_list_.push_back(sel_[i]);
    }
  }

  // The waypoint under the mouse (any waypoint, drawn or not): every waypoint is within
  // kHandleReach px of the pre-selected one it joined, so only those near the mouse are searched.
  float best = 9.0f * 9.0f;
  int hover = -1;
  if (hovered_canvas) {
    const float reach = 9.0f + kHandleReach;
    for (std::size_t b = 0; b < blocks_.size(); ++b) {
      if (!block_live_[b]) continue;
      const ImVec2 pc = proj(blocks_[b].c);
      const float rr = blocks_[b].r * scale_ + reach;
      if (dist2(pc, mouse) > rr * rr) continue;
      for (std::size_t i = b * kBlock; i < std::min(sel_.size(), (b + 1) * kBlock); ++i) {
        if (dist2(sel_proj_[i], mouse) > reach * reach) continue;
        for (std::uint32_t m = member_start_[i]; m < member_start_[i + 1]; ++m) {
          const std::uint32_t k = members_[m];
          const float d2m = dist2(proj(&handle_c3_[3 * k]), mouse);
          if (d2m < best || (d2m == best && int(k) < hover)) {
            best = d2m;
            hover = int(k);
          }
        }
      }
    }
  }
  if (drag_wp_ < 0) hover_wp_ = hover;
  drawn_handles_ = 0;
  auto draw_one = [&](std::size_t k, bool numbered) {
    const ImVec2 pt = handle_pos(k);
    const Waypoint& w = s.waypoints[k];
    ++drawn_handles_;
    if (!numbered) {
      dl->AddCircleFilled(pt, 2.0f, rgba(196, 200, 206, 150), 6);  // dense view: a small, see-through dot
      return;
    }
    const bool sel = int(k) == selected_ || int(k) == drag_wp_;
    const bool hot = int(k) == hover_wp_;
    const float r = sel || hot ? 9.0f : 7.5f;
    const ImU32 fill = sel ? col::kHandleSel : hot ? rgba(230, 232, 236) : col::kHandle;
    if (w.stop) {
      dl->AddRectFilled({pt.x - r, pt.y - r}, {pt.x + r, pt.y + r}, fill, 2.0f);
      dl->AddRect({pt.x - r, pt.y - r}, {pt.x + r, pt.y + r}, col::kHandleRim, 2.0f, 0, 1.0f);
    } else {
      dl->AddCircleFilled(pt, r, fill, 14);
      dl->AddCircle(pt, r, col::kHandleRim, 14, 1.0f);
    }
    if (sel) dl->AddCircle(pt, r + 3.0f, col::kCaution, 24, 2.0f);
    const std::string label = std::to_string(k + 1);
    const ImVec2 ts = ImGui::CalcTextSize(label.c_str());
    if (ts.x <= 2.0f * r + 1.0f) dl->AddText({pt.x - ts.x * 0.5f, pt.y - ts.y * 0.5f}, col::kHandleRim, label.c_str());
    else {
      dl->AddRectFilled({pt.x + r + 1.0f, pt.y - ts.y * 0.5f}, {pt.x + r + 3.0f + ts.x, pt.y + ts.y * 0.5f}, rgba(16, 18, 23, 170), 2.0f);
      dl->AddText({pt.x + r + 2.0f, pt.y - ts.y * 0.5f}, col::kText, label.c_str());
    }
  };
  auto special = [&](std::size_t k) {
    return int(k) == selected_ || int(k) == hover_wp_ || int(k) == drag_wp_ || k == 0 || k + 1 == n;
  };
  for (std::size_t k : handle_list_)
    if (!special(k)) draw_one(k, !handles_dense_);
  for (int k : {0, int(n) - 1, selected_, drag_wp_, hover_wp_})
    if (k >= 0 && std::size_t(k) < n && in_view(handle_pos(std::size_t(k)))) draw_one(std::size_t(k), true);
}

void App::draw_pose(ImDrawList* dl) {
  const auto& tr = *doc_.shown()->plan.trajectory;
  Eigen::VectorXd q(tr.axes());
  tr.eval(t_, 0, q);
  std::vector<double> qv(q.data(), q.data() + q.size());
  double c[3];
  coords_of_point(qv, t_, c);
  const ImVec2 pt = project(c);
  dl->AddCircle(pt, 11.0f, rgba(0, 0, 0, 160), 28, 5.0f);
  dl->AddCircle(pt, 11.0f, col::kPose, 28, 2.0f);
  dl->AddLine({pt.x - 17, pt.y}, {pt.x - 6, pt.y}, col::kPose, 2.0f);
  dl->AddLine({pt.x + 6, pt.y}, {pt.x + 17, pt.y}, col::kPose, 2.0f);
  dl->AddLine({pt.x, pt.y - 17}, {pt.x, pt.y - 6}, col::kPose, 2.0f);
  dl->AddLine({pt.x, pt.y + 6}, {pt.x, pt.y + 17}, col::kPose, 2.0f);
  const std::string lab = "t " + fmt::num(t_, 4) + " s";
  dl->AddText({pt.x + 14, pt.y - 22}, col::kPose, lab.c_str());
}

void App::view_panel(const ImVec2& pos, const ImVec2& size) {
  ImGui::SetNextWindowPos(pos);
  ImGui::SetNextWindowSize(size);
  ImGui::Begin("##view", nullptr, kPanel);
  const Planned* p = doc_.shown();

  // Header: axis mapping and colour quantity.
  if (p) {
    const Scene& s = p->scene;
    static const char* kWhich[] = {"X", "Y", "Z"};
    for (int c = 0; c < 3; ++c) {
      ImGui::PushID(c);
      if (c > 0) ImGui::SameLine();
      ImGui::AlignTextToFramePadding();
      ImGui::TextUnformatted(kWhich[c]);
      ImGui::SameLine();
      ImGui::SetNextItemWidth(96);
      const std::string cur = map_[c] >= 0 ? s.axes[std::size_t(map_[c])].name : map_[c] == kMapTime ? "(time)" : "(none)";
      if (ImGui::BeginCombo("##map", cur.c_str())) {
        for (int a = 0; a < int(s.axes.size()); ++a)
          if (ImGui::Selectable(s.axes[std::size_t(a)].name.c_str(), map_[c] == a)) { map_[c] = a; frame_all(); }
        if (ImGui::Selectable("(time)", map_[c] == kMapTime)) { map_[c] = kMapTime; frame_all(); }
        if (c > 0 && ImGui::Selectable("(none)", map_[c] == kMapNone)) { map_[c] = kMapNone; frame_all(); }
        ImGui::EndCombo();
      }
      ImGui::PopID();
    }
    ImGui::SameLine(0, 16);
    ImGui::AlignTextToFramePadding();
    ImGui::TextUnformatted("colour");
    ImGui::SameLine();
    ImGui::SetNextItemWidth(150);
    int ci = colour_ == ColourBy::kSpeed ? 1 : 0;
    static const char* kColourNames[] = {"highest % of limit", "speed (X, Y, Z axes)"};
    if (ImGui::Combo("##colour", &ci, kColourNames, 2)) colour_ = ci == 1 ? ColourBy::kSpeed : ColourBy::kLimitPct;
    ImGui::SameLine();
    if (ImGui::Checkbox("same scale", &equal_scale_)) frame_all();
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("one scale for all mapped axes (true proportions when they share a unit)");

    // Legend: the ramp with its meaning.
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const ImVec2 l0 = ImGui::GetCursorScreenPos();
    const float lw = 220.0f, lh = 10.0f, ly = l0.y + 4.0f;
    const int kSteps = 44;
    for (int i = 0; i < kSteps; ++i) {
      const float a = float(i) / float(kSteps), b = float(i + 1) / float(kSteps);
      dl->AddRectFilled({l0.x + a * lw, ly}, {l0.x + b * lw + 0.5f, ly + lh}, ramp(a));
    }
    std::string lo_lab, hi_lab;
    if (colour_ == ColourBy::kLimitPct) {
      dl->AddRectFilled({l0.x + lw + 8, ly}, {l0.x + lw + 30, ly + lh}, ramp(2.0f));
      lo_lab = "0";
      hi_lab = "100% of the nearest limit (vel, acc, jerk)";
      dl->AddText({l0.x + lw + 34, ly - 2}, col::kText, "beyond a limit");
    } else {
      update_speed();
      std::string unit;
      for (int c = 0; c < 3; ++c)
        if (map_[c] >= 0) {
          const std::string& u = s.axes[std::size_t(map_[c])].unit;
          if (unit.empty()) unit = u;
          else if (unit != u) unit = "mixed units";
        }
      lo_lab = "0";
      hi_lab = fmt::num(speed_max_, 4) + " " + (unit.empty() ? "unit" : unit) + "/s (peak)";
    }
    ImGui::Dummy({lw, lh + 16.0f});
    dl->AddText({l0.x, ly + lh + 1}, col::kTextDim, lo_lab.c_str());
    const ImVec2 hs = ImGui::CalcTextSize(hi_lab.c_str());
    (void)hs;
    dl->AddText({l0.x + 14.0f, ly + lh + 1}, col::kTextDim, ("..  " + hi_lab).c_str());
    const char* hint = is_3d() ? "drag: orbit | right: pan | wheel: zoom | handle: move" : "drag: pan | wheel: zoom | handle: move";
    ImGui::SameLine(lw + 230.0f);
    if (ImGui::GetContentRegionAvail().x >= ImGui::CalcTextSize(hint).x) ImGui::TextColored(ImColor(col::kTextDim), "%s", hint);
    else ImGui::NewLine();
  }
  if (!doc_.load_error().empty())
    ImGui::TextColored(ImColor(col::kBad), "%s\nFix the file and press R to reload.", doc_.load_error().c_str());
  else if (!doc_.edit_error().empty()) {
    ImGui::PushTextWrapPos(0.0f);
    ImGui::TextColored(ImColor(col::kWarn), "This edit cannot be planned: %s. Showing the last valid plan.",
                       doc_.edit_error().c_str());
    ImGui::PopTextWrapPos();
  }

  // Canvas.
  const ImVec2 c0 = ImGui::GetCursorScreenPos();
  ImVec2 avail = ImGui::GetContentRegionAvail();
  avail.x = std::max(avail.x, 50.0f);
  avail.y = std::max(avail.y, 50.0f);
  ImGui::InvisibleButton("##canvas", avail,
                         ImGuiButtonFlags_MouseButtonLeft | ImGuiButtonFlags_MouseButtonRight | ImGuiButtonFlags_MouseButtonMiddle);
  const bool hovered = ImGui::IsItemHovered();
  const bool active = ImGui::IsItemActive();
  view_rect_ = {c0, {c0.x + avail.x, c0.y + avail.y}};
  ImDrawList* dl = ImGui::GetWindowDrawList();
  dl->PushClipRect(view_rect_.min, view_rect_.max, true);
  backdrop(view_rect_, col::kCanvas);
  if (!have_samples_ || !doc_.has_scene()) {
    const char* msg = doc_.has_scene() ? "No valid plan yet: see the message above." : "No scene loaded.";
    const ImVec2 ts = ImGui::CalcTextSize(msg);
    dl->AddText({c0.x + (avail.x - ts.x) * 0.5f, c0.y + (avail.y - ts.y) * 0.5f}, col::kTextDim, msg);
    dl->PopClipRect();
    ImGui::End();
    return;
  }
  origin_ = {c0.x + avail.x * 0.5f, c0.y + avail.y * 0.5f};
  // At zoom 1 the box [-1, 1]^3 fits whatever the orientation (its bounding sphere fits).
  auto fit_scale = [&] { return zoom_ * (is_3d() ? 0.5f * std::min(avail.x, avail.y * 1.1f) / 1.78f : 0.5f * std::min(avail.x, avail.y) / 1.22f); };
  scale_ = fit_scale();
  update_xform();

  ImGuiIO& io = ImGui::GetIO();
  // Interaction before drawing, so the frame shows its result.
  if (hovered && io.MouseWheel != 0.0f) {
    const ImVec2 m = io.MousePos;
    const float x1 = (m.x - origin_.x) / scale_ - pan_.x, up = (origin_.y - m.y) / scale_ - pan_.y;
    zoom_ = std::clamp(zoom_ * std::pow(1.15f, io.MouseWheel), 0.05f, 200.0f);
    scale_ = fit_scale();
    pan_.x = (m.x - origin_.x) / scale_ - x1;
    pan_.y = (origin_.y - m.y) / scale_ - up;
  }
  if (ImGui::IsItemActivated() && ImGui::IsMouseClicked(0) && hover_wp_ >= 0 &&
      hover_wp_ < int(doc_.scene().waypoints.size())) {
    drag_wp_ = hover_wp_;
    selected_ = drag_wp_;
    scroll_to_selected_ = true;
    drag_q0_ = doc_.scene().waypoints[std::size_t(drag_wp_)].q;
    drag_mouse0_ = io.MousePos;
    doc_.begin_gesture();
  }
  if (drag_wp_ >= 0 && ImGui::IsKeyPressed(ImGui::GetKeyIndex(ImGuiKey_Escape), false)) {
    // Escape: the waypoint goes back where it was and the drag leaves no undo step. The mouse
    // button is still down: it does nothing more until released.
    doc_.cancel_gesture();
    end_live_edit();
    drag_wp_ = -1;
    drag_cancelled_ = true;
  }
  if (drag_cancelled_ && !ImGui::IsMouseDown(0)) drag_cancelled_ = false;
  if (drag_wp_ >= 0) {
    if (ImGui::IsMouseDown(0) && drag_wp_ < int(doc_.scene().waypoints.size())) {
      const float dx = (io.MousePos.x - drag_mouse0_.x) / scale_, dy = -(io.MousePos.y - drag_mouse0_.y) / scale_;
      const float yaw = is_3d() ? yaw_ : 0.0f, pitch = is_3d() ? pitch_ : kPi / 2;
      const float cy = std::cos(yaw), sy = std::sin(yaw), cp = std::cos(pitch), sp = std::sin(pitch);
      // World directions of the screen's right and up vectors (rows of the view rotation).
      const float right[3] = {cy, -sy, 0.0f};
      const float upv[3] = {sp * sy, sp * cy, cp};
      std::vector<double> q = doc_.scene().waypoints[std::size_t(drag_wp_)].q;
      for (int c = 0; c < 3; ++c) {
        const int m = map_[c];
        if (m < 0 || std::size_t(m) >= q.size()) continue;
        q[std::size_t(m)] = drag_q0_[std::size_t(m)] + double(dx * right[c] + dy * upv[c]) * half_[c];
      }
      move_waypoint_live(std::size_t(drag_wp_), q);
    } else {
      end_live_edit();
      drag_wp_ = -1;
    }
  } else if (active && !drag_cancelled_) {
    const ImVec2 d = io.MouseDelta;
    if (ImGui::IsMouseDown(0) && is_3d()) {
      yaw_ += d.x * 0.008f;
      pitch_ = std::clamp(pitch_ + d.y * 0.008f, -kPi / 2, kPi / 2);
    } else if (ImGui::IsMouseDown(0) || ImGui::IsMouseDown(1) || ImGui::IsMouseDown(2)) {
      pan_.x += d.x / scale_;
      pan_.y -= d.y / scale_;
    }
  }
  if (hovered && ImGui::IsMouseDoubleClicked(0) && hover_wp_ < 0) frame_all();
  if (hovered && ImGui::IsMouseClicked(0) && hover_wp_ < 0 && drag_wp_ < 0) { /* orbit, keep selection */ }

  update_xform();
  draw_grid(dl);
  draw_path(dl);
  draw_handles(dl, hovered && drag_wp_ < 0);
  draw_pose(dl);
  if (hover_wp_ >= 0 && hover_wp_ < int(doc_.scene().waypoints.size()) && drag_wp_ < 0) {
    const Waypoint& w = doc_.scene().waypoints[std::size_t(hover_wp_)];
    std::string tip = "waypoint " + std::to_string(hover_wp_ + 1);
    if (w.t) tip += "  t " + fmt::num(*w.t) + " s";
    for (std::size_t a = 0; a < w.q.size() && a < doc_.scene().axes.size(); ++a)
      tip += "\n" + doc_.scene().axes[a].name + " " + fmt::num(w.q[a]) + " " + doc_.scene().axes[a].unit;
    tip += "\ndrag to move it in the view plane (Escape: put it back)";
    ImGui::SetTooltip("%s", tip.c_str());
  }
  dl->PopClipRect();
  ImGui::End();
}

}  // namespace c2path::viewer
