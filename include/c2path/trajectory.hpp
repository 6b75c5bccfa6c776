#pragma once
/// \file trajectory.hpp
/// A trajectory: joint positions and their time derivatives q(t), q'(t), q''(t), q'''(t).

#include <Eigen/Core>
#include <vector>

#include "c2path/spline.hpp"

namespace c2path {

/// Joint positions as a function of time t in [t_begin, t_end] [s], with velocity, acceleration
/// and jerk. The checker, exporter and viewer see a move only through this interface, whatever
/// timing mode produced it.
class Trajectory {
 public:
  virtual ~Trajectory() = default;
  [[nodiscard]] virtual Index axes() const = 0;
  [[nodiscard]] virtual double t_begin() const = 0;
  [[nodiscard]] virtual double t_end() const = 0;
  [[nodiscard]] double duration() const { return t_end() - t_begin(); }
  /// d^deriv q / dt^deriv at t (deriv 0..3) [unit/s^deriv], out has size axes().
  virtual void eval(double t, int deriv, Eigen::Ref<Eigen::VectorXd> out) const = 0;
  /// Position, velocity, acceleration and jerk at t at once: out has shape axes() x 4.
  virtual void eval_all(double t, Eigen::Ref<Eigen::MatrixXd> out) const;
  /// Times where derivatives may jump (piece and segment boundaries), increasing, both ends included.
  [[nodiscard]] virtual std::vector<double> breaks() const = 0;
  /// When the trajectory is piecewise cubic in time: its splines (parameter = time), in order and
  /// contiguous, so that checks can be exact. nullptr otherwise.
  [[nodiscard]] virtual const std::vector<CubicSpline>* cubic_pieces() const { return nullptr; }
};

/// A trajectory that is piecewise cubic in time: a sequence of splines in t, contiguous
/// (keyframes; a hold is a constant piece).
class CubicTrajectory final : public Trajectory {
 public:
  explicit CubicTrajectory(std::vector<CubicSpline> pieces);
  [[nodiscard]] Index axes() const override { return pieces_.front().axes(); }
  [[nodiscard]] double t_begin() const override { return pieces_.front().u_begin(); }
  [[nodiscard]] double t_end() const override { return pieces_.back().u_end(); }
  void eval(double t, int deriv, Eigen::Ref<Eigen::VectorXd> out) const override;
  void eval_all(double t, Eigen::Ref<Eigen::MatrixXd> out) const override;
  [[nodiscard]] std::vector<double> breaks() const override;
  [[nodiscard]] const std::vector<CubicSpline>* cubic_pieces() const override { return &pieces_; }

 private:
  [[nodiscard]] std::size_t piece_of(double t) const;
  std::vector<CubicSpline> pieces_;
};

}  // namespace c2path
