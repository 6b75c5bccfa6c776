#pragma once
// The viewer's colours: a dark graphite theme with a warm accent, and the path colour ramp.
// All drawing math, no planning numerics.

#include <imgui.h>

#include <algorithm>
#include <cstdint>

namespace c2path::viewer {

constexpr ImU32 rgba(int r, int g, int b, int a = 255) {
  return ImU32(std::uint32_t(a) << 24 | std::uint32_t(b) << 16 | std::uint32_t(g) << 8 | std::uint32_t(r));
}

namespace col {
constexpr float kPanelBg[3] = {30 / 255.0f, 34 / 255.0f, 41 / 255.0f};  // the clear colour behind all panels
constexpr ImU32 kCanvas = rgba(21, 24, 30);        // 3D view and plot backgrounds
constexpr ImU32 kCanvasAlt = rgba(26, 30, 37);     // alternate plot rows
constexpr ImU32 kGrid = rgba(46, 52, 62);
constexpr ImU32 kGridStrong = rgba(70, 78, 90);
constexpr ImU32 kText = rgba(214, 218, 224);
constexpr ImU32 kTextDim = rgba(140, 148, 160);
constexpr ImU32 kHandle = rgba(196, 200, 206);     // waypoint handles: low chroma on purpose
constexpr ImU32 kHandleRim = rgba(16, 18, 22);
constexpr ImU32 kHandleSel = rgba(255, 255, 255);
constexpr ImU32 kPose = rgba(250, 250, 250);
constexpr ImU32 kLimit = rgba(236, 170, 60);       // limit lines
constexpr ImU32 kViolation = rgba(226, 52, 92, 70);  // violation shading
constexpr ImU32 kViolationEdge = rgba(226, 52, 92, 200);
constexpr ImU32 kPlayhead = rgba(250, 250, 250, 200);
constexpr ImU32 kOk = rgba(70, 180, 120);
constexpr ImU32 kBad = rgba(226, 52, 92);
constexpr ImU32 kWarn = rgba(236, 170, 60);
constexpr ImU32 kCaution = rgba(255, 214, 120);
}  // namespace col

/// Colour of the path ramp at x in [0, 1] (x > 1: the "beyond the limit" colour).
inline ImU32 ramp(float x) {
  struct Stop { float x; float r, g, b; };
  static constexpr Stop kStops[] = {
      {0.00f, 38, 84, 124},    // steel blue
      {0.35f, 44, 160, 140},   // sea green
      {0.70f, 222, 196, 74},   // mustard
      {1.00f, 236, 120, 40},   // orange
  };
  if (x > 1.0f) return col::kBad | 0xff000000u;
  x = std::clamp(x, 0.0f, 1.0f);
  for (int i = 1; i < 4; ++i) {
    if (x <= kStops[i].x) {
      const Stop& a = kStops[i - 1];
      const Stop& b = kStops[i];
      const float f = (x - a.x) / (b.x - a.x);
      return rgba(int(a.r + f * (b.r - a.r)), int(a.g + f * (b.g - a.g)), int(a.b + f * (b.b - a.b)));
    }
  }
  return rgba(236, 120, 40);
}

/// Curve colour of axis a in the profile plots.
inline ImU32 axis_colour(std::size_t a) {
  static constexpr ImU32 kPalette[] = {rgba(110, 180, 240), rgba(120, 220, 160), rgba(240, 200, 110),
                                       rgba(200, 150, 240), rgba(240, 140, 120), rgba(120, 215, 225)};
  return kPalette[a % 6];
}

/// Applies the theme to ImGui's style.
void apply_theme();

}  // namespace c2path::viewer
