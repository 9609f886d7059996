// The order units are written in: along a Hilbert curve of their centroids, so that units near
// each other on the map are near each other in the unit table (and so in every plan's labels).
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <numeric>

#include "ingest/layer.hpp"

namespace planmill::ingest {
namespace {

constexpr unsigned kBits = 16;  // a 65536 x 65536 grid over the map's bounding box

// Position of cell (x, y) along the Hilbert curve of a 2^bits square: the usual iterative
// rotate-and-reflect form (common practice, as in the "Hilbert curve" article of Wikipedia, from
// memory). Reflecting with n - 1 - x flips every bit, but only the lower bits are read after.
// The curve's defining property, that consecutive positions are side-neighbouring cells, is
// what tests/ingest/ingest_order_test.cpp checks.
std::uint64_t hilbert_index(std::uint32_t x, std::uint32_t y, unsigned bits) {
  const std::uint32_t n_minus_1 = static_cast<std::uint32_t>((std::uint64_t{1} << bits) - 1);
  std::uint64_t d = 0;
  for (std::uint32_t s = 1u << (bits - 1); s > 0; s >>= 1) {
    const std::uint32_t rx = (x & s) ? 1 : 0, ry = (y & s) ? 1 : 0;
    d += static_cast<std::uint64_t>(s) * s * ((3 * rx) ^ ry);
    if (ry == 0) {  // turn the quadrant so that its sub-curve joins its neighbours'
      if (rx == 1) {
        x = n_minus_1 - x;
        y = n_minus_1 - y;
      }
      std::swap(x, y);
    }
  }
  return d;
}

}  // namespace

std::vector<std::size_t> unit_order(const Layer& layer, bool source_order) {
  std::vector<std::size_t> order(layer.units.size());
  std::iota(order.begin(), order.end(), std::size_t{0});
  if (source_order || order.empty()) return order;
  double min_x = layer.units[0].box.min_x, min_y = layer.units[0].box.min_y;
  double max_x = layer.units[0].box.max_x, max_y = layer.units[0].box.max_y;
  for (const LayerUnit& u : layer.units) {
    min_x = std::min(min_x, u.box.min_x), min_y = std::min(min_y, u.box.min_y);
    max_x = std::max(max_x, u.box.max_x), max_y = std::max(max_y, u.box.max_y);
  }
  // One scale for both axes, so the curve's cells are squares on the map.
  const double side = std::max(max_x - min_x, max_y - min_y);
  const double cells = static_cast<double>(1u << kBits);
  const auto cell = [&](double v, double lo) {
    const double c = side > 0 ? std::floor((v - lo) / side * cells) : 0;
    return static_cast<std::uint32_t>(std::clamp(c, 0.0, cells - 1));
  };
  std::vector<std::uint64_t> key(layer.units.size());
  for (std::size_t i = 0; i < layer.units.size(); ++i) {
    OGRPoint centroid;
    const OGRGeometry& shape = *layer.units[i].shape;
    if (shape.Centroid(&centroid) != OGRERR_NONE || centroid.IsEmpty()) {
      const Box& b = layer.units[i].box;  // GEOS gave no centroid: the box's centre serves
      centroid.setX((b.min_x + b.max_x) / 2);
      centroid.setY((b.min_y + b.max_y) / 2);
    }
    key[i] = hilbert_index(cell(centroid.getX(), min_x), cell(centroid.getY(), min_y), kBits);
  }
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return key[a] < key[b]; });
  return order;
}

}  // namespace planmill::ingest
