#pragma once
// For end-to-end tests of `planmill run`: a fresh scratch folder, a shell command's exit status,
// and a small invented state (planmill synth) with a job over it. Needs PLANMILL_BINARY.
#include <sys/wait.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>

#include <gtest/gtest.h>

namespace planmill::test {

// An empty folder <tmp>/<prefix>-<name>, made anew.
inline std::filesystem::path scratch_dir(const std::string& prefix, const std::string& name) {
  const auto dir = std::filesystem::temp_directory_path() / (prefix + "-" + name);
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir;
}

// A whole file as text (empty when it cannot be read).
inline std::string read_text(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

inline int shell(const std::string& command) {
  const int raw = std::system(command.c_str());
  return WIFEXITED(raw) ? WEXITSTATUS(raw) : -1;
}

// synth's 200-unit, 4-district state in dir/state, its job.toml given this [sampler] body.
inline std::filesystem::path write_synth_job(const std::filesystem::path& dir, const std::string& sampler,
                                             double checkpoint_seconds = 300) {
  const std::string synth = std::string(PLANMILL_BINARY) + " synth --units 200 --districts 4 --seed 5 --out " +
                            (dir / "state").string() + " >/dev/null";
  EXPECT_EQ(shell(synth), 0);
  const std::filesystem::path job = dir / "state" / "job.toml";
  std::ofstream(job, std::ios::app) << "[sampler]\n"
                                    << sampler << "\n[output]\ncheckpoint_seconds = "
                                    << checkpoint_seconds << "\n";
  return job;
}

}  // namespace planmill::test
