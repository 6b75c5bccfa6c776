#include "detail/poly.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <utility>

namespace c2path::detail {

double poly_eval(const double* c, int degree, double s) {
  double v = c[degree];
  for (int k = degree - 1; k >= 0; --k) v = v * s + c[k];
  return v;
}

namespace {

// Bisection on [lo, hi] where p(lo) and p(hi) have opposite signs (or one is zero).
double bisect(const double* c, int degree, double lo, double hi, double plo) {
  for (int it = 0; it < 2200; ++it) {
    const double mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    const double pm = poly_eval(c, degree, mid);
    if (pm == 0.0) return mid;
    if ((pm < 0.0) == (plo < 0.0)) {
      lo = mid;
      plo = pm;
    } else {
      hi = mid;
    }
  }
  // Pick the end with the smaller residual.
  const double phi = poly_eval(c, degree, hi);
  return std::abs(plo) <= std::abs(phi) ? lo : hi;
}

// Safeguarded Newton on [lo, hi] where p is monotone and changes sign: a Newton step where it
// stays inside the bracket, else bisection; the bracket shrinks with every step. Stops when a
// step no longer moves the iterate by more than a few ulps.
double newton_bracketed(const double* c, int degree, double lo, double hi, double plo) {
  double x = 0.5 * (lo + hi);
  for (int it = 0; it < 200; ++it) {
    double p = c[degree], dp = 0.0;
    for (int k = degree - 1; k >= 0; --k) {
      dp = dp * x + p;
      p = p * x + c[k];
    }
    if (p == 0.0) return x;
    if ((p < 0.0) == (plo < 0.0)) lo = x;
    else hi = x;
    double xn = dp != 0.0 ? x - p / dp : 0.5 * (lo + hi);
    if (!(xn > lo && xn < hi)) xn = 0.5 * (lo + hi);
    if (!(xn > lo && xn < hi)) return x;  // the bracket cannot shrink further
    if (std::abs(xn - x) <= 4.0 * std::numeric_limits<double>::epsilon() * std::abs(x)) return xn;
    x = xn;
  }
  return x;
}

// Roots of p in (a, b) from its critical points (roots of p', recursively): they split (a, b)
// into stretches where p is monotone; a stretch whose ends differ in sign holds one root, found
// by `solve(lo, hi, p(lo))`. A root exactly at an interior critical point (a double root) is
// reported once.
template <class Solve>
int roots_by_brackets(const double* c, int degree, double a, double b, double* out, const Solve& solve) {
  double dc[kMaxPolyDegree];
  for (int k = 1; k <= degree; ++k) dc[k - 1] = double(k) * c[k];
  double crit[kMaxPolyDegree];
  const int nc = poly_roots_in(dc, degree - 1, a, b, crit);
  double pts[kMaxPolyDegree + 2];
  int np = 0;
  pts[np++] = a;
  for (int i = 0; i < nc; ++i) pts[np++] = crit[i];
  pts[np++] = b;
  int nr = 0;
  double prev_val = poly_eval(c, degree, pts[0]);
  for (int i = 0; i + 1 < np; ++i) {
    const double lo = pts[i], hi = pts[i + 1];
    const double plo = prev_val, phi = poly_eval(c, degree, hi);
    prev_val = phi;
    if (phi == 0.0 && i + 1 < np - 1) {
      if (nr == 0 || out[nr - 1] != hi) out[nr++] = hi;
      continue;
    }
    if (plo == 0.0) continue;  // at a: excluded (open interval) or already reported
    if ((plo < 0.0) != (phi < 0.0) && phi != 0.0) {
      const double r = solve(lo, hi, plo);
      if (r > a && r < b && (nr == 0 || out[nr - 1] != r)) out[nr++] = r;
    }
  }
  return nr;
}

// Degree 4 and up: on [0, 1] a polynomial whose Bernstein coefficients all have one sign has no
// root there (convex hull property), which prunes most calls at once; otherwise the monotone
// stretches are solved by safeguarded Newton.
int roots_high(const double* c, int degree, double a, double b, double* out) {
  if (a == 0.0 && b == 1.0) {
    double bz[kMaxPolyDegree + 1];
    bernstein(c, degree, bz);
    bool pos = true, neg = true;
    for (int i = 0; i <= degree; ++i) {
      pos = pos && bz[i] > 0.0;
      neg = neg && bz[i] < 0.0;
    }
    if (pos || neg) return 0;
  }
  return roots_by_brackets(c, degree, a, b, out,
                           [&](double lo, double hi, double plo) { return newton_bracketed(c, degree, lo, hi, plo); });
}

}  // namespace

int poly_roots_in(const double* c, int degree, double a, double b, double* out) {
  while (degree > 0 && c[degree] == 0.0) --degree;
  if (degree <= 0 || !(a < b)) return 0;
  if (degree == 1) {
    const double r = -c[0] / c[1];
    if (r > a && r < b) {
      out[0] = r;
      return 1;
    }
    return 0;
  }
  if (degree > kMaxPolyDegree) return 0;  // programmer error; callers stay within the bound
  if (degree >= 4) return roots_high(c, degree, a, b, out);
  // Degree 2 and 3 (the keyframe check): bisection to full precision.
  return roots_by_brackets(c, degree, a, b, out, [&](double lo, double hi, double plo) { return bisect(c, degree, lo, hi, plo); });
}

namespace {
// Calls consider(s) at b and at the roots of p' in (a, b): with a, the candidates for extremes.
template <class Consider>
void extreme_candidates(const double* c, int degree, double a, double b, const Consider& consider) {
  consider(b);
  if (degree < 2 || degree > kMaxPolyDegree) return;
  double dc[kMaxPolyDegree];
  for (int k = 1; k <= degree; ++k) dc[k - 1] = double(k) * c[k];
  double r[kMaxPolyDegree];
  const int n = poly_roots_in(dc, degree - 1, a, b, r);
  for (int k = 0; k < n; ++k) consider(r[k]);
}
}  // namespace

std::pair<double, double> poly_extreme(const double* c, int degree, double a, double b, int side) {
  double best_s = a;
  double best = poly_eval(c, degree, a);
  extreme_candidates(c, degree, a, b, [&](double s) {
    const double v = poly_eval(c, degree, s);
    if (side * (v - best) > 0) {
      best = v;
      best_s = s;
    }
  });
  return {best, best_s};
}

std::pair<double, double> poly_range(const double* c, int degree, double a, double b) {
  double lo = poly_eval(c, degree, a), hi = lo;
  extreme_candidates(c, degree, a, b, [&](double s) {
    const double v = poly_eval(c, degree, s);
    lo = std::min(lo, v);
    hi = std::max(hi, v);
  });
  return {lo, hi};
}

namespace {
// ratio[n][i][k] = C(i, k) / C(n, k) for k <= i <= n <= kMaxPolyDegree.
struct BernsteinTable {
  double ratio[kMaxPolyDegree + 1][kMaxPolyDegree + 1][kMaxPolyDegree + 1] = {};
  BernsteinTable() {
    double binom[kMaxPolyDegree + 1][kMaxPolyDegree + 1] = {};
    for (int n = 0; n <= kMaxPolyDegree; ++n) {
      binom[n][0] = binom[n][n] = 1.0;
      for (int k = 1; k < n; ++k) binom[n][k] = binom[n - 1][k - 1] + binom[n - 1][k];
    }
    for (int n = 0; n <= kMaxPolyDegree; ++n)
      for (int i = 0; i <= n; ++i)
        for (int k = 0; k <= i; ++k) ratio[n][i][k] = binom[i][k] / binom[n][k];
  }
};
const BernsteinTable& bernstein_table() {
  static const BernsteinTable t;
  return t;
}
}  // namespace

void bernstein(const double* c, int degree, double* b) {
  const auto& r = bernstein_table().ratio[degree];
  for (int i = 0; i <= degree; ++i) {
    double s = 0.0;
    for (int k = 0; k <= i; ++k) s += r[i][k] * c[k];
    b[i] = s;
  }
}

double bernstein_max_abs(const double* c, int degree) {
  double b[kMaxPolyDegree + 1];
  bernstein(c, degree, b);
  double m = 0.0;
  for (int i = 0; i <= degree; ++i) m = std::max(m, std::abs(b[i]));
  return m;
}

bool solve_tridiagonal(std::vector<double>& dl, std::vector<double>& d, std::vector<double>& du,
                       double* b, std::size_t m) {
  const std::size_t n = d.size();
  if (n == 0) return true;
  auto row = [&](std::size_t i) { return b + i * m; };
  for (std::size_t i = 0; i + 1 < n; ++i) {
    double* bi = row(i);
    double* bn = row(i + 1);
    if (std::abs(d[i]) >= std::abs(dl[i])) {
      if (d[i] == 0.0) return false;
      const double fact = dl[i] / d[i];
      d[i + 1] -= fact * du[i];
      for (std::size_t j = 0; j < m; ++j) bn[j] -= fact * bi[j];
      dl[i] = 0.0;  // from here on dl[i] is the second super-diagonal of U
    } else {
      const double fact = d[i] / dl[i];
      d[i] = dl[i];
      const double temp = d[i + 1];
      d[i + 1] = du[i] - fact * temp;
      if (i + 2 < n) {
        dl[i] = du[i + 1];
        du[i + 1] = -fact * dl[i];
      } else {
        dl[i] = 0.0;
      }
      du[i] = temp;
      for (std::size_t j = 0; j < m; ++j) {
        const double t = bi[j];
        bi[j] = bn[j];
        bn[j] = t - fact * bn[j];
      }
    }
  }
  if (d[n - 1] == 0.0) return false;
  for (std::size_t j = 0; j < m; ++j) row(n - 1)[j] /= d[n - 1];
  if (n > 1) {
    double* bi = row(n - 2);
    const double* b1 = row(n - 1);
    for (std::size_t j = 0; j < m; ++j) bi[j] = (bi[j] - du[n - 2] * b1[j]) / d[n - 2];
  }
  for (std::size_t ii = n >= 2 ? n - 2 : 0; ii-- > 0;) {
    double* bi = row(ii);
    const double* b1 = row(ii + 1);
    const double* b2 = row(ii + 2);
    for (std::size_t j = 0; j < m; ++j) bi[j] = (bi[j] - du[ii] * b1[j] - dl[ii] * b2[j]) / d[ii];
  }
  return true;
}

}  // namespace c2path::detail
