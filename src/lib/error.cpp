#include "c2path/error.hpp"

#include <utility>

namespace c2path {

std::string format_error(const std::string& file, SourceLoc loc, const std::string& message) {
  std::string out;
  if (!file.empty()) {
    out += file;
    if (loc.line > 0) {
      out += ':' + std::to_string(loc.line);
      if (loc.col > 0) out += ':' + std::to_string(loc.col);
    }
    out += ": ";
  }
  out += "error: ";
  out += message;
  return out;
}

Error::Error(std::string file, SourceLoc loc, std::string message)
    : std::runtime_error(format_error(file, loc, message)),
      file_(std::move(file)),
      loc_(loc),
      message_(std::move(message)) {}

Error::Error(SourceLoc loc, std::string message) : Error(std::string(), loc, std::move(message)) {}

Error::Error(std::string message) : Error(std::string(), SourceLoc{}, std::move(message)) {}

Error Error::with_file(const std::string& file) const { return Error(file, loc_, message_); }

}  // namespace c2path
