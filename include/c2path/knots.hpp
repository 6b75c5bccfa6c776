#pragma once
/// \file knots.hpp
/// Spline parameters (knots) from waypoints: uniform, chord-length, centripetal.

#include <Eigen/Core>
#include <optional>

namespace c2path {

/// How the parameter advances from one waypoint to the next: du_k = |W dq_k|^alpha.
enum class KnotType {
  kUniform,      ///< alpha = 0: du_k = 1
  kChord,        ///< alpha = 1: chord length (default)
  kCentripetal,  ///< alpha = 1/2: square root of the chord length
};

/// Relative size below which two consecutive waypoints count as coincident: a weighted chord
/// |W dq_k| <= kCoincidentRelTol * (largest weighted chord of the path), or all chords zero.
inline constexpr double kCoincidentRelTol = 1e-12;

/// Weighted chord lengths |W dq_k| for k = 0..n-1: q has shape (n+1) x axes, weights one
/// non-negative entry per axis.
[[nodiscard]] Eigen::VectorXd weighted_chords(const Eigen::Ref<const Eigen::MatrixXd>& q,
                                              const Eigen::Ref<const Eigen::VectorXd>& weights);

/// The first k such that waypoints k and k+1 are coincident (see kCoincidentRelTol), if any.
[[nodiscard]] std::optional<Eigen::Index> find_coincident(const Eigen::Ref<const Eigen::MatrixXd>& q,
                                                          const Eigen::Ref<const Eigen::VectorXd>& weights);

/// Knots u_0 = u_start < u_1 < ... < u_n for waypoints q ((n+1) x axes) under per-axis weights.
/// Uniform knots step by 1; chord and centripetal knots step by |W dq_k| and its square root, so
/// the parameter has the units of the weighted axes (seconds at full speed with the default 1/vel
/// weights). Throws c2path::Error naming both waypoints (0-based) when two are coincident.
[[nodiscard]] Eigen::VectorXd compute_knots(const Eigen::Ref<const Eigen::MatrixXd>& q, KnotType type,
                                            const Eigen::Ref<const Eigen::VectorXd>& weights,
                                            double u_start = 0.0);

}  // namespace c2path
