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

}  // namespace c2path::viewer
