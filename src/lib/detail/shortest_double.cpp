#include "detail/shortest_double.hpp"

#include <array>
#include <bit>
#include <cassert>
#include <cstring>
#include <vector>
#if defined(__SSE2__)
#include <emmintrin.h>
#endif

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
// Where this code departs from the paper: (1) the ends g (cb -/+ 2) 2^h are formed from the one
// product g cb 2^h plus/minus g shifted, exactly, where the paper makes three truncated products;
// the sticky bit still looks at the same bits 64..126; (2) the multiple-of-10^(k+1) step is also
// taken for s < 100 and the two smallest subnormals are not scaled by 10 (the paper wants two
// digits at least for Java's text; the shortest text wants 5e-324). The paper's proof is not
// re-done for these changes: tests/shortest_test.cpp compares the text with std::to_chars on 62.6 M
// values by default and 1.1 G in its [.long] case.

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
      Pow10Entry& out = e[std::size_t(x - kMinPow10)];
      out.g_hi = g.bits_at(64);
      out.g_lo = g.bits_at(0) + 1;
      if (out.g_lo == 0) ++out.g_hi;  // the + 1 carried
    }
  }
};

const Pow10Table& table() {
  static const Pow10Table t;
  return t;
}

// ---- Schubfach's decision --------------------------------------------------------------------

// The paper's scaled value: floor(P / 2^127) for a 192-bit P = g cp, with the lowest bit set when
// bits 64..126 of P are not all zero (a sticky bit for "not an integer"; the paper's rop, which
// looks at those bits only: the error of g alone stays below 2^64 there). `top` is P >> 64.
inline std::uint64_t round_odd(u128 top) {
  return std::uint64_t(top >> 63) | (std::uint64_t(top) << 1 != 0 ? 1 : 0);
}

constexpr int kQMin = -1074;
constexpr std::uint64_t kCMin = std::uint64_t(1) << 52;

[[gnu::always_inline]] inline ShortestDecimal to_decimal(int q, std::uint64_t c, const Pow10Table& tab) {
  const std::uint64_t out = c & 1;
  const std::uint64_t cb = c << 2;
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
  // P = g (cb << h) and g (cbl << h), g (cbr << h) = P -/+ g ((cb - cbl) << h) exactly: one
  // product and shifts instead of three products. Only the bits from 64 up are needed, and the
  // carry or borrow of the low 64 bits into them.
  const std::uint64_t cp = cb << h;
  const u128 lo = (u128)g.g_lo * cp;
  const u128 top = (u128)g.g_hi * cp + std::uint64_t(lo >> 64);  // P >> 64
  const auto p0 = std::uint64_t(lo);
  // g << s as a low word and P-aligned upper 128 bits (1 <= s < 64).
  auto shifted = [&](int sh, std::uint64_t& d0) {
    d0 = g.g_lo << sh;
    return (u128)(g.g_hi >> (64 - sh)) << 64 | ((g.g_hi << sh) | (g.g_lo >> (64 - sh)));
  };
  std::uint64_t d0r;
  const u128 dr = shifted(h + 1, d0r);  // (cbr - cb) << h = 2 << h
  const std::uint64_t vb = round_odd(top);
  const std::uint64_t vbr = round_odd(top + dr + (p0 + d0r < p0 ? 1 : 0));
  std::uint64_t vbl;
  if (cb - cbl == 2) [[likely]] {
    vbl = round_odd(top - dr - (p0 < d0r ? 1 : 0));
  } else {  // the irregular spacing below a power of two: 1 << h
    std::uint64_t d0l;
    const u128 dl = shifted(h, d0l);
    vbl = round_odd(top - dl - (p0 < d0l ? 1 : 0));
  }
  const std::uint64_t s = vb >> 2;
  // The paper skips the first step for s < 100 (Java's text wants two digits at least); the
  // shortest text needs it there too: for subnormals, s may be that small. The steps are chosen
  // without branches (they are hard to predict): the one multiple of 10^(k+1) in R if exactly one
  // of sp10, tp10 is in R; else the one of s, t in R; else (both in R) the closer, the even on a tie.
  const std::uint64_t sp10 = 10 * (s / 10);
  const std::uint64_t tp10 = sp10 + 10;
  const bool upin = vbl + out <= sp10 << 2;
  const bool wpin = (tp10 << 2) + out <= vbr;
  const std::uint64_t t = s + 1;
  const bool uin = vbl + out <= s << 2;
  const bool win = (t << 2) + out <= vbr;
  const auto cmp = std::int64_t(vb - ((s + t) << 1));
  const bool closer_s = (cmp < 0) | ((cmp == 0) & ((s & 1) == 0));  // no short circuit: no branch
  const bool pick_s = uin != win ? uin : closer_s;
  const std::uint64_t one = t - std::uint64_t(pick_s);
  const std::uint64_t ten = tp10 - 10 * std::uint64_t(upin);
  const std::uint64_t use_ten = -std::uint64_t(upin != wpin);
  return {one ^ ((one ^ ten) & use_ten), k};
}

using Decoded = ShortestParts;

// |v| of a non-zero finite double: its shortest decimal and its exact binary value.
[[gnu::always_inline]] inline void decode(std::uint64_t bits, const Pow10Table& tab, Decoded& out) {
  const auto be = int((bits >> 52) & 0x7ff);
  const std::uint64_t t = bits & (kCMin - 1);
  if (be != 0) {
    const int mq = 1075 - be;  // q = -mq
    const std::uint64_t c = kCMin | t;
    out.q = -mq;
    out.c = c;
    if (mq > 0 && mq < 53) {  // an integer below 2^53: its digits are the shortest decimal
      const std::uint64_t f = c >> mq;
      if (f << mq == c) {
        out.digits = f;
        out.exponent = 0;
        return;
      }
    }
    const ShortestDecimal d = to_decimal(-mq, c, tab);
    out.digits = d.digits;
    out.exponent = d.exponent;
    return;
  }
  // Subnormal. (The paper scales the two smallest by 10 to get two digits; the shortest text
  // does not want that: 5e-324, 1e-323.)
  out.q = kQMin;
  out.c = t;
  const ShortestDecimal d = to_decimal(kQMin, t, tab);
  out.digits = d.digits;
  out.exponent = d.exponent;
}

// ---- text -------------------------------------------------------------------------------------

constexpr char kPairs[201] =
    "00010203040506070809101112131415161718192021222324252627282930313233343536373839"
    "40414243444546474849505152535455565758596061626364656667686970717273747576777879"
    "8081828384858687888990919293949596979899";

inline void put2(char* p, std::uint32_t x) { std::memcpy(p, kPairs + 2 * x, 2); }

// The 8 decimal digits of x < 10^8, one per byte, the first in the lowest byte (values 0..9):
// the halves x / 10^4 and x % 10^4 in two 32-bit lanes, then each lane split by 100 into 16-bit
// lanes and each of those by 10 into bytes, all lanes at once (floor(y / 100) = y 10486 >> 20 for
// y < 10^4 and floor(y / 10) = y 103 >> 10 for y < 100; the tests reach every y through the
// digits of every integer up to 10^6 and of random ones).
inline std::uint64_t digit_bytes(std::uint64_t x) {
  std::uint64_t v = (x / 10000) | ((x % 10000) << 32);
  const std::uint64_t h = ((v * 10486) >> 20) & 0x0000007F0000007FULL;
  v = h | ((v - h * 100) << 16);
  const std::uint64_t t = ((v * 103) >> 10) & 0x000F000F000F000FULL;
  return t | ((v - t * 10) << 8);
}
inline void store16(char* p, u128 x) { std::memcpy(p, &x, 16); }

#if defined(__SSE2__)
// digit_bytes of a and b at once, the same steps in the lanes of one SSE2 register:
// [a / 10^4, a % 10^4, b / 10^4, b % 10^4] in 32-bit lanes, each split by 100 (y 5243 >> 19 for
// y < 10^4: the high 16 bits of y 5243, then a shift by 3) into 16-bit lanes, each of those by 10
// (z 6554 >> 16 for z < 100) into bytes.
inline void digit_bytes_2(std::uint64_t a, std::uint64_t b, std::uint64_t& wa, std::uint64_t& wb) {
  const std::uint64_t a_hi = a / 10000, b_hi = b / 10000;
  const __m128i v = _mm_unpacklo_epi64(_mm_cvtsi64_si128(std::int64_t(a_hi | (a - a_hi * 10000) << 32)),
                                       _mm_cvtsi64_si128(std::int64_t(b_hi | (b - b_hi * 10000) << 32)));
  const __m128i q = _mm_srli_epi32(_mm_mulhi_epu16(v, _mm_set1_epi32(5243)), 3);
  const __m128i r = _mm_sub_epi32(v, _mm_mullo_epi16(q, _mm_set1_epi32(100)));
  const __m128i w = _mm_or_si128(q, _mm_slli_epi32(r, 16));
  const __m128i t = _mm_mulhi_epu16(w, _mm_set1_epi16(6554));
  const __m128i u = _mm_sub_epi16(w, _mm_mullo_epi16(t, _mm_set1_epi16(10)));
  const __m128i d = _mm_or_si128(t, _mm_slli_epi16(u, 8));
  wa = std::uint64_t(_mm_cvtsi128_si64(d));
  wb = std::uint64_t(_mm_cvtsi128_si64(_mm_unpackhi_epi64(d, d)));
}
#endif

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

// The significant digits of dec.digits as text, their count and the scientific exponent.
[[gnu::always_inline]] inline void digits_text(ShortestParts& dec) {
  const std::uint64_t f = dec.digits;  // 1 <= f < 10^17

  // f = top 10^16 + mid 10^8 + lo; w1, w2: the 8 digits of mid and lo, one per byte, first digit
  // in the lowest byte (so in memory order).
  // (lo straight from f, so that its digits need not wait for top and mid)
  const std::uint64_t q8 = f / 100'000'000ULL;
  const std::uint64_t lo = f - q8 * 100'000'000ULL;
  const std::uint64_t top = q8 / 100'000'000ULL;
  const std::uint64_t mid = q8 - top * 100'000'000ULL;
#if defined(__SSE2__)
  std::uint64_t w1, w2;
  digit_bytes_2(mid, lo, w1, w2);
#else
  const std::uint64_t w1 = digit_bytes(mid), w2 = digit_bytes(lo);
#endif
  // Digits of f (n17), its trailing zeros (tz), then the first digit d0 and the next 16 (r, one
  // per byte, zero bytes past the end).
  int n17, tz;
  if (w2) tz = std::countl_zero(w2) >> 3;
  else if (w1) tz = 8 + (std::countl_zero(w1) >> 3);
  else tz = 16;
  // The 17 digits z[0..17) of f with leading zeros: top, then w1, then w2; `lead` zeros before the
  // first significant digit z[lead]. Chosen without branches (17 or 16 digits is hard to predict).
  const u128 x = w1 | (u128)w2 << 64;                                      // z[1..17)
  const int lead_x = w1 ? std::countr_zero(w1) >> 3 : 8 + (std::countr_zero(w2 | (std::uint64_t(1) << 63)) >> 3);
  const int lead = int(top == 0) * (1 + lead_x);                           // 0..16, no branch
  const u128 z16 = (x << 8) | top;                                          // z[0..16)
  const std::uint64_t d0 = lead < 16 ? std::uint64_t(z16 >> (8 * (lead & 15))) & 0xff : w2 >> 56;
  const u128 r = lead < 16 ? x >> (8 * (lead & 15)) : u128(0);              // z[lead + 1 .. lead + 17)
  n17 = 17 - lead;
  const int n = n17 - tz;                  // significant digits
  const int E = dec.exponent + n17 - 1;  // scientific exponent
  constexpr std::uint64_t kAscii = 0x3030303030303030ULL;
  const u128 r_ascii = r + ((u128)kAscii << 64 | kAscii);  // '0' added to every byte, no carries
  const char c0 = char('0' + d0);

  dec.count = n;
  dec.sci_exponent = E;
  dec.text_lo = std::uint64_t(r_ascii);
  dec.text_hi = std::uint64_t(r_ascii >> 64);
  dec.first = c0;
}

}  // namespace

const Pow10Entry& pow10_entry(int e) noexcept { return table().e[std::size_t(e - kMinPow10)]; }

ShortestDecimal shortest_decimal(double v) noexcept {
  Decoded d;
  decode(std::bit_cast<std::uint64_t>(v), table(), d);
  return {d.digits, d.exponent};
}

void shortest_parts(const double* v, std::size_t n, ShortestParts* out) noexcept {
  const Pow10Table& tab = table();
  auto one = [&](std::size_t i) __attribute__((always_inline)) {
    const auto bits = std::bit_cast<std::uint64_t>(v[i]);
    out[i].negative = (bits >> 63) != 0;
    out[i].zero = (bits << 1) == 0;
    decode(out[i].zero ? std::bit_cast<std::uint64_t>(1.0) : bits, tab, out[i]);  // a zero gets the digits of 1, unused
    digits_text(out[i]);
  };
  // Two numbers per step: their long chains of dependent operations are independent, and the
  // processor overlaps them better side by side.
  std::size_t i = 0;
  for (; i + 2 <= n; i += 2) {
    one(i);
    one(i + 1);
  }
  if (i < n) one(i);
}

char* write_shortest(char* p, double v) noexcept {
  ShortestParts s;
  shortest_parts(&v, 1, &s);
  return write_parts(p, s);
}

char* write_parts(char* p, const ShortestParts& dec) noexcept {
  *p = '-';  // kept only for a negative number (no branch: the sign of signed data is hard to predict)
  p += dec.negative ? 1 : 0;
  if (dec.zero) {
    *p = '0';
    return p + 1;
  }
  const int n = dec.count;
  const int E = dec.sci_exponent;
  const u128 r_ascii = dec.text_lo | (u128)dec.text_hi << 64;
  const char c0 = dec.first;

  const int absE = E < 0 ? -E : E;
  const int sci_len = n + (n > 1 ? 1 : 0) + 2 + (absE >= 100 ? 3 : 2);
  int fixed_len;
  if (E >= 0) fixed_len = n <= E + 1 ? E + 1 : n + 1;
  else fixed_len = n + 1 - E;

  if (fixed_len <= sci_len) {
    if (E < 0) {  // 0.000ddd (at most 3 zeros after the point: E >= -4 here)
      std::memcpy(p, "0.000000", 8);
      p[1 - E] = c0;
      store16(p + 2 - E, r_ascii);
      return p + fixed_len;
    }
    if (n <= E + 1) {  // a whole number: its exact value
      if (dec.q >= 1) return put_exact_integer(p, dec.c, dec.q);
      p[0] = c0;  // below 2^53: the digits, then the zeros that r holds past them (E + 1 <= 16)
      store16(p + 1, r_ascii);
      return p + fixed_len;
    }
    // ddd.ddd with E + 1 digits before the point: all digits, then the ones after the point again,
    // one place further right, and the point.
    p[0] = c0;
    store16(p + 1, r_ascii);
    store16(p + E + 2, r_ascii >> (8 * E));
    p[E + 1] = '.';
    return p + fixed_len;
  }
  p[0] = c0;
  if (n > 1) {
    p[1] = '.';
    store16(p + 2, r_ascii);
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
