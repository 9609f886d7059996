#pragma once
// Geometry of the invented state (internal to src/synth). The outline is a set of coarse square
// cells cut from a noisy blob; units are axis-aligned rectangles from splitting those cells.
// Corners sit on an integer lattice, so areas, perimeters and shared lengths are exact integers;
// one lattice step is 2^-7 km, so their kilometre values are exact doubles too.
#include <cstdint>
#include <functional>
#include <vector>

#include "planmill/base/random.hpp"

namespace planmill::synth {

inline constexpr std::int64_t kCellSide = 1024;    // lattice steps per coarse cell side
inline constexpr int kMaxDepth = 10;               // a coarse cell is split at most 10 times
inline constexpr double kKmPerStep = 1.0 / 128.0;  // so a coarse cell is 8 km wide
inline constexpr double kCellKm = kCellSide * kKmPerStep;

struct Rect {
  std::int64_t x0 = 0, y0 = 0, x1 = 0, y1 = 0;  // lattice steps, x0 < x1, y0 < y1
  int depth = 0;
  [[nodiscard]] std::int64_t area() const { return (x1 - x0) * (y1 - y0); }
  [[nodiscard]] std::int64_t perimeter() const { return 2 * ((x1 - x0) + (y1 - y0)); }
  [[nodiscard]] double centre_x_km() const {
    return static_cast<double>(x0 + x1) * 0.5 * kKmPerStep;
  }
  [[nodiscard]] double centre_y_km() const {
    return static_cast<double>(y0 + y1) * 0.5 * kKmPerStep;
  }
};

// Smooth random field with values in [0, 1]: random values on a square lattice, blended with
// smoothstep weights. Only + - * / so it gives the same bits on every IEEE machine.
class ValueNoise {
 public:
  ValueNoise(Rng& rng, double width_km, double height_km, double spacing_km);
  [[nodiscard]] double at(double x_km, double y_km) const;

 private:
  std::size_t nx_ = 0, ny_ = 0;
  double spacing_ = 1.0;
  std::vector<double> values_;
};

// Coarse cells inside the outline: one 4-connected piece without holes.
struct Outline {
  std::size_t width = 0, height = 0;  // grid size in coarse cells
  std::vector<char> inside;           // row-major, width * height
  std::size_t cell_count = 0;
  double width_km() const { return static_cast<double>(width) * kCellKm; }
  double height_km() const { return static_cast<double>(height) * kCellKm; }
};

// A noisy, stretched blob with at most target_cells cells (and as close to it as found).
[[nodiscard]] Outline make_outline(std::size_t target_cells, Rng& rng);

// Splits the outline's cells until there are exactly `units` rectangles: the rectangle with the
// largest weight(centre x km, centre y km) * area km^2 is cut into quadrants while that adds at
// most the remaining count, then into halves. Units come back in Morton order of their corners.
[[nodiscard]] std::vector<Rect> subdivide(const Outline& outline, std::size_t units,
                                          const std::function<double(double, double)>& density);

struct SharedEdge {
  std::uint32_t a = 0, b = 0;  // a < b
  std::int64_t length = 0;     // lattice steps, > 0
};

// Pairs of rectangles sharing a boundary segment of positive length, sorted by (a, b).
[[nodiscard]] std::vector<SharedEdge> shared_edges(const std::vector<Rect>& rects);

}  // namespace planmill::synth
