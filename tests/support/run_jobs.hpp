#pragma once
// For end-to-end tests of `planmill run`: a fresh scratch folder, a shell command's exit status,
// and a small invented state (planmill synth) with a job over it. Needs PLANMILL_BINARY.
#include <sys/wait.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <map>
#include <set>
#include <sstream>
#include <string>
#include <vector>

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

// A CSV line without quoted fields, split at its commas.
inline std::vector<std::string> split_csv_line(const std::string& line) {
  std::vector<std::string> cells;
  std::stringstream s(line);
  for (std::string cell; std::getline(s, cell, ',');) cells.push_back(cell);
  return cells;
}

// What the command tests start from: write_synth_job(dir, sampler), `planmill run` into dir/run,
// then `planmill export dir/run --out dir/csv EXPORT_ARGS`. Returns the job file.
inline std::filesystem::path run_and_export(const std::filesystem::path& dir, const std::string& sampler,
                                            const std::string& export_args) {
  const std::filesystem::path job = write_synth_job(dir, sampler);
  const std::string bin = PLANMILL_BINARY, run = (dir / "run").string();
  EXPECT_EQ(shell(bin + " run " + job.string() + " --output " + run + " --quiet >/dev/null 2>&1"), 0);
  EXPECT_EQ(shell(bin + " export " + run + " --out " + (dir / "csv").string() + " " + export_args +
                  " >/dev/null 2>&1"),
            0);
  return job;
}

// Unit id -> the value in column `column` of a unit table (CSV without quoted fields).
inline std::map<std::string, std::string> unit_column(const std::filesystem::path& units, std::size_t column) {
  std::map<std::string, std::string> out;
  std::istringstream in(read_text(units));
  std::string line;
  std::getline(in, line);
  while (std::getline(in, line)) {
    const auto cells = split_csv_line(line);
    out[cells.at(0)] = cells.at(column);
  }
  return out;
}

// Areas (values of `area_of`, e.g. counties) that an exported plan (unit,district CSV) splits:
// those meeting two or more districts, counted from the labels alone.
inline std::size_t areas_split(const std::filesystem::path& plan, const std::map<std::string, std::string>& area_of) {
  std::map<std::string, std::set<std::string>> districts_of;
  std::istringstream in(read_text(plan));
  std::string line;
  std::getline(in, line);
  while (std::getline(in, line)) {
    const auto cells = split_csv_line(line);
    districts_of[area_of.at(cells.at(0))].insert(cells.at(1));
  }
  std::size_t split = 0;
  for (const auto& [area, districts] : districts_of) split += districts.size() > 1 ? 1 : 0;
  return split;
}

}  // namespace planmill::test
