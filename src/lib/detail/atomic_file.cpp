#include "detail/atomic_file.hpp"

#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include "c2path/error.hpp"

namespace c2path::detail {

namespace {
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

AtomicFile::AtomicFile(std::string target) : target_(std::move(target)) {
  if (target_.empty() || base_of(target_).empty()) throw Error("output file name is empty");
  struct stat st{};
  if (::stat(target_.c_str(), &st) == 0 && S_ISDIR(st.st_mode))
    throw Error(target_, SourceLoc{}, "is a directory; give a file name");
  std::string tmpl = dir_of(target_) + "/." + base_of(target_) + ".tmp-XXXXXX";
  const int fd = ::mkstemp(tmpl.data());
  if (fd < 0) fail(target_, "cannot create a temporary file beside it");
  temp_ = tmpl;
  // mkstemp makes the file 0600; give it the usual permissions an ordinary create would.
  const mode_t mask = ::umask(0);
  ::umask(mask);
  ::fchmod(fd, 0666 & ~mask);
  f_ = ::fdopen(fd, "wb");
  if (!f_) {
    ::close(fd);
    ::unlink(temp_.c_str());
    fail(target_, "cannot open the temporary file");
  }
  std::setvbuf(f_, nullptr, _IOFBF, 1 << 20);
}

AtomicFile::~AtomicFile() {
  if (f_) std::fclose(f_);
  if (!committed_ && !temp_.empty()) ::unlink(temp_.c_str());
}

void AtomicFile::write(std::string_view bytes) {
  if (bytes.empty()) return;
  if (std::fwrite(bytes.data(), 1, bytes.size(), f_) != bytes.size()) fail(target_, "write failed");
}

void AtomicFile::commit() {
  if (std::fflush(f_) != 0) fail(target_, "write failed");
  if (::fsync(::fileno(f_)) != 0) fail(target_, "sync failed");
  const int rc = std::fclose(f_);
  f_ = nullptr;
  if (rc != 0) fail(target_, "close failed");
  if (::rename(temp_.c_str(), target_.c_str()) != 0) fail(target_, "cannot rename the finished file into place");
  committed_ = true;
}

}  // namespace c2path::detail
