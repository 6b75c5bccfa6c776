#pragma once
// Drawing data derived from a plan: the trajectory evaluated (by the library) on a time grid,
// with min/max trees so plots can draw any time range at one point per pixel column in O(log n).
// Recomputed only when the document shows a new plan.

#include <cstddef>
#include <vector>

#include "document.hpp"

namespace c2path::viewer {

/// Minimum and maximum of a float series over index ranges, O(log n) per query.
class MinMaxTree {
 public:
  MinMaxTree() = default;
  explicit MinMaxTree(const float* values, std::size_t n);
  /// min and max of values[i0, i1), i0 < i1 <= n.
  void query(std::size_t i0, std::size_t i1, float& lo, float& hi) const;

 private:
  static constexpr std::size_t kBlock = 16;
  const float* v_ = nullptr;
  std::size_t n_ = 0, leaves_ = 0;
  std::vector<float> lo_, hi_;  // segment tree over blocks, 2 * leaves_
};

/// The trajectory on a time grid: every piece of the trajectory sampled at k points plus its end
/// (evaluated just inside the piece, so jumps in jerk show as steps).
struct Samples {
  std::size_t n = 0;           ///< samples
  std::size_t axes = 0;
  std::vector<double> t;       ///< n times [s], non-decreasing
  std::vector<float> q[4];     ///< derivative d: q[d][axis * n + i]
  std::vector<float> pct;      ///< highest % of any vel/acc/jerk limit at each sample; >= 100 inside a violation
  MinMaxTree tree[4][64];      ///< per derivative and axis (kMaxAxes = 64)
  float lo[4][64], hi[4][64];  ///< whole-move range per derivative and axis

  /// Samples `planned`: about 16384 samples in all for short moves, 3 per piece (at least) for
  /// long ones, never much more than `budget`.
  void build(const Planned& planned, std::size_t budget = 400000);
  [[nodiscard]] const float* series(int deriv, std::size_t axis) const { return q[deriv].data() + axis * n; }
};

/// What the 3D path thinning depends on besides the samples.
struct ThinParams {
  int map[3] = {0, 1, 2};          ///< per 3D coordinate: an axis, -2 time, -1 none (app.hpp kMapTime, kMapNone)
  bool speed = false;              ///< colour by speed of the mapped axes (else by % of limit)
  double centre[3] = {0, 0, 0};    ///< normalisation: (value - centre) / half
  double half[3] = {1, 1, 1};
  float step = 0.0f;               ///< zoom step: floor(2 log2(pixels per normalised unit))
  bool operator==(const ThinParams&) const = default;
};

/// The path thinned in 3D, independent of the view direction (see thin_path_3d).
struct PathThin {
  ThinParams params;
  std::vector<std::size_t> idx;  ///< kept samples, increasing, first and last included
  std::vector<float> val;        ///< colour value per kept sample: the largest of the run it ends
};

/// Object-space thinning: an orthographic view maps a 3D offset e to at most |e| * scale pixels,
/// so dropping samples that lie within eps of the chord between kept samples (eps = 0.3 px / the
/// largest scale of the zoom step) keeps the drawn error below 0.3 px for every orientation. Runs
/// are capped at 64 samples and end where the colour level changes. Drawing math only.
PathThin thin_path_3d(const Samples& s, const ThinParams& p);

}  // namespace c2path::viewer
