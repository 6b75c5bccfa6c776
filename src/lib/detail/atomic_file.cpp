#include "detail/atomic_file.hpp"

#include <algorithm>
#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include "c2path/error.hpp"

namespace c2path::detail {

namespace {
constexpr std::size_t kAlign = 4096;  // O_DIRECT wants buffer, offset and length aligned to the logical block size

std::string dir_of(const std::string& p) {
  const auto slash = p.find_last_of('/');
  if (slash == std::string::npos) return ".";
  if (slash == 0) return "/";
  return p.substr(0, slash);
}
std::string base_of(const std::string& p) {
  const auto slash = p.find_last_of('/');
  return slash == std::string::npos ? p : p.substr(slash + 1);
}
[[noreturn]] void fail(const std::string& target, const std::string& what) {
  throw Error(target, SourceLoc{}, what + ": " + std::strerror(errno));
}
}  // namespace

void AtomicFile::FreeDeleter::operator()(char* p) const noexcept { std::free(p); }

AtomicFile::AtomicFile(std::string target) : target_(std::move(target)) {
  if (target_.empty() || base_of(target_).empty()) throw Error("output file name is empty");
  struct stat st{};
  if (::stat(target_.c_str(), &st) == 0 && S_ISDIR(st.st_mode))
    throw Error(target_, SourceLoc{}, "is a directory; give a file name");
  std::string tmpl = dir_of(target_) + "/." + base_of(target_) + ".tmp-XXXXXX";
  const int fd = ::mkstemp(tmpl.data());
  if (fd < 0) fail(target_, "cannot create a temporary file beside it");
  fd_ = fd;
  temp_ = tmpl;
  // mkstemp makes the file 0600; give it the usual permissions an ordinary create would.
  const mode_t mask = ::umask(0);
  ::umask(mask);
  ::fchmod(fd_, 0666 & ~mask);
  void* p = nullptr;
  if (::posix_memalign(&p, kAlign, kBlockBytes) != 0) {
    errno = ENOMEM;
    fail(target_, "cannot allocate the write buffer");
  }
  buf_.reset(static_cast<char*>(p));
  // O_DIRECT where the file system takes it (not tmpfs: EINVAL); checked again at the first write.
  const int fl = ::fcntl(fd_, F_GETFL);
  direct_ = fl >= 0 && ::fcntl(fd_, F_SETFL, fl | O_DIRECT) == 0;
}

AtomicFile::~AtomicFile() {
  if (fd_ >= 0) ::close(fd_);
  if (!committed_ && !temp_.empty()) ::unlink(temp_.c_str());
}

void AtomicFile::write_out(std::size_t n) {
  std::size_t done = 0;
  while (done < n) {
    const ssize_t w = ::write(fd_, buf_.get() + done, n - done);
    if (w < 0) {
      if (errno == EINTR) continue;
      if (errno == EINVAL && direct_) {
        // Refused direct I/O (some file systems accept the flag but not the writes): buffered from here.
        const int fl = ::fcntl(fd_, F_GETFL);
        if (fl < 0 || ::fcntl(fd_, F_SETFL, fl & ~O_DIRECT) != 0) fail(target_, "write failed");
        direct_ = false;
        continue;
      }
      fail(target_, "write failed");
    }
    if (w == 0) {
      errno = ENOSPC;
      fail(target_, "write failed");
    }
    done += std::size_t(w);
    if (direct_ && done < n && done % kAlign != 0) {
      // A short direct write that ends off a block boundary: finish the rest buffered.
      const int fl = ::fcntl(fd_, F_GETFL);
      if (fl < 0 || ::fcntl(fd_, F_SETFL, fl & ~O_DIRECT) != 0) fail(target_, "write failed");
      direct_ = false;
    }
  }
  written_ += n;
}

void AtomicFile::write(std::string_view bytes) {
  while (!bytes.empty()) {
    const std::size_t n = std::min(bytes.size(), kBlockBytes - fill_);
    std::memcpy(buf_.get() + fill_, bytes.data(), n);
    fill_ += n;
    bytes.remove_prefix(n);
    if (fill_ == kBlockBytes) {
      write_out(fill_);
      fill_ = 0;
    }
  }
}

void AtomicFile::commit() {
  if (fill_ > 0) {
    const std::uint64_t length = written_ + fill_;
    if (direct_) {
      // The tail padded to a whole block, then the file cut back to its length.
      const std::size_t padded = (fill_ + kAlign - 1) / kAlign * kAlign;
      std::memset(buf_.get() + fill_, 0, padded - fill_);
      write_out(padded);
      if (::ftruncate(fd_, off_t(length)) != 0) fail(target_, "write failed");
      written_ = length;
    } else {
      write_out(fill_);
    }
    fill_ = 0;
  }
  if (::fsync(fd_) != 0) fail(target_, "sync failed");
  const int rc = ::close(fd_);
  fd_ = -1;
  if (rc != 0) fail(target_, "close failed");
  if (::rename(temp_.c_str(), target_.c_str()) != 0) fail(target_, "cannot rename the finished file into place");
  committed_ = true;
}

}  // namespace c2path::detail
