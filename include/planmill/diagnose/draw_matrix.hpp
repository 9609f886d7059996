#pragma once
// The input of every diagnostic: a read-only draws x chains matrix of one observable, and the
// output: an Estimate, a value or NaN with a short reason. Diagnostics never throw on bad draws.
#include <cmath>
#include <cstddef>
#include <limits>
#include <span>
#include <string_view>

namespace planmill::diagnose {

// Column-major view: chain c holds values[c * draws, (c + 1) * draws), in draw order.
struct DrawMatrix {
  std::span<const double> values;
  std::size_t draws = 0;
  std::size_t chains = 0;

  [[nodiscard]] std::span<const double> chain(std::size_t c) const {
    return values.subspan(c * draws, draws);
  }
  [[nodiscard]] double at(std::size_t draw, std::size_t c) const { return values[c * draws + draw]; }
  [[nodiscard]] bool shape_matches() const { return values.size() == draws * chains; }
};

struct Estimate {
  double value = std::numeric_limits<double>::quiet_NaN();
  std::string_view reason;  // empty when value is a number; otherwise why not (static text)

  [[nodiscard]] bool ok() const { return !std::isnan(value); }
  [[nodiscard]] static Estimate nan(std::string_view why) {
    return {std::numeric_limits<double>::quiet_NaN(), why};
  }
};

}  // namespace planmill::diagnose
