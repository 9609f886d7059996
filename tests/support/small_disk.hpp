#pragma once
// A real file system that fills up: a tmpfs of a few KiB mounted over a scratch folder, for tests
// of what happens when a write runs out of space. Needs root (as CI and this workplace run);
// available() says whether the mount worked.
#include <fcntl.h>
#include <sys/mount.h>
#include <unistd.h>

#include <filesystem>
#include <string>
#include <system_error>

namespace planmill::test {

class SmallDisk {
 public:
  SmallDisk(const std::filesystem::path& folder, std::size_t bytes) : folder_(folder) {
    std::filesystem::create_directories(folder_);
    const std::string options = "size=" + std::to_string(bytes);
    mounted_ = ::mount("tmpfs", folder_.c_str(), "tmpfs", 0, options.c_str()) == 0;
  }
  ~SmallDisk() {
    if (mounted_) (void)::umount2(folder_.c_str(), MNT_DETACH);
  }
  SmallDisk(const SmallDisk&) = delete;
  SmallDisk& operator=(const SmallDisk&) = delete;

  // Unmounts what a test killed before its end left mounted at `folder`.
  static void release_leftover(const std::filesystem::path& folder) {
    (void)::umount2(folder.c_str(), MNT_DETACH);
  }

  [[nodiscard]] bool available() const { return mounted_; }
  [[nodiscard]] const std::filesystem::path& path() const { return folder_; }
  // Fills the disk to the last byte with a file of its own (removed to make room again).
  void fill() const {
    const int fd = ::open((folder_ / "filler").c_str(), O_WRONLY | O_CREAT | O_APPEND, 0644);
    if (fd < 0) return;
    static const char block[4096] = {};
    for (std::size_t size = sizeof block; size > 0; size /= 2) {
      while (::write(fd, block, size) == static_cast<ssize_t>(size)) {
      }
    }
    ::close(fd);
  }
  void make_room() const {
    std::error_code ignored;
    std::filesystem::remove(folder_ / "filler", ignored);
  }

 private:
  std::filesystem::path folder_;
  bool mounted_ = false;
};

}  // namespace planmill::test
