#pragma once
// A number for a JSON document: null when it is not finite (NaN or infinite), as JSON has no such
// numbers. The one place planmill turns NaN into null (diagnostics, manifest, selftest, ladders).
#include <cmath>
#include <nlohmann/json.hpp>

namespace planmill {

template <class Json = nlohmann::json>
[[nodiscard]] Json json_number(double v) {
  return std::isfinite(v) ? Json(v) : Json(nullptr);
}

}  // namespace planmill
