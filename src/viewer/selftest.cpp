// Scripted UI self-test (see selftest.hpp).

#include "selftest.hpp"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>

#include <cmath>

namespace c2path::viewer {

void UiSelfTest::expect(bool cond, const std::string& what) {
  ++checks_;
  if (!cond) failures_.push_back(what);
}

void UiSelfTest::input(int frame, ImGuiIO& io, const App& app, Document& doc) {
  (void)doc;
  for (int k : {GLFW_KEY_Z, GLFW_KEY_SPACE, GLFW_KEY_A, GLFW_KEY_DELETE, GLFW_KEY_LEFT_CONTROL}) io.KeysDown[k] = false;
  io.KeyCtrl = false;
  for (bool& b : io.MouseDown) b = false;
  io.MousePos = ImVec2(-FLT_MAX, -FLT_MAX);
  const Rect cell = app.first_plot_cell();
  switch (frame) {
    case 3:  // hover the handle of waypoint 2
      grab_ = app.handle_pos(1);
      io.MousePos = grab_;
      break;
    case 4:  // press on it
      io.MousePos = grab_;
      io.MouseDown[0] = true;
      break;
    case 5: case 6: case 7: case 8:  // drag 40 px to the right
      io.MousePos = ImVec2(grab_.x + 10.0f * float(frame - 4), grab_.y);
      io.MouseDown[0] = true;
      break;
    case 9:  // release
      io.MousePos = ImVec2(grab_.x + 40.0f, grab_.y);
      break;
    case 11:  // Ctrl+Z
      io.KeysDown[GLFW_KEY_LEFT_CONTROL] = true;
      io.KeyCtrl = true;
      io.KeysDown[GLFW_KEY_Z] = true;
      break;
    case 13: case 14:  // press in the first plot at a quarter of its width
      io.MousePos = ImVec2(cell.min.x + 0.25f * (cell.max.x - cell.min.x), 0.5f * (cell.min.y + cell.max.y));
      io.MouseDown[0] = true;
      break;
    case 17:  // Space: play
      io.KeysDown[GLFW_KEY_SPACE] = true;
      break;
    case 19:  // A: add a waypoint after the selected one
      io.KeysDown[GLFW_KEY_A] = true;
      break;
    case 21:  // Delete: remove it again
      io.KeysDown[GLFW_KEY_DELETE] = true;
      break;
    default:
      break;
  }
}

void UiSelfTest::check(int frame, const App& app, const Document& doc) {
  if (!doc.has_scene() || doc.scene().waypoints.size() < 2 || doc.scene().waypoints[1].q.empty()) {
    if (frame == 2) expect(false, "the scene has fewer than 2 waypoints");
    return;
  }
  const double q = doc.scene().waypoints[1].q[0];
  switch (frame) {
    case 2:
      q0_ = q;
      n0_ = doc.scene().waypoints.size();
      break;
    case 3:
      expect(grab_.x > 0 && grab_.y > 0, "waypoint 2's handle is on screen");
      break;
    case 9:
      expect(q != q0_, "dragging waypoint 2's handle moved it");
      expect(app.selected() == 1, "the dragged waypoint is selected");
      break;
    case 10:
      expect(doc.can_undo(), "the drag is one undo step");
      expect(doc.up_to_date(), "the drag was re-planned");
      expect(doc.shown() && doc.shown()->scene.waypoints[1].q[0] == q, "the plan shows the moved waypoint");
      break;
    case 12:
      expect(q == q0_, "Ctrl+Z restored waypoint 2");
      expect(doc.can_redo(), "after undo, redo is possible");
      break;
    case 15: {
      want_t_ = app.plot_t0() + 0.25 * (app.plot_t1() - app.plot_t0());
      const double span = app.plot_t1() - app.plot_t0();
      expect(std::abs(app.playhead() - want_t_) < 0.02 * span, "a click in a plot moved the playhead there");
      break;
    }
    case 18:
      expect(app.playing(), "Space started playback");
      break;
    case 20:
      expect(doc.scene().waypoints.size() == n0_ + 1, "A added a waypoint");
      break;
    case 22:
      expect(doc.scene().waypoints.size() == n0_, "Delete removed the waypoint");
      break;
    default:
      break;
  }
}

}  // namespace c2path::viewer
