// A project outside c2path that finds it with find_package(c2path) and fits a spline.
#include <c2path/spline.hpp>

#include <cmath>
#include <cstdio>

int main() {
  Eigen::VectorXd u(3);
  u << 0.0, 1.0, 2.0;
  Eigen::MatrixXd q(3, 1);
  q << 0.0, 1.0, 4.0;  // u^2: with 3 points not-a-knot gives the parabola itself
  const auto s = c2path::CubicSpline::fit(u, q);
  const double v = s.eval(1.5, 0);
  if (std::abs(v - 2.25) > 1e-12) {
    std::printf("consumer: expected 2.25, got %.17g\n", v);
    return 1;
  }
  std::printf("consumer: ok\n");
  return 0;
}
