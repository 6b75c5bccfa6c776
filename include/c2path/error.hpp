#pragma once
/// \file error.hpp
/// The one exception type of c2path: a message with the place in an input file it is about.

#include <stdexcept>
#include <string>

namespace c2path {

/// A position in an input file: 1-based line and column; 0 means "unknown".
struct SourceLoc {
  int line = 0;  ///< 1-based line, 0 when unknown
  int col = 0;   ///< 1-based column, 0 when unknown
};

/// Error in user input (scene file, command-line argument) or an impossible request.
/// `what()` reads `FILE:LINE:COL: error: MESSAGE` (parts that are unknown are left out).
/// Thrown at the boundary (scene loading, argument checking) and caught once by the CLI or viewer.
class Error : public std::runtime_error {
 public:
  /// An error at a place in a file.
  Error(std::string file, SourceLoc loc, std::string message);
  /// An error with no place yet; the scene loader fills the file in with `with_file`.
  Error(SourceLoc loc, std::string message);
  /// An error with no place at all (e.g. a command-line argument).
  explicit Error(std::string message);

  /// The same error attributed to `file`.
  [[nodiscard]] Error with_file(const std::string& file) const;

  [[nodiscard]] const std::string& file() const noexcept { return file_; }
  [[nodiscard]] int line() const noexcept { return loc_.line; }
  [[nodiscard]] int column() const noexcept { return loc_.col; }
  [[nodiscard]] SourceLoc loc() const noexcept { return loc_; }
  /// The message without the location prefix.
  [[nodiscard]] const std::string& message() const noexcept { return message_; }

 private:
  std::string file_;
  SourceLoc loc_;
  std::string message_;
};

/// Formats `FILE:LINE:COL: error: MESSAGE`, leaving out the parts that are unknown.
[[nodiscard]] std::string format_error(const std::string& file, SourceLoc loc, const std::string& message);

}  // namespace c2path
