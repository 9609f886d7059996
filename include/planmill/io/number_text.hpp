#pragma once
// The shortest decimal text that reads back as the same double (0.1 -> "0.1", 1e-7 -> "1e-07",
// 0.30000000000000004 stays so): for messages and files, so that a value a user wrote is quoted
// as written and two values that differ never print alike.
#include <charconv>
#include <string>

namespace planmill {

[[nodiscard]] inline std::string number_text(double x) {
  char buffer[32];
  const auto result = std::to_chars(buffer, buffer + sizeof buffer, x);
  return {buffer, result.ptr};
}

}  // namespace planmill
