#pragma once
// For tests that start `mpiexec ... planmill run` in the background and act while it runs: start
// a shell command, find the ranks, wait for a condition or the end, read the exit status.
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include <gtest/gtest.h>

#include "planmill/run/run_state.hpp"

extern char** environ;

namespace planmill::test {

// "mpiexec --oversubscribe -n R " with what OpenMPI needs to run as root.
inline std::string mpiexec_prefix(int ranks) {
  setenv("OMPI_ALLOW_RUN_AS_ROOT", "1", 1);
  setenv("OMPI_ALLOW_RUN_AS_ROOT_CONFIRM", "1", 1);
  return "mpiexec --oversubscribe -n " + std::to_string(ranks) + " ";
}

// Starts `command` under /bin/sh in the background (exec'd, so the pid is the command's).
inline pid_t spawn_shell(const std::string& command) {
  const std::string exec = "exec " + command;
  const char* argv[] = {"/bin/sh", "-c", exec.c_str(), nullptr};
  pid_t pid = 0;
  EXPECT_EQ(posix_spawn(&pid, "/bin/sh", nullptr, nullptr, const_cast<char**>(argv), environ), 0);
  return pid;
}

inline std::vector<pid_t> children_of(pid_t parent) {
  std::vector<pid_t> out;
  for (const auto& entry : std::filesystem::directory_iterator("/proc")) {
    const std::string name = entry.path().filename().string();
    if (name.find_first_not_of("0123456789") != std::string::npos) continue;
    std::ifstream stat(entry.path() / "stat");
    std::string line;
    std::getline(stat, line);
    const auto close = line.rfind(')');
    if (close == std::string::npos) continue;
    std::istringstream rest(line.substr(close + 2));
    char state = 0;
    pid_t ppid = 0;
    rest >> state >> ppid;
    if (ppid == parent) out.push_back(std::stoi(name));
  }
  return out;
}

inline std::uint64_t committed_checkpoints(const std::filesystem::path& run_dir) {
  try {
    return read_run_state(RunLayout{run_dir}).checkpoints;
  } catch (...) {
    return 0;  // not written yet, or caught mid-rename
  }
}

inline bool still_running(pid_t pid) {
  siginfo_t info{};
  return ::waitid(P_PID, static_cast<id_t>(pid), &info, WEXITED | WNOHANG | WNOWAIT) == 0 &&
         info.si_pid == 0;  // WNOWAIT: leave the exit status for wait_exit()
}

// Waits until done(), or until the process ends, or for at most `seconds`.
inline bool wait_for(const std::function<bool()>& done, pid_t pid, double seconds) {
  const auto end = std::chrono::steady_clock::now() + std::chrono::duration<double>(seconds);
  while (std::chrono::steady_clock::now() < end) {
    if (done()) return true;
    if (!still_running(pid)) return false;
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  return done();
}

// The exit status, or 128 + the signal that ended it; -1 when there is no such child.
inline int wait_exit(pid_t pid) {
  int status = 0;
  if (waitpid(pid, &status, 0) != pid) return -1;
  return WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
}

}  // namespace planmill::test
