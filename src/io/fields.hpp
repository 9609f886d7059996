#pragma once
// Reading one CSV value as a number, for the loaders. Spaces and tabs around a number are allowed;
// the rest must be a plain decimal number (an optional sign, digits, point, exponent).
#include <charconv>
#include <cmath>
#include <string>
#include <string_view>

namespace planmill::io {

enum class NumberStatus { ok, empty, not_a_number, not_finite };

struct ParsedNumber {
  NumberStatus status = NumberStatus::ok;
  double value = 0.0;
};

inline std::string_view trim_blanks(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}

inline ParsedNumber parse_number(std::string_view text) {
  std::string_view s = trim_blanks(text);
  if (s.empty()) return {NumberStatus::empty, 0.0};
  if (s.front() == '+') s.remove_prefix(1);
  if (s.empty() || s.front() == '+') return {NumberStatus::not_a_number, 0.0};
  double value = 0.0;
  const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), value);
  if (end != s.data() + s.size()) return {NumberStatus::not_a_number, 0.0};
  if (ec == std::errc::result_out_of_range) return {NumberStatus::not_finite, 0.0};
  if (ec != std::errc()) return {NumberStatus::not_a_number, 0.0};
  if (!std::isfinite(value)) return {NumberStatus::not_finite, value};
  return {NumberStatus::ok, value};
}

// Largest whole number a double holds exactly; populations and district numbers stay below it.
inline constexpr double kLargestExactWhole = 9007199254740992.0;  // 2^53

}  // namespace planmill::io
