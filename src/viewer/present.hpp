#pragma once
// Partial redraw (issue 4): under a software renderer most of a frame's cost is filling pixels,
// and most pixels do not change from one frame to the next. The Presenter keeps the last frame in
// an offscreen framebuffer; each frame it compares every ImGui draw command (its clip rectangle,
// texture and the vertices it draws, by a 64-bit hash) and every backdrop with the previous
// frame's, clears and draws again only the screen rectangles where something changed (all
// commands that touch such a rectangle are drawn again, clipped to it, in their order), then
// copies the kept frame to the window. The picture is the one a full redraw gives.
//
// Without framebuffer objects (init() false) every frame is drawn in full, as before.

#include <imgui.h>

#include <cstdint>
#include <vector>

#include "app.hpp"

namespace c2path::viewer {

class Presenter {
 public:
  Presenter() = default;
  Presenter(const Presenter&) = delete;
  Presenter& operator=(const Presenter&) = delete;
  ~Presenter() { release(); }
  /// Frees the offscreen frame; call while the OpenGL context is current.
  void release();
  /// Loads the framebuffer entry points (needs a current OpenGL context). False: full redraws.
  bool init();
  /// Draws this frame into the window's back buffer (bound as GL_DRAW_FRAMEBUFFER 0 afterwards).
  /// `clear` is the panel colour behind everything; backdrops are in window coordinates and
  /// `bx`, `by` scale them to framebuffer pixels.
  void render(ImDrawData* dd, const std::vector<App::Backdrop>& backdrops, const float clear[3], int fw, int fh, float bx,
              float by);
  /// Draws every pixel every frame (still through the offscreen frame): for comparisons.
  void set_full(bool full) { full_ = full; }
  /// Forgets the kept frame: the next frame is drawn in full.
  void invalidate() { valid_ = false; }
  /// Share of the framebuffer drawn again in the last frame (1 = all of it), and in how many rectangles.
  [[nodiscard]] double redrawn_fraction() const { return redrawn_; }
  [[nodiscard]] int redrawn_rects() const { return rects_; }

  /// A rectangle of framebuffer pixels, y down from the top: [x0, x1) x [y0, y1).
  struct IRect {
    int x0 = 0, y0 = 0, x1 = 0, y1 = 0;
    [[nodiscard]] bool empty() const { return x1 <= x0 || y1 <= y0; }
    [[nodiscard]] long area() const { return empty() ? 0 : long(x1 - x0) * long(y1 - y0); }
  };
  /// Merges overlapping or nearly adjacent rectangles, and more than `max_rects` into fewer, so
  /// that the union still covers every input rectangle. Public for the tests.
  static std::vector<IRect> merge(std::vector<IRect> rects, std::size_t max_rects);

 private:
  struct Item {
    IRect r;
    std::uint64_t hash = 0;
  };
  void full_redraw(ImDrawData* dd, const std::vector<App::Backdrop>& backdrops, const float clear[3], int fw, int fh, float bx,
                   float by);
  void draw_rect(ImDrawData* dd, const IRect& d, const std::vector<Item>& backdrops, const std::vector<ImU32>& bcol,
                 const float clear[3], int fh);
  bool ok_ = false, valid_ = false, full_ = false;
  unsigned fbo_ = 0, tex_ = 0;
  int w_ = 0, h_ = 0;
  std::vector<std::vector<Item>> lists_;  // per draw list, per command: last frame
  std::vector<Item> backdrops_;           // last frame
  double redrawn_ = 1.0;
  int rects_ = 1;
};

}  // namespace c2path::viewer
