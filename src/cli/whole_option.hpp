#pragma once
// Whole-number options read as text, so that a zero, a sign, a fraction or a value too large for
// the option is one clear line naming the option (CLI11 would wrap -1 to 2^64 - 1 or print the
// range of a double).
#include <charconv>
#include <cstdint>
#include <string>

#include "planmill/base/error.hpp"

namespace planmill::cli {

inline std::uint64_t parse_whole_option(const std::string& text, const std::string& option, std::uint64_t lo,
                                        std::uint64_t hi, const std::string& meaning) {
  const std::string range = "give " + meaning + " as a whole number " +
                            (hi == UINT64_MAX ? std::to_string(lo) + " or more"
                                              : "from " + std::to_string(lo) + " to " + std::to_string(hi));
  std::uint64_t value = 0;
  const char* end = text.data() + text.size();
  const auto [stop, ec] = std::from_chars(text.data(), end, value);
  if (text.empty() || text.front() == '-' || text.front() == '+' || stop != end ||
      (ec != std::errc() && ec != std::errc::result_out_of_range))
    throw InputError({"", 0, option}, "is '" + text + "', not a whole number", range);
  if (ec == std::errc::result_out_of_range || value > hi)
    throw InputError({"", 0, option}, "is " + text + ", too large (at most " + std::to_string(hi) + ")", range);
  if (value < lo)
    throw InputError({"", 0, option}, "is " + text + ", too small (at least " + std::to_string(lo) + ")", range);
  return value;
}

}  // namespace planmill::cli
