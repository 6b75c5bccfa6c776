#pragma once
// Private: the shortest round-trip decimal text of a finite double, byte for byte what
// `std::to_chars(first, last, value)` (no format argument) writes with GCC 12's libstdc++, only
// faster. The digits come from the Schubfach algorithm (R. Giulietti, "The Schubfach way to render
// doubles", 2020/2021), written here from the paper's description: the shortest decimal in the
// rounding interval of the double, the closest one when there are several, ties to an even last
// digit. The layout follows the standard's rule for to_chars without a format: fixed or scientific
// notation, whichever is shorter, fixed on a tie ("as if by printf %f or %e"), a two-digit exponent
// at least (`1e+20`, `5e-324`), and a whole number in fixed notation printed as the exact integer
// value of the double (`999999999999999868928`), not the shortest digits padded with zeros.

#include <cstddef>
#include <cstdint>

namespace c2path::detail {

/// Bytes write_shortest may write at `p` (the text itself is at most 24 characters; the rest is
/// scratch that the next output overwrites).
inline constexpr std::size_t kShortestRoom = 40;

/// Writes the finite double `v` at `p`, the same characters as `std::to_chars(p, end, v)`, and
/// returns the end of the text. `p` must have kShortestRoom writable bytes. NaN and infinities are
/// not handled (the exporter's values are always finite).
char* write_shortest(char* p, double v) noexcept;

/// A finite double taken apart: sign, zero, its shortest decimal `digits * 10^exponent` (digits
/// possibly with trailing zeros) and its exact value `c * 2^q`.
struct ShortestParts {
  std::uint64_t digits;
  std::uint64_t c;
  std::int32_t exponent;
  std::int32_t q;
  bool negative;
  bool zero;
  // Filled in by shortest_parts for write_parts: the significant digits as text (the first, then
  // the next 16 as ASCII bytes, '0' past the last), their count and the scientific exponent.
  char first;
  std::int32_t count;
  std::int32_t sci_exponent;
  std::uint64_t text_lo, text_hi;
};
/// Takes apart the finite doubles v[0, n) into out[0, n). Separate from write_parts so that a
/// caller can do the arithmetic of many numbers in one tight loop (independent work the processor
/// overlaps) before writing their text.
void shortest_parts(const double* v, std::size_t n, ShortestParts* out) noexcept;
/// Writes the text of one taken-apart double at p, the same as write_shortest; returns the end.
/// p needs kShortestRoom writable bytes.
char* write_parts(char* p, const ShortestParts& s) noexcept;

/// The decimal of Schubfach: `digits * 10^exponent`, `digits` possibly with trailing zeros
/// (exposed for the tests).
struct ShortestDecimal {
  std::uint64_t digits;
  int exponent;
};
/// The shortest decimal of a finite, positive (non-zero) double.
ShortestDecimal shortest_decimal(double v) noexcept;

/// Entry of the power-of-ten table: g = g_hi * 2^64 + g_lo with
/// g = floor(10^e * 2^(125 - floor(e log2 10))) + 1, for e in [-292, 324] (exposed for the tests).
struct Pow10Entry {
  std::uint64_t g_hi, g_lo;
};
const Pow10Entry& pow10_entry(int e) noexcept;

/// floor(q log10 2), floor(q log10 2 + log10 3/4) and floor(e log2 10) by fixed-point multiplication,
/// valid for |q| <= 1100 and |e| <= 400 (checked by the tests against long double logarithms).
constexpr int floor_log10_pow2(int q) noexcept { return int((std::int64_t(q) * 661971961083LL) >> 41); }
constexpr int floor_log10_three_quarters_pow2(int q) noexcept {
  return int((std::int64_t(q) * 661971961083LL - 274743187321LL) >> 41);
}
constexpr int floor_log2_pow10(int e) noexcept { return int((std::int64_t(e) * 1741647) >> 19); }

}  // namespace c2path::detail
