// The viewer's window layout, top bar, caution strip, keys and dialogs (see app.hpp).

#include "app.hpp"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>
#include <imgui_stdlib.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>

#include "format.hpp"
#include "style.hpp"

namespace c2path::viewer {

namespace {
constexpr ImGuiWindowFlags kPanel = ImGuiWindowFlags_NoTitleBar | ImGuiWindowFlags_NoResize | ImGuiWindowFlags_NoMove |
                                    ImGuiWindowFlags_NoCollapse | ImGuiWindowFlags_NoSavedSettings |
                                    ImGuiWindowFlags_NoBringToFrontOnFocus;

bool key(int k, bool repeat = false) { return ImGui::IsKeyPressed(k, repeat); }
}  // namespace

const char* const kCaution =
    "CAUTION: c2path checks the limits it is given, not the machine. Rehearse at reduced speed with the "
    "working area clear and an emergency stop at hand; follow the machine's manual, local codes and "
    "qualified practice.";

App::App(Document& doc, AppOptions options) : doc_(doc), opt_(std::move(options)) {
  colour_ = opt_.colour;
  if (opt_.tab == "waypoints") tab_request_ = 0;
  if (opt_.tab == "report") tab_request_ = 1;
  if (opt_.tab == "view") tab_request_ = 2;
  save_path_ = doc_.path();
  // Planning runs on a worker thread (edits never wait for it); the samples for drawing and the
  // view-independent path thinning are computed there too, with this frame's view parameters.
  doc_.set_background(true);
  doc_.set_derive([this]() -> Document::Derive {
    const ThinParams tp = thin_params();
    return [tp](Planned& p) {
      auto s = std::make_shared<Samples>();
      s->build(p);
      p.thin = std::make_shared<const PathThin>(thin_path_3d(*s, tp));
      p.samples = std::move(s);
    };
  });
}

App::~App() {
  doc_.set_derive({});  // a running plan keeps its own copy of what it needs
}

const Samples& App::samples() const {
  static const Samples kNone{};
  return samples_p_ ? *samples_p_ : kNone;
}

std::string App::stats() const {
  return std::to_string(samples().n) + " samples, " + std::to_string(pre_idx_.size()) + " kept in 3D, " +
         std::to_string(drawn_segments_) + " path segments drawn, " +
         std::to_string(drawn_handles_) + " handles drawn";
}

void App::sync_plan() {
  doc_.replan();
  if (doc_.generation() == seen_generation_) return;
  seen_generation_ = doc_.generation();
  const Planned* p = doc_.shown();
  have_samples_ = p != nullptr;
  if (!p) {
    samples_p_.reset();
    return;
  }
  if (p->samples) samples_p_ = p->samples;
  else {  // planned without the viewer's derive step (loading): sample here
    auto s = std::make_shared<Samples>();
    s->build(*p);
    samples_p_ = std::move(s);
  }
  const int axes = int(samples().axes);
  bool remap = false;
  for (int& m : map_)
    if (m >= axes) remap = true;
  if (remap || need_frame_) default_mapping();
  const double tb = p->plan.trajectory->t_begin(), te = p->plan.trajectory->t_end();
  if (need_frame_) {
    frame_all();
    tv0_ = tb;
    tv1_ = te;
    if (opt_.time_s >= 0.0) t_ = opt_.time_s;
    else t_ = opt_.headless ? tb + 0.4 * (te - tb) : tb;
    need_frame_ = false;
  }
  tv0_ = std::max(tv0_, tb);
  tv1_ = std::min(tv1_, te);
  if (!(tv1_ > tv0_)) { tv0_ = tb; tv1_ = te; }
  if (!(tv1_ > tv0_)) tv1_ = tv0_ + 1.0;  // a move of zero duration: keep the time axis finite
  t_ = std::clamp(t_, tb, te);
}

void App::default_mapping() {
  const int axes = doc_.shown() ? int(doc_.shown()->scene.axes.size()) : 0;
  map_[0] = axes >= 1 ? 0 : kMapNone;
  map_[1] = axes >= 2 ? 1 : (axes == 1 ? kMapTime : kMapNone);
  map_[2] = axes >= 3 ? 2 : kMapNone;
  // Axes of different units are scaled to fill the box; one unit for all: true proportions.
  equal_scale_ = false;
  if (const Planned* p = doc_.shown(); p && axes >= 2) {
    equal_scale_ = true;
    for (int c = 0; c < 3; ++c)
      if (map_[c] >= 0 && p->scene.axes[std::size_t(map_[c])].unit != p->scene.axes[0].unit) equal_scale_ = false;
  }
}

void App::backdrop(const Rect& r, ImU32 colour) {
  ImDrawList* dl = ImGui::GetWindowDrawList();
  const ImVec2 cmin = dl->GetClipRectMin(), cmax = dl->GetClipRectMax();
  Rect c{{std::max(r.min.x, cmin.x), std::max(r.min.y, cmin.y)}, {std::min(r.max.x, cmax.x), std::min(r.max.y, cmax.y)}};
  if (c.valid()) backdrops_.push_back({c, colour});
}

void App::frame(double dt_s) {
  backdrops_.clear();
  save_field_rect_ = save_button_rect_ = replace_button_rect_ = Rect{};
  sync_plan();
  handle_keys();
  if (opt_.spin) {  // measurement: the camera moves every frame (no cached path), playback runs
    yaw_ += 0.01f;
    playing_ = true;
  }
  if (playing_ && have_samples_) {
    const auto& tr = *doc_.shown()->plan.trajectory;
    t_ += dt_s * rate_;
    if (t_ >= tr.t_end()) {
      if (loop_ && tr.duration() > 0) t_ = tr.t_begin() + std::fmod(t_ - tr.t_begin(), tr.duration());
      else { t_ = tr.t_end(); playing_ = false; }
    }
  }

  const ImVec2 ds = ImGui::GetIO().DisplaySize;
  const float line = ImGui::GetTextLineHeightWithSpacing();
  const float top_h = line + 14.0f;
  const float caution_w = ImGui::CalcTextSize(kCaution).x;
  const float caution_h = (caution_w + 24.0f > ds.x ? 2.0f * line : line) + 10.0f;
  const float main_h = std::max(ds.y - top_h - caution_h, 100.0f);
  const float upper_h = std::floor(main_h * 0.55f);
  const float side_w = std::floor(std::clamp(ds.x * 0.36f, 340.0f, 560.0f));

  top_bar({0, 0}, {ds.x, top_h});
  view_panel({0, top_h}, {ds.x - side_w, upper_h});
  side_panel({ds.x - side_w, top_h}, {side_w, upper_h});
  plots_panel({0, top_h + upper_h}, {ds.x, main_h - upper_h});
  caution_strip({0, ds.y - caution_h}, {ds.x, caution_h});
  save_dialog();
  reload_dialog();
}

void App::handle_keys() {
  ImGuiIO& io = ImGui::GetIO();
  if (io.WantTextInput) return;
  const bool ctrl = io.KeyCtrl;
  if (ctrl && key(GLFW_KEY_Z, true)) {
    if (io.KeyShift) doc_.redo(); else doc_.undo();
  }
  if (ctrl && key(GLFW_KEY_Y, true)) doc_.redo();
  if (ctrl && key(GLFW_KEY_S)) open_save_ = true;
  if (ctrl) return;
  if (key(GLFW_KEY_R) || key(GLFW_KEY_F5)) {
    if (doc_.modified()) open_reload_ = true;
    else {
      need_frame_ = true;
      const bool ok = doc_.reload();
      status_ = ok ? "reloaded " + doc_.path() : "reload failed (see the message above the view)";
      status_bad_ = !ok;
    }
  }
  if (doc_.has_scene()) {
    const int n = int(doc_.scene().waypoints.size());
    if (selected_ >= n) selected_ = n - 1;
    if ((key(GLFW_KEY_DELETE) || key(GLFW_KEY_BACKSPACE)) && selected_ >= 0) {
      doc_.delete_waypoint(selected_);
      selected_ = std::min(selected_, int(doc_.scene().waypoints.size()) - 1);
    }
    if (key(GLFW_KEY_INSERT) || key(GLFW_KEY_A)) {
      doc_.add_waypoint_after(selected_ >= 0 ? selected_ : n - 1);
      selected_ = (selected_ >= 0 ? selected_ : n - 1) + 1;
      scroll_to_selected_ = true;
    }
    if (key(GLFW_KEY_PAGE_UP) && selected_ > 0) { --selected_; scroll_to_selected_ = true; }
    if (key(GLFW_KEY_PAGE_DOWN) && selected_ + 1 < n) { ++selected_; scroll_to_selected_ = true; }
  }
  if (!have_samples_) return;
  const auto& tr = *doc_.shown()->plan.trajectory;
  if (key(GLFW_KEY_SPACE)) {
    if (!playing_ && t_ >= tr.t_end()) t_ = tr.t_begin();
    playing_ = !playing_;
  }
  if (key(GLFW_KEY_HOME)) t_ = tr.t_begin();
  if (key(GLFW_KEY_END)) t_ = tr.t_end();
  const double step = tr.duration() / 100.0;
  if (key(GLFW_KEY_LEFT, true)) t_ = std::max(tr.t_begin(), t_ - step);
  if (key(GLFW_KEY_RIGHT, true)) t_ = std::min(tr.t_end(), t_ + step);
  if (key(GLFW_KEY_L)) loop_ = !loop_;
  if (key(GLFW_KEY_F)) frame_all();
  if (key(GLFW_KEY_C)) colour_ = colour_ == ColourBy::kLimitPct ? ColourBy::kSpeed : ColourBy::kLimitPct;
  if (key(GLFW_KEY_0)) { tv0_ = tr.t_begin(); tv1_ = tr.t_end(); }
}

void App::top_bar(const ImVec2& pos, const ImVec2& size) {
  ImGui::SetNextWindowPos(pos);
  ImGui::SetNextWindowSize(size);
  ImGui::Begin("##top", nullptr, kPanel | ImGuiWindowFlags_NoScrollbar);
  backdrop({pos, {pos.x + size.x, pos.y + size.y}}, rgba(14, 16, 20));

  // Title: the scene's name and file.
  std::string title = "c2path";
  if (doc_.has_scene()) {
    const Scene& s = doc_.scene();
    title = s.name.empty() ? std::filesystem::path(doc_.path()).filename().string() : s.name;
    if (title.size() > 40) title = title.substr(0, 38) + "..";
    title += doc_.modified() ? "  *" : "";
  }
  ImGui::AlignTextToFramePadding();
  ImGui::TextColored(ImColor(col::kCaution), "%s", title.c_str());
  ImGui::SameLine();
  ImGui::TextColored(ImColor(col::kTextDim), "%s", std::filesystem::path(doc_.path()).filename().string().c_str());
  if (ImGui::IsItemHovered()) ImGui::SetTooltip("%s", doc_.path().c_str());

  // Status chip.
  ImGui::SameLine();
  const Planned* p = doc_.shown();
  std::string chip;
  ImU32 chip_col = col::kBad;
  if (!p) chip = " no plan ";
  else if (!doc_.edit_error().empty()) { chip = " edit not applied "; chip_col = col::kWarn; }
  else if (p->report.ok) { chip = " within limits "; chip_col = col::kOk; }
  else chip = " limits exceeded (" + std::to_string(p->report.violations.size()) + ") ";
  ImGui::PushStyleColor(ImGuiCol_Button, chip_col);
  ImGui::PushStyleColor(ImGuiCol_ButtonHovered, chip_col);
  ImGui::PushStyleColor(ImGuiCol_ButtonActive, chip_col);
  ImGui::PushStyleColor(ImGuiCol_Text, rgba(12, 12, 14));
  if (ImGui::SmallButton(chip.c_str())) tab_request_ = 1;
  ImGui::PopStyleColor(4);
  if (ImGui::IsItemHovered()) ImGui::SetTooltip("open the report");

  // Playback.
  if (p) {
    const auto& tr = *p->plan.trajectory;
    ImGui::SameLine(0, 18);
    if (ImGui::Button(playing_ ? "Pause" : "Play", {56, 0})) {
      if (!playing_ && t_ >= tr.t_end()) t_ = tr.t_begin();
      playing_ = !playing_;
    }
    ImGui::SameLine();
    ImGui::SetNextItemWidth(std::clamp(size.x * 0.16f, 110.0f, 320.0f));
    double t = t_;
    const double tb = tr.t_begin(), te = tr.t_end();
    if (ImGui::SliderScalar("##t", ImGuiDataType_Double, &t, &tb, &te, "t = %.3f s")) t_ = t;
    ImGui::SameLine();
    ImGui::TextColored(ImColor(col::kTextDim), "/ %s s", fmt::num(tr.duration(), 5).c_str());
    ImGui::SameLine();
    ImGui::Checkbox("loop", &loop_);
    ImGui::SameLine();
    ImGui::SetNextItemWidth(64);
    static const double kRates[] = {0.1, 0.25, 0.5, 1.0, 2.0};
    static const char* kRateNames[] = {"0.1x", "0.25x", "0.5x", "1x", "2x"};
    int ri = 3;
    for (int i = 0; i < 5; ++i)
      if (rate_ == kRates[i]) ri = i;
    if (ImGui::Combo("##rate", &ri, kRateNames, 5)) rate_ = kRates[ri];
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("playback rate (1x = real time)");
  }

  ImGui::End();
}

void App::caution_strip(const ImVec2& pos, const ImVec2& size) {
  ImGui::SetNextWindowPos(pos);
  ImGui::SetNextWindowSize(size);
  ImGui::PushStyleVar(ImGuiStyleVar_WindowPadding, {10, 5});
  ImGui::Begin("##caution", nullptr, kPanel | ImGuiWindowFlags_NoScrollbar);
  backdrop({pos, {pos.x + size.x, pos.y + size.y}}, rgba(38, 30, 14));
  ImGui::PushStyleColor(ImGuiCol_Text, col::kCaution);
  ImGui::TextWrapped("%s", kCaution);
  ImGui::PopStyleColor();
  ImGui::End();
  ImGui::PopStyleVar();
}

void App::actions_row() {
  ImGui::BeginDisabled(!doc_.can_undo());
  if (ImGui::Button("Undo")) doc_.undo();
  ImGui::EndDisabled();
  ImGui::SameLine();
  ImGui::BeginDisabled(!doc_.can_redo());
  if (ImGui::Button("Redo")) doc_.redo();
  ImGui::EndDisabled();
  ImGui::SameLine();
  ImGui::BeginDisabled(!doc_.has_scene());
  if (ImGui::Button("Save as...")) open_save_ = true;
  ImGui::EndDisabled();
  ImGui::SameLine();
  if (ImGui::Button("Reload")) {
    if (doc_.modified()) open_reload_ = true;
    else {
      need_frame_ = true;
      const bool ok = doc_.reload();
      status_ = ok ? "reloaded " + doc_.path() : "reload failed";
      status_bad_ = !ok;
    }
  }
  ImGui::SameLine();
  if (ImGui::Button(" ? ")) show_help_ = !show_help_;
  if (ImGui::IsItemHovered() || show_help_) {
    ImGui::BeginTooltip();
    ImGui::TextUnformatted(
        "Keys (outside text fields)\n"
        "  Space        play / pause          Home / End   start / end\n"
        "  Left, Right  step 1% of the move   L            loop on / off\n"
        "  Ctrl+Z       undo                  Ctrl+Y, Ctrl+Shift+Z  redo\n"
        "  Ctrl+S       save as...            R, F5        reload the file\n"
        "  A, Insert    add a waypoint after the selected one\n"
        "  Delete       delete the selected waypoint\n"
        "  PgUp, PgDn   select the previous / next waypoint\n"
        "  F            frame the path        C            colour: % of limit / speed\n"
        "  0            plots: whole move\n"
        "3D view\n"
        "  left drag: orbit (2D: pan)   right or middle drag: pan   wheel: zoom\n"
        "  drag a numbered handle: move that waypoint in the view plane\n"
        "    (Escape while dragging: put it back, no undo step)\n"
        "  double-click: frame the path\n"
        "Plots\n"
        "  click or drag: move the playhead   wheel: zoom time   right drag: pan time\n"
        "  double-click: whole move; hover: t, value and % of limit");
    ImGui::EndTooltip();
  }
}

void App::side_panel(const ImVec2& pos, const ImVec2& size) {
  ImGui::SetNextWindowPos(pos);
  ImGui::SetNextWindowSize(size);
  ImGui::Begin("##side", nullptr, kPanel | ImGuiWindowFlags_NoScrollbar);
  actions_row();
  if (!status_.empty()) {
    ImGui::SameLine();
    ImGui::TextColored(ImColor(status_bad_ ? col::kBad : col::kOk), "%s", status_.c_str());
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("%s", status_.c_str());
  }
  if (ImGui::BeginTabBar("##tabs")) {
    const auto flag = [&](int i) { return tab_request_ == i ? ImGuiTabItemFlags_SetSelected : 0; };
    if (ImGui::BeginTabItem("Waypoints", nullptr, flag(0))) {
      waypoint_table();
      ImGui::EndTabItem();
    }
    if (ImGui::BeginTabItem("Report", nullptr, flag(1))) {
      report_tab();
      ImGui::EndTabItem();
    }
    if (ImGui::BeginTabItem("View", nullptr, flag(2))) {
      view_tab();
      ImGui::EndTabItem();
    }
    tab_request_ = -1;
    ImGui::EndTabBar();
  }
  ImGui::End();
}

void App::save_dialog() {
  if (open_save_) {
    ImGui::OpenPopup("Save scene");
    open_save_ = false;
    if (save_path_.empty()) save_path_ = doc_.path();
  }
  ImGui::SetNextWindowSize({560, 0});
  if (ImGui::BeginPopupModal("Save scene", nullptr, ImGuiWindowFlags_NoSavedSettings)) {
    ImGui::TextUnformatted("Write the scene as edited (format 1) to:");
    ImGui::SetNextItemWidth(-1);
    const bool enter = ImGui::InputText("##file", &save_path_, ImGuiInputTextFlags_EnterReturnsTrue);
    save_field_rect_ = {ImGui::GetItemRectMin(), ImGui::GetItemRectMax()};
    ImGui::TextColored(ImColor(col::kWarn), "Comments and layout of the original file are not kept.");
    ImGui::TextColored(ImColor(col::kTextDim), "The file is written to a temporary file beside it, then renamed.");
    std::error_code ec;
    const bool exists = !save_path_.empty() && std::filesystem::exists(save_path_, ec);
    if (exists) ImGui::TextColored(ImColor(col::kWarn), "This file exists; you will be asked before it is replaced.");
    bool go = false;
    const bool save_clicked = ImGui::Button("Save", {90, 0});
    save_button_rect_ = {ImGui::GetItemRectMin(), ImGui::GetItemRectMax()};
    if (save_clicked || enter) go = !save_path_.empty();
    ImGui::SameLine();
    if (ImGui::Button("Cancel", {90, 0})) ImGui::CloseCurrentPopup();
    if (go) {
      ImGui::CloseCurrentPopup();
      if (exists) open_replace_ = true;
      else {
        try {
          doc_.save(save_path_);
          status_ = "saved " + save_path_;
          status_bad_ = false;
        } catch (const std::exception& e) {
          status_ = e.what();
          status_bad_ = true;
        }
      }
    }
    ImGui::EndPopup();
  }
  if (open_replace_) {
    ImGui::OpenPopup("Replace file?");
    open_replace_ = false;
  }
  if (ImGui::BeginPopupModal("Replace file?", nullptr, ImGuiWindowFlags_AlwaysAutoResize | ImGuiWindowFlags_NoSavedSettings)) {
    ImGui::Text("%s already exists.", save_path_.c_str());
    ImGui::TextUnformatted("Replace it? Comments in it will be lost.");
    const bool replace = ImGui::Button("Replace", {90, 0});
    replace_button_rect_ = {ImGui::GetItemRectMin(), ImGui::GetItemRectMax()};
    if (replace) {
      try {
        doc_.save(save_path_);
        status_ = "saved " + save_path_;
        status_bad_ = false;
      } catch (const std::exception& e) {
        status_ = e.what();
        status_bad_ = true;
      }
      ImGui::CloseCurrentPopup();
    }
    ImGui::SameLine();
    if (ImGui::Button("Keep it", {90, 0})) ImGui::CloseCurrentPopup();
    ImGui::EndPopup();
  }
}

void App::reload_dialog() {
  if (open_reload_) {
    ImGui::OpenPopup("Reload?");
    open_reload_ = false;
  }
  if (ImGui::BeginPopupModal("Reload?", nullptr, ImGuiWindowFlags_AlwaysAutoResize | ImGuiWindowFlags_NoSavedSettings)) {
    ImGui::TextUnformatted("The scene has unsaved edits. Reload the file and discard them?");
    if (ImGui::Button("Reload", {90, 0})) {
      need_frame_ = true;
      const bool ok = doc_.reload();
      status_ = ok ? "reloaded " + doc_.path() : "reload failed";
      status_bad_ = !ok;
      ImGui::CloseCurrentPopup();
    }
    ImGui::SameLine();
    if (ImGui::Button("Keep edits", {100, 0})) ImGui::CloseCurrentPopup();
    ImGui::EndPopup();
  }
}

void apply_theme() {
  ImGuiStyle& s = ImGui::GetStyle();
  ImGui::StyleColorsDark(&s);
  s.WindowRounding = 0.0f;
  s.FrameRounding = 3.0f;
  s.TabRounding = 3.0f;
  s.GrabRounding = 3.0f;
  s.WindowBorderSize = 0.0f;
  s.FramePadding = {6, 3};
  s.ItemSpacing = {7, 4};
  s.CellPadding = {4, 2};
  ImVec4* c = s.Colors;
  auto v = [](int r, int g, int b, float a = 1.0f) { return ImVec4(float(r) / 255.0f, float(g) / 255.0f, float(b) / 255.0f, a); };
  // Panels are not filled: the frame is cleared to the panel colour (kPanelBg) instead, which
  // saves a full-screen blended fill per frame under a software renderer.
  c[ImGuiCol_WindowBg] = v(30, 34, 41, 0.0f);
  c[ImGuiCol_ChildBg] = v(30, 34, 41, 0.0f);
  c[ImGuiCol_PopupBg] = v(36, 40, 48, 0.98f);
  c[ImGuiCol_Text] = v(214, 218, 224);
  c[ImGuiCol_TextDisabled] = v(120, 126, 136);
  c[ImGuiCol_FrameBg] = v(44, 50, 60);
  c[ImGuiCol_FrameBgHovered] = v(58, 66, 78);
  c[ImGuiCol_FrameBgActive] = v(70, 80, 94);
  c[ImGuiCol_Button] = v(52, 60, 72);
  c[ImGuiCol_ButtonHovered] = v(176, 120, 52);
  c[ImGuiCol_ButtonActive] = v(206, 140, 58);
  c[ImGuiCol_Header] = v(70, 62, 46);
  c[ImGuiCol_HeaderHovered] = v(120, 92, 50);
  c[ImGuiCol_HeaderActive] = v(160, 112, 52);
  c[ImGuiCol_Tab] = v(40, 46, 56);
  c[ImGuiCol_TabHovered] = v(176, 120, 52);
  c[ImGuiCol_TabActive] = v(150, 102, 44);
  c[ImGuiCol_TabUnfocusedActive] = v(150, 102, 44);
  c[ImGuiCol_CheckMark] = v(240, 176, 80);
  c[ImGuiCol_SliderGrab] = v(220, 150, 64);
  c[ImGuiCol_SliderGrabActive] = v(250, 180, 90);
  c[ImGuiCol_TableHeaderBg] = v(40, 46, 56);
  c[ImGuiCol_TableRowBg] = v(30, 34, 41);
  c[ImGuiCol_TableRowBgAlt] = v(34, 38, 46);
  c[ImGuiCol_Separator] = v(56, 62, 72);
  c[ImGuiCol_ModalWindowDimBg] = v(0, 0, 0, 0.55f);
}

}  // namespace c2path::viewer
