#pragma once
/// \file export.hpp
/// Setpoints sampled from a trajectory at the controller's rate, written atomically: CSV, JSON
/// Lines and PVT (position, velocity, time points); optional controller units (counts) and camera
/// frame rates held as exact rationals; the error a controller makes when it rebuilds the move
/// from the samples (linear and cubic Hermite interpolation).

#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "c2path/trajectory.hpp"

namespace c2path {

/// Output formats.
enum class ExportFormat {
  kCsv,    ///< header `t,NAME,NAME.vel,NAME.acc,...`, one row per sample
  kJsonl,  ///< one JSON object per line and sample: {"t":0.25,"NAME":1.5,"NAME.vel":0.2,...}
  kPvt,    ///< CSV `t,dt,NAME,NAME.vel,...`: points for controllers that interpolate cubic Hermite;
           ///< dt is the time since the previous point (0 on the first)
};

/// What the time column holds.
enum class TimeColumn {
  kSeconds,  ///< `t` [s]
  kIndex,    ///< `sample` (or `frame` with a frame rate): the integer k of t = t_begin + k / rate
};

/// Units of the exported numbers.
enum class ExportUnits {
  kNative,  ///< the scene's units (unit, unit/s, ...)
  kCounts,  ///< controller counts: position counts_per_unit * q + offset rounded to an integer,
            ///< derivatives counts_per_unit * q^(k) [counts/s^k] (not rounded)
};

/// "csv", "jsonl", "pvt".
[[nodiscard]] const char* to_string(ExportFormat format);

/// A positive rational number num/den, e.g. a frame rate 24000/1001 [Hz].
struct Rational {
  std::int64_t num = 1;  ///< > 0
  std::int64_t den = 1;  ///< > 0
  [[nodiscard]] double value() const { return double(num) / double(den); }
  [[nodiscard]] bool operator==(const Rational&) const = default;
};
/// "24000/1001", or "25" when den == 1.
[[nodiscard]] std::string to_string(const Rational& r);

/// The camera frame rates accepted by --fps, in increasing order, as written ("23.976", ...).
[[nodiscard]] const std::vector<std::string>& frame_rate_names();
/// The exact rate of a camera frame rate name: 23.976 -> 24000/1001, 24, 25, 29.97 -> 30000/1001,
/// 30, 48, 50, 59.94 -> 60000/1001, 60 (also accepted written as "24000/1001"). nullopt otherwise.
[[nodiscard]] std::optional<Rational> parse_frame_rate(std::string_view text);

/// Which derivatives are written per axis (CSV and JSON Lines; PVT always writes pos and vel).
/// Columns per axis are always in the order pos, vel, acc, jerk.
struct Columns {
  bool pos = true;   ///< `NAME` [unit]
  bool vel = true;   ///< `NAME.vel` [unit/s]
  bool acc = true;   ///< `NAME.acc` [unit/s^2]
  bool jerk = false; ///< `NAME.jerk` [unit/s^3]
  [[nodiscard]] bool operator==(const Columns&) const = default;
};
/// Parses "pos,vel,acc,jerk" (any non-empty subset, any order). Throws c2path::Error.
[[nodiscard]] Columns parse_columns(std::string_view text);

/// Conversion of one axis to controller counts: counts = counts_per_unit * q + offset.
struct AxisCounts {
  double counts_per_unit = 1.0;  ///< counts per scene unit, non-zero (negative reverses the axis)
  double offset = 0.0;           ///< count value at position 0 [counts]
};

/// Largest number of samples one export may write.
inline constexpr std::size_t kMaxExportSamples = 200'000'000;

/// Options of an export.
struct ExportOptions {
  double rate_hz = 1000.0;                  ///< samples per second [Hz] (used when `exact_rate` is empty)
  /// Exact rate num/den [Hz]: sample k lies at t_begin + (k * den) / num, one rounding. An integer
  /// rate_hz gives the same times either way.
  std::optional<Rational> exact_rate;
  ExportFormat format = ExportFormat::kCsv;
  /// Camera frames: a `frame` column first, and only whole frames (the last at or before the end).
  bool frames = false;
  TimeColumn time = TimeColumn::kSeconds;
  Columns columns;                          ///< CSV and JSON Lines
  ExportUnits units = ExportUnits::kNative;
  std::vector<AxisCounts> counts;           ///< kCounts: one per axis
  /// Called after each written chunk with (samples written, samples in all); may be empty.
  std::function<void(std::size_t, std::size_t)> progress;
  /// Throws c2path::Error when the rate is not a finite positive number or options conflict.
  void validate() const;
  /// The rate in Hz (exact_rate's value when set).
  [[nodiscard]] double rate() const { return exact_rate ? exact_rate->value() : rate_hz; }
};

/// Number of samples of a move over [t_begin, t_end] at rate_hz: the samples t_begin + k/rate
/// that lie before t_end (with a margin of 1e-9 samples, so rounding never adds a sliver), then
/// one sample at exactly t_end. Throws c2path::Error above kMaxExportSamples.
[[nodiscard]] std::size_t sample_count(double t_begin, double t_end, double rate_hz);
/// Time of sample k of sample_count(...) samples: t_begin + k / rate_hz, the last one t_end.
[[nodiscard]] double sample_time(std::size_t k, std::size_t count, double t_begin, double t_end, double rate_hz);

/// The sample times of an export.
///
/// Samples lie on the grid t_begin + k / rate. With time in seconds and no frame rate, one more
/// sample at exactly t_end follows the last grid point before it (as sample_count/sample_time).
/// With `frames` or TimeColumn::kIndex, the file holds grid points only: the last one is the last
/// grid point at or before t_end (within 1e-9 of a period), so the end itself is in the file only
/// when it falls on the grid.
struct SampleGrid {
  double t_begin = 0, t_end = 0;  ///< the move [s]
  double rate_hz = 1;             ///< [Hz]
  std::optional<Rational> exact;  ///< exact rate when known
  bool end_sample = true;         ///< the last sample is t_end itself
  std::size_t count = 0;          ///< number of samples
  /// Time of sample k < count [s].
  [[nodiscard]] double time(std::size_t k) const;
};
/// The grid of an export of [t_begin, t_end] with these options. Throws c2path::Error above
/// kMaxExportSamples or for an invalid span.
[[nodiscard]] SampleGrid sample_grid(double t_begin, double t_end, const ExportOptions& options);

/// Largest deviation, per axis, between the trajectory and what a controller rebuilds from the
/// samples (in the scene's units, never counts).
struct Reconstruction {
  std::vector<double> linear;   ///< piecewise linear through the positions [unit], size axes
  std::vector<double> hermite;  ///< piecewise cubic Hermite through positions and velocities [unit]
  /// How it is measured: exactly when the trajectory is piecewise cubic in time (keyframes): on
  /// each stretch of an interval inside one cubic piece the error is a cubic, maximised at the
  /// roots of its derivative. Otherwise the trajectory is compared at the quarter points and the
  /// midpoint of every interval, and at 16 evenly spaced points of each interval that holds a break
  /// (where the jerk may jump): an estimate from below of the true maximum.
  bool exact = false;
  std::size_t points = 0;       ///< number of comparisons (stretches analysed, or points)
  double t_last = 0;            ///< time of the last sample [s]; nothing after it is compared
};

/// The reconstruction error of sampling `trajectory` on sample_grid(..., options).
[[nodiscard]] Reconstruction reconstruction_error(const Trajectory& trajectory, const ExportOptions& options);

/// Result of --max-error: the chosen rate and the error it gives.
struct RateChoice {
  bool found = false;       ///< some candidate keeps every axis within the bound
  double rate_hz = 0;       ///< chosen rate [Hz]
  std::optional<Rational> exact;  ///< the chosen rate as an exact rational
  Reconstruction error;     ///< at the chosen rate (or at the highest candidate when not found)
  std::string message;      ///< what was searched
};

/// The lowest rate whose reconstruction error (linear for CSV/JSON Lines, cubic Hermite for PVT)
/// keeps every axis within `max_error` [unit of each axis]. Candidates: with `options.frames`, the
/// camera frame rates; else integer rates 1..100000 Hz (PVT: spacings 1/N s), found by doubling
/// and then bisection (the error falls with the rate; the bisection assumes so).
[[nodiscard]] RateChoice choose_rate(const Trajectory& trajectory, const ExportOptions& options, double max_error);

/// Largest error from rounding positions to whole counts [unit], per axis: 0.5 / |counts_per_unit|.
[[nodiscard]] std::vector<double> rounding_error(const ExportOptions& options);

/// Column names of the file (in order), for axis names `axis_names`.
[[nodiscard]] std::vector<std::string> export_columns(const std::vector<std::string>& axis_names, const ExportOptions& options);

/// What an export wrote.
struct ExportResult {
  std::size_t rows = 0;  ///< samples written
  SampleGrid grid;       ///< their times
};

/// Writes the samples in the chosen format to `sink`, in chunks (memory does not grow with the
/// length of the move). Numbers are printed shortest-round-trip (std::to_chars). Returns the number
/// of samples (rows).
std::size_t write_setpoints(const Trajectory& trajectory, const std::vector<std::string>& axis_names,
                            const ExportOptions& options, const std::function<void(std::string_view)>& sink);

/// As write_setpoints, returning the grid too.
ExportResult write_export(const Trajectory& trajectory, const std::vector<std::string>& axis_names,
                          const ExportOptions& options, const std::function<void(std::string_view)>& sink);

/// write_setpoints into `path`, atomically: a temporary file `.NAME.tmp-XXXXXX` beside it is renamed
/// into place when complete, so a failed export leaves no partial file and an earlier file
/// untouched. (A process killed outright, e.g. by SIGKILL, cannot remove its temporary file: the
/// hidden `.NAME.tmp-XXXXXX` may stay beside the target; the target itself is untouched.)
std::size_t export_file(const Trajectory& trajectory, const std::vector<std::string>& axis_names,
                        const ExportOptions& options, const std::string& path);

/// As export_file, returning the grid too.
ExportResult export_to_file(const Trajectory& trajectory, const std::vector<std::string>& axis_names,
                            const ExportOptions& options, const std::string& path);

}  // namespace c2path
