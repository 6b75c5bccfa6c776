#pragma once
// A scripted pass through the viewer's mouse and key handling (--selftest-ui), for ctest under
// Xvfb: drags a waypoint handle in the 3D view, undoes with Ctrl+Z, scrubs the playhead in a plot,
// starts playback with Space, adds and deletes a waypoint with A and Delete, cancels a second
// drag with Escape, then adds a waypoint and saves the scene through the save dialog (Ctrl+S,
// types a file name, Save, confirms replacing the file that is there) and checks the written
// file loads and equals the edited scene. Input is fed to ImGui as the GLFW backend would; each
// step checks the document or the app.

#include <imgui.h>

#include <string>
#include <vector>

#include "app.hpp"
#include "document.hpp"

namespace c2path::viewer {

class UiSelfTest {
 public:
  /// Frames the script needs.
  static constexpr int kFrames = 50;
  /// The file the save dialog writes (it is created first, so saving asks before replacing it).
  void set_save_file(std::string file) { save_file_ = std::move(file); }
  /// Feeds this frame's input; call after the platform backend's NewFrame, before ImGui::NewFrame.
  void input(int frame, ImGuiIO& io, const App& app, Document& doc);
  /// Checks after the frame was built.
  void check(int frame, const App& app, const Document& doc);
  [[nodiscard]] bool ok() const { return failures_.empty() && checks_ > 0; }
  [[nodiscard]] const std::vector<std::string>& failures() const { return failures_; }
  [[nodiscard]] int checks() const { return checks_; }

 private:
  void expect(bool cond, const std::string& what);
  ImVec2 grab_{-1, -1};
  double q0_ = 0.0;
  std::size_t n0_ = 0, undo0_ = 0;
  double want_t_ = 0.0;
  float yaw0_ = 0.0f;
  Rect click_;
  std::string save_file_;
  int checks_ = 0;
  std::vector<std::string> failures_;
};

}  // namespace c2path::viewer
