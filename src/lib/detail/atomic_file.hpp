#pragma once
// Private: a file written beside its target and renamed into place on commit(), so readers never
// see a partial file and a failed write leaves any earlier file untouched.
//
// Bytes are gathered in a 4 KiB-aligned buffer and written in blocks of kBlockBytes. Where the
// file system accepts it, the temporary file is written with O_DIRECT (no copy into the page
// cache; the tail block is padded to 4 KiB and the file cut back to its length by ftruncate before
// the sync); where it does not (tmpfs, EINVAL), with ordinary buffered write(2) of the same blocks.

#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>

namespace c2path::detail {

class AtomicFile {
 public:
  /// Bytes per write(2) call.
  static constexpr std::size_t kBlockBytes = std::size_t(4) << 20;

  /// Creates a temporary file in the target's directory. Throws c2path::Error when it cannot.
  explicit AtomicFile(std::string target);
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;
  /// Removes the temporary file unless commit() succeeded.
  ~AtomicFile();

  /// Appends bytes (buffered). Throws c2path::Error on a write error (e.g. disk full).
  void write(std::string_view bytes);
  /// Writes the rest, syncs and renames the temporary file onto the target. Throws c2path::Error.
  void commit();
  [[nodiscard]] const std::string& temp_path() const noexcept { return temp_; }
  /// True while the temporary file is written with O_DIRECT (for the tests).
  [[nodiscard]] bool direct() const noexcept { return direct_; }

 private:
  struct FreeDeleter {
    void operator()(char* p) const noexcept;
  };
  void write_out(std::size_t n);  // writes buf_[0, n) at the file's end; n is a multiple of 4 KiB when direct_

  std::string target_;
  std::string temp_;
  int fd_ = -1;
  bool direct_ = false;
  bool committed_ = false;
  std::unique_ptr<char, FreeDeleter> buf_;
  std::size_t fill_ = 0;        // bytes in buf_
  std::uint64_t written_ = 0;   // bytes written to the file so far
};

}  // namespace c2path::detail
