// Sampling a plan for drawing (see samples.hpp). Evaluation is the library's Trajectory::eval_all.

#include "samples.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace c2path::viewer {

MinMaxTree::MinMaxTree(const float* values, std::size_t n) : v_(values), n_(n) {
  const std::size_t blocks = (n + kBlock - 1) / kBlock;
  leaves_ = 1;
  while (leaves_ < blocks) leaves_ *= 2;
  lo_.assign(2 * leaves_, std::numeric_limits<float>::infinity());
  hi_.assign(2 * leaves_, -std::numeric_limits<float>::infinity());
  for (std::size_t b = 0; b < blocks; ++b) {
    float l = lo_[leaves_ + b], h = hi_[leaves_ + b];
    for (std::size_t i = b * kBlock; i < std::min(n, (b + 1) * kBlock); ++i) {
      l = std::min(l, values[i]);
      h = std::max(h, values[i]);
    }
    lo_[leaves_ + b] = l;
    hi_[leaves_ + b] = h;
  }
  for (std::size_t i = leaves_ - 1; i >= 1; --i) {
    lo_[i] = std::min(lo_[2 * i], lo_[2 * i + 1]);
    hi_[i] = std::max(hi_[2 * i], hi_[2 * i + 1]);
  }
}

void MinMaxTree::query(std::size_t i0, std::size_t i1, float& lo, float& hi) const {
  lo = std::numeric_limits<float>::infinity();
  hi = -lo;
  i1 = std::min(i1, n_);
  // Raw samples up to the first block boundary and after the last one.
  while (i0 < i1 && i0 % kBlock != 0) {
    lo = std::min(lo, v_[i0]);
    hi = std::max(hi, v_[i0]);
    ++i0;
  }
  while (i1 > i0 && i1 % kBlock != 0) {
    --i1;
    lo = std::min(lo, v_[i1]);
    hi = std::max(hi, v_[i1]);
  }
  if (i0 >= i1) return;
  std::size_t l = i0 / kBlock + leaves_, r = i1 / kBlock + leaves_;  // blocks [l, r)
  while (l < r) {
    if (l & 1) { lo = std::min(lo, lo_[l]); hi = std::max(hi, hi_[l]); ++l; }
    if (r & 1) { --r; lo = std::min(lo, lo_[r]); hi = std::max(hi, hi_[r]); }
    l /= 2;
    r /= 2;
  }
}

void Samples::build(const Planned& planned, std::size_t budget) {
  const Trajectory& tr = *planned.plan.trajectory;
  axes = std::size_t(tr.axes());
  const std::vector<double> br = tr.breaks();
  const std::size_t pieces = br.size() > 1 ? br.size() - 1 : 1;
  // Samples per piece: many for short moves (smooth curves when zoomed in), few for long ones,
  // at most about `budget` in all. Zoomed-in plots evaluate the trajectory per pixel instead.
  std::size_t k = std::clamp<std::size_t>(16384 / pieces, 2, 2048);
  k = std::max<std::size_t>(2, std::min(k, budget / pieces));

  t.clear();
  t.reserve(pieces * (k + 1));
  for (std::size_t p = 0; p + 1 < br.size(); ++p) {
    const double a = br[p], b = br[p + 1];
    if (!(b > a)) continue;
    for (std::size_t i = 0; i < k; ++i) t.push_back(a + (b - a) * double(i) / double(k));
    t.push_back(b - (b - a) * 1e-9);  // the piece's own end value (before a jump)
  }
  t.push_back(tr.t_end());
  n = t.size();
  for (auto& d : q) d.assign(axes * n, 0.0f);
  pct.assign(n, 0.0f);

  const auto& lim = planned.plan.limits;
  Eigen::MatrixXd out(tr.axes(), 4);
  for (std::size_t i = 0; i < n; ++i) {
    tr.eval_all(t[i], out);
    float worst = 0.0f;
    for (std::size_t a = 0; a < axes; ++a) {
      for (int d = 0; d < 4; ++d) q[d][a * n + i] = float(out(Index(a), d));
      const AxisLimits& L = lim[a];
      if (L.vel) worst = std::max(worst, float(100.0 * std::abs(out(Index(a), 1)) / *L.vel));
      if (L.acc) worst = std::max(worst, float(100.0 * std::abs(out(Index(a), 2)) / *L.acc));
      if (L.jerk) worst = std::max(worst, float(100.0 * std::abs(out(Index(a), 3)) / *L.jerk));
    }
    pct[i] = worst;
  }
  // The exact check decides what is a violation: every sample inside a violation interval
  // (including travel violations) is drawn as beyond its limit.
  for (const Violation& v : planned.report.violations) {
    auto i0 = std::size_t(std::lower_bound(t.begin(), t.end(), v.t_start) - t.begin());
    auto i1 = std::size_t(std::upper_bound(t.begin(), t.end(), v.t_end) - t.begin());
    for (std::size_t i = i0; i < i1; ++i) pct[i] = std::max(pct[i], 100.5f);
  }
  for (int d = 0; d < 4; ++d)
    for (std::size_t a = 0; a < axes; ++a) {
      tree[d][a] = MinMaxTree(series(d, a), n);
      tree[d][a].query(0, n, lo[d][a], hi[d][a]);
    }
}

}  // namespace c2path::viewer
