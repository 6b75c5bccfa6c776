#include "c2path/trajectory.hpp"

#include <algorithm>

#include "c2path/error.hpp"

namespace c2path {

void Trajectory::eval_all(double t, Eigen::Ref<Eigen::MatrixXd> out) const {
  Eigen::VectorXd tmp(axes());
  for (int d = 0; d < 4; ++d) {
    eval(t, d, tmp);
    out.col(d) = tmp;
  }
}

CubicTrajectory::CubicTrajectory(std::vector<CubicSpline> pieces) : pieces_(std::move(pieces)) {
  if (pieces_.empty()) throw Error("a trajectory needs at least one piece");
  for (std::size_t k = 1; k < pieces_.size(); ++k)
    if (pieces_[k].u_begin() != pieces_[k - 1].u_end() || pieces_[k].axes() != pieces_[0].axes())
      throw Error("trajectory pieces must be contiguous in time and have the same axes");
}

std::size_t CubicTrajectory::piece_of(double t) const {
  if (pieces_.size() == 1) return 0;
  const auto it = std::upper_bound(pieces_.begin(), pieces_.end() - 1, t,
                                   [](double x, const CubicSpline& s) { return x < s.u_end(); });
  return std::size_t(it - pieces_.begin());
}

void CubicTrajectory::eval(double t, int deriv, Eigen::Ref<Eigen::VectorXd> out) const {
  pieces_[piece_of(t)].eval(t, deriv, out);
}

void CubicTrajectory::eval_all(double t, Eigen::Ref<Eigen::MatrixXd> out) const {
  const CubicSpline& s = pieces_[piece_of(t)];
  const Index p = s.find_piece(t);
  const double x = t - s.breaks()[std::size_t(p)];
  for (Index a = 0; a < s.axes(); ++a) {
    const double* c = s.coeffs(p, a);
    for (int d = 0; d < 4; ++d) out(a, d) = cubic_eval(c, x, d);
  }
  if (t == s.u_end())  // exact end values, slopes and curvatures
    for (Index a = 0; a < s.axes(); ++a)
      for (int d = 0; d < 3; ++d) out(a, d) = s.end_deriv(a, d);
}

std::vector<double> CubicTrajectory::breaks() const {
  std::vector<double> b;
  for (const auto& s : pieces_) {
    const auto& sb = s.breaks();
    b.insert(b.end(), b.empty() ? sb.begin() : sb.begin() + 1, sb.end());
  }
  return b;
}

}  // namespace c2path
