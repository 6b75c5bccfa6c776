#pragma once
// Number formatting shared by the viewer's panels: the same style as `c2path check` prints.

#include <cstdio>
#include <optional>
#include <string>

namespace c2path::viewer {

extern const char* const kCaution;

namespace fmt {

/// %g with `digits` significant digits, no "-0" (as the CLI's report).
inline std::string num(double v, int digits = 6) {
  if (v == 0.0) v = 0.0;
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, v);
  return buf;
}

/// "53.2%" of a limit, or "" without one.
inline std::string pct(double value, const std::optional<double>& limit) {
  if (!limit) return "";
  return num(100.0 * value / *limit, 3) + "%";
}

}  // namespace fmt
}  // namespace c2path::viewer
