// The viewer's document: scene, last valid plan, undo/redo (see document.hpp).

#include "document.hpp"

#include <algorithm>
#include <chrono>
#include <exception>
#include <utility>

#include "c2path/error.hpp"
#include "c2path/scene_yaml.hpp"

namespace c2path::viewer {

Document::Result Document::plan_scene(Scene scene, const Derive& derive) {
  Result r;
  auto p = std::make_shared<Planned>();
  p->scene = std::move(scene);
  r.scene = std::shared_ptr<const Scene>(p, &p->scene);
  try {
    validate_scene(p->scene);
    p->plan = c2path::plan(p->scene);
    p->report = check_limits(*p->plan.trajectory, p->plan.limits);
    if (derive) derive(*p);
    r.planned = std::move(p);
  } catch (const std::exception& e) {
    r.error = e.what();
  }
  return r;
}

void Document::show(Result r) {
  if (r.scene) base_ = std::move(r.scene);  // what later changes are relative to
  if (!r.planned) {
    edit_error_ = std::move(r.error);
    return;
  }
  // The plan shown before goes with the next background plan, which frees it on its thread
  // (freeing a long move takes a frame's time).
  if (background_ && shown_) retired_.push_back(std::move(shown_));
  shown_ = std::move(r.planned);
  ++generation_;
  ++plans_shown_;
  edit_error_.clear();
}

bool Document::load(const std::string& path) {
  if (job_.valid()) job_.wait();  // a plan of the scene loaded before: not shown
  job_ = {};
  path_ = path;
  all_touched_ = true;
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
    ++plans_shown_;
    base_ = std::make_shared<const Scene>(*scene_);  // made now, not when a drag starts
    all_touched_ = false;
    touched_.clear();
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
  undo_.push_back(Step{snapshot(), edits_, modified_});
  if (undo_.size() > kMaxUndo) undo_.erase(undo_.begin());
  in_gesture_ = true;
}

void Document::end_gesture() {
  if (!in_gesture_) return;
  in_gesture_ = false;
  if (!undo_.empty() && undo_.back().edits == edits_) undo_.pop_back();  // nothing changed
}

void Document::changed_waypoint(std::size_t k) {
  if (!all_touched_ && std::find(touched_.begin(), touched_.end(), k) == touched_.end()) {
    if (touched_.size() >= 64) all_touched_ = true;
    else touched_.push_back(k);
  }
  ++edits_;
  dirty_ = true;
  modified_ = true;
  redo_.clear();
}

void Document::changed() {
  all_touched_ = true;
  ++edits_;
  dirty_ = true;
  modified_ = true;
  redo_.clear();
}

bool Document::replan() {
  bool shown_new = false;
  if (job_.valid() && job_.wait_for(std::chrono::seconds(0)) == std::future_status::ready) {
    Result r = job_.get();
    shown_new = r.planned != nullptr;
    show(std::move(r));
  }
  if (!dirty_ || !scene_ || job_.valid()) return shown_new;
  dirty_ = false;
  Derive derive = make_derive_ ? make_derive_() : Derive{};
  if (!background_) {
    touched_.clear();
    all_touched_ = false;  // changes from now on are relative to the scene planned here
    Result r = plan_scene(*scene_, derive);
    const bool ok = r.planned != nullptr;
    show(std::move(r));
    return ok || shown_new;
  }
  if (!base_ || all_touched_ || base_->waypoints.size() != scene_->waypoints.size()) {
    base_ = std::make_shared<const Scene>(*scene_);  // a structural change: one full copy
    touched_.clear();
  }
  Changes ch;
  ch.base = base_;
  {
    std::vector<Waypoint> edited = std::move(scene_->waypoints);
    scene_->waypoints.clear();
    ch.rest = *scene_;
    scene_->waypoints = std::move(edited);
  }
  for (std::size_t k : touched_) ch.waypoints.emplace_back(k, scene_->waypoints[k]);
  touched_.clear();
  all_touched_ = false;  // from now on: changes relative to this plan's scene (base_ when it is shown)
  job_ = std::async(std::launch::async, [ch = std::move(ch), derive = std::move(derive), retired = std::move(retired_)]() mutable {
    retired.clear();
    return plan_changes(ch, derive);
  });
  retired_.clear();
  return shown_new;
}

Document::Result Document::plan_changes(const Changes& c, const Derive& derive) {
  Scene s = c.rest;
  s.waypoints = c.base->waypoints;  // the copy is made here, off the UI thread
  for (const auto& [k, w] : c.waypoints)
    if (k < s.waypoints.size()) s.waypoints[k] = w;
  return plan_scene(std::move(s), derive);
}


void Document::finish_planning() {
  while (job_.valid() || (dirty_ && scene_)) {
    if (job_.valid()) job_.wait();
    replan();
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

bool Document::cancel_gesture() {
  if (!in_gesture_ || !scene_) return false;
  in_gesture_ = false;
  if (undo_.empty()) return false;
  Step& step = undo_.back();
  if (step.edits != edits_) {  // something changed during the gesture: put the scene back
    scene_ = *step.scene;
    all_touched_ = true;
    ++edits_;
    dirty_ = true;
    modified_ = step.modified;
  }
  undo_.pop_back();
  return true;
}

bool Document::undo() {
  end_gesture();
  if (undo_.empty() || !scene_) return false;
  redo_.push_back(Step{std::make_shared<const Scene>(std::move(*scene_)), edits_, modified_});
  scene_ = *undo_.back().scene;
  undo_.pop_back();
  all_touched_ = true;
  ++edits_;
  dirty_ = modified_ = true;
  return true;
}

bool Document::redo() {
  end_gesture();
  if (redo_.empty() || !scene_) return false;
  undo_.push_back(Step{std::make_shared<const Scene>(std::move(*scene_)), edits_, modified_});
  scene_ = *redo_.back().scene;
  redo_.pop_back();
  all_touched_ = true;
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
