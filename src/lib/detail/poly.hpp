#pragma once
// Private helpers: real roots of low-degree polynomials and a banded (tridiagonal) solver.

#include <cstddef>
#include <vector>

namespace c2path::detail {

/// Value of p(s) = c[0] + c[1] s + ... + c[degree] s^degree (Horner).
double poly_eval(const double* c, int degree, double s);

/// Real roots of p (degree <= 3) in the open interval (a, b), increasing, at most `degree` of them,
/// written to out. Each root is bracketed on an interval where p is monotone and bisected until the
/// bracket cannot shrink (full double precision). A root of even multiplicity (touching zero at a
/// critical point) is reported once. Returns the number of roots.
int poly_roots_in(const double* c, int degree, double a, double b, double* out);

/// Solves the tridiagonal system with sub-diagonal dl (n-1), diagonal d (n), super-diagonal du (n-1)
/// for the m right-hand sides in b (row-major, n x m), in place, by Gaussian elimination with
/// partial pivoting (the method of LAPACK's dgtsv). dl, d, du are overwritten. O(n m).
/// Returns false when the matrix is singular.
bool solve_tridiagonal(std::vector<double>& dl, std::vector<double>& d, std::vector<double>& du,
                       double* b, std::size_t m);

}  // namespace c2path::detail
