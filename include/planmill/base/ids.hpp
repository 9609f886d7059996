#pragma once
// Index types shared by every part. Units and districts are dense 0-based indices inside
// planmill; files use the user's unit ids (strings) and districts numbered 1..k.
#include <cstdint>

namespace planmill {
using UnitIndex = std::uint32_t;
using DistrictIndex = std::uint16_t;   // up to 65,535 districts
using EdgeIndex = std::uint32_t;
inline constexpr DistrictIndex kNoDistrict = static_cast<DistrictIndex>(0xFFFF);
inline constexpr EdgeIndex kNoEdge = static_cast<EdgeIndex>(0xFFFFFFFF);
}  // namespace planmill
