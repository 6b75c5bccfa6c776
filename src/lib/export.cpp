#include "c2path/export.hpp"

#include <charconv>
#include <cmath>

#include "c2path/error.hpp"
#include "detail/atomic_file.hpp"

namespace c2path {

void ExportOptions::validate() const {
  if (!(std::isfinite(rate_hz) && rate_hz > 0.0)) throw Error("export: the rate must be a positive number of Hz");
  if (rate_hz > 1e7) throw Error("export: the rate must be at most 10 MHz");
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

namespace {
void put(std::string& out, double v) {
  char buf[32];
  if (v == 0.0) v = 0.0;  // no "-0"
  const auto r = std::to_chars(buf, buf + sizeof buf, v);
  out.append(buf, r.ptr);
}
}  // namespace

std::size_t write_setpoints(const Trajectory& tr, const std::vector<std::string>& names, const ExportOptions& o,
                            const std::function<void(std::string_view)>& sink) {
  o.validate();
  if (Index(names.size()) != tr.axes()) throw Error("export: one name per axis is needed");
  const std::size_t n = sample_count(tr.t_begin(), tr.t_end(), o.rate_hz);
  std::string buf;
  buf.reserve(1 << 20);
  buf += "t";
  for (const auto& nm : names) buf += "," + nm + "," + nm + ".vel," + nm + ".acc";
  buf += "\n";
  Eigen::MatrixXd st(tr.axes(), 4);
  for (std::size_t k = 0; k < n; ++k) {
    const double t = sample_time(k, n, tr.t_begin(), tr.t_end(), o.rate_hz);
    tr.eval_all(t, st);
    put(buf, t);
    for (Index a = 0; a < tr.axes(); ++a)
      for (int d = 0; d < 3; ++d) {
        buf += ',';
        put(buf, st(a, d));
      }
    buf += '\n';
    if (buf.size() > (1 << 20) - 4096) {
      sink(buf);
      buf.clear();
    }
  }
  sink(buf);
  return n;
}

std::size_t export_file(const Trajectory& tr, const std::vector<std::string>& names, const ExportOptions& o,
                        const std::string& path) {
  o.validate();
  (void)sample_count(tr.t_begin(), tr.t_end(), o.rate_hz);  // refuse before creating anything
  detail::AtomicFile f(path);
  const std::size_t n = write_setpoints(tr, names, o, [&](std::string_view s) { f.write(s); });
  f.commit();
  return n;
}

}  // namespace c2path
