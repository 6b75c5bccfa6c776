// Scripted UI self-test (see selftest.hpp).

#include "selftest.hpp"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>

#include <cmath>
#include <exception>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "c2path/scene_yaml.hpp"

namespace c2path::viewer {

namespace {
ImVec2 centre(const Rect& r) { return {0.5f * (r.min.x + r.max.x), 0.5f * (r.min.y + r.max.y)}; }

/// The scene as the user edits it (not where its values were read from): equal or the first difference.
std::string scene_difference(const Scene& a, const Scene& b) {
  if (a.name != b.name) return "name";
  if (a.axes.size() != b.axes.size()) return "number of axes";
  for (std::size_t i = 0; i < a.axes.size(); ++i) {
    const AxisSpec &x = a.axes[i], &y = b.axes[i];
    if (x.name != y.name || x.unit != y.unit || x.min != y.min || x.max != y.max || x.vel != y.vel || x.acc != y.acc ||
        x.jerk != y.jerk || x.counts_per_unit != y.counts_per_unit || x.offset != y.offset)
      return "axis " + x.name;
  }
  auto same_vec = [](const std::optional<Eigen::VectorXd>& u, const std::optional<Eigen::VectorXd>& v) {
    return u.has_value() == v.has_value() && (!u || (u->size() == v->size() && *u == *v));
  };
  if (a.path.knots != b.path.knots || a.path.ends != b.path.ends || !same_vec(a.path.start, b.path.start) ||
      !same_vec(a.path.end, b.path.end) || !same_vec(a.path.weights, b.path.weights))
    return "path";
  if (a.timing.mode != b.timing.mode || a.timing.duration_s != b.timing.duration_s || a.timing.scale != b.timing.scale)
    return "timing";
  if (a.exports.rate_hz != b.exports.rate_hz) return "export";
  if (a.waypoints.size() != b.waypoints.size())
    return "number of waypoints " + std::to_string(a.waypoints.size()) + " vs " + std::to_string(b.waypoints.size());
  for (std::size_t k = 0; k < a.waypoints.size(); ++k) {
    const Waypoint &u = a.waypoints[k], &v = b.waypoints[k];
    if (u.t != v.t || u.q != v.q || u.hold_s != v.hold_s || u.stop != v.stop) return "waypoint " + std::to_string(k + 1);
  }
  return "";
}
}  // namespace

void UiSelfTest::expect(bool cond, const std::string& what) {
  ++checks_;
  if (!cond) failures_.push_back(what);
}

void UiSelfTest::input(int frame, ImGuiIO& io, const App& app, Document& doc) {
  for (int k : {GLFW_KEY_Z, GLFW_KEY_SPACE, GLFW_KEY_A, GLFW_KEY_DELETE, GLFW_KEY_LEFT_CONTROL, GLFW_KEY_ESCAPE, GLFW_KEY_S})
    io.KeysDown[k] = false;
  io.KeyCtrl = false;
  for (bool& b : io.MouseDown) b = false;
  io.MousePos = ImVec2(-FLT_MAX, -FLT_MAX);
  const Rect cell = app.first_plot_cell();
  auto ctrl = [&](int k) {
    io.KeysDown[GLFW_KEY_LEFT_CONTROL] = true;
    io.KeyCtrl = true;
    io.KeysDown[k] = true;
  };
  switch (frame) {
    case 0:  // a file where the scene will be saved: there already, so saving asks first
      if (!save_file_.empty()) std::ofstream(save_file_) << "# placeholder, replaced by the ui self-test\n";
      break;
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
    case 10:  // planning runs in the background: let it finish
      doc.finish_planning();
      break;
    case 11:  // Ctrl+Z
      ctrl(GLFW_KEY_Z);
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
    case 23:  // hover waypoint 2 again (the plan shows the scene as it is now)
      doc.finish_planning();
      grab_ = app.handle_pos(1);
      io.MousePos = grab_;
      break;
    case 24:  // press
      io.MousePos = grab_;
      io.MouseDown[0] = true;
      break;
    case 25: case 26:  // drag
      io.MousePos = ImVec2(grab_.x + 15.0f * float(frame - 24), grab_.y + 5.0f);
      io.MouseDown[0] = true;
      break;
    case 27:  // Escape, the button still down and the mouse moving on
      io.MousePos = ImVec2(grab_.x + 45.0f, grab_.y + 5.0f);
      io.MouseDown[0] = true;
      io.KeysDown[GLFW_KEY_ESCAPE] = true;
      break;
    case 28:  // still down, moving: neither the waypoint nor the view may move
      io.MousePos = ImVec2(grab_.x + 70.0f, grab_.y + 20.0f);
      io.MouseDown[0] = true;
      break;
    case 29:  // release
      io.MousePos = ImVec2(grab_.x + 70.0f, grab_.y + 20.0f);
      break;
    case 30:
      doc.finish_planning();
      break;
    case 31:  // A: an edit to save
      io.KeysDown[GLFW_KEY_A] = true;
      break;
    case 33:  // Ctrl+S: the save dialog
      ctrl(GLFW_KEY_S);
      break;
    case 36: case 37:  // click into the file name field
      click_ = app.save_field_rect();
      io.MousePos = centre(click_);
      io.MouseDown[0] = frame == 36;
      break;
    case 38:  // Ctrl+A: select the name that is there
      io.MousePos = centre(click_);
      ctrl(GLFW_KEY_A);
      break;
    case 39:  // type the new name
      io.MousePos = centre(click_);
      for (char c : save_file_) io.AddInputCharacter(static_cast<unsigned char>(c));
      break;
    case 41: case 42:  // click Save
      if (frame == 41) click_ = app.save_button_rect();
      io.MousePos = centre(click_);
      io.MouseDown[0] = frame == 41;
      break;
    case 45: case 46:  // the file exists: click Replace
      if (frame == 45) click_ = app.replace_button_rect();
      io.MousePos = centre(click_);
      io.MouseDown[0] = frame == 45;
      break;
    case 48:  // the last frames show the plan of the scene as it is (the screenshot is repeatable)
      doc.finish_planning();
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
    case 23:
      undo0_ = doc.undo_depth();
      expect(q == q0_, "waypoint 2 is where it started before the second drag");
      break;
    case 26:
      expect(app.dragging() && q != q0_, "the second drag moves waypoint 2");
      yaw0_ = app.view_yaw();
      break;
    case 27:
      expect(!app.dragging(), "Escape ended the drag");
      expect(q == q0_, "Escape put waypoint 2 back where it was");
      expect(doc.undo_depth() == undo0_, "the cancelled drag left no undo step");
      break;
    case 28:
      expect(q == q0_ && app.view_yaw() == yaw0_, "after Escape, moving with the button down moves nothing");
      break;
    case 30:
      expect(doc.up_to_date() && doc.shown() && doc.shown()->scene.waypoints[1].q[0] == q0_,
             "after Escape the plan shows waypoint 2 where it was");
      expect(doc.undo_depth() == undo0_, "no undo step after the cancelled drag");
      break;
    case 32:
      expect(doc.scene().waypoints.size() == n0_ + 1 && doc.modified(), "A added a waypoint to save");
      break;
    case 35:
      expect(app.save_field_rect().valid() && app.save_button_rect().valid(), "Ctrl+S opened the save dialog");
      break;
    case 40:
      expect(app.save_path() == save_file_, "the typed file name is in the save dialog: " + app.save_path());
      break;
    case 44:
      expect(app.replace_button_rect().valid(), "saving over an existing file asks before replacing it");
      expect(doc.modified(), "nothing was saved before the replace was confirmed");
      break;
    case 47: {
      expect(!app.replace_button_rect().valid() && !app.save_button_rect().valid(), "the dialogs closed after saving");
      expect(!doc.modified(), "the saved scene is not marked modified: " + app.status());
      try {
        const Scene saved = load_scene_file(save_file_);
        const std::string diff = scene_difference(saved, doc.scene());
        expect(diff.empty(), "the written file loads and equals the edited scene (differs in: " + diff + ")");
      } catch (const std::exception& e) {
        expect(false, std::string("the written file loads: ") + e.what());
      }
      // Written atomically: nothing but the file itself is left beside it under its name.
      const std::filesystem::path f(save_file_);
      int others = 0;
      std::error_code ec;
      for (const auto& e : std::filesystem::directory_iterator(f.parent_path().empty() ? "." : f.parent_path(), ec)) {
        const std::string name = e.path().filename().string();
        if (name != f.filename().string() && name.rfind(f.filename().string(), 0) == 0) ++others;
      }
      expect(others == 0, "no temporary file is left beside the saved one");
      break;
    }
    default:
      break;
  }
}

}  // namespace c2path::viewer
