#pragma once
// Runs a shell command (stderr joined to stdout by the caller's "2>&1") and returns what it
// printed, or "failed (status): ..." when it exits non-zero, so a reference check's output reads
// well in a test failure.
#include <cstdio>
#include <string>

namespace planmill::test {

inline std::string command_output(const std::string& command) {
  FILE* pipe = ::popen(command.c_str(), "r");
  std::string output;
  char buffer[512];
  while (pipe && std::fgets(buffer, sizeof buffer, pipe)) output += buffer;
  const int status = pipe ? ::pclose(pipe) : -1;
  return status == 0 ? output : "failed (" + std::to_string(status) + "): " + output;
}

}  // namespace planmill::test
