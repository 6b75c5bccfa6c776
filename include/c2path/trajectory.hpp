#pragma once
/// \file trajectory.hpp
/// A trajectory: joint positions and their time derivatives q(t), q'(t), q''(t), q'''(t).

#include <Eigen/Core>
#include <vector>

#include "c2path/spline.hpp"

namespace c2path {

/// A trajectory in piecewise-polynomial form: on [t[k], t[k+1]], axis a's position is
/// sum_j c[(k * axes + a) * (degree + 1) + j] * sigma^j with sigma = (t - t[k]) / (t[k+1] - t[k])
/// in [0, 1]. Degree is the same for every piece (higher coefficients may be zero).
struct PolyPieces {
  int degree = 0;
  Index axes = 0;
  std::vector<double> t;  ///< break times, increasing (pieces + 1) [s]
  std::vector<double> c;  ///< pieces x axes x (degree + 1) coefficients [unit]
  [[nodiscard]] std::size_t pieces() const { return t.empty() ? 0 : t.size() - 1; }
  [[nodiscard]] const double* coeffs(std::size_t k, Index a) const {
    return c.data() + (k * std::size_t(axes) + std::size_t(a)) * std::size_t(degree + 1);
  }
};

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
  /// When the trajectory is piecewise polynomial in time (of degree <= 15) but not cubic: fills
  /// `out` and returns true, so that checks can be exact. False otherwise.
  [[nodiscard]] virtual bool poly_pieces(PolyPieces& out) const {
    (void)out;
    return false;
  }
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
