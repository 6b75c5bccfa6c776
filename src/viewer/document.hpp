#pragma once
// The viewer's document: the scene being edited, the last valid plan, undo and redo.
//
// No OpenGL here (tests link it without a display). The document owns the Scene; every edit marks
// it changed, and replan() runs the library pipeline (validate_scene, plan, check_limits) once per
// change. An edit that makes the scene invalid keeps the last valid plan and sets error().

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "c2path/limits.hpp"
#include "c2path/scene.hpp"
#include "c2path/timing.hpp"

namespace c2path::viewer {

/// A scene with its plan and check: what the viewer draws.
struct Planned {
  Scene scene;
  Plan plan;
  Report report;
};

class Document {
 public:
  /// Loads (or reloads) a scene file. On failure keeps what was loaded before, sets load_error()
  /// and returns false. On success clears undo and redo and plans at once.
  bool load(const std::string& path);
  /// Reloads the file last given to load().
  bool reload() { return load(path_); }

  [[nodiscard]] const std::string& path() const noexcept { return path_; }
  [[nodiscard]] bool has_scene() const noexcept { return scene_.has_value(); }
  /// The scene as edited (may be invalid). Requires has_scene().
  [[nodiscard]] const Scene& scene() const { return *scene_; }
  /// Mutable access for an edit; call changed() after modifying.
  [[nodiscard]] Scene& edit() { return *scene_; }

  /// The last valid plan, or nullptr when no version of the scene could be planned.
  [[nodiscard]] const Planned* shown() const noexcept { return shown_.get(); }
  /// Increments whenever shown() changes.
  [[nodiscard]] std::uint64_t generation() const noexcept { return generation_; }

  /// The error of the last load, empty when it succeeded.
  [[nodiscard]] const std::string& load_error() const noexcept { return load_error_; }
  /// Why the edited scene cannot be planned (shown() is then an earlier version); empty if it can.
  [[nodiscard]] const std::string& edit_error() const noexcept { return edit_error_; }
  /// True when shown() is the plan of the scene as edited now.
  [[nodiscard]] bool up_to_date() const noexcept { return !dirty_ && edit_error_.empty(); }

  // ---- edits ----------------------------------------------------------------------------
  /// Starts an edit gesture (a drag, a text field being typed in): the scene as it is now becomes
  /// one undo step, unless the gesture ends without a change.
  void begin_gesture();
  /// Ends the gesture started by begin_gesture() (no-op when none is open).
  void end_gesture();
  [[nodiscard]] bool in_gesture() const noexcept { return in_gesture_; }
  /// Marks the scene changed: it is re-planned at the next replan().
  void changed();
  /// Re-plans if the scene changed since the last call. Returns true when a new plan is shown.
  bool replan();

  /// Inserts a waypoint after index k (k = -1: before the first), between its neighbours.
  void add_waypoint_after(int k);
  /// Removes waypoint k (the scene may become invalid with fewer than 2).
  void delete_waypoint(int k);
  /// Swaps the positions (and hold, stop) of waypoints k and k+dir; times stay in place, so
  /// keyframe times remain increasing.
  void move_waypoint(int k, int dir);

  bool undo();
  bool redo();
  [[nodiscard]] bool can_undo() const noexcept { return !undo_.empty(); }
  [[nodiscard]] bool can_redo() const noexcept { return !redo_.empty(); }

  /// Counts edits (changed(), undo, redo, load): a new value means the scene may differ.
  [[nodiscard]] std::uint64_t edits() const noexcept { return edits_; }
  /// Edited since loaded or saved.
  [[nodiscard]] bool modified() const noexcept { return modified_; }
  /// Writes the edited scene to `file` (format 1, atomically). Throws c2path::Error.
  void save(const std::string& file);

  /// Most undo steps kept.
  static constexpr std::size_t kMaxUndo = 200;

 private:
  struct Step {
    Scene scene;
    std::uint64_t edits = 0;  // edits_ when the step was taken
  };
  std::string path_;
  std::optional<Scene> scene_;
  std::shared_ptr<const Planned> shown_;
  std::uint64_t generation_ = 0;
  std::uint64_t edits_ = 0;
  std::string load_error_, edit_error_;
  bool dirty_ = false, modified_ = false, in_gesture_ = false;
  std::vector<Step> undo_, redo_;
};

}  // namespace c2path::viewer
