#include "detail/shortest_double.hpp"

#include <array>
#include <bit>
#include <cassert>
#include <cstring>
#include <vector>

// Schubfach (R. Giulietti, "The Schubfach way to render doubles"), written from the paper's
// description. Notation of the paper: a positive double v = c 2^q with an integer c; its rounding
// interval R (the reals that round to v) has the ends (c -/+ 1/2) 2^q, except at a power of two
// above the smallest normal, whose lower neighbour is only 2^q / 2 away: (c - 1/4) 2^q. R holds its
// ends when c is even (round half to even). With k = floor(log10 2^q) (floor(log10 3/4 2^q) in the
// irregular case) there is at most one multiple of 10^(k+1) in R and at least one multiple of 10^k;
// the algorithm looks for the first, then for the closest of the two multiples of 10^k around v.
// The scaled ends 4 v 10^-k etc. are computed with g, a 126-bit upper approximation of 10^-k,
// keeping a sticky bit for "not exact"; the paper proves that these approximations make the same
// decisions as exact arithmetic.

static_assert(std::endian::native == std::endian::little, "the digit scan assumes a little-endian target");

namespace c2path::detail {

namespace {

__extension__ typedef unsigned __int128 u128;  // GCC/Clang's 128-bit integer (not ISO C++)

// ---- the power-of-ten table, computed once with exact integer arithmetic ----------------------

constexpr int kMinPow10 = -292, kMaxPow10 = 324;  // the exponents e = -k that occur for doubles

// Non-negative big integer, 32-bit limbs, least significant first.
struct Big {
  std::vector<std::uint32_t> limb;
  void trim() {
    while (!limb.empty() && limb.back() == 0) limb.pop_back();
  }
  [[nodiscard]] int bits() const {
    if (limb.empty()) return 0;
    return int(limb.size() - 1) * 32 + (32 - std::countl_zero(limb.back()));
  }
  void mul_small(std::uint32_t m) {
    std::uint64_t carry = 0;
    for (auto& l : limb) {
      const std::uint64_t x = std::uint64_t(l) * m + carry;
      l = std::uint32_t(x);
      carry = x >> 32;
    }
    if (carry) limb.push_back(std::uint32_t(carry));
  }
  void div_small(std::uint32_t d) {  // floor division
    std::uint64_t rem = 0;
    for (std::size_t i = limb.size(); i-- > 0;) {
      const std::uint64_t x = (rem << 32) | limb[i];
      limb[i] = std::uint32_t(x / d);
      rem = x % d;
    }
    trim();
  }
  static Big pow2(int n) {
    Big b;
    b.limb.assign(std::size_t(n / 32 + 1), 0);
    b.limb.back() = 1u << (n % 32);
    return b;
  }
  [[nodiscard]] Big shifted(int s) const {  // floor(this * 2^s), s of either sign
    Big r;
    if (s >= 0) {
      r.limb.assign(limb.size() + std::size_t(s / 32) + 1, 0);
      for (std::size_t i = 0; i < limb.size(); ++i) {
        const std::uint64_t x = std::uint64_t(limb[i]) << (s % 32);
        r.limb[i + std::size_t(s / 32)] |= std::uint32_t(x);
        r.limb[i + std::size_t(s / 32) + 1] |= std::uint32_t(x >> 32);
      }
    } else {
      const int t = -s;
      const std::size_t w = std::size_t(t / 32);
      if (w < limb.size()) {
        r.limb.assign(limb.size() - w, 0);
        for (std::size_t i = w; i < limb.size(); ++i) {
          std::uint64_t x = limb[i];
          if (i + 1 < limb.size()) x |= std::uint64_t(limb[i + 1]) << 32;
          r.limb[i - w] = std::uint32_t(x >> (t % 32));
        }
      }
    }
    r.trim();
    return r;
  }
  // The bits [lo, lo + 64) as an integer (lo >= 0).
  [[nodiscard]] std::uint64_t bits_at(int lo) const {
    const Big s = shifted(-lo);
    std::uint64_t x = 0;
    if (!s.limb.empty()) x = s.limb[0];
    if (s.limb.size() > 1) x |= std::uint64_t(s.limb[1]) << 32;
    return x;
  }
};

struct Pow10Table {
  std::array<Pow10Entry, std::size_t(kMaxPow10 - kMinPow10 + 1)> e{};
  Pow10Table() {
    Big p;  // 10^m
    p.limb = {1};
    std::vector<Big> pos(std::size_t(kMaxPow10 + 1));
    for (int m = 0; m <= kMaxPow10; ++m) {
      pos[std::size_t(m)] = p;
      p.mul_small(10);
    }
    for (int x = kMinPow10; x <= kMaxPow10; ++x) {
      Big g;
      if (x >= 0) {
        // 10^x in [2^fl, 2^(fl+1)): fl = bits - 1.
        const Big& t = pos[std::size_t(x)];
        const int fl = t.bits() - 1;
        assert(fl == floor_log2_pow10(x));
        g = t.shifted(125 - fl);
      } else {
        // 10^x = 1 / 10^m in (2^-b, 2^-(b-1)) with b the bit length of 10^m (m > 0): fl = -b.
        const int m = -x;
        const int fl = -pos[std::size_t(m)].bits();
        assert(fl == floor_log2_pow10(x));
        g = Big::pow2(125 - fl);
        int left = m;
        for (; left >= 9; left -= 9) g.div_small(1'000'000'000u);
        std::uint32_t d = 1;
        for (; left > 0; --left) d *= 10;
        g.div_small(d);
      }
      // g = floor(10^x 2^(125 - fl)) + 1, in [2^125, 2^126].
      const std::uint64_t lo63 = g.bits_at(0) & ((std::uint64_t(1) << 63) - 1);
      const std::uint64_t hi63 = g.bits_at(63);
      // + 1, carried into the high half when the low half overflows 63 bits
      Pow10Entry& out = e[std::size_t(x - kMinPow10)];
      out.g_hi = hi63;
      out.g_lo = lo63 + 1;
      if (out.g_lo >> 63) {
        out.g_lo = 0;
        ++out.g_hi;
      }
    }
  }
};

const Pow10Table& table() {
  static const Pow10Table t;
  return t;
}

// ---- Schubfach's decision --------------------------------------------------------------------

// Approximately floor(g cp / 2^127) with the lowest bit set when the part below is non-zero
// ("round to odd"), g = g1 2^63 + g0.
inline std::uint64_t round_odd(std::uint64_t g1, std::uint64_t g0, std::uint64_t cp) {
  const std::uint64_t x1 = std::uint64_t((u128)g0 * cp >> 64);
  const u128 y = (u128)g1 * cp;
  const std::uint64_t y0 = std::uint64_t(y), y1 = std::uint64_t(y >> 64);
  const std::uint64_t z = (y0 >> 1) + x1;
  constexpr std::uint64_t kMask63 = (std::uint64_t(1) << 63) - 1;
  const std::uint64_t vbp = y1 + (z >> 63);
  return vbp | (((z & kMask63) + kMask63) >> 63);
}

constexpr int kQMin = -1074;
constexpr std::uint64_t kCMin = std::uint64_t(1) << 52;

inline ShortestDecimal to_decimal(int q, std::uint64_t c, const Pow10Table& tab) {
  const std::uint64_t out = c & 1;
  const std::uint64_t cb = c << 2;
  const std::uint64_t cbr = cb + 2;
  std::uint64_t cbl;
  int k;
  if (c != kCMin || q == kQMin) {
    cbl = cb - 2;
    k = floor_log10_pow2(q);
  } else {
    cbl = cb - 1;
    k = floor_log10_three_quarters_pow2(q);
  }
  const int h = q + floor_log2_pow10(-k) + 2;
  const Pow10Entry& g = tab.e[std::size_t(-k - kMinPow10)];
  const std::uint64_t vb = round_odd(g.g_hi, g.g_lo, cb << h);
  const std::uint64_t vbl = round_odd(g.g_hi, g.g_lo, cbl << h);
  const std::uint64_t vbr = round_odd(g.g_hi, g.g_lo, cbr << h);
  const std::uint64_t s = vb >> 2;
  // The paper skips this step for s < 100 (Java's text wants two digits at least); the shortest
  // text needs it there too: for subnormals, s may be that small.
  {
    const std::uint64_t sp10 = 10 * (s / 10);
    const std::uint64_t tp10 = sp10 + 10;
    const bool upin = vbl + out <= sp10 << 2;
    const bool wpin = (tp10 << 2) + out <= vbr;
    if (upin != wpin) return {upin ? sp10 : tp10, k};
  }
  const std::uint64_t t = s + 1;
  const bool uin = vbl + out <= s << 2;
  const bool win = (t << 2) + out <= vbr;
  if (uin != win) return {uin ? s : t, k};
  const auto cmp = std::int64_t(vb - ((s + t) << 1));
  return {cmp < 0 || (cmp == 0 && (s & 1) == 0) ? s : t, k};
}

struct Decoded {
  ShortestDecimal d;
  int q;           // v = c 2^q exactly
  std::uint64_t c;
};

inline Decoded decode(std::uint64_t bits, const Pow10Table& tab) {
  const auto be = int((bits >> 52) & 0x7ff);
  const std::uint64_t t = bits & (kCMin - 1);
  if (be != 0) {
    const int mq = 1075 - be;  // q = -mq
    const std::uint64_t c = kCMin | t;
    if (mq > 0 && mq < 53) {  // an integer below 2^53: its digits are the shortest decimal
      const std::uint64_t f = c >> mq;
      if (f << mq == c) return {{f, 0}, -mq, c};
    }
    return {to_decimal(-mq, c, tab), -mq, c};
  }
  // Subnormal. (The paper scales the two smallest by 10 to get two digits; the shortest text
  // does not want that: 5e-324, 1e-323.)
  return {to_decimal(kQMin, t, tab), kQMin, t};
}

// ---- text -------------------------------------------------------------------------------------

constexpr char kPairs[201] =
    "00010203040506070809101112131415161718192021222324252627282930313233343536373839"
    "40414243444546474849505152535455565758596061626364656667686970717273747576777879"
    "8081828384858687888990919293949596979899";

inline void put2(char* p, std::uint32_t x) { std::memcpy(p, kPairs + 2 * x, 2); }
inline void put8(char* p, std::uint32_t x) {  // exactly 8 digits, x < 10^8
  const std::uint32_t a = x / 10000, b = x % 10000;
  put2(p, a / 100);
  put2(p + 2, a % 100);
  put2(p + 4, b / 100);
  put2(p + 6, b % 100);
}

constexpr std::uint64_t kPow10[20] = {1ULL,
                                      10ULL,
                                      100ULL,
                                      1000ULL,
                                      10000ULL,
                                      100000ULL,
                                      1000000ULL,
                                      10000000ULL,
                                      100000000ULL,
                                      1000000000ULL,
                                      10000000000ULL,
                                      100000000000ULL,
                                      1000000000000ULL,
                                      10000000000000ULL,
                                      100000000000000ULL,
                                      1000000000000000ULL,
                                      10000000000000000ULL,
                                      100000000000000000ULL,
                                      1000000000000000000ULL,
                                      10000000000000000000ULL};

// Number of decimal digits of f >= 1.
inline int digit_count(std::uint64_t f) {
  const int bits = 64 - std::countl_zero(f);
  const int t = (bits * 1233) >> 12;  // floor(bits log10 2), at most one below the count
  return t + (f >= kPow10[t] ? 1 : 0);
}

// The exact decimal digits of a whole double c 2^q (q >= 1, below 10^23) at p; returns the end.
char* put_exact_integer(char* p, std::uint64_t c, int q) {
  u128 x = (u128)c << q;
  char buf[48];
  char* e = buf + sizeof buf;
  char* b = e;
  do {
    *--b = char('0' + int(x % 10));
    x /= 10;
  } while (x != 0);
  std::memcpy(p, b, std::size_t(e - b));
  return p + (e - b);
}

}  // namespace

const Pow10Entry& pow10_entry(int e) noexcept { return table().e[std::size_t(e - kMinPow10)]; }

ShortestDecimal shortest_decimal(double v) noexcept { return decode(std::bit_cast<std::uint64_t>(v), table()).d; }

char* write_shortest(char* p, double v) noexcept {
  const auto bits = std::bit_cast<std::uint64_t>(v);
  if (bits >> 63) *p++ = '-';
  if ((bits << 1) == 0) {
    *p = '0';
    return p + 1;
  }
  const Decoded dec = decode(bits, table());
  const std::uint64_t f = dec.d.digits;  // 1 <= f < 10^17

  // The 17 digits of f with leading zeros, then the count of its digits and of its trailing zeros.
  char tmp[48];
  {
    const std::uint64_t top = f / 10'000'000'000'000'000ULL;  // f / 10^16
    const std::uint64_t rest = f % 10'000'000'000'000'000ULL;
    tmp[0] = char('0' + top);
    put8(tmp + 1, std::uint32_t(rest / 100'000'000ULL));
    put8(tmp + 9, std::uint32_t(rest % 100'000'000ULL));
  }
  const int n17 = digit_count(f);
  int tz;
  {
    constexpr std::uint64_t kZeros = 0x3030303030303030ULL;
    std::uint64_t w;
    std::memcpy(&w, tmp + 9, 8);
    w ^= kZeros;
    if (w) {
      tz = std::countl_zero(w) >> 3;
    } else {
      std::memcpy(&w, tmp + 1, 8);
      w ^= kZeros;
      tz = w ? 8 + (std::countl_zero(w) >> 3) : 16;
    }
  }
  const int n = n17 - tz;                       // significant digits
  const int E = dec.d.exponent + n17 - 1;       // scientific exponent
  const char* d = tmp + 17 - n17;               // the n digits
  std::memset(tmp + 17, '0', 24);               // so fixed-size copies past the digits read zeros

  const int absE = E < 0 ? -E : E;
  const int sci_len = n + (n > 1 ? 1 : 0) + 2 + (absE >= 100 ? 3 : 2);
  int fixed_len;
  if (E >= 0) fixed_len = n <= E + 1 ? E + 1 : n + 1;
  else fixed_len = n + 1 - E;

  if (fixed_len <= sci_len) {
    if (E < 0) {  // 0.000ddd (at most 3 zeros after the point: E >= -4 here)
      std::memcpy(p, "0.00000", 8);
      std::memcpy(p + 1 - E, d, 17);
      return p + fixed_len;
    }
    if (n <= E + 1) {  // a whole number: its exact value
      if (dec.q >= 1) return put_exact_integer(p, dec.c, dec.q);
      std::memcpy(p, d, 24);  // the digits, then the zeros that follow them in tmp
      return p + fixed_len;
    }
    std::memcpy(p, d, 17);  // ddd.ddd
    std::memcpy(p + E + 2, d + E + 1, 17);
    p[E + 1] = '.';
    return p + fixed_len;
  }
  p[0] = d[0];
  if (n > 1) {
    p[1] = '.';
    std::memcpy(p + 2, d + 1, 16);
    p += n + 1;
  } else {
    p += 1;
  }
  p[0] = 'e';
  p[1] = E < 0 ? '-' : '+';
  if (absE >= 100) {
    p[2] = char('0' + absE / 100);
    put2(p + 3, std::uint32_t(absE % 100));
    return p + 5;
  }
  put2(p + 2, std::uint32_t(absE));
  return p + 4;
}

}  // namespace c2path::detail
