#pragma once
// One run per run folder at a time: an OS lock (flock) on RUNDIR/run.lock, held by rank 0 for the
// whole of `planmill run`. The file names the holder (host, pid, start time) so that a second run
// can say who has the folder. The OS drops the lock when the holder ends, however it ends, so a
// killed run never leaves the folder locked; the file itself stays and is harmless.
#include <filesystem>
#include <optional>
#include <string>

namespace planmill {

class RunLock {
 public:
  // Creates the folder if needed, takes the lock and writes the holder into the file. Throws
  // InputError naming the holder when another process holds it.
  explicit RunLock(const std::filesystem::path& run_dir);
  ~RunLock();
  RunLock(const RunLock&) = delete;
  RunLock& operator=(const RunLock&) = delete;

  [[nodiscard]] static std::string file_name() { return "run.lock"; }
  // Who holds the folder's lock now ("host H, pid P, started T"), or nothing when no run does.
  // Probes with a shared lock it drops at once; creates nothing.
  [[nodiscard]] static std::optional<std::string> holder(const std::filesystem::path& run_dir);

 private:
  int fd_ = -1;
};

}  // namespace planmill
