#pragma once
// Shared by the fuzz targets: an InputError is the expected answer to bad input; anything else
// escaping (another exception, a sanitizer report, a broken round trip) is a bug.
#include <cstdio>
#include <cstdlib>
#include <string>
#include <string_view>

#include "planmill/base/error.hpp"

namespace planmill::fuzz {

inline std::string_view as_text(const std::uint8_t* data, std::size_t size) {
  return {reinterpret_cast<const char*>(data), size};
}

// Stops the run with a message, so libFuzzer records the input as a crash.
[[noreturn]] inline void bug(const char* what) {
  std::fprintf(stderr, "fuzz check failed: %s\n", what);
  std::abort();
}

template <class Body>
void expect_only_input_errors(Body&& body) {
  try {
    body();
  } catch (const InputError& e) {
    if (std::string_view(e.what()).empty()) bug("InputError with an empty message");
  }
}

}  // namespace planmill::fuzz
