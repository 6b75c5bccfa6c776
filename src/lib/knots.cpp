#include "c2path/knots.hpp"

#include <cmath>
#include <string>

#include "c2path/error.hpp"

namespace c2path {

Eigen::VectorXd weighted_chords(const Eigen::Ref<const Eigen::MatrixXd>& q,
                                const Eigen::Ref<const Eigen::VectorXd>& weights) {
  const Eigen::Index n = q.rows() - 1;
  Eigen::VectorXd d(std::max<Eigen::Index>(n, 0));
  for (Eigen::Index k = 0; k < n; ++k) {
    // Scaled 2-norm (as hypot does) so that huge or tiny units neither overflow nor underflow.
    double scale = 0.0;
    for (Eigen::Index a = 0; a < q.cols(); ++a) scale = std::max(scale, std::abs(weights[a] * (q(k + 1, a) - q(k, a))));
    double sum = 0.0;
    if (scale > 0.0)
      for (Eigen::Index a = 0; a < q.cols(); ++a) {
        const double x = weights[a] * (q(k + 1, a) - q(k, a)) / scale;
        sum += x * x;
      }
    d[k] = scale * std::sqrt(sum);
  }
  return d;
}

std::optional<Eigen::Index> find_coincident(const Eigen::Ref<const Eigen::MatrixXd>& q,
                                            const Eigen::Ref<const Eigen::VectorXd>& weights) {
  const Eigen::VectorXd d = weighted_chords(q, weights);
  if (d.size() == 0) return std::nullopt;
  const double tol = kCoincidentRelTol * d.maxCoeff();
  for (Eigen::Index k = 0; k < d.size(); ++k)
    if (!(d[k] > tol)) return k;
  return std::nullopt;
}

Eigen::VectorXd compute_knots(const Eigen::Ref<const Eigen::MatrixXd>& q, KnotType type,
                              const Eigen::Ref<const Eigen::VectorXd>& weights, double u_start) {
  if (weights.size() != q.cols()) throw Error("knots: one weight per axis is needed");
  if (q.rows() < 2) throw Error("knots: at least 2 waypoints are needed");
  for (Eigen::Index a = 0; a < weights.size(); ++a)
    if (!std::isfinite(weights[a]) || weights[a] < 0.0)
      throw Error("knots: the weight of axis " + std::to_string(a) + " must be a finite number >= 0");
  for (Eigen::Index k = 0; k < q.rows(); ++k)
    if (!q.row(k).allFinite()) throw Error("knots: waypoint " + std::to_string(k) + " is not finite");
  if (auto k = find_coincident(q, weights))
    throw Error("waypoints " + std::to_string(*k) + " and " + std::to_string(*k + 1) +
                " coincide (under the knot weights); remove one or move it");
  const Eigen::VectorXd d = weighted_chords(q, weights);
  Eigen::VectorXd u(q.rows());
  u[0] = u_start;
  for (Eigen::Index k = 0; k < d.size(); ++k) {
    double du = 1.0;
    if (type == KnotType::kChord) du = d[k];
    if (type == KnotType::kCentripetal) du = std::sqrt(d[k]);
    u[k + 1] = u[k] + du;
  }
  return u;
}

}  // namespace c2path
