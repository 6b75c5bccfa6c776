// Tests of src/lib/detail/shortest_double.*: the exporter's own shortest round-trip double text.
// The reference for every comparison is std::to_chars(first, last, double) with no format
// argument, of the standard library this is built with (GCC 12's libstdc++ on the build machine):
// the exporter's output must stay byte-identical to what that call wrote before.
// The digit algorithm is Schubfach (R. Giulietti, "The Schubfach way to render doubles").

#include <catch2/catch.hpp>

#include <bit>
#include <cfloat>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <random>
#include <string>
#include <vector>

#include "detail/shortest_double.hpp"

using namespace c2path::detail;

namespace {

__extension__ typedef unsigned __int128 u128;  // GCC/Clang's 128-bit integer (not ISO C++)

// Compares write_shortest with std::to_chars for v and -v; counts the values compared and keeps
// the first few differences for the report.
struct Compare {
  std::uint64_t compared = 0, differences = 0;
  std::vector<std::string> first;
  void operator()(double v) {
    if (!std::isfinite(v)) return;
    one(v);
    one(-v);
  }
  void one(double v) {
    char ref[64], mine[64];
    const auto r = std::to_chars(ref, ref + sizeof ref, v);  // the reference
    char* e = write_shortest(mine, v);
    ++compared;
    const auto nr = std::size_t(r.ptr - ref), nm = std::size_t(e - mine);
    if (nr != nm || std::memcmp(ref, mine, nr) != 0) {
      ++differences;
      if (first.size() < 10) {
        char hex[32];
        std::snprintf(hex, sizeof hex, "%016llx", static_cast<unsigned long long>(std::bit_cast<std::uint64_t>(v)));
        first.push_back(std::string(hex) + ": to_chars '" + std::string(ref, nr) + "', ours '" + std::string(mine, nm) + "'");
      }
    }
  }
  void require_none(const char* what) const {
    std::printf("shortest: %s: %llu values compared with std::to_chars\n", what, static_cast<unsigned long long>(compared));
    std::string all;
    for (const auto& f : first) all += f + "\n";
    INFO("compared " << compared << " values; differences:\n" << all);
    CHECK(compared > 0);
    REQUIRE(differences == 0);
  }
};

double from_bits(std::uint64_t b) { return std::bit_cast<double>(b); }

// Doubles near v: v itself and `ulps` neighbours on each side.
void around(Compare& cmp, double v, int ulps) {
  cmp(v);
  double up = v, down = v;
  for (int i = 0; i < ulps; ++i) {
    up = std::nextafter(up, HUGE_VAL);
    down = std::nextafter(down, -HUGE_VAL);
    cmp(up);
    cmp(down);
  }
}

// The nearest double to m 10^e (strtod rounds correctly).
double scaled_power_of_ten(int m, int e) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%de%d", m, e);
  return std::strtod(buf, nullptr);
}

// The nearest double to "D.DDDDeE" with `digits` random digits (the first not 0).
double random_decimal(std::mt19937_64& rng, int digits, int e) {
  char buf[64];
  int n = 0;
  for (int d = 0; d < digits; ++d) {
    buf[n++] = char('0' + (d == 0 ? 1 + rng() % 9 : rng() % 10));
    if (d == 0) buf[n++] = '.';
  }
  std::snprintf(buf + n, sizeof buf - std::size_t(n), "e%d", e);
  return std::strtod(buf, nullptr);
}

// Random finite bit patterns: uniform over all 2^64 patterns except NaN/inf (mostly big or tiny
// exponents), plus uniform exponents in the range of everyday numbers [2^-40, 2^40].
void random_patterns(Compare& cmp, std::uint64_t seed, std::uint64_t count) {
  std::mt19937_64 rng(seed);
  for (std::uint64_t i = 0; i < count; ++i) {
    const std::uint64_t b = rng();
    if (i % 2 == 0) {
      cmp(from_bits(b));  // non-finite patterns are skipped by cmp
    } else {
      const std::uint64_t exp = 1023 - 40 + (b >> 52) % 81;
      cmp(from_bits((exp << 52) | (b & ((std::uint64_t(1) << 52) - 1))));
    }
  }
}

// Random short decimals "D.DDD e E" with 1..17 digits, parsed to the nearest double: values whose
// shortest text is short, where the multiple-of-ten branch and the fixed/scientific choice matter.
void random_decimals(Compare& cmp, std::uint64_t seed, std::uint64_t count, int e_lo, int e_hi) {
  std::mt19937_64 rng(seed);
  for (std::uint64_t i = 0; i < count; ++i) {
    const int digits = 1 + int(rng() % 17);
    const int e = e_lo + int(rng() % std::uint64_t(e_hi - e_lo + 1));
    around(cmp, random_decimal(rng, digits, e), 1);
  }
}

}  // namespace

TEST_CASE("shortest: the fixed-point logarithms are the floors of the real ones", "[shortest]") {
  // Reference: long double logarithms. q log10 2 and e log2 10 are irrational for q, e != 0 and
  // stay far (> 1e-6) from integers in this range, so long double's ~1e-16 error cannot flip a floor.
  const long double l10_2 = std::log10(2.0L), l2_10 = std::log2(10.0L), l10_34 = std::log10(0.75L);
  for (int q = -1100; q <= 1100; ++q) {
    INFO("q = " << q);
    REQUIRE(floor_log10_pow2(q) == int(std::floor(q * l10_2)));
    REQUIRE(floor_log10_three_quarters_pow2(q) == int(std::floor(q * l10_2 + l10_34)));
  }
  for (int e = -400; e <= 400; ++e) {
    INFO("e = " << e);
    REQUIRE(floor_log2_pow10(e) == int(std::floor(e * l2_10)));
  }
}

TEST_CASE("shortest: the power-of-ten table is floor(10^e 2^(125 - floor(e log2 10))) + 1", "[shortest]") {
  // Exact for 10^0 .. 10^38 (they fit 128 bits): g = 10^e shifted to [2^125, 2^126), plus one.
  u128 p = 1;
  for (int e = 0; e <= 37; ++e) {
    const int fl = floor_log2_pow10(e);
    const u128 g = (p << (125 - fl)) + 1;
    const Pow10Entry& t = pow10_entry(e);
    INFO("e = " << e);
    REQUIRE(t.g_hi == std::uint64_t(g >> 64));
    REQUIRE(t.g_lo == std::uint64_t(g));
    p *= 10;
  }
  // Every entry: the top 62 bits against long double powers (relative error ~1e-18, a few units of
  // the last of the 62 bits; 2^61 <= g_hi < 2^62).
  for (int e = -292; e <= 324; ++e) {
    const Pow10Entry& t = pow10_entry(e);
    const long double approx = std::ldexp(std::pow(10.0L, e), 61 - floor_log2_pow10(e));
    INFO("e = " << e);
    REQUIRE(t.g_hi >> 61 == 1);
    REQUIRE(std::abs(static_cast<long double>(t.g_hi) - approx) < 1e-15L * approx);
  }
}

TEST_CASE("shortest: special values against std::to_chars", "[shortest]") {
  Compare cmp;
  // Values whose text is well known (to_chars gives the reference): 0.1, 1e22 (exact), 1e23 (not
  // exact), the smallest subnormal 5e-324, DBL_MAX, DBL_MIN, the largest subnormal, zero, -0.
  for (double v : {0.0, 0.1, 0.2, 0.3, 1.0 / 3.0, 2.0 / 3.0, 1e22, 1e23, 5e-324, 1e-323, 1.5e-323, DBL_MAX, DBL_MIN,
                   from_bits(0x000fffffffffffffULL), DBL_EPSILON, 9007199254740992.0, 9007199254740993.0,
                   4503599627370496.5, 123456789012345678901.0, 1e21, 1e15, 1e16, 1e17, 0.001, 0.0001, 1.5e-5,
                   2.5e-7, 299792458.0, 6.02214076e23, 1.602176634e-19})
    around(cmp, v, 3);
  cmp(-0.0);
  cmp.require_none("special values");
}

TEST_CASE("shortest: powers of two and ten, their neighbours, integers, subnormals", "[shortest]") {
  Compare cmp;
  for (int e = -1074; e <= 1023; ++e) around(cmp, std::ldexp(1.0, e), 2);  // every power of two
  for (int e = -323; e <= 308; ++e) {  // every power of ten (nearest double) and 1..9 times it
    around(cmp, scaled_power_of_ten(1, e), 3);
    for (int m = 2; m <= 9; ++m) around(cmp, scaled_power_of_ten(m, e), 1);
  }
  for (int i = 0; i <= 1'000'000; ++i) cmp(double(i));  // small integers
  std::mt19937_64 rng(7);
  for (int i = 0; i < 200'000; ++i) {  // integers of every size up to 2^64, and their neighbours
    const int bits = 1 + int(rng() % 64);
    const std::uint64_t x = bits == 64 ? rng() : rng() % (std::uint64_t(1) << bits);
    around(cmp, double(x), 1);
  }
  for (std::uint64_t b = 1; b <= 200'000; ++b) cmp(from_bits(b));  // the smallest subnormals
  for (std::uint64_t b = 0; b < 200'000; ++b) cmp(from_bits(0x0010000000000000ULL - 1 - b));  // the largest
  for (std::uint64_t b = 0; b < 100'000; ++b) cmp(from_bits(0x0010000000000000ULL + b));  // the smallest normals
  for (int i = 0; i < 200'000; ++i) cmp(from_bits(rng() & 0x000fffffffffffffULL));  // random subnormals
  cmp.require_none("powers, integers, subnormals");
}

TEST_CASE("shortest: where fixed and scientific notation trade places", "[shortest]") {
  // std::to_chars picks the shorter of %f and %e style (fixed on a tie): the choice flips with the
  // digit count between 1e-5 and 1e23. Every digit count 1..17 at every exponent -7..23, random
  // digits, each value and its neighbours.
  Compare cmp;
  std::mt19937_64 rng(11);
  for (int digits = 1; digits <= 17; ++digits)
    for (int e = -7; e <= 23; ++e)
      for (int rep = 0; rep < 300; ++rep) {
        around(cmp, random_decimal(rng, digits, e), 1);
      }
  cmp.require_none("fixed/scientific boundaries");
}

TEST_CASE("shortest: random bit patterns and random short decimals", "[shortest]") {
  Compare cmp;
  random_patterns(cmp, 20261201, 24'000'000);  // 48 M values with their negatives (non-finite patterns skipped)
  random_decimals(cmp, 1, 1'500'000, -330, 310);  // 9 M values (value and 2 neighbours, each signed)
  cmp.require_none("random");
}

TEST_CASE("shortest: long run, a billion random bit patterns", "[shortest][.long]") {
  Compare cmp;
  random_patterns(cmp, 424242, 500'000'000);       // 1e9 values with their negatives
  random_decimals(cmp, 99, 20'000'000, -330, 310);  // 120 M
  cmp.require_none("long run");
}
