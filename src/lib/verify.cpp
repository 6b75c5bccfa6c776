#include "c2path/verify.hpp"

#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <limits>
#include <map>
#include <memory>

#include "c2path/error.hpp"

namespace c2path {

void VerifyOptions::validate() const {
  if (rate && !(rate->num > 0 && rate->den > 0)) throw Error("verify: the rate must be positive");
  if (!(rel_tol >= 0.0 && rel_tol < 1.0)) throw Error("verify: rel_tol must be in [0, 1)");
}

namespace {

constexpr double kEps = std::numeric_limits<double>::epsilon();
constexpr double kTrust = 64.0 * kEps;  // per-position trust, relative (see verify.hpp)
constexpr double kNotDecisive = 0.1;    // a check whose tolerance exceeds 10% of its limit cannot decide

std::string fmt(double v) {
  if (v == 0.0) v = 0.0;
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.9g", v);
  return buf;
}

// One row as the checks see it, in scene units.
struct Row {
  std::size_t index = 0;
  int line = 0;
  double t = 0;
  std::vector<double> q, v, a, j;
};

}  // namespace

struct Verifier::Impl {
  const Scene& scene;
  VerifyOptions opt;
  std::string format;
  std::size_t m = 0;
  std::vector<std::string> columns;
  int t_col = -1, index_col = -1, dt_col = -1;
  std::vector<int> pos_col, vel_col, acc_col, jerk_col;
  bool usable = true;
  VerifyResult res;

  // The last four rows (ring), newest at rows_[(count-1) % 4].
  std::array<Row, 4> ring;
  std::size_t count = 0;
  std::size_t valid_since = 0;  // first row of the current run of strictly increasing times
  std::vector<double> quant;    // per-axis position quantisation [unit]
  std::vector<double> cpu, off;

  // Waypoints: next interior waypoint to match; matching of a row waits for the next row.
  std::size_t next_wp = 1;
  // Keyframes mode: waypoint k is reached at its time t_k (relative to the first waypoint).
  bool keyed = false;
  struct Key {
    double t;           // [s], scene time
    std::size_t wp;     // waypoint index
    bool hold_end;      // the end of that waypoint's hold
  };
  std::vector<Key> keys;
  std::size_t next_key = 0;
  bool pending = false;  // ring holds a row whose waypoint match waits for its successor
  std::size_t last_match_row = 0;

  Impl(const Scene& s, std::vector<std::string> cols, std::string fmt_name, const VerifyOptions& o)
      : scene(s), opt(o), format(std::move(fmt_name)), m(s.axes.size()), columns(std::move(cols)) {
    opt.validate();
    res.format = format;
    pos_col.assign(m, -1);
    vel_col.assign(m, -1);
    acc_col.assign(m, -1);
    jerk_col.assign(m, -1);
    quant.assign(m, 0.0);
    cpu.assign(m, 1.0);
    off.assign(m, 0.0);
    res.axes.resize(m);
    for (std::size_t a = 0; a < m; ++a) {
      res.axes[a].name = s.axes[a].name;
      res.axes[a].pos_min = std::numeric_limits<double>::infinity();
      res.axes[a].pos_max = -std::numeric_limits<double>::infinity();
    }
    for (auto& r : ring) {
      r.q.assign(m, 0.0);
      r.v.assign(m, 0.0);
      r.a.assign(m, 0.0);
      r.j.assign(m, 0.0);
    }
    std::map<std::string, int> seen;
    for (std::size_t c = 0; c < columns.size(); ++c) {
      const std::string& n = columns[c];
      if (seen.count(n)) throw Error("the column '" + n + "' appears twice");
      seen[n] = int(c);
      if (n == "t") { t_col = int(c); continue; }
      if (n == "dt") { dt_col = int(c); continue; }
      if (n == "sample" || n == "frame") {
        if (index_col < 0 || n == "frame") index_col = int(c);
        continue;
      }
      const auto dot = n.find('.');
      const std::string axis = n.substr(0, dot);
      const std::string what = dot == std::string::npos ? "" : n.substr(dot + 1);
      const int a = s.axis_index(axis);
      if (a < 0 || !(what.empty() || what == "vel" || what == "acc" || what == "jerk")) {
        column_finding("the column '" + n + "' is not an axis of the scene (axes: " + axis_list() + "); is this file from another scene?");
        continue;
      }
      (what.empty() ? pos_col : what == "vel" ? vel_col : what == "acc" ? acc_col : jerk_col)[std::size_t(a)] = int(c);
    }
    if (t_col < 0 && index_col < 0) throw Error("the file has no time column ('t', 'sample' or 'frame')");
    if (t_col < 0 && !opt.rate)
      throw Error("the file has no 't' column, only '" + columns[std::size_t(index_col)] +
                  "'; give the rate it was exported at (--rate or --fps)");
    for (std::size_t a = 0; a < m; ++a)
      if (pos_col[a] < 0) column_finding("the file has no position column '" + s.axes[a].name + "' for the scene's axis");
    if (opt.counts)
      for (std::size_t a = 0; a < m; ++a) {
        const AxisSpec& ax = s.axes[a];
        if (!ax.counts_per_unit)
          throw Error(s.file, ax.loc, "axis '" + ax.name + "' has no counts_per_unit; the file cannot be read in counts");
        cpu[a] = *ax.counts_per_unit;
        off[a] = ax.offset.value_or(0.0);
        quant[a] = 0.5 / std::abs(cpu[a]);
      }
    // Limits that are not given are not checked; say so.
    for (const auto& ax : s.axes) {
      std::string missing;
      if (!ax.min || !ax.max) missing += " travel";
      if (!ax.vel) missing += " vel";
      if (!ax.acc) missing += " acc";
      if (!ax.jerk) missing += " jerk";
      if (!missing.empty()) res.notes.push_back("axis '" + ax.name + "' has no limit for" + missing + ": not checked");
    }
    if (s.timing.mode == TimingMode::kKeyframes) {
      keyed = true;
      for (const auto& w : s.waypoints) keyed = keyed && w.t;
      // Keys in time order: a waypoint is reached at its t and, with a hold, is still there when
      // the hold ends (the next waypoint's t comes after that; the scene loader makes sure).
      if (keyed)
        for (std::size_t k = 1; k < s.waypoints.size(); ++k) {
          const Waypoint& w = s.waypoints[k];
          keys.push_back({*w.t, k, false});
          if (w.hold_s > 0.0 && k + 1 < s.waypoints.size()) keys.push_back({*w.t + w.hold_s, k, true});
        }
    }
  }

  std::string axis_list() const {
    std::string o;
    for (std::size_t a = 0; a < m; ++a) o += (a ? ", " : "") + scene.axes[a].name;
    return o;
  }

  void add(std::size_t row, int line, std::string axis, std::string check, std::string message) {
    res.ok = false;
    ++res.findings_total;
    if (res.findings.size() < opt.max_findings)
      res.findings.push_back({row, line, std::move(axis), std::move(check), std::move(message)});
  }
  void column_finding(std::string message) {
    usable = false;
    add(0, 1, "", "columns", std::move(message));
  }

  Row& at(std::size_t back) { return ring[(count - 1 - back) % 4]; }  // back = 0: newest

  // Position trust of the rows newest..newest-back [unit] for axis a.
  double trust(std::size_t back, std::size_t a) {
    double qm = 0, tm = 0, vm = 0;
    for (std::size_t b = 0; b <= back; ++b) {
      const Row& r = at(b);
      qm = std::max(qm, std::abs(r.q[a]));
      tm = std::max(tm, std::abs(r.t));
      if (b < back) {
        const Row& p = at(b + 1);
        vm = std::max(vm, std::abs(r.q[a] - p.q[a]) / (r.t - p.t));
      }
    }
    return kTrust * (qm + vm * tm) + quant[a];
  }

  static const char* unit_per(int k) { return k == 1 ? "/s" : k == 2 ? "/s^2" : "/s^3"; }
  std::string unit(std::size_t a, int k) const {
    const std::string& u = scene.axes[a].unit;
    return (u.empty() ? std::string("unit") : u) + (k ? unit_per(k) : "");
  }

  void add_row(const double* vals, int line) {
    if (!usable) return;
    const std::size_t r_index = res.rows++;
    ++count;
    Row& r = at(0);
    r.index = r_index;
    r.line = line;
    if (t_col >= 0) r.t = vals[t_col];
    else r.t = double(std::int64_t(vals[index_col]) * opt.rate->den) / double(opt.rate->num);
    for (std::size_t a = 0; a < m; ++a) {
      const double c = vals[pos_col[a]];
      r.q[a] = opt.counts ? (c - off[a]) / cpu[a] : c;
      r.v[a] = vel_col[a] >= 0 ? vals[vel_col[a]] / cpu[a] : 0.0;
      r.a[a] = acc_col[a] >= 0 ? vals[acc_col[a]] / cpu[a] : 0.0;
      r.j[a] = jerk_col[a] >= 0 ? vals[jerk_col[a]] / cpu[a] : 0.0;
    }
    if (r_index == 0) res.t_first = r.t;
    res.t_last = r.t;

    // Times.
    if (r_index > 0 && !(r.t > at(1).t)) {
      add(r_index, line, "", "time", "t " + fmt(r.t) + " s does not increase (previous row " + fmt(at(1).t) + " s)");
      valid_since = r_index;
      pending = false;  // cannot place waypoints across a broken clock
    }
    if (dt_col >= 0) {
      const double dt = vals[dt_col];
      const double want = r_index == 0 ? 0.0 : r.t - at(1).t;
      if (std::abs(dt - want) > 4 * kEps * std::max(std::abs(r.t), 1.0))
        add(r_index, line, "", "dt", "dt " + fmt(dt) + " s is not the time since the previous point (" + fmt(want) + " s)");
    }
    const std::size_t run = r_index - valid_since + 1;  // rows in the current increasing run

    for (std::size_t a = 0; a < m; ++a) {
      const AxisSpec& ax = scene.axes[a];
      VerifyAxis& st = res.axes[a];
      const double e0 = trust(0, a);
      st.pos_min = std::min(st.pos_min, r.q[a]);
      st.pos_max = std::max(st.pos_max, r.q[a]);
      if (ax.min && r.q[a] < *ax.min - e0 - opt.rel_tol * span(a))
        add(r_index, line, ax.name, "pos", "position " + fmt(r.q[a]) + " " + unit(a, 0) + " is below min " + fmt(*ax.min));
      if (ax.max && r.q[a] > *ax.max + e0 + opt.rel_tol * span(a))
        add(r_index, line, ax.name, "pos", "position " + fmt(r.q[a]) + " " + unit(a, 0) + " is above max " + fmt(*ax.max));
      if (r_index == 0) {
        const double w = scene.waypoints.front().q[a];
        if (std::abs(r.q[a] - w) > e0 + kTrust * std::abs(w))
          add(0, line, ax.name, "start", "the first row is at " + fmt(r.q[a]) + " " + unit(a, 0) +
                                             ", the scene starts at " + fmt(w) + " (waypoint 1)");
      }
      // Divided differences ending at this row.
      const std::optional<double> lim[4] = {std::nullopt, ax.vel, ax.acc, ax.jerk};
      for (int k = 1; k <= 3; ++k) {
        if (run < std::size_t(k) + 1) break;
        double d = 0, wsum = 0;
        for (int i = 0; i <= k; ++i) {
          double w = 1;
          for (int l = 0; l <= k; ++l)
            if (l != i) w /= at(std::size_t(i)).t - at(std::size_t(l)).t;
          w *= k == 1 ? 1.0 : k == 2 ? 2.0 : 6.0;
          d += w * at(std::size_t(i)).q[a];
          wsum += std::abs(w);
        }
        const double tol = trust(std::size_t(k), a) * wsum;
        double& peak = k == 1 ? st.vel : k == 2 ? st.acc : st.jerk;
        peak = std::max(peak, std::abs(d));
        if (!lim[k]) continue;
        if (tol > kNotDecisive * *lim[k]) (k == 1 ? st.vel_decisive : k == 2 ? st.acc_decisive : st.jerk_decisive) = false;
        if (std::abs(d) > *lim[k] * (1 + opt.rel_tol) + tol) {
          static const char* what[4] = {"", "velocity", "acceleration", "jerk"};
          add(r_index, line, ax.name, k == 1 ? "vel" : k == 2 ? "acc" : "jerk",
              std::string(what[k]) + " " + fmt(d) + " " + unit(a, k) + " from rows " + std::to_string(r_index - std::size_t(k)) +
                  ".." + std::to_string(r_index) + " exceeds the limit " + fmt(*lim[k]) + " (tolerance " + fmt(tol) + ")");
        }
      }
      // Derivative columns as written.
      const int cols[3] = {vel_col[a], acc_col[a], jerk_col[a]};
      const double vals_d[3] = {r.v[a], r.a[a], r.j[a]};
      for (int k = 1; k <= 3; ++k) {
        if (cols[k - 1] < 0 || !lim[k]) continue;
        const double x = vals_d[k - 1];
        if (std::abs(x) > *lim[k] * (1 + opt.rel_tol) + kTrust * std::abs(x))
          add(r_index, line, ax.name, k == 1 ? "vel-column" : k == 2 ? "acc-column" : "jerk-column",
              std::string(k == 1 ? "velocity" : k == 2 ? "acceleration" : "jerk") + " column " + fmt(x) + " " + unit(a, k) +
                  " exceeds the limit " + fmt(*lim[k]));
      }
      // Velocity and acceleration columns against the positions and each other (trapezoid rule).
      if (run >= 2) {
        const Row& p = at(1);
        const double h = r.t - p.t;
        if (vel_col[a] >= 0 && (ax.jerk || ax.acc)) {
          const double bound = ax.jerk ? h * h * h * *ax.jerk / 12.0 : h * h * *ax.acc / 4.0;
          const double dev = (r.q[a] - p.q[a]) - h * 0.5 * (p.v[a] + r.v[a]);
          const double tol = bound * (1 + opt.rel_tol) + 2 * trust(1, a) + kTrust * h * (std::abs(p.v[a]) + std::abs(r.v[a]));
          if (std::abs(dev) > tol)
            add(r_index, line, ax.name, "vel-column",
                "the velocity column does not match the positions: the step from row " + std::to_string(r_index - 1) + " is " +
                    fmt(r.q[a] - p.q[a]) + " " + unit(a, 0) + ", the velocities give " + fmt(h * 0.5 * (p.v[a] + r.v[a])) +
                    " (allowed difference " + fmt(tol) + ")");
        }
        if (vel_col[a] >= 0 && acc_col[a] >= 0 && ax.jerk) {
          const double bound = h * h * *ax.jerk / 4.0;
          const double dev = (r.v[a] - p.v[a]) - h * 0.5 * (p.a[a] + r.a[a]);
          const double tol = bound * (1 + opt.rel_tol) +
                             kTrust * (std::abs(r.v[a]) + std::abs(p.v[a]) + h * (std::abs(p.a[a]) + std::abs(r.a[a])));
          if (std::abs(dev) > tol)
            add(r_index, line, ax.name, "acc-column",
                "the acceleration column does not match the velocity column: velocity changes by " + fmt(r.v[a] - p.v[a]) +
                    " " + unit(a, 1) + " from row " + std::to_string(r_index - 1) + ", the accelerations give " +
                    fmt(h * 0.5 * (p.a[a] + r.a[a])) + " (allowed difference " + fmt(tol) + ")");
        }
      }
    }
    // Waypoint matching for the previous row, now that its successor is known.
    if (pending && run >= 2) match(1);
    pending = true;
    if (keyed && run >= 2) keyframes();
  }

  double span(std::size_t a) const {
    const AxisSpec& ax = scene.axes[a];
    return ax.min && ax.max ? *ax.max - *ax.min : 0.0;
  }

  // Largest acceleration to assume near a row for axis a: the limit, else twice the local estimate
  // (second divided difference of the three rows around it).
  double acc_bound(std::size_t a, std::size_t back) {
    if (scene.axes[a].acc) return *scene.axes[a].acc;
    const std::size_t b0 = back == 0 ? 0 : back - 1;  // newest of the three rows
    if (count < b0 + 3 || at(b0 + 2).index < valid_since) return 0.0;
    const Row &x0 = at(b0 + 2), &x1 = at(b0 + 1), &x2 = at(b0);
    const double d1 = (x1.q[a] - x0.q[a]) / (x1.t - x0.t), d2 = (x2.q[a] - x1.q[a]) / (x2.t - x1.t);
    return 2.0 * (2.0 * std::abs(d2 - d1) / (x2.t - x0.t));
  }

  // Tries to match interior waypoints, in order, at the row `back` rows before the newest (0 or 1).
  // A waypoint passed at time tau lies within h/2 in time of a sample, and |v| <= |dq/h| + A h on
  // the interval, so the sample is within h/2 (|dq/h| + A h) of it (plus round-off).
  void match(std::size_t back) {
    const std::size_t n = scene.waypoints.size();
    const Row& r = at(back);
    while (next_wp + 1 < n) {
      const auto& w = scene.waypoints[next_wp].q;
      bool ok = true;
      for (std::size_t a = 0; a < m && ok; ++a) {
        double hmax = 0, vmax = 0;
        auto interval = [&](std::size_t newer) {  // between at(newer + 1) and at(newer)
          if (count < newer + 2 || at(newer + 1).index < valid_since) return;
          const Row &p = at(newer + 1), &q = at(newer);
          const double h = q.t - p.t;
          if (!(h > 0.0)) return;
          hmax = std::max(hmax, h);
          vmax = std::max(vmax, std::abs(q.q[a] - p.q[a]) / h);
        };
        interval(back);
        if (back >= 1) interval(back - 1);
        const double tol = 0.5 * hmax * (vmax + acc_bound(a, back) * hmax) + trust(back, a) + kTrust * std::abs(w[a]);
        ok = std::abs(r.q[a] - w[a]) <= tol;
      }
      if (!ok) break;
      last_match_row = r.index;
      ++next_wp;
    }
  }

  // Keyframes: at each waypoint's time the file, read linearly between the two rows around it, is
  // at the waypoint within h^2/8 * A (linear interpolation error, A the acceleration bound) plus
  // round-off. Times are taken relative to the first row, which is the first waypoint's time.
  void keyframes() {
    const Row &p = at(1), &r = at(0);
    const double t0 = scene.waypoints.front().t.value_or(0.0);
    const double tp = p.t - res.t_first + t0, tr = r.t - res.t_first + t0;
    while (next_key < keys.size() && keys[next_key].t <= tr) {
      const Key& key = keys[next_key];
      const Waypoint& wk = scene.waypoints[key.wp];
      const double tk = key.t;
      const double h = tr - tp;
      const double s = std::clamp((tk - tp) / h, 0.0, 1.0);
      for (std::size_t a = 0; a < m; ++a) {
        // No acceleration limit and too few rows for a local estimate: no bound to check against.
        if (!scene.axes[a].acc && (count < 3 || at(2).index < valid_since)) continue;
        const double lin = p.q[a] + s * (r.q[a] - p.q[a]);
        const double tol = h * h / 8.0 * acc_bound(a, 0) + trust(1, a) +
                           kTrust * (std::abs(wk.q[a]) + std::abs(tr) * std::abs(r.q[a] - p.q[a]) / h);
        if (std::abs(lin - wk.q[a]) > tol) {
          add(r.index, r.line, scene.axes[a].name, "keyframe",
              "waypoint " + std::to_string(key.wp + 1) + (key.hold_end ? "'s hold ends" : " is keyed") + " at t " + fmt(tk) +
                  " s, where the file is at " + fmt(lin) +
                  " " + unit(a, 0) + " (linear between rows " + std::to_string(p.index) + " and " + std::to_string(r.index) +
                  "), the scene says " + fmt(wk.q[a]) + " (allowed " + fmt(tol) + ")");
          break;
        }
      }
      ++next_key;
    }
  }

  VerifyResult finish() {
    if (!usable) return res;
    const std::size_t n = scene.waypoints.size();
    if (res.rows == 0) {
      add(0, 1, "", "rows", "the file holds no samples");
      return res;
    }
    if (pending) match(0);
    const Row& last = at(0);
    if (next_wp + 1 < n) {
      add(last.index, last.line, "", "waypoint",
          "waypoint " + std::to_string(next_wp + 1) + " (scene line " + std::to_string(scene.waypoints[next_wp].loc.line) +
              ") is never passed" + (next_wp > 1 ? " after waypoint " + std::to_string(next_wp) + " (row " + std::to_string(last_match_row) + ")" : ""));
    }
    const auto& we = scene.waypoints.back().q;
    for (std::size_t a = 0; a < m; ++a) {
      double g = 0, v = 0;
      for (std::size_t s = 0; s < 2 && count >= s + 2 && at(s + 1).index >= valid_since; ++s) {
        const double h = at(s).t - at(s + 1).t;
        g = std::max(g, h);
        if (s == 0) v = std::abs(at(0).q[a] - at(1).q[a]) / h;
      }
      const double tol = g * (v + 2.0 * acc_bound(a, 0) * g) + trust(0, a) + kTrust * std::abs(we[a]);
      if (std::abs(last.q[a] - we[a]) > tol)
        add(last.index, last.line, scene.axes[a].name, "end",
            "the last row is at " + fmt(last.q[a]) + " " + unit(a, 0) + ", the scene ends at " + fmt(we[a]) + " (waypoint " +
                std::to_string(n) + "; allowed " + fmt(tol) + ")");
    }
    if (res.ok) res.waypoints_passed = n;
    else res.waypoints_passed = std::min(n, next_wp + (next_wp + 1 >= n ? 1 : 0));
    std::stable_sort(res.findings.begin(), res.findings.end(), [](const Finding& x, const Finding& y) { return x.row < y.row; });
    for (std::size_t a = 0; a < m; ++a) {
      const VerifyAxis& st = res.axes[a];
      std::string weak;
      if (!st.vel_decisive) weak += " vel";
      if (!st.acc_decisive) weak += " acc";
      if (!st.jerk_decisive) weak += " jerk";
      if (!weak.empty())
        res.notes.push_back("axis '" + st.name + "': the" + weak +
                            " check is not decisive at this sample spacing (the round-off tolerance of the differences exceeds 10% of the limit" +
                            (opt.counts ? ", mostly from whole counts" : "") + ")");
    }
    return res;
  }
};

Verifier::Verifier(const Scene& scene, std::vector<std::string> columns, std::string format, const VerifyOptions& options)
    : impl_(new Impl(scene, std::move(columns), std::move(format), options)) {}
Verifier::~Verifier() { delete impl_; }
void Verifier::add_row(const double* values, int line) { impl_->add_row(values, line); }
VerifyResult Verifier::finish() { return impl_->finish(); }
bool Verifier::usable() const { return impl_->usable; }

// ---- reading -------------------------------------------------------------------------------------

namespace {

class Reader {
 public:
  Reader(const Scene& scene, std::string file, const VerifyOptions& o) : scene_(scene), file_(std::move(file)), opt_(o) {}

  [[noreturn]] void fail(int line, std::size_t col, const std::string& msg) const {
    throw Error(file_, SourceLoc{line, int(col) + 1}, msg);
  }

  void line(std::string_view s, int lineno) {
    if (!s.empty() && s.back() == '\r') s.remove_suffix(1);
    if (s.empty()) {
      blank_ = lineno;
      return;
    }
    if (blank_) fail(blank_, 0, "empty line inside the file");
    if (!started_) {
      started_ = true;
      std::size_t i = 0;
      while (i < s.size() && (s[i] == ' ' || s[i] == '\t')) ++i;
      jsonl_ = i < s.size() && s[i] == '{';
      if (!jsonl_) {
        header(s, lineno);
        return;
      }
    }
    if (jsonl_) json_row(s, lineno);
    else csv_row(s, lineno);
  }

  VerifyResult finish() {
    if (!started_) fail(1, 0, "the file is empty; expected exported setpoints (CSV, PVT or JSON Lines)");
    return v_->finish();
  }

 private:
  void make(std::vector<std::string> cols, const char* format, int lineno) {
    try {
      v_ = std::make_unique<Verifier>(scene_, std::move(cols), format, opt_);
    } catch (const Error& e) {
      if (!e.file().empty()) throw;
      fail(lineno, 0, e.message());
    }
    ncols_ = columns_n_;
    vals_.assign(ncols_, 0.0);
  }

  void header(std::string_view s, int lineno) {
    std::vector<std::string> cols;
    std::size_t start = 0;
    while (true) {
      const std::size_t comma = std::min(s.find(',', start), s.size());
      const std::string_view f = s.substr(start, comma - start);
      if (f.empty()) fail(lineno, start, "empty column name in the header");
      for (std::size_t i = 0; i < f.size(); ++i) {
        const unsigned char c = static_cast<unsigned char>(f[i]);
        if (!(std::isalnum(c) || c == '_' || c == '.'))
          fail(lineno, start + i, "the header must name the columns (t, NAME, NAME.vel, ...); found '" + std::string(f) + "'");
      }
      cols.emplace_back(f);
      if (comma == s.size()) break;
      start = comma + 1;
    }
    const char* format = cols.size() >= 2 && cols[0] == "t" && cols[1] == "dt" ? "pvt" : "csv";
    columns_n_ = cols.size();
    make(std::move(cols), format, lineno);
  }

  double number(std::string_view s, std::size_t at, int lineno) {
    double v = 0;
    const char* b = s.data() + at;
    const auto [p, ec] = std::from_chars(b, s.data() + s.size(), v);
    if (ec != std::errc() || p == b) fail(lineno, at, "expected a number");
    if (!std::isfinite(v)) fail(lineno, at, "expected a finite number");
    last_end_ = std::size_t(p - s.data());
    return v;
  }

  void csv_row(std::string_view s, int lineno) {
    std::size_t at = 0;
    for (std::size_t c = 0; c < ncols_; ++c) {
      vals_[c] = number(s, at, lineno);
      at = last_end_;
      if (c + 1 < ncols_) {
        if (at >= s.size() || s[at] != ',')
          fail(lineno, at, at >= s.size() ? "the row has " + std::to_string(c + 1) + " fields, the header " + std::to_string(ncols_)
                                           : "expected ',' after a number");
        ++at;
      }
    }
    if (at != s.size()) fail(lineno, at, s[at] == ',' ? "the row has more fields than the header (" + std::to_string(ncols_) + ")" : "unexpected text after the last number");
    v_->add_row(vals_.data(), lineno);
  }

  void json_row(std::string_view s, int lineno) {
    std::size_t i = 0;
    auto ws = [&] {
      while (i < s.size() && (s[i] == ' ' || s[i] == '\t')) ++i;
    };
    auto expect = [&](char c) {
      ws();
      if (i >= s.size() || s[i] != c) fail(lineno, i, std::string("expected '") + c + "'");
      ++i;
    };
    expect('{');
    const bool first = !v_;
    std::vector<std::string> keys;
    std::vector<double> vals;
    ws();
    if (i < s.size() && s[i] == '}') fail(lineno, i, "empty object; expected the sample's fields");
    while (true) {
      expect('"');
      const std::size_t k0 = i;
      while (i < s.size() && s[i] != '"') {
        if (s[i] == '\\') fail(lineno, i, "escapes are not expected in column names");
        ++i;
      }
      if (i >= s.size()) fail(lineno, k0, "unterminated key");
      std::string key(s.substr(k0, i - k0));
      ++i;
      expect(':');
      ws();
      const std::size_t at = i;
      const double v = number(s, i, lineno);
      i = last_end_;
      if (first) {
        if (std::find(keys.begin(), keys.end(), key) != keys.end()) fail(lineno, k0, "duplicate key '" + key + "'");
        keys.push_back(key);
        vals.push_back(v);
      } else {
        const auto it = index_.find(key);
        if (it == index_.end()) fail(lineno, k0, "key '" + key + "' is not in the first line's object");
        if (seen_[it->second] == lineno) fail(lineno, k0, "duplicate key '" + key + "'");
        seen_[it->second] = lineno;
        vals_[it->second] = v;
      }
      (void)at;
      ws();
      if (i < s.size() && s[i] == ',') {
        ++i;
        continue;
      }
      expect('}');
      break;
    }
    ws();
    if (i != s.size()) fail(lineno, i, "unexpected text after the object (one object per line)");
    if (first) {
      for (std::size_t c = 0; c < keys.size(); ++c) index_[keys[c]] = c;
      columns_n_ = keys.size();
      make(keys, "jsonl", lineno);
      seen_.assign(ncols_, lineno);
      vals_ = vals;
    } else {
      for (std::size_t c = 0; c < ncols_; ++c)
        if (seen_[c] != lineno) {
          std::string name;
          for (const auto& [k, idx] : index_)
            if (idx == c) name = k;
          fail(lineno, 0, "key '" + name + "' is missing");
        }
    }
    v_->add_row(vals_.data(), lineno);
  }

  const Scene& scene_;
  std::string file_;
  VerifyOptions opt_;
  std::unique_ptr<Verifier> v_;
  bool started_ = false, jsonl_ = false;
  int blank_ = 0;
  std::size_t ncols_ = 0, columns_n_ = 0, last_end_ = 0;
  std::vector<double> vals_;
  std::map<std::string, std::size_t> index_;
  std::vector<int> seen_;
};

}  // namespace

VerifyResult verify_text(const Scene& scene, std::string_view text, const std::string& file, const VerifyOptions& o) {
  Reader r(scene, file, o);
  int lineno = 0;
  std::size_t start = 0;
  while (start < text.size()) {
    const std::size_t nl = text.find('\n', start);
    const std::size_t end = nl == std::string_view::npos ? text.size() : nl;
    r.line(text.substr(start, end - start), ++lineno);
    start = end + 1;
  }
  return r.finish();
}

VerifyResult verify_file(const Scene& scene, const std::string& path, const VerifyOptions& o) {
  const std::string name = path == "-" ? "<stdin>" : path;
  std::ifstream file;
  std::istream* in = &std::cin;
  if (path != "-") {
    file.open(path, std::ios::binary);
    if (!file) throw Error(path, SourceLoc{}, "cannot open the file (check the path)");
    in = &file;
  }
  Reader r(scene, name, o);
  std::string carry;
  std::vector<char> buf(1 << 20);
  int lineno = 0;
  while (true) {
    in->read(buf.data(), std::streamsize(buf.size()));
    const std::size_t got = std::size_t(in->gcount());
    if (got == 0) break;
    std::string_view chunk(buf.data(), got);
    if (chunk.find('\0') != std::string_view::npos) throw Error(name, SourceLoc{lineno + 1, 1}, "the file contains a NUL byte; expected text");
    std::size_t start = 0;
    while (true) {
      const std::size_t nl = chunk.find('\n', start);
      if (nl == std::string_view::npos) {
        carry.append(chunk.substr(start));
        if (carry.size() > (16u << 20)) throw Error(name, SourceLoc{lineno + 1, 1}, "a line longer than 16 MiB; this is not a setpoint file");
        break;
      }
      if (carry.empty()) {
        r.line(chunk.substr(start, nl - start), ++lineno);
      } else {
        carry.append(chunk.substr(start, nl - start));
        r.line(carry, ++lineno);
        carry.clear();
      }
      start = nl + 1;
    }
  }
  if (in->bad()) throw Error(name, SourceLoc{}, "cannot read the file");
  if (!carry.empty()) r.line(carry, ++lineno);
  return r.finish();
}

}  // namespace c2path
