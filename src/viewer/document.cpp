// The viewer's document: scene, last valid plan, undo/redo (see document.hpp).

#include "document.hpp"

#include <exception>
#include <utility>

#include "c2path/error.hpp"
#include "c2path/scene_yaml.hpp"

namespace c2path::viewer {

bool Document::load(const std::string& path) {
  path_ = path;
  try {
    Scene s = load_scene_file(path);
    auto p = std::make_shared<Planned>();
    p->scene = s;
    p->plan = c2path::plan(p->scene);
    p->report = check_limits(*p->plan.trajectory, p->plan.limits);
    scene_ = std::move(s);
    ++edits_;
    shown_ = std::move(p);
    ++generation_;
    load_error_.clear();
    edit_error_.clear();
    undo_.clear();
    redo_.clear();
    dirty_ = modified_ = in_gesture_ = false;
    return true;
  } catch (const std::exception& e) {
    // A scene that loads but cannot be planned is still editable: keep it, show the error.
    load_error_ = e.what();
    try {
      Scene s = load_scene_file(path);
      scene_ = std::move(s);
      ++edits_;
      shown_.reset();
      ++generation_;
      undo_.clear();
      redo_.clear();
      dirty_ = modified_ = in_gesture_ = false;
      edit_error_ = load_error_;
    } catch (const std::exception&) {
      // The file itself does not load: keep whatever was there before.
    }
    return false;
  }
}

void Document::begin_gesture() {
  if (in_gesture_ || !scene_) return;
  undo_.push_back(Step{*scene_, edits_});
  if (undo_.size() > kMaxUndo) undo_.erase(undo_.begin());
  in_gesture_ = true;
}

void Document::end_gesture() {
  if (!in_gesture_) return;
  in_gesture_ = false;
  if (!undo_.empty() && undo_.back().edits == edits_) undo_.pop_back();  // nothing changed
}

void Document::changed() {
  ++edits_;
  dirty_ = true;
  modified_ = true;
  redo_.clear();
}

bool Document::replan() {
  if (!dirty_ || !scene_) return false;
  dirty_ = false;
  try {
    validate_scene(*scene_);
    auto p = std::make_shared<Planned>();
    p->scene = *scene_;
    p->plan = c2path::plan(p->scene);
    p->report = check_limits(*p->plan.trajectory, p->plan.limits);
    shown_ = std::move(p);
    ++generation_;
    edit_error_.clear();
    return true;
  } catch (const std::exception& e) {
    edit_error_ = e.what();
    return false;
  }
}

void Document::add_waypoint_after(int k) {
  if (!scene_) return;
  Scene& s = *scene_;
  const int n = int(s.waypoints.size());
  if (k < -1) k = -1;
  if (k > n - 1) k = n - 1;
  const bool keyed = s.timing.mode == TimingMode::kKeyframes;
  Waypoint w;
  w.q.assign(s.axes.size(), 0.0);
  w.q_loc.assign(s.axes.size(), SourceLoc{});
  if (keyed) w.t = 0.0;
  auto time_of = [&](int i) { return s.waypoints[std::size_t(i)].t.value_or(double(i)); };
  if (n == 1) {
    w.q = s.waypoints[0].q;
    if (keyed) w.t = time_of(0) + (k == -1 ? -1.0 : 1.0);
  } else if (n >= 2) {
    int a = k, b = k + 1;  // new point between a and b
    double f = 0.5;
    if (k == -1) { a = 0; b = 1; f = -1.0; }        // before the first: step back along the first leg
    if (k == n - 1) { a = n - 2; b = n - 1; f = 2.0; }  // after the last: continue the last leg
    const auto& qa = s.waypoints[std::size_t(a)].q;
    const auto& qb = s.waypoints[std::size_t(b)].q;
    for (std::size_t i = 0; i < w.q.size(); ++i) w.q[i] = qa[i] + f * (qb[i] - qa[i]);
    if (keyed) w.t = time_of(a) + f * (time_of(b) - time_of(a));
  }
  begin_gesture();
  s.waypoints.insert(s.waypoints.begin() + (k + 1), std::move(w));
  changed();
  end_gesture();
}

void Document::delete_waypoint(int k) {
  if (!scene_ || k < 0 || k >= int(scene_->waypoints.size())) return;
  begin_gesture();
  scene_->waypoints.erase(scene_->waypoints.begin() + k);
  changed();
  end_gesture();
}

void Document::move_waypoint(int k, int dir) {
  if (!scene_) return;
  auto& w = scene_->waypoints;
  const int j = k + dir;
  if (k < 0 || j < 0 || k >= int(w.size()) || j >= int(w.size()) || j == k) return;
  begin_gesture();
  auto& a = w[std::size_t(k)];
  auto& b = w[std::size_t(j)];
  std::swap(a.q, b.q);
  std::swap(a.q_loc, b.q_loc);
  std::swap(a.hold_s, b.hold_s);
  std::swap(a.stop, b.stop);
  changed();
  end_gesture();
}

bool Document::undo() {
  end_gesture();
  if (undo_.empty() || !scene_) return false;
  redo_.push_back(Step{std::move(*scene_), edits_});
  scene_ = std::move(undo_.back().scene);
  undo_.pop_back();
  ++edits_;
  dirty_ = modified_ = true;
  return true;
}

bool Document::redo() {
  end_gesture();
  if (redo_.empty() || !scene_) return false;
  undo_.push_back(Step{std::move(*scene_), edits_});
  scene_ = std::move(redo_.back().scene);
  redo_.pop_back();
  ++edits_;
  dirty_ = modified_ = true;
  return true;
}

void Document::save(const std::string& file) {
  if (!scene_) throw Error("nothing to save: no scene is loaded");
  save_scene_file(*scene_, file);
  modified_ = false;
}

}  // namespace c2path::viewer
