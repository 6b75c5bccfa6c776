#pragma once
// Private: a file written beside its target and renamed into place on commit(), so readers never
// see a partial file and a failed write leaves any earlier file untouched.

#include <cstddef>
#include <cstdio>
#include <string>
#include <string_view>

namespace c2path::detail {

class AtomicFile {
 public:
  /// Creates a temporary file in the target's directory. Throws c2path::Error when it cannot.
  explicit AtomicFile(std::string target);
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;
  /// Removes the temporary file unless commit() succeeded.
  ~AtomicFile();

  /// Appends bytes (buffered). Throws c2path::Error on a write error (e.g. disk full).
  void write(std::string_view bytes);
  /// Flushes, syncs and renames the temporary file onto the target. Throws c2path::Error.
  void commit();
  [[nodiscard]] const std::string& temp_path() const noexcept { return temp_; }

 private:
  std::string target_;
  std::string temp_;
  std::FILE* f_ = nullptr;
  bool committed_ = false;
};

}  // namespace c2path::detail
