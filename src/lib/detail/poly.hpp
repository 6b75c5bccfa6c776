#pragma once
// Private helpers: real roots of low-degree polynomials and a banded (tridiagonal) solver.

#include <cstddef>
#include <utility>
#include <vector>

namespace c2path::detail {

/// Value of p(s) = c[0] + c[1] s + ... + c[degree] s^degree (Horner).
double poly_eval(const double* c, int degree, double s);

/// Highest polynomial degree the helpers below take.
constexpr int kMaxPolyDegree = 15;

/// Real roots of p (degree <= kMaxPolyDegree) in the open interval (a, b), increasing, at most
/// `degree` of them, written to out. Each root is bracketed on an interval where p is monotone and bisected until the
/// bracket cannot shrink (full double precision). A root of even multiplicity (touching zero at a
/// critical point) is reported once. Returns the number of roots.
int poly_roots_in(const double* c, int degree, double a, double b, double* out);

/// Largest side * p(s) over [a, b] (side +1: maximum, -1: minimum) for degree <= kMaxPolyDegree:
/// the ends and the roots of p' (poly_roots_in). Returns (p there, s).
std::pair<double, double> poly_extreme(const double* c, int degree, double a, double b, int side);

/// Smallest and largest p(s) over [a, b] (degree <= kMaxPolyDegree): the ends and the roots of
/// p', found once. Returns {min, max}.
std::pair<double, double> poly_range(const double* c, int degree, double a, double b);

/// Bernstein coefficients b[0..degree] on [0, 1] of p(s) = sum c[k] s^k (degree <= kMaxPolyDegree):
/// b_i = sum_{k <= i} C(i, k) / C(degree, k) c_k. By the convex hull property
/// min b <= p(s) <= max b on [0, 1], with b_0 = p(0) and b_degree = p(1).
void bernstein(const double* c, int degree, double* b);

/// Largest |p(s)| over [0, 1] bounded from above by its Bernstein coefficients (a cheap,
/// certified bound; exact when the largest coefficient is an end's).
double bernstein_max_abs(const double* c, int degree);

/// Solves the tridiagonal system with sub-diagonal dl (n-1), diagonal d (n), super-diagonal du (n-1)
/// for the m right-hand sides in b (row-major, n x m), in place, by Gaussian elimination with
/// partial pivoting (the method of LAPACK's dgtsv). dl, d, du are overwritten. O(n m).
/// Returns false when the matrix is singular.
bool solve_tridiagonal(std::vector<double>& dl, std::vector<double>& d, std::vector<double>& du,
                       double* b, std::size_t m);

}  // namespace c2path::detail
