#pragma once
// Reading one CSV value as a number, for the loaders. Spaces and tabs around a number are allowed;
// the rest must be a plain decimal number (an optional sign, digits, point, exponent).
#include <algorithm>
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

// Whether the text, as written, is a whole number: decided on its digits, not on the parsed
// double, which may have rounded a fraction away (4503599627370495.9) or a whole number to
// another (9007199254740993). The text must already have parsed as a number (parse_number ok).
inline bool is_whole_decimal(std::string_view text) {
  std::string_view s = trim_blanks(text);
  if (!s.empty() && (s.front() == '+' || s.front() == '-')) s.remove_prefix(1);
  std::string digits;
  long long point = -1;  // digits before the decimal point
  std::size_t i = 0;
  for (; i < s.size() && s[i] != 'e' && s[i] != 'E'; ++i) {
    if (s[i] == '.') point = static_cast<long long>(digits.size());
    else digits.push_back(s[i]);
  }
  if (point < 0) point = static_cast<long long>(digits.size());
  if (i < s.size()) {  // exponent: clamp, only its effect on the point's place matters
    long long exponent = 0;
    bool negative = false;
    std::size_t j = i + 1;
    if (j < s.size() && (s[j] == '+' || s[j] == '-')) negative = s[j++] == '-';
    for (; j < s.size(); ++j) exponent = std::min(exponent * 10 + (s[j] - '0'), 1'000'000LL);
    point += negative ? -exponent : exponent;
  }
  for (std::size_t d = 0; d < digits.size(); ++d)
    if (static_cast<long long>(d) >= point && digits[d] != '0') return false;
  return true;
}

// The largest count one unit may carry so that any sum of such counts over the map's units (a
// district's tally, a map total) is a whole number below 2^53, exact in a double: 2^53 / units.
inline double largest_exact_count(std::size_t units) {
  return std::floor(kLargestExactWhole / static_cast<double>(units == 0 ? 1 : units));
}

}  // namespace planmill::io
