#pragma once
/// \file export.hpp
/// Setpoints sampled from a trajectory at the controller's rate, written atomically.

#include <cstddef>
#include <functional>
#include <string>
#include <string_view>
#include <vector>

#include "c2path/trajectory.hpp"

namespace c2path {

/// Output formats.
enum class ExportFormat {
  kCsv,  ///< header `t,NAME,NAME.vel,NAME.acc,...`, one row per sample
};

/// Largest number of samples one export may write.
inline constexpr std::size_t kMaxExportSamples = 200'000'000;

/// Options of an export.
struct ExportOptions {
  double rate_hz = 1000.0;                  ///< samples per second [Hz]
  ExportFormat format = ExportFormat::kCsv;
  /// Throws c2path::Error when the rate is not a finite positive number.
  void validate() const;
};

/// Number of samples of a move over [t_begin, t_end] at rate_hz: the samples t_begin + k/rate
/// that lie before t_end (with a margin of 1e-9 samples, so rounding never adds a sliver), then
/// one sample at exactly t_end. Throws c2path::Error above kMaxExportSamples.
[[nodiscard]] std::size_t sample_count(double t_begin, double t_end, double rate_hz);
/// Time of sample k of sample_count(...) samples: t_begin + k / rate_hz, the last one t_end.
[[nodiscard]] double sample_time(std::size_t k, std::size_t count, double t_begin, double t_end, double rate_hz);

/// Writes the samples in the chosen format to `sink`, in chunks (memory does not grow with the
/// length of the move). Numbers are printed shortest-round-trip (std::to_chars). Returns the number
/// of samples (rows).
std::size_t write_setpoints(const Trajectory& trajectory, const std::vector<std::string>& axis_names,
                            const ExportOptions& options, const std::function<void(std::string_view)>& sink);

/// write_setpoints into `path`, atomically: a temporary file beside it is renamed into place when
/// complete, so a failed export leaves no partial file and an earlier file untouched.
std::size_t export_file(const Trajectory& trajectory, const std::vector<std::string>& axis_names,
                        const ExportOptions& options, const std::string& path);

}  // namespace c2path
