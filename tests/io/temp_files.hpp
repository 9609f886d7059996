#pragma once
// A private temporary folder per test, removed afterwards, and helpers to write files into it.
#include <gtest/gtest.h>
#include <stdlib.h>

#include <filesystem>
#include <fstream>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/base/error.hpp"

namespace planmill::test {

class TempDir {
 public:
  TempDir() {
    std::string pattern = (std::filesystem::temp_directory_path() / "planmill-test-XXXXXX").string();
    std::vector<char> name(pattern.begin(), pattern.end());
    name.push_back('\0');
    if (!::mkdtemp(name.data())) throw std::runtime_error("mkdtemp failed");
    path_ = name.data();
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;

  [[nodiscard]] const std::filesystem::path& path() const { return path_; }
  // Writes `content` byte for byte to `name` in the folder and returns the file's path.
  std::string write(const std::string& name, std::string_view content) const {
    const std::string file = (path_ / name).string();
    std::ofstream out(file, std::ios::binary);
    out.write(content.data(), static_cast<std::streamsize>(content.size()));
    return file;
  }

 private:
  std::filesystem::path path_;
};

inline std::string read_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

// Runs `action`, which must throw InputError at `file`, `line` (0 = whole file) and `column`
// (empty = none), and checks that the message shows them too. Returns the message.
template <class Action>
std::string expect_input_error(Action&& action, const std::string& file, std::size_t line,
                               const std::string& column) {
  try {
    action();
  } catch (const InputError& e) {
    const std::string message = e.what();
    EXPECT_EQ(e.where().file, file) << message;
    EXPECT_EQ(e.where().line, line) << message;
    EXPECT_EQ(e.where().column, column) << message;
    const std::string place = line > 0 ? file + ":" + std::to_string(line) + ":" : file + ":";
    EXPECT_NE(message.find(place), std::string::npos) << message;
    if (!column.empty()) EXPECT_NE(message.find("'" + column + "'"), std::string::npos) << message;
    return message;
  }
  ADD_FAILURE() << "no InputError thrown";
  return {};
}

}  // namespace planmill::test
