#pragma once
// The viewer's user interface: one App per window. Immediate mode: every frame draws from the
// Document (the scene and its last valid plan) and turns widget actions into Document edits.

#include <imgui.h>

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "document.hpp"
#include "samples.hpp"

namespace c2path::viewer {

/// What the path in the 3D view is coloured by.
enum class ColourBy { kLimitPct, kSpeed };

/// Axis mapping of one 3D coordinate: an axis index, or one of these.
inline constexpr int kMapNone = -1;
inline constexpr int kMapTime = -2;

/// A screen rectangle (window coordinates, pixels).
struct Rect {
  ImVec2 min{0, 0}, max{0, 0};
  [[nodiscard]] bool valid() const { return max.x > min.x && max.y > min.y; }
};

struct AppOptions {
  std::string tab;          ///< side panel tab to open first: waypoints, report, view
  double time_s = -1.0;     ///< playhead at start; < 0: start of the move (screenshots: 40 %)
  ColourBy colour = ColourBy::kLimitPct;
  bool headless = false;
  bool spin = false;        ///< measurement: orbit the 3D view and play, every frame
};

class App {
 public:
  App(Document& doc, AppOptions options);
  ~App();
  App(const App&) = delete;
  App& operator=(const App&) = delete;
  /// Builds the whole window for one frame; dt_s is the time since the last frame.
  void frame(double dt_s);
  /// True when something animates, is being dragged or planned (the main loop then does not
  /// wait for events, so a finished background plan is shown at once).
  [[nodiscard]] bool busy() const { return playing_ || drag_wp_ >= 0 || doc_.planning(); }
  /// Where the 3D path canvas and the plot grid were drawn in the last frame.
  [[nodiscard]] Rect view_rect() const { return view_rect_; }
  [[nodiscard]] Rect plot_rect() const { return plot_rect_; }
  /// Solid rectangles behind the UI this frame (canvases, bars): the main loop fills them with
  /// scissored glClear before ImGui draws, which is far cheaper than blended quads under a
  /// software renderer. Window coordinates.
  struct Backdrop {
    Rect rect;
    ImU32 colour;
  };
  [[nodiscard]] const std::vector<Backdrop>& backdrops() const { return backdrops_; }
  /// Counts of the last frame for measurements: samples, path segments after thinning, handles.
  [[nodiscard]] std::string stats() const;
  // For the scripted UI self-test (--selftest-ui): where things were drawn last frame.
  /// Screen position of waypoint k's handle (last frame), or (-1, -1).
  [[nodiscard]] ImVec2 handle_pos(std::size_t k) const;
  [[nodiscard]] Rect first_plot_cell() const { return first_cell_; }
  [[nodiscard]] double playhead() const { return t_; }
  [[nodiscard]] double plot_t0() const { return tv0_; }
  [[nodiscard]] double plot_t1() const { return tv1_; }
  [[nodiscard]] bool playing() const { return playing_; }
  [[nodiscard]] int selected() const { return selected_; }
  [[nodiscard]] bool dragging() const { return drag_wp_ >= 0; }
  [[nodiscard]] float view_yaw() const { return yaw_; }
  /// Where the save dialog's file field and Save button, and the replace question's Replace
  /// button were drawn this frame (invalid when not shown), and the file name in the field.
  [[nodiscard]] Rect save_field_rect() const { return save_field_rect_; }
  [[nodiscard]] Rect save_button_rect() const { return save_button_rect_; }
  [[nodiscard]] Rect replace_button_rect() const { return replace_button_rect_; }
  [[nodiscard]] const std::string& save_path() const { return save_path_; }
  [[nodiscard]] const std::string& status() const { return status_; }
  /// Moves waypoint k to q as a drag does: inside one gesture (opened here when none is), with
  /// only that waypoint's handle updated until end_live_edit().
  void move_waypoint_live(std::size_t k, const std::vector<double>& q);
  /// Ends the gesture of move_waypoint_live().
  void end_live_edit();
  /// Frame time shown in the View tab [ms].
  void set_frame_ms(double ms) { frame_ms_ = ms; }

 private:
  void sync_plan();
  /// Adds a backdrop, clipped to the current window's clip rectangle.
  void backdrop(const Rect& r, ImU32 colour);
  std::vector<Backdrop> backdrops_;
  void handle_keys();
  void top_bar(const ImVec2& pos, const ImVec2& size);
  void caution_strip(const ImVec2& pos, const ImVec2& size);
  void view_panel(const ImVec2& pos, const ImVec2& size);
  void side_panel(const ImVec2& pos, const ImVec2& size);
  void actions_row();
  void plots_panel(const ImVec2& pos, const ImVec2& size);
  void waypoint_table();
  void report_tab();
  void view_tab();
  void save_dialog();
  void reload_dialog();

  // 3D view helpers
  void frame_all();
  void default_mapping();
  [[nodiscard]] ImVec2 project(const double c[3]) const;
  void update_xform();
  float xf_[2][3] = {{1, 0, 0}, {0, 1, 0}};  // screen x, y per normalised coordinate (this frame)
  ImVec2 xf_o_{0, 0};
  void coords_of_sample(std::size_t i, double c[3]) const;
  void coords_of_point(const std::vector<double>& q, double t, double c[3]) const;
  void draw_path(ImDrawList* dl);
  void thin_path();
  [[nodiscard]] ThinParams thin_params() const;
  std::vector<std::size_t> pre_idx_;  // samples kept by the view-independent thinning
  std::vector<float> pre_val_;        // their colour values
  ThinParams pre_params_;             // what pre_idx_ was computed for, with pre_generation_
  std::uint64_t pre_generation_ = ~std::uint64_t(0);
  struct Seg {
    ImVec2 a, b;
    float v;  // colour value
  };
  std::vector<Seg> segs_;       // the thinned path (screen space)
  std::vector<float> path_key_;  // what segs_ was computed for
  void draw_grid(ImDrawList* dl);
  void draw_handles(ImDrawList* dl, bool hovered_canvas);
  void draw_pose(ImDrawList* dl);
  void update_speed();
  [[nodiscard]] bool is_3d() const { return map_[2] != kMapNone; }

  // plots
  void draw_plot(ImDrawList* dl, std::size_t axis, int deriv, const Rect& r, bool bottom);
  [[nodiscard]] float plot_x(double t, const Rect& r) const;
  [[nodiscard]] double plot_t(float x, const Rect& r) const;

  Document& doc_;
  AppOptions opt_;
  std::shared_ptr<const Samples> samples_p_;  // of the plan shown (built on the planning thread)
  [[nodiscard]] const Samples& samples() const;
  std::uint64_t seen_generation_ = ~std::uint64_t(0);
  bool have_samples_ = false;

  // playhead
  double t_ = 0.0;
  bool playing_ = false, loop_ = true;
  double rate_ = 1.0;

  // 3D view state
  int map_[3] = {0, 1, 2};
  bool equal_scale_ = false;
  ColourBy colour_ = ColourBy::kLimitPct;
  float yaw_ = -0.65f, pitch_ = 0.5f, zoom_ = 1.0f;
  ImVec2 pan_{0, 0};
  double centre_[3] = {0, 0, 0}, half_[3] = {1, 1, 1};
  bool need_frame_ = true;
  Rect view_rect_, plot_rect_;
  float scale_ = 1.0f;
  ImVec2 origin_{0, 0};
  int drag_wp_ = -1, hover_wp_ = -1, selected_ = -1;
  std::vector<double> drag_q0_;
  ImVec2 drag_mouse0_{0, 0};
  bool scroll_to_selected_ = false;
  std::vector<ImVec2> proj_;        // projected samples (per frame)
  std::vector<float> value_;        // colour value per sample
  std::vector<float> speed_;        // |velocity| of the mapped axes per sample
  std::size_t drawn_segments_ = 0;  // path segments drawn after thinning (last frame)
  std::size_t drawn_handles_ = 0;   // waypoint handles drawn (last frame)
  std::vector<std::size_t> handle_list_;  // waypoints drawn after screen-space thinning
  std::vector<float> handle_key_;    // what handle_list_ was computed for
  bool handles_dense_ = false;
  std::vector<std::uint32_t> occupied_;  // screen cells already holding a handle
  void update_handle_coords();
  void preselect_handles();
  std::vector<float> handle_c3_;    // normalised waypoint coordinates, 3 per waypoint
  std::vector<float> handle_ckey_;  // what handle_c3_ was computed for (with handle_c3_edits_)
  std::uint64_t handle_c3_edits_ = ~std::uint64_t(0);
  std::uint64_t handle_c3_version_ = 0;
  bool handles_stale_ = false;   // a drag moved one waypoint's coordinates, the pre-selection is older
  bool drag_cancelled_ = false;  // Escape ended a drag; the mouse button is not released yet
  static constexpr float kHandleReach = 4.0f;  // px: a waypoint is this near its pre-selected one
  static constexpr std::size_t kBlock = 32;
  struct Block {
    float c[3] = {0, 0, 0};
    float r = 0;
  };
  std::vector<float> sel_key_;               // what the pre-selection was computed for
  std::vector<std::uint32_t> sel_;           // pre-selected waypoints (view independent)
  std::vector<std::uint32_t> sel_count_;     // waypoints each one stands for
  std::vector<std::uint32_t> member_start_, members_;  // those waypoints, per pre-selected one
  std::vector<Block> blocks_;                // runs of kBlock pre-selected waypoints
  std::vector<unsigned char> block_live_;    // runs that can reach the view (last projection)
  std::vector<ImVec2> sel_proj_;             // pre-selected waypoints projected (live runs)
  float speed_max_ = 0.0f;
  std::uint64_t speed_generation_ = ~std::uint64_t(0);
  int speed_map_[3] = {-9, -9, -9};

  // plots
  double tv0_ = 0.0, tv1_ = 1.0;  // visible time range
  bool show_deriv_[4] = {true, true, true, true};
  bool scrubbing_ = false;
  float plot_pan_anchor_ = 0.0f;
  double plot_pan_t0_ = 0.0, plot_pan_t1_ = 0.0;
  std::vector<ImVec2> line_;  // polyline scratch
  std::vector<std::size_t> col_index_;  // first sample index of each pixel column (envelope mode)
  std::vector<double> zoom_vals_;       // exact values per pixel column when zoomed in: [(j * axes + a) * 4 + d]
  struct Envelope {  // min, max and last sample value per pixel column of one plot, for one time range
    std::uint64_t generation = ~std::uint64_t(0);
    double t0 = 0.0, t1 = 0.0;
    int cols = 0;
    std::vector<float> lo, hi, last;
  };
  std::vector<Envelope> envelopes_;     // per derivative and axis: [d * axes + a]
  bool zoomed_ = false;
  Rect first_cell_;
  int plot_cols_ = 0;

  // side panel
  int tab_request_ = -1;  // 0 waypoints, 1 report, 2 view
  std::string save_path_;
  std::string status_;      // last action's outcome (saved, reloaded, ...)
  bool status_bad_ = false;
  bool open_save_ = false, open_replace_ = false, open_reload_ = false;
  Rect save_field_rect_, save_button_rect_, replace_button_rect_;
  double frame_ms_ = 0.0;
  bool show_help_ = false;
};

}  // namespace c2path::viewer
