#include "c2path/path.hpp"

#include <algorithm>

#include "c2path/error.hpp"

namespace c2path {

SplinePath::SplinePath(std::vector<CubicSpline> segments) : segments_(std::move(segments)) {
  if (segments_.empty()) throw Error("a path needs at least one segment");
  for (std::size_t k = 1; k < segments_.size(); ++k)
    if (segments_[k].u_begin() != segments_[k - 1].u_end() || segments_[k].axes() != segments_[0].axes())
      throw Error("path segments must be contiguous and have the same axes");
}

std::size_t SplinePath::segment_of(double u) const {
  if (segments_.size() == 1) return 0;
  // First segment whose end is beyond u; the last one for u at or past the end.
  const auto it = std::upper_bound(segments_.begin(), segments_.end() - 1, u,
                                   [](double x, const CubicSpline& s) { return x < s.u_end(); });
  return std::size_t(it - segments_.begin());
}

void SplinePath::eval(double u, int deriv, Eigen::Ref<Eigen::VectorXd> out) const {
  segments_[segment_of(u)].eval(u, deriv, out);
}

void Path::eval_all(double u, Eigen::Ref<Eigen::MatrixXd> out) const {
  Eigen::VectorXd v(axes());
  for (int d = 0; d < 4; ++d) {
    eval(u, d, v);
    out.col(d) = v;
  }
}

void SplinePath::eval_all(double u, Eigen::Ref<Eigen::MatrixXd> out) const {
  const CubicSpline& s = segments_[segment_of(u)];
  const Index m = s.axes();
  if (u >= s.u_end()) {  // the end values as the end condition fixes them (CubicSpline::eval)
    for (Index a = 0; a < m; ++a)
      for (int d = 0; d < 4; ++d) out(a, d) = s.eval(u, a, d);
    return;
  }
  const Index p = s.find_piece(u);
  const double x = u - s.breaks()[std::size_t(p)];
  for (Index a = 0; a < m; ++a) {
    const double* c = s.coeffs(p, a);
    out(a, 0) = cubic_eval(c, x, 0);
    out(a, 1) = cubic_eval(c, x, 1);
    out(a, 2) = cubic_eval(c, x, 2);
    out(a, 3) = cubic_eval(c, x, 3);
  }
}

std::vector<double> SplinePath::breaks() const {
  std::vector<double> b;
  for (const auto& s : segments_) {
    const auto& sb = s.breaks();
    b.insert(b.end(), b.empty() ? sb.begin() : sb.begin() + 1, sb.end());
  }
  return b;
}

std::vector<double> SplinePath::stops() const {
  std::vector<double> b;
  b.push_back(u_begin());
  for (const auto& s : segments_) b.push_back(s.u_end());
  return b;
}

}  // namespace c2path
