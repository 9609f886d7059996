#include "planmill/run/run_lock.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <stdexcept>

#include "planmill/base/error.hpp"
#include "planmill/run/run_state.hpp"

namespace planmill {
namespace {

std::string read_all(int fd) {
  std::string text;
  char buffer[512];
  ::lseek(fd, 0, SEEK_SET);
  while (true) {
    const ssize_t n = ::read(fd, buffer, sizeof buffer);
    if (n <= 0) break;
    text.append(buffer, static_cast<std::size_t>(n));
  }
  while (!text.empty() && (text.back() == '\n' || text.back() == '\r')) text.pop_back();
  return text;
}

}  // namespace

RunLock::RunLock(const std::filesystem::path& run_dir) {
  std::filesystem::create_directories(run_dir);
  const std::string path = (run_dir / file_name()).string();
  fd_ = ::open(path.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
  if (fd_ < 0) {
    throw InputError({path, 0, ""}, std::string("cannot be opened: ") + std::strerror(errno),
                     "give a run folder you may write to");
  }
  if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
    const int error = errno;
    std::string holder = error == EWOULDBLOCK ? read_all(fd_) : std::string();
    ::close(fd_);
    fd_ = -1;
    if (error != EWOULDBLOCK) {
      throw InputError({path, 0, ""}, std::string("cannot be locked: ") + std::strerror(error),
                       "give a run folder on a file system that supports locks");
    }
    if (holder.empty()) holder = "another planmill run (it has not written its name yet)";
    throw InputError({run_dir.string(), 0, ""}, "is in use by " + holder,
                     "wait for that run to end, or choose another folder with --output");
  }
  char host[256] = {};
  ::gethostname(host, sizeof host - 1);
  const std::string holder = "host " + std::string(host) + ", pid " + std::to_string(::getpid()) +
                             ", started " + utc_now_iso8601() + "\n";
  if (::ftruncate(fd_, 0) != 0 || ::pwrite(fd_, holder.data(), holder.size(), 0) !=
                                      static_cast<ssize_t>(holder.size())) {
    ::close(fd_);
    fd_ = -1;
    throw std::runtime_error("cannot write " + path);
  }
}

std::optional<std::string> RunLock::holder(const std::filesystem::path& run_dir) {
  const std::string path = (run_dir / file_name()).string();
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) return std::nullopt;  // no run has ever held it
  std::optional<std::string> who;
  if (::flock(fd, LOCK_SH | LOCK_NB) != 0) {
    if (errno == EWOULDBLOCK) {
      who = read_all(fd);
      if (who->empty()) *who = "a planmill run that has not written its name yet";
    }
  } else {
    ::flock(fd, LOCK_UN);
  }
  ::close(fd);
  return who;
}

RunLock::~RunLock() {
  if (fd_ >= 0) ::close(fd_);  // drops the lock
}

}  // namespace planmill
