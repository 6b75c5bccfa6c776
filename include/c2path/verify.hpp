#pragma once
/// \file verify.hpp
/// The last gate before a file goes to a rig: reads exported setpoints back and checks them
/// against the scene, independently of the planner. It never evaluates the spline or calls the
/// limit checker: velocity, acceleration and jerk come from divided differences of the file's own
/// positions, and the file's derivative columns are checked as written.
///
/// Checks, row by row (a finding names the first row where it fails):
/// - times strictly increasing; PVT `dt` equals the difference of consecutive `t`;
/// - positions within [min, max];
/// - |k! q[t_{i-k}, ..., t_i]| <= limit for k = 1 (vel), 2 (acc), 3 (jerk): the k-th divided
///   difference ending at row i. By the mean value theorem for divided differences it equals
///   q^(k)/k! somewhere in [t_{i-k}, t_i], so a move within its limits can never exceed them; a
///   finding is attributed to the last (newest) row of its window;
/// - velocity, acceleration and jerk columns, when present, within their limits, and velocity and
///   acceleration columns consistent with the positions (trapezoid rule: |dq - h (v0 + v1)/2| <=
///   h^3 jerk/12, or h^2 acc/4 when there is no jerk limit; |dv - h (a0 + a1)/2| <= h^2 jerk/4);
/// - the first row at the first waypoint, the waypoints passed in order, the last row at the last
///   waypoint (within the motion possible in one sample spacing: the last row of a frame export may
///   lie up to one period before the end);
/// - keyframes mode (no holds): at each waypoint's time, the file read linearly between the rows
///   around it is at that waypoint within h^2/8 * acc (the linear interpolation error bound).
///
/// Tolerance: every position is trusted to e = 64 eps (|q| + |v| |t|) (eps = 2^-52: the exporter's
/// Horner evaluation and the rounding of the time it is evaluated at; printing is round-trip exact),
/// plus half a count when the file holds whole counts. A k-th divided difference may then be off by
/// e times the sum of |weights| of its formula (2^k / h^k on an even grid); that, plus 1e-9 of the
/// limit (the slack check_limits allows), is the tolerance. When that tolerance reaches the limit
/// itself (e.g. integer counts at a high rate), the check cannot decide and is reported as not
/// decisive instead of passing silently.

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "c2path/export.hpp"
#include "c2path/scene.hpp"

namespace c2path {

/// Options of a verification.
struct VerifyOptions {
  /// Rate for files without a `t` column (time index or frame number only): row time = index / rate.
  std::optional<Rational> rate;
  /// The file holds controller counts (export --units counts): converted back with the scene's
  /// counts_per_unit and offset; positions are taken as rounded to whole counts.
  bool counts = false;
  /// Relative slack on every limit (as CheckOptions::rel_tol).
  double rel_tol = 1e-9;
  /// Findings kept in VerifyResult::findings (all are counted).
  std::size_t max_findings = 20;
  void validate() const;
};

/// One failed check.
struct Finding {
  std::size_t row = 0;   ///< data row, 0-based (sample index)
  int line = 0;          ///< line in the file, 1-based
  std::string axis;      ///< axis name, empty for whole-row checks
  std::string check;     ///< "time", "pos", "vel", "acc", "jerk", "vel-column", "acc-column", "jerk-column", "dt", "waypoint", "keyframe", "start", "end", "columns"
  std::string message;   ///< human-readable, without the location
};

/// Per-axis extremes seen in the file (scene units).
struct VerifyAxis {
  std::string name;
  double pos_min = 0, pos_max = 0;     ///< [unit]
  double vel = 0, acc = 0, jerk = 0;   ///< largest |divided-difference estimate| [unit/s^k]
  bool vel_decisive = true, acc_decisive = true, jerk_decisive = true;  ///< false: tolerance reached the limit somewhere
};

/// The result of a verification.
struct VerifyResult {
  bool ok = true;                 ///< no findings
  std::size_t rows = 0;           ///< data rows read
  double t_first = 0, t_last = 0; ///< [s]
  std::string format;             ///< "csv", "jsonl" or "pvt"
  std::size_t findings_total = 0; ///< findings counted
  std::vector<Finding> findings;  ///< the first max_findings, in row order
  std::size_t waypoints_passed = 0;  ///< waypoints matched in order (start and end included)
  std::vector<VerifyAxis> axes;
  std::vector<std::string> notes; ///< facts to print (unchecked limits, non-decisive checks)
};

/// The streaming checker: give it the column names, then rows in order, then finish(). Pure
/// numerics, no I/O; memory does not grow with the number of rows.
class Verifier {
 public:
  /// Throws c2path::Error for columns it cannot read at all (no time column, duplicate names);
  /// columns that do not match the scene become findings.
  Verifier(const Scene& scene, std::vector<std::string> columns, std::string format, const VerifyOptions& options);
  ~Verifier();
  Verifier(const Verifier&) = delete;
  Verifier& operator=(const Verifier&) = delete;
  /// One data row: values[c] for each column, `line` its line in the file.
  void add_row(const double* values, int line);
  /// Ends the file and returns the result.
  [[nodiscard]] VerifyResult finish();
  /// Whether the columns are usable (false: a column finding was made; rows are ignored).
  [[nodiscard]] bool usable() const;

 private:
  struct Impl;
  Impl* impl_;
};

/// Reads exported setpoints from `text` (CSV or PVT with a header row, or JSON Lines) and feeds a
/// Verifier. `file` names the source in messages. Throws c2path::Error `FILE:LINE:COL: error: ...`
/// for what cannot be read (not a number, wrong number of fields, unknown format).
[[nodiscard]] VerifyResult verify_text(const Scene& scene, std::string_view text, const std::string& file,
                                       const VerifyOptions& options = {});

/// verify_text on a file, read in chunks (memory does not grow with the file's length); "-" reads
/// standard input. Throws c2path::Error when it cannot be opened or read.
[[nodiscard]] VerifyResult verify_file(const Scene& scene, const std::string& path, const VerifyOptions& options = {});

}  // namespace c2path
