#include "planmill/io/atomic_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <vector>

#include "planmill/base/error.hpp"

namespace planmill {
namespace {

[[noreturn]] void fail(const std::string& path, const std::string& what, int error) {
  throw OutputError(path + ": cannot write the file (" + what + ": " + std::strerror(error) +
                    "); check that the folder exists, is writable and has free space");
}

}  // namespace

void write_file_atomically(const std::string& path, std::string_view content) {
  const std::filesystem::path target(path);
  const std::filesystem::path folder = target.has_parent_path() ? target.parent_path() : ".";
  std::string pattern = (folder / ("." + target.filename().string() + ".tmp.XXXXXX")).string();
  std::vector<char> name(pattern.begin(), pattern.end());
  name.push_back('\0');
  const int fd = ::mkstemp(name.data());
  if (fd < 0) fail(path, "creating a temporary file", errno);
  const std::string temp(name.data());
  auto abandon = [&](const char* what) {
    const int error = errno;
    ::close(fd);
    ::unlink(temp.c_str());
    fail(path, what, error);
  };
  // mkstemp makes the file private (0600); a written file should have the usual permissions.
  const mode_t mask = ::umask(0);
  ::umask(mask);
  if (::fchmod(fd, 0666 & ~mask) != 0) abandon("setting permissions");
  std::size_t done = 0;
  while (done < content.size()) {
    const ssize_t n = ::write(fd, content.data() + done, content.size() - done);
    if (n < 0) {
      if (errno == EINTR) continue;
      abandon("writing");
    }
    done += static_cast<std::size_t>(n);
  }
  if (::fsync(fd) != 0) abandon("flushing to disk");
  if (::close(fd) != 0) {
    const int error = errno;
    ::unlink(temp.c_str());
    fail(path, "closing", error);
  }
  if (std::rename(temp.c_str(), path.c_str()) != 0) {
    const int error = errno;
    ::unlink(temp.c_str());
    fail(path, "renaming the temporary file", error);
  }
  // Make the rename itself durable; failing here leaves the new file in place, so it is not fatal.
  const int dir = ::open(folder.c_str(), O_RDONLY | O_DIRECTORY);
  if (dir >= 0) {
    (void)::fsync(dir);
    ::close(dir);
  }
}

}  // namespace planmill
