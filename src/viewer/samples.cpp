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

PathThin thin_path_3d(const Samples& s, const ThinParams& prm) {
  PathThin out;
  out.params = prm;
  const std::size_t n = s.n;
  if (n == 0) return out;
  int map[3];
  for (int k = 0; k < 3; ++k) map[k] = prm.map[k] >= int(s.axes) ? -1 : prm.map[k];
  std::vector<float> value(n);
  if (prm.speed) {
    std::vector<float> speed(n, 0.0f);
    for (int c = 0; c < 3; ++c) {
      if (map[c] < 0) continue;
      const float* v = s.series(1, std::size_t(map[c]));
      for (std::size_t i = 0; i < n; ++i) speed[i] += v[i] * v[i];
    }
    float peak = 0.0f;
    for (auto& v : speed) {
      v = std::sqrt(v);
      peak = std::max(peak, v);
    }
    const float inv = peak > 0 ? 1.0f / peak : 0.0f;
    for (std::size_t i = 0; i < n; ++i) value[i] = std::min(1.0f, speed[i] * inv);
  } else {
    for (std::size_t i = 0; i < n; ++i) value[i] = s.pct[i] > 100.25f ? 1.5f : std::min(1.0f, s.pct[i] / 100.0f);
  }
  auto level = [](float v) { return v > 1.0f ? 1000 : int(v * 40.0f); };
  std::vector<float> c3(3 * n, 0.0f);
  for (int k = 0; k < 3; ++k) {
    if (map[k] == -1) continue;
    for (std::size_t i = 0; i < n; ++i) {
      const double v = map[k] >= 0 ? double(s.q[0][std::size_t(map[k]) * n + i]) : s.t[i];
      c3[3 * i + std::size_t(k)] = float((v - prm.centre[k]) / prm.half[k]);
    }
  }
  const float scale_hi = std::exp2((prm.step + 1.0f) * 0.5f);
  const float eps = 0.3f / scale_hi, eps2 = eps * eps;
  auto dist2_seg = [&](std::size_t p, std::size_t a, std::size_t b) {
    const float* P = &c3[3 * p];
    const float* A = &c3[3 * a];
    const float* B = &c3[3 * b];
    const float ab[3] = {B[0] - A[0], B[1] - A[1], B[2] - A[2]}, ap[3] = {P[0] - A[0], P[1] - A[1], P[2] - A[2]};
    const float l2 = ab[0] * ab[0] + ab[1] * ab[1] + ab[2] * ab[2];
    float t = l2 > 0 ? (ap[0] * ab[0] + ap[1] * ab[1] + ap[2] * ab[2]) / l2 : 0.0f;
    t = std::clamp(t, 0.0f, 1.0f);
    const float d[3] = {ap[0] - t * ab[0], ap[1] - t * ab[1], ap[2] - t * ab[2]};
    return d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
  };
  auto& idx = out.idx;
  idx.push_back(0);
  std::size_t a = 0, i = 1;
  while (i < n) {
    const std::size_t j = i + 1;
    if (j >= n) break;
    bool fits = level(value[j]) == level(value[a]) && j - a <= 64;
    for (std::size_t p = a + 1; fits && p < j; ++p) fits = dist2_seg(p, a, j) <= eps2;
    if (fits) i = j;
    else {
      idx.push_back(i);
      a = i;
      i = a + 1;
    }
  }
  if (idx.back() != n - 1) idx.push_back(n - 1);
  out.val.resize(idx.size());
  for (std::size_t k = 0; k < idx.size(); ++k) {  // a kept point carries the largest value of its run
    float v = value[idx[k]];
    if (k > 0)
      for (std::size_t p = idx[k - 1] + 1; p < idx[k]; ++p) v = std::max(v, value[p]);
    out.val[k] = v;
  }
  return out;
}

}  // namespace c2path::viewer
