#pragma once
// A scripted pass through the viewer's mouse and key handling (--selftest-ui), for ctest under
// Xvfb: drags a waypoint handle in the 3D view, undoes with Ctrl+Z, scrubs the playhead in a plot,
// starts playback with Space, adds and deletes a waypoint with A and Delete. Input is fed to ImGui
// as the GLFW backend would; each step checks the document or the app.

#include <imgui.h>

#include <string>
#include <vector>

#include "app.hpp"
#include "document.hpp"

namespace c2path::viewer {

class UiSelfTest {
 public:
  /// Frames the script needs.
  static constexpr int kFrames = 24;
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
  std::size_t n0_ = 0;
  double want_t_ = 0.0;
  int checks_ = 0;
  std::vector<std::string> failures_;
};

}  // namespace c2path::viewer
