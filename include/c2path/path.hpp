#pragma once
/// \file path.hpp
/// A joint-space path q(u): what timing, checking, export and the viewer see of a path.

#include <Eigen/Core>
#include <memory>
#include <string>
#include <vector>

#include "c2path/scene.hpp"
#include "c2path/spline.hpp"

namespace c2path {

/// Joint positions q(u) (one per axis) and their derivatives in the path parameter u on
/// [u_begin, u_end]. Today a spline provides it; derived paths (look-at rigs, inverse kinematics)
/// will provide the same interface. Limits always apply per joint axis.
class Path {
 public:
  virtual ~Path() = default;
  /// Number of joint axes.
  [[nodiscard]] virtual Index axes() const = 0;
  [[nodiscard]] virtual double u_begin() const = 0;
  [[nodiscard]] virtual double u_end() const = 0;
  /// d^deriv q / du^deriv at u (deriv 0..3), out has size axes(). At a segment boundary the
  /// segment that starts there is used.
  virtual void eval(double u, int deriv, Eigen::Ref<Eigen::VectorXd> out) const = 0;
  /// Position and derivatives 1..3 at u at once, the same values as eval(): out has shape
  /// axes() x 4, column d = d^d q / du^d.
  virtual void eval_all(double u, Eigen::Ref<Eigen::MatrixXd> out) const;
  /// Parameters where q(u) may lose smoothness (piece boundaries), increasing, both ends included.
  [[nodiscard]] virtual std::vector<double> breaks() const = 0;
  /// Segment boundaries (the rig comes to rest at each): increasing, both ends included.
  [[nodiscard]] virtual std::vector<double> stops() const = 0;
  /// True when q(u) is a cubic polynomial between consecutive breaks (so its Taylor expansion
  /// from eval() at any point of a piece is exact over that piece).
  [[nodiscard]] virtual bool piecewise_cubic() const { return false; }
};

/// A path made of C2 cubic splines, one per segment, contiguous in u (segment k ends where
/// segment k+1 begins; the path may turn a corner there).
class SplinePath final : public Path {
 public:
  explicit SplinePath(std::vector<CubicSpline> segments);
  [[nodiscard]] Index axes() const override { return segments_.front().axes(); }
  [[nodiscard]] double u_begin() const override { return segments_.front().u_begin(); }
  [[nodiscard]] double u_end() const override { return segments_.back().u_end(); }
  void eval(double u, int deriv, Eigen::Ref<Eigen::VectorXd> out) const override;
  void eval_all(double u, Eigen::Ref<Eigen::MatrixXd> out) const override;
  [[nodiscard]] std::vector<double> breaks() const override;
  [[nodiscard]] std::vector<double> stops() const override;
  [[nodiscard]] bool piecewise_cubic() const override { return true; }
  /// The segments' splines, in order.
  [[nodiscard]] const std::vector<CubicSpline>& segments() const noexcept { return segments_; }
  /// Index of the segment that evaluates u.
  [[nodiscard]] std::size_t segment_of(double u) const;

 private:
  std::vector<CubicSpline> segments_;
};

}  // namespace c2path
