#pragma once
// Helpers for the synth tests: a scratch folder per test and a small CSV reader.
#include <gtest/gtest.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

namespace planmill::synth_test {

inline std::filesystem::path scratch_dir(const std::string& name) {
  const auto* info = ::testing::UnitTest::GetInstance()->current_test_info();
  const auto dir =
      std::filesystem::temp_directory_path() /
      ("planmill_synth_" + std::to_string(::getpid()) + "_" + info->name() + "_" + name);
  std::filesystem::remove_all(dir);
  return dir;
}

inline std::string read_bytes(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

struct Table {
  std::vector<std::string> header;
  std::vector<std::vector<std::string>> rows;
  [[nodiscard]] std::size_t column(const std::string& name) const {
    for (std::size_t c = 0; c < header.size(); ++c) {
      if (header[c] == name) return c;
    }
    ADD_FAILURE() << "no column " << name;
    return 0;
  }
};

// Plain comma-separated values without quoting (all the generator writes).
inline Table read_csv(const std::filesystem::path& path) {
  Table table;
  std::istringstream in(read_bytes(path));
  std::string line;
  bool first = true;
  while (std::getline(in, line)) {
    std::vector<std::string> fields;
    std::size_t start = 0;
    for (;;) {
      const std::size_t comma = line.find(',', start);
      fields.push_back(line.substr(start, comma - start));
      if (comma == std::string::npos) break;
      start = comma + 1;
    }
    if (first) {
      table.header = fields;
      first = false;
    } else {
      table.rows.push_back(fields);
    }
  }
  return table;
}

}  // namespace planmill::synth_test
