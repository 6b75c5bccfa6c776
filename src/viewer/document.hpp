#pragma once
// The viewer's document: the scene being edited, the last valid plan, undo and redo.
//
// No OpenGL here (tests link it without a display). The document owns the Scene; every edit marks
// it changed, and replan() runs the library pipeline (validate_scene, plan, check_limits) once per
// change. An edit that makes the scene invalid keeps the last valid plan and sets error().

#include <cstdint>
#include <functional>
#include <future>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "c2path/limits.hpp"
#include "c2path/scene.hpp"
#include "c2path/timing.hpp"

namespace c2path::viewer {

struct Samples;
struct PathThin;

/// A scene with its plan and check: what the viewer draws. Immutable once shown.
struct Planned {
  Scene scene;
  Plan plan;
  Report report;
  /// Drawing data derived on the planning thread (see Document::set_derive), or null.
  std::shared_ptr<const Samples> samples;
  std::shared_ptr<const PathThin> thin;
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
  [[nodiscard]] bool up_to_date() const noexcept { return !dirty_ && !job_.valid() && edit_error_.empty(); }

  // ---- edits ----------------------------------------------------------------------------
  /// Starts an edit gesture (a drag, a text field being typed in): the scene as it is now becomes
  /// one undo step, unless the gesture ends without a change.
  void begin_gesture();
  /// Ends the gesture started by begin_gesture() (no-op when none is open).
  void end_gesture();
  [[nodiscard]] bool in_gesture() const noexcept { return in_gesture_; }
  /// Marks the scene changed: it is re-planned at the next replan().
  void changed();
  /// The same when only waypoint k changed (cheaper for long scenes in the background mode).
  void changed_waypoint(std::size_t k);
  /// Re-plans if the scene changed since the last call. Returns true when a new plan is shown.
  /// In the background mode it never waits: a finished background plan is shown, and when the
  /// scene changed and no plan is running, planning the scene as it is now starts on a worker
  /// thread (the library is pure: the worker plans its own copy). Edits made meanwhile are
  /// planned next, so at most one plan runs and the latest scene is always planned in the end.
  bool replan();
  /// Plans in the background (the viewer) or in replan() itself (default).
  void set_background(bool on) { background_ = on; }
  /// A background plan is running.
  [[nodiscard]] bool planning() const noexcept { return job_.valid(); }
  /// Waits until the scene as edited now is planned (or found invalid) and shown.
  void finish_planning();
  /// Plans finished and shown since loading (any mode).
  [[nodiscard]] std::uint64_t plans_shown() const noexcept { return plans_shown_; }
  /// Work that runs after planning and checking, on the planning thread: the viewer samples the
  /// plan for drawing there. `make` is called on the calling thread when a plan starts and may
  /// capture what it needs by value.
  using Derive = std::function<void(Planned&)>;
  void set_derive(std::function<Derive()> make) { make_derive_ = std::move(make); }

  /// Inserts a waypoint after index k (k = -1: before the first), between its neighbours.
  void add_waypoint_after(int k);
  /// Removes waypoint k (the scene may become invalid with fewer than 2).
  void delete_waypoint(int k);
  /// Swaps the positions (and hold, stop) of waypoints k and k+dir; times stay in place, so
  /// keyframe times remain increasing.
  void move_waypoint(int k, int dir);

  bool undo();
  bool redo();
  /// Ends the gesture started by begin_gesture() and puts the scene back as it was when it
  /// started, leaving no undo step (Escape during a drag). False when no gesture is open.
  bool cancel_gesture();
  [[nodiscard]] bool can_undo() const noexcept { return !undo_.empty(); }
  [[nodiscard]] bool can_redo() const noexcept { return !redo_.empty(); }
  [[nodiscard]] std::size_t undo_depth() const noexcept { return undo_.size(); }

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
    std::shared_ptr<const Scene> scene;  // shared with base_ when a gesture starts on it (no copy)
    std::uint64_t edits = 0;  // edits_ when the step was taken
    bool modified = false;    // modified_ then
  };
  std::string path_;
  std::optional<Scene> scene_;
  std::shared_ptr<const Planned> shown_;
  std::uint64_t generation_ = 0;
  std::uint64_t edits_ = 0;
  std::string load_error_, edit_error_;
  bool dirty_ = false, modified_ = false, in_gesture_ = false;
  std::vector<Step> undo_, redo_;
  // background planning
  struct Result {
    std::shared_ptr<Planned> planned;    // null when the scene cannot be planned
    std::shared_ptr<const Scene> scene;  // the scene that was planned (in `planned` when it could be)
    std::string error;
  };
  /// What a background plan starts from: base_ with the waypoints changed since (copied here)
  /// and the rest of the scene (small): the planning thread puts the scene together.
  struct Changes {
    std::shared_ptr<const Scene> base;
    Scene rest;  // the scene without its waypoints
    std::vector<std::pair<std::size_t, Waypoint>> waypoints;
  };
  static Result plan_scene(Scene scene, const Derive& derive);
  static Result plan_changes(const Changes& c, const Derive& derive);
  void show(Result r);
  bool background_ = false;
  std::future<Result> job_;
  std::function<Derive()> make_derive_;
  std::uint64_t plans_shown_ = 0;
  std::vector<std::shared_ptr<const Planned>> retired_;  // freed by the next background plan
  // Copying a long scene (two allocations per waypoint) takes a frame's time, and so does even
  // comparing one. base_ is an immutable copy of the scene as it was at some point (the last
  // background plan's scene, or the loaded one); touched_ lists the waypoints changed since,
  // unless all_touched_. A background plan gets base_ and copies of those waypoints only, and an
  // undo step taken while the scene equals base_ shares it.
  std::shared_ptr<const Scene> base_;
  std::vector<std::size_t> touched_;
  bool all_touched_ = true;
  [[nodiscard]] bool scene_is_base() const { return base_ && !all_touched_ && touched_.empty() && !job_.valid(); }
  [[nodiscard]] std::shared_ptr<const Scene> snapshot() const {
    return scene_is_base() ? base_ : std::make_shared<const Scene>(*scene_);
  }
};

}  // namespace c2path::viewer
