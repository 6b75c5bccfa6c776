#include "c2path/export.hpp"

#include <algorithm>
#include <charconv>
#include <condition_variable>
#include <cmath>
#include <cstring>
#include <exception>
#include <memory>
#include <mutex>
#include <thread>

#include "c2path/error.hpp"
#include "detail/atomic_file.hpp"
#include "detail/shortest_double.hpp"

namespace c2path {

const char* to_string(ExportFormat f) {
  switch (f) {
    case ExportFormat::kCsv: return "csv";
    case ExportFormat::kJsonl: return "jsonl";
    case ExportFormat::kPvt: return "pvt";
  }
  return "?";
}

std::string to_string(const Rational& r) {
  if (r.den == 1) return std::to_string(r.num);
  return std::to_string(r.num) + "/" + std::to_string(r.den);
}

namespace {
// Camera frame rates. The fractional ones are the 1000/1001 rates of NTSC-derived video
// (24000/1001, 30000/1001, 60000/1001), as in SMPTE practice (recalled, not looked up).
struct NamedRate {
  const char* name;
  const char* exact;
  Rational rate;
};
const NamedRate kFrameRates[] = {
    {"23.976", "24000/1001", {24000, 1001}}, {"24", "24", {24, 1}}, {"25", "25", {25, 1}},
    {"29.97", "30000/1001", {30000, 1001}},  {"30", "30", {30, 1}}, {"48", "48", {48, 1}},
    {"50", "50", {50, 1}},                   {"59.94", "60000/1001", {60000, 1001}}, {"60", "60", {60, 1}},
};
}  // namespace

const std::vector<std::string>& frame_rate_names() {
  static const std::vector<std::string> names = [] {
    std::vector<std::string> v;
    for (const auto& r : kFrameRates) v.emplace_back(r.name);
    return v;
  }();
  return names;
}

std::optional<Rational> parse_frame_rate(std::string_view text) {
  for (const auto& r : kFrameRates)
    if (text == r.name || text == r.exact) return r.rate;
  return std::nullopt;
}

Columns parse_columns(std::string_view text) {
  Columns c{false, false, false, false};
  std::size_t start = 0;
  if (text.empty()) throw Error("--columns: give one or more of pos, vel, acc, jerk separated by commas");
  while (start <= text.size()) {
    const std::size_t comma = std::min(text.find(',', start), text.size());
    const std::string_view w = text.substr(start, comma - start);
    if (w == "pos") c.pos = true;
    else if (w == "vel") c.vel = true;
    else if (w == "acc") c.acc = true;
    else if (w == "jerk") c.jerk = true;
    else throw Error("--columns: '" + std::string(w) + "' is not a column; valid: pos, vel, acc, jerk");
    start = comma + 1;
  }
  return c;
}

void ExportOptions::validate() const {
  if (exact_rate) {
    if (!(exact_rate->num > 0 && exact_rate->den > 0 && exact_rate->den <= 1'000'000'000'000))
      throw Error("export: an exact rate needs a positive numerator and a denominator in 1..10^12");
  } else if (!(std::isfinite(rate_hz) && rate_hz > 0.0)) {
    throw Error("export: the rate must be a positive number of Hz");
  }
  if (rate() > 1e7) throw Error("export: the rate must be at most 10 MHz");
  if (format == ExportFormat::kPvt) {
    if (frames) throw Error("export: PVT points are spaced by --rate (or --spacing), not by camera frames; drop --fps");
    if (time == TimeColumn::kIndex) throw Error("export: PVT points carry their time in seconds; drop --time index");
  } else if (!(columns.pos || columns.vel || columns.acc || columns.jerk)) {
    throw Error("export: choose at least one column (pos, vel, acc, jerk)");
  }
  if (units == ExportUnits::kCounts)
    for (const auto& c : counts)
      if (!(std::isfinite(c.counts_per_unit) && c.counts_per_unit != 0.0 && std::isfinite(c.offset)))
        throw Error("export: counts_per_unit must be a finite non-zero number and offset finite");
}

std::size_t sample_count(double t_begin, double t_end, double rate_hz) {
  const double span = (t_end - t_begin) * rate_hz;
  if (!std::isfinite(span) || span < 0) throw Error("export: the move has no valid duration");
  if (span > double(kMaxExportSamples))
    throw Error("export: " + std::to_string(std::llround(span)) + " samples is more than the " +
                std::to_string(kMaxExportSamples) + " one export may write; lower the rate");
  // Samples k = 0..K-1 lie before the end; then the end itself.
  const auto K = std::size_t(std::ceil(span - 1e-9));
  return std::max<std::size_t>(K, 1) + 1;
}

double sample_time(std::size_t k, std::size_t count, double t_begin, double t_end, double rate_hz) {
  if (k + 1 >= count) return t_end;
  return t_begin + double(k) / rate_hz;
}

double SampleGrid::time(std::size_t k) const {
  if (end_sample && k + 1 >= count) return t_end;
  double t;
  if (exact) t = t_begin + double(std::int64_t(k) * exact->den) / double(exact->num);  // one rounding
  else t = t_begin + double(k) / rate_hz;
  return std::min(t, t_end);
}

namespace {
// An integer rate given as a double is exact as n/1; the times are then identical either way.
std::optional<Rational> exact_of(const ExportOptions& o) {
  if (o.exact_rate) return o.exact_rate;
  if (o.rate_hz == std::floor(o.rate_hz) && o.rate_hz <= 1e7) return Rational{std::int64_t(o.rate_hz), 1};
  return std::nullopt;
}
}  // namespace

namespace {
// k * den must stay an exact 64-bit integer for every sample k.
void check_exact(const SampleGrid& g) {
  if (g.exact && double(g.count) * double(g.exact->den) > 9e18)
    throw Error("export: the sample times k * " + std::to_string(g.exact->den) + " / " + std::to_string(g.exact->num) +
                " do not fit 64-bit integers for this move; choose a rounder spacing");
}
}  // namespace

SampleGrid sample_grid(double t_begin, double t_end, const ExportOptions& o) {
  SampleGrid g;
  g.t_begin = t_begin;
  g.t_end = t_end;
  g.rate_hz = o.rate();
  g.exact = exact_of(o);
  g.end_sample = !(o.frames || o.time == TimeColumn::kIndex);
  if (g.end_sample) {
    g.count = sample_count(t_begin, t_end, g.rate_hz);
    check_exact(g);
    return g;
  }
  const double span = (t_end - t_begin) * g.rate_hz;
  if (!std::isfinite(span) || span < 0) throw Error("export: the move has no valid duration");
  if (span > double(kMaxExportSamples))
    throw Error("export: " + std::to_string(std::llround(span)) + " samples is more than the " +
                std::to_string(kMaxExportSamples) + " one export may write; lower the rate");
  g.count = std::size_t(std::floor(span + 1e-9)) + 1;  // grid points 0..K, the last at or before the end
  check_exact(g);
  return g;
}

std::vector<double> rounding_error(const ExportOptions& o) {
  std::vector<double> e(o.counts.size(), 0.0);
  if (o.units == ExportUnits::kCounts)
    for (std::size_t a = 0; a < o.counts.size(); ++a) e[a] = 0.5 / std::abs(o.counts[a].counts_per_unit);
  return e;
}

std::vector<std::string> export_columns(const std::vector<std::string>& names, const ExportOptions& o) {
  std::vector<std::string> c;
  if (o.format == ExportFormat::kPvt) {
    c = {"t", "dt"};
    for (const auto& n : names) {
      c.push_back(n);
      c.push_back(n + ".vel");
    }
    return c;
  }
  if (o.frames) c.emplace_back("frame");
  if (o.time == TimeColumn::kSeconds) c.emplace_back("t");
  else if (!o.frames) c.emplace_back("sample");
  for (const auto& n : names) {
    if (o.columns.pos) c.push_back(n);
    if (o.columns.vel) c.push_back(n + ".vel");
    if (o.columns.acc) c.push_back(n + ".acc");
    if (o.columns.jerk) c.push_back(n + ".jerk");
  }
  return c;
}

namespace {

constexpr double kMaxExactCount = 9007199254740992.0;  // 2^53: integers beyond are not exact in a double

// Rows per block: a block is formatted into its own buffer (by one thread) and then written whole.
constexpr std::size_t kBlockRows = 4096;

// A block's bytes: allocated once at its largest size and reused, never zero-filled.
struct Block {
  std::unique_ptr<char[]> data;
  std::size_t capacity = 0, size = 0;
  void reserve(std::size_t n) {
    if (n > capacity) {
      data = std::make_unique_for_overwrite<char[]>(n);
      capacity = n;
    }
  }
  [[nodiscard]] std::string_view view() const { return {data.get(), size}; }
};

// Formats rows of one export into a block through a pointer (the block has room for row_max bytes
// per row, so there are no per-number growth checks).
class RowFormatter {
 public:
  RowFormatter(const Trajectory& tr, const std::vector<std::string>& names, const ExportOptions& o, const SampleGrid& g,
               const std::vector<std::string>& cols)
      : tr_(tr), names_(names), o_(o), g_(g), m_(tr.axes()) {
    const bool pvt = o.format == ExportFormat::kPvt;
    jsonl_ = o.format == ExportFormat::kJsonl;
    pvt_ = pvt;
    counts_ = o.units == ExportUnits::kCounts;
    const Columns want = pvt ? Columns{true, true, false, false} : o.columns;
    want_[0] = want.pos;
    want_[1] = want.vel;
    want_[2] = want.acc;
    want_[3] = want.jerk;
    row_max_ = 64;
    for (std::size_t c = 0; c < cols.size(); ++c) {
      keys_.push_back(std::string(c ? ",\"" : "{\"") + cols[c] + "\":");
      row_max_ += keys_.back().size() + 32;  // a number is at most 24 characters
    }
    // write_shortest may use kShortestRoom bytes at the last number of a row: the 64 spare bytes.
    static_assert(detail::kShortestRoom <= 64);
  }
  [[nodiscard]] std::size_t row_max() const { return row_max_; }

  // Formats rows [k0, k1) into out.
  void rows(std::size_t k0, std::size_t k1, Block& out) const {
    Eigen::MatrixXd st(m_, 4);
    out.reserve((k1 - k0) * row_max_);
    char* p = out.data.get();
    // A row's numbers are gathered first and taken apart in one loop (independent arithmetic the
    // processor overlaps), then written with their separators in column order.
    const std::size_t per_row = 2 + std::size_t(m_) * 4;
    std::vector<double> vals(per_row);
    std::vector<detail::ShortestParts> parts(per_row);
    for (std::size_t k = k0; k < k1; ++k) {
      const double t = g_.time(k);
      tr_.eval_all(t, st);
      std::size_t nv = 0;
      auto add = [&](double v) {
        if (v == 0.0) v = 0.0;  // no "-0"
        vals[nv++] = v;
      };
      if (pvt_) {
        add(t);
        add(k ? t - g_.time(k - 1) : 0.0);
      } else if (o_.time == TimeColumn::kSeconds) {
        add(t);
      }
      for (Index a = 0; a < m_; ++a) {
        const double scale = counts_ ? o_.counts[std::size_t(a)].counts_per_unit : 1.0;
        for (int d = 0; d < 4; ++d) {
          if (!want_[d]) continue;
          double v = scale * st(a, d);
          if (counts_ && d == 0) {
            v = std::round(v + o_.counts[std::size_t(a)].offset);
            if (!(std::abs(v) < kMaxExactCount))
              throw Error("export: axis '" + names_[std::size_t(a)] + "' reaches " + std::to_string(v) +
                          " counts, beyond the integers a double holds exactly; check counts_per_unit");
          }
          add(v);
        }
      }
      detail::shortest_parts(vals.data(), nv, parts.data());

      std::size_t c = 0, iv = 0;
      auto sep = [&] {
        if (jsonl_) {
          std::memcpy(p, keys_[c].data(), keys_[c].size());
          p += keys_[c].size();
        } else if (c) {
          *p++ = ',';
        }
        ++c;
      };
      // The text of std::to_chars(p, end, v), faster.
      auto num = [&] { p = detail::write_parts(p, parts[iv++]); };
      auto integer = [&](std::size_t v) { p = std::to_chars(p, p + 24, v).ptr; };
      if (o_.frames) {
        sep();
        integer(k);
      }
      if (pvt_) {
        sep();
        num();
        sep();
        num();
      } else if (o_.time == TimeColumn::kSeconds) {
        sep();
        num();
      } else if (!o_.frames) {
        sep();
        integer(k);
      }
      while (iv < nv) {
        sep();
        num();
      }
      if (jsonl_) *p++ = '}';
      *p++ = '\n';
    }
    out.size = std::size_t(p - out.data.get());
  }

 private:
  const Trajectory& tr_;
  const std::vector<std::string>& names_;
  const ExportOptions& o_;
  const SampleGrid& g_;
  Index m_;
  bool jsonl_ = false, pvt_ = false, counts_ = false;
  bool want_[4] = {};
  std::vector<std::string> keys_;
  std::size_t row_max_ = 0;
};

}  // namespace

ExportResult write_export(const Trajectory& tr, const std::vector<std::string>& names, const ExportOptions& o,
                          const std::function<void(std::string_view)>& sink) {
  o.validate();
  const Index m = tr.axes();
  if (Index(names.size()) != m) throw Error("export: one name per axis is needed");
  if (o.units == ExportUnits::kCounts && Index(o.counts.size()) != m)
    throw Error("export: counts need counts_per_unit for every axis");
  const SampleGrid g = sample_grid(tr.t_begin(), tr.t_end(), o);
  const std::vector<std::string> cols = export_columns(names, o);
  const RowFormatter fmt(tr, names, o, g, cols);
  if (o.format != ExportFormat::kJsonl) {
    std::string header;
    for (std::size_t c = 0; c < cols.size(); ++c) header += (c ? "," : "") + cols[c];
    header += '\n';
    sink(header);
  }
  const std::size_t blocks = (g.count + kBlockRows - 1) / kBlockRows;
  auto block_range = [&](std::size_t b) { return std::pair{b * kBlockRows, std::min(g.count, (b + 1) * kBlockRows)}; };
  // Long moves: worker threads take the next block to format from a shared counter (no batches,
  // so no waiting for the slowest of a batch) into one of kSlots buffers per worker, up to that
  // many blocks ahead of this thread, which writes the blocks in order: the bytes are the same as
  // from one thread. Memory: kSlots * workers blocks.
  const unsigned hw = std::thread::hardware_concurrency();
  const std::size_t workers = std::clamp<std::size_t>(hw == 0 ? 1 : hw, 1, 4);
  if (workers == 1 || blocks < 4) {
    Block buf;
    for (std::size_t b = 0; b < blocks; ++b) {
      const auto [k0, k1] = block_range(b);
      fmt.rows(k0, k1, buf);
      sink(buf.view());
      if (o.progress) o.progress(k1, g.count);
    }
  } else {
    constexpr std::size_t kSlots = 4;
    const std::size_t ring = kSlots * workers;
    struct Slot {
      Block block;
      std::size_t holds = std::size_t(-1);  // the block formatted into it, or none
    };
    std::vector<Slot> slots(ring);
    std::mutex mu;
    std::condition_variable cv;
    std::size_t next = 0;     // the next block a worker takes
    std::size_t written = 0;  // blocks written so far (this thread)
    bool stop = false;
    std::exception_ptr error;
    auto work = [&] {
      for (;;) {
        std::size_t b;
        {
          std::unique_lock lock(mu);
          if (stop || next >= blocks) return;
          b = next++;
          // Slot b % ring is free once block b - ring has been written.
          cv.wait(lock, [&] { return stop || b < written + ring; });
          if (stop) return;
        }
        Slot& s = slots[b % ring];
        try {
          const auto [k0, k1] = block_range(b);
          fmt.rows(k0, k1, s.block);
        } catch (...) {
          std::lock_guard lock(mu);
          if (!error) error = std::current_exception();
          stop = true;
          cv.notify_all();
          return;
        }
        std::lock_guard lock(mu);
        s.holds = b;
        cv.notify_all();
      }
    };
    std::vector<std::thread> threads;
    for (std::size_t w = 0; w < workers; ++w) threads.emplace_back(work);
    auto finish = [&] {
      {
        std::lock_guard lock(mu);
        stop = true;
      }
      cv.notify_all();
      for (auto& t : threads) t.join();
    };
    try {
      for (std::size_t b = 0; b < blocks; ++b) {
        Slot& s = slots[b % ring];
        {
          std::unique_lock lock(mu);
          cv.wait(lock, [&] { return s.holds == b || error != nullptr; });
          if (error) break;
        }
        sink(s.block.view());  // the slot stays ours until `written` moves past it
        {
          std::lock_guard lock(mu);
          written = b + 1;
        }
        cv.notify_all();
        if (o.progress) o.progress(block_range(b).second, g.count);
      }
    } catch (...) {
      finish();
      throw;
    }
    finish();
    if (error) std::rethrow_exception(error);
  }
  return {g.count, g};
}

std::size_t write_setpoints(const Trajectory& tr, const std::vector<std::string>& names, const ExportOptions& o,
                            const std::function<void(std::string_view)>& sink) {
  return write_export(tr, names, o, sink).rows;
}

ExportResult export_to_file(const Trajectory& tr, const std::vector<std::string>& names, const ExportOptions& o,
                            const std::string& path) {
  o.validate();
  (void)sample_grid(tr.t_begin(), tr.t_end(), o);  // refuse before creating anything
  detail::AtomicFile f(path);
  const ExportResult r = write_export(tr, names, o, [&](std::string_view s) { f.write(s); });
  f.commit();
  return r;
}

std::size_t export_file(const Trajectory& tr, const std::vector<std::string>& names, const ExportOptions& o,
                        const std::string& path) {
  return export_to_file(tr, names, o, path).rows;
}

// ---- reconstruction error ------------------------------------------------------------------------

namespace {

// Reconstruction error over the intervals between samples k0..k1 (k1 - k0 intervals).
Reconstruction reconstruct_range(const Trajectory& tr, const SampleGrid& g, const std::vector<double>& br, std::size_t k0,
                                 std::size_t k1) {
  const Index m = tr.axes();
  Reconstruction r;
  r.linear.assign(std::size_t(m), 0.0);
  r.hermite.assign(std::size_t(m), 0.0);
  Eigen::MatrixXd s0(m, 4), s1(m, 4);
  Eigen::VectorXd q(m);
  double t0 = g.time(k0);
  tr.eval_all(t0, s0);
  std::size_t bi = std::size_t(std::upper_bound(br.begin(), br.end(), t0) - br.begin());  // first break > t0
  auto compare = [&](double t, double t_a, double h) {
    tr.eval(t, 0, q);
    const double s = (t - t_a) / h;
    const double s2 = s * s, s3 = s2 * s;
    const double h00 = 2 * s3 - 3 * s2 + 1, h10 = s3 - 2 * s2 + s, h01 = -2 * s3 + 3 * s2, h11 = s3 - s2;
    for (Index a = 0; a < m; ++a) {
      const double lin = s0(a, 0) + s * (s1(a, 0) - s0(a, 0));
      const double her = h00 * s0(a, 0) + h10 * h * s0(a, 1) + h01 * s1(a, 0) + h11 * h * s1(a, 1);
      r.linear[std::size_t(a)] = std::max(r.linear[std::size_t(a)], std::abs(q[a] - lin));
      r.hermite[std::size_t(a)] = std::max(r.hermite[std::size_t(a)], std::abs(q[a] - her));
    }
    ++r.points;
  };
  for (std::size_t k = k0 + 1; k <= k1; ++k) {
    const double t1 = g.time(k);
    const double h = t1 - t0;
    if (!(h > 0.0)) continue;
    tr.eval_all(t1, s1);
    while (bi < br.size() && br[bi] <= t0) ++bi;
    const bool has_break = bi < br.size() && br[bi] < t1;
    if (has_break) {
      for (int j = 1; j <= 16; ++j) compare(t0 + h * double(j) / 17.0, t0, h);
    } else {
      compare(t0 + 0.25 * h, t0, h);
      compare(t0 + 0.5 * h, t0, h);
      compare(t0 + 0.75 * h, t0, h);
    }
    s0.swap(s1);
    t0 = t1;
  }
  r.t_last = t0;
  return r;
}

// Largest |e(x)| of the cubic e(x) = e0 + e1 x + e2 x^2 + e3 x^3 on [xa, xb]: at the ends and at
// the real roots of e'(x) inside.
double cubic_max_abs(const double e[4], double xa, double xb) {
  auto val = [&](double x) { return std::abs(((e[3] * x + e[2]) * x + e[1]) * x + e[0]); };
  double best = std::max(val(xa), val(xb));
  const double A = 3 * e[3], B = 2 * e[2], C = e[1];
  auto consider = [&](double x) {
    if (x > xa && x < xb) best = std::max(best, val(x));
  };
  const double scale = std::abs(A) * (xb - xa) + std::abs(B);
  if (std::abs(A) * (xb - xa) <= 1e-14 * scale || A == 0.0) {
    if (B != 0.0) consider(-C / B);
    return best;
  }
  const double disc = B * B - 4 * A * C;
  if (disc < 0) return best;
  const double sq = std::sqrt(disc);
  const double qq = -0.5 * (B + (B >= 0 ? sq : -sq));  // stable quadratic roots
  if (qq != 0.0) {
    consider(qq / A);
    consider(C / qq);
  } else {
    consider(0.0);
  }
  return best;
}

// The same as reconstruct_range, exactly, for a trajectory that is piecewise cubic in time: on each
// stretch of an interval inside one cubic piece the error is itself a cubic, whose largest
// magnitude comes from the roots of its derivative.
Reconstruction reconstruct_range_exact(const Trajectory& tr, const std::vector<CubicSpline>& splines, const SampleGrid& g,
                                       std::size_t k0, std::size_t k1) {
  const Index m = tr.axes();
  Reconstruction r;
  r.linear.assign(std::size_t(m), 0.0);
  r.hermite.assign(std::size_t(m), 0.0);
  struct Piece {
    double t0;
    const CubicSpline* s;
    Index p;
  };
  std::vector<Piece> pieces;
  for (const auto& sp : splines)
    for (Index p = 0; p < sp.pieces(); ++p) pieces.push_back({sp.breaks()[std::size_t(p)], &sp, p});
  Eigen::MatrixXd s0(m, 4), s1(m, 4);
  double t0 = g.time(k0);
  tr.eval_all(t0, s0);
  std::size_t j = 0;  // piece holding t0
  while (j + 1 < pieces.size() && pieces[j + 1].t0 <= t0) ++j;
  for (std::size_t k = k0 + 1; k <= k1; ++k) {
    const double t1 = g.time(k);
    const double h = t1 - t0;
    if (!(h > 0.0)) continue;
    tr.eval_all(t1, s1);
    while (j + 1 < pieces.size() && pieces[j + 1].t0 <= t0) ++j;
    for (std::size_t i = j; i < pieces.size() && (i == j || pieces[i].t0 < t1); ++i) {
      const double xa = std::max(pieces[i].t0, t0) - t0;
      const double xb = (i + 1 < pieces.size() ? std::min(pieces[i + 1].t0, t1) : t1) - t0;
      if (!(xb > xa)) continue;
      const bool whole = xa == 0.0 && xb == h;  // the interval lies inside this one piece
      for (Index a = 0; a < m; ++a) {
        const double* c = pieces[i].s->coeffs(pieces[i].p, a);
        const double sx = t0 - pieces[i].t0;  // q(t0 + x) as a cubic in x (Taylor at t0 of this piece's cubic)
        const double q[4] = {cubic_eval(c, sx, 0), cubic_eval(c, sx, 1), cubic_eval(c, sx, 2) / 2, c[3]};
        const double q0 = s0(a, 0), q1 = s1(a, 0), v0 = s0(a, 1), v1 = s1(a, 1);
        const double d = (q1 - q0) / h;
        const double el[4] = {q[0] - q0, q[1] - d, q[2], q[3]};
        double& lin = r.linear[std::size_t(a)];
        if (whole) {
          // el(x) = el0 + x (x - h)(q2 + q3 (x + h)) + x r1 with r1 = el1 + q2 h + q3 h^2 (algebra;
          // el0 and r1 are only round-off when the samples lie on this cubic), and x (h - x) <=
          // h^2 / 4 on [0, h]: a bound on |el|. Where it cannot beat the largest deviation found
          // so far (with room for the round-off of either), the exact value cannot either.
          const double r1 = el[1] + q[2] * h + q[3] * h * h;
          const double bound = std::abs(el[0]) + 0.25 * h * h * (std::abs(q[2]) + 2.0 * h * std::abs(q[3])) + h * std::abs(r1);
          if (bound * (1.0 + 1e-12) <= lin) continue;
          lin = std::max(lin, cubic_max_abs(el, xa, xb));
          // Inside one cubic piece the Hermite interpolant is that cubic: its error is 0 (what the
          // formula would give is round-off), so it is only evaluated where the interval holds a break.
          continue;
        }
        lin = std::max(lin, cubic_max_abs(el, xa, xb));
        const double eh[4] = {q[0] - q0, q[1] - v0, q[2] - (3 * d - 2 * v0 - v1) / h, q[3] - (v0 + v1 - 2 * d) / (h * h)};
        r.hermite[std::size_t(a)] = std::max(r.hermite[std::size_t(a)], cubic_max_abs(eh, xa, xb));
      }
      ++r.points;
    }
    s0.swap(s1);
    t0 = t1;
  }
  r.t_last = t0;
  return r;
}

}  // namespace

Reconstruction reconstruction_error(const Trajectory& tr, const ExportOptions& o) {
  o.validate();
  const SampleGrid g = sample_grid(tr.t_begin(), tr.t_end(), o);
  const std::vector<double> br = tr.breaks();
  const std::size_t intervals = g.count - 1;
  const unsigned hw = std::thread::hardware_concurrency();
  const std::size_t workers = intervals < 50000 ? 1 : std::clamp<std::size_t>(hw == 0 ? 1 : hw, 1, 4);
  std::vector<Reconstruction> parts(workers);
  std::vector<std::exception_ptr> errors(workers);
  std::vector<std::thread> threads;
  for (std::size_t w = 0; w < workers; ++w) {
    const std::size_t k0 = intervals * w / workers, k1 = intervals * (w + 1) / workers;
    auto job = [&, w, k0, k1] {
      try {
        parts[w] = tr.cubic_pieces() ? reconstruct_range_exact(tr, *tr.cubic_pieces(), g, k0, k1)
                                     : reconstruct_range(tr, g, br, k0, k1);
      } catch (...) {
        errors[w] = std::current_exception();
      }
    };
    if (w + 1 == workers) job();
    else threads.emplace_back(job);
  }
  for (auto& t : threads) t.join();
  for (auto& e : errors)
    if (e) std::rethrow_exception(e);
  // The largest deviation does not depend on how the intervals were split.
  Reconstruction r = parts[0];
  for (std::size_t w = 1; w < workers; ++w) {
    for (std::size_t a = 0; a < r.linear.size(); ++a) {
      r.linear[a] = std::max(r.linear[a], parts[w].linear[a]);
      r.hermite[a] = std::max(r.hermite[a], parts[w].hermite[a]);
    }
    r.points += parts[w].points;
  }
  r.t_last = parts.back().t_last;
  r.exact = tr.cubic_pieces() != nullptr;
  return r;
}

RateChoice choose_rate(const Trajectory& tr, const ExportOptions& o_in, double max_error) {
  if (!(std::isfinite(max_error) && max_error > 0.0)) throw Error("--max-error must be a positive number");
  const bool pvt = o_in.format == ExportFormat::kPvt;
  auto worst = [&](const Reconstruction& r) {
    const auto& e = pvt ? r.hermite : r.linear;
    return e.empty() ? 0.0 : *std::max_element(e.begin(), e.end());
  };
  RateChoice c;
  ExportOptions o = o_in;
  o.progress = nullptr;
  if (o.frames) {
    for (const auto& fr : kFrameRates) {
      o.exact_rate = fr.rate;
      c.error = reconstruction_error(tr, o);
      c.exact = fr.rate;
      c.rate_hz = fr.rate.value();
      if (worst(c.error) <= max_error) {
        c.found = true;
        break;
      }
    }
    c.message = std::string("searched the camera frame rates 23.976 .. 60 fps for ") + (pvt ? "cubic Hermite" : "linear") +
                " reconstruction within the bound";
    return c;
  }
  auto at = [&](std::int64_t n) {
    o.exact_rate = Rational{n, 1};
    return reconstruction_error(tr, o);
  };
  constexpr std::int64_t kMaxRate = 100000;
  std::int64_t lo = 0, hi = 1;  // lo fails (0: none tried), hi is the candidate
  Reconstruction rh = at(hi);
  while (worst(rh) > max_error) {
    if (hi >= kMaxRate) {
      c.error = rh;
      c.rate_hz = double(hi);
      c.exact = Rational{hi, 1};
      c.message = "no integer rate up to 100000 Hz keeps every axis within the bound";
      return c;
    }
    lo = hi;
    hi = std::min(hi * 2, kMaxRate);
    rh = at(hi);
  }
  while (hi - lo > 1) {
    const std::int64_t mid = lo + (hi - lo) / 2;
    Reconstruction rm = at(mid);
    if (worst(rm) <= max_error) {
      hi = mid;
      rh = std::move(rm);
    } else {
      lo = mid;
    }
  }
  c.found = true;
  c.rate_hz = double(hi);
  c.exact = Rational{hi, 1};
  c.error = std::move(rh);
  c.message = std::string("lowest integer rate (doubling, then bisection) with ") + (pvt ? "cubic Hermite" : "linear") +
              " reconstruction within the bound";
  return c;
}

}  // namespace c2path
