#include "synth/geometry.hpp"

#include <algorithm>
#include <cmath>
#include <queue>
#include <stdexcept>
#include <utility>

namespace planmill::synth {

ValueNoise::ValueNoise(Rng& rng, double width_km, double height_km, double spacing_km)
    : nx_(static_cast<std::size_t>(width_km / spacing_km) + 2),
      ny_(static_cast<std::size_t>(height_km / spacing_km) + 2),
      spacing_(spacing_km) {
  values_.resize(nx_ * ny_);
  for (double& v : values_) v = uniform01(rng);
}

double ValueNoise::at(double x_km, double y_km) const {
  const double gx = std::clamp(x_km / spacing_, 0.0, static_cast<double>(nx_ - 1) - 1e-9);
  const double gy = std::clamp(y_km / spacing_, 0.0, static_cast<double>(ny_ - 1) - 1e-9);
  const auto i = static_cast<std::size_t>(gx), j = static_cast<std::size_t>(gy);
  const double tx = gx - static_cast<double>(i), ty = gy - static_cast<double>(j);
  const double sx = tx * tx * (3.0 - 2.0 * tx), sy = ty * ty * (3.0 - 2.0 * ty);
  const double v00 = values_[j * nx_ + i], v10 = values_[j * nx_ + i + 1];
  const double v01 = values_[(j + 1) * nx_ + i], v11 = values_[(j + 1) * nx_ + i + 1];
  const double bottom = v00 + (v10 - v00) * sx, top = v01 + (v11 - v01) * sx;
  return bottom + (top - bottom) * sy;
}

namespace {

// Keeps the largest 4-connected piece of `inside` and fills its holes. Returns the cell count.
std::size_t keep_largest_piece(std::size_t w, std::size_t h, std::vector<char>& inside) {
  std::vector<int> piece(w * h, -1);
  std::vector<std::size_t> stack;
  std::size_t best_size = 0;
  int best = -1, pieces = 0;
  const auto visit = [&](std::size_t start, auto&& accept, int label) {
    std::size_t size = 0;
    stack.assign(1, start);
    piece[start] = label;
    while (!stack.empty()) {
      const std::size_t c = stack.back();
      stack.pop_back();
      ++size;
      const std::size_t x = c % w, y = c / w;
      const std::size_t next[4] = {x > 0 ? c - 1 : c, x + 1 < w ? c + 1 : c, y > 0 ? c - w : c,
                                   y + 1 < h ? c + w : c};
      for (std::size_t n : next) {
        if (n != c && piece[n] == -1 && accept(n)) {
          piece[n] = label;
          stack.push_back(n);
        }
      }
    }
    return size;
  };
  for (std::size_t c = 0; c < w * h; ++c) {
    if (!inside[c] || piece[c] != -1) continue;
    const std::size_t size = visit(
        c, [&](std::size_t n) { return inside[n] != 0; }, pieces);
    if (size > best_size) best_size = size, best = pieces;
    ++pieces;
  }
  std::vector<char> kept(w * h, 0);
  for (std::size_t c = 0; c < w * h; ++c) kept[c] = best >= 0 && piece[c] == best ? 1 : 0;
  // Everything outside the kept piece that the grid border can reach is sea; the rest is a hole.
  std::vector<int> sea(w * h, -1);
  piece.swap(sea);
  for (std::size_t c = 0; c < w * h; ++c) {
    const std::size_t x = c % w, y = c / w;
    const bool border = x == 0 || y == 0 || x + 1 == w || y + 1 == h;
    if (border && !kept[c] && piece[c] == -1)
      visit(
          c, [&](std::size_t n) { return !kept[n]; }, 0);
  }
  std::size_t count = 0;
  for (std::size_t c = 0; c < w * h; ++c) {
    inside[c] = piece[c] == -1 ? 1 : 0;  // not sea: kept piece or a hole in it
    count += inside[c] ? 1 : 0;
  }
  return count;
}

}  // namespace

Outline make_outline(std::size_t target_cells, Rng& rng) {
  const double scale = std::sqrt(static_cast<double>(target_cells));
  const auto side = static_cast<std::size_t>(2.6 * scale) + 8;
  Outline outline;
  outline.width = outline.height = side;
  const double side_km = static_cast<double>(side) * kCellKm;
  const ValueNoise broad(rng, side_km, side_km, side_km / 4.0);
  const ValueNoise fine(rng, side_km, side_km, side_km / 9.0);
  const double aspect = 0.65 + 0.3 * uniform01(rng);
  double ux = 0.0, uy = 0.0;
  for (double norm = 0.0; norm < 0.1 || norm > 1.0;) {
    ux = 2.0 * uniform01(rng) - 1.0;
    uy = 2.0 * uniform01(rng) - 1.0;
    norm = ux * ux + uy * uy;
  }
  const double norm = std::sqrt(ux * ux + uy * uy);
  ux /= norm, uy /= norm;

  const double centre = static_cast<double>(side) * 0.5;
  std::vector<char> inside(side * side);
  const auto build = [&](double radius) {
    for (std::size_t y = 0; y < side; ++y) {
      for (std::size_t x = 0; x < side; ++x) {
        const double px = static_cast<double>(x) + 0.5, py = static_cast<double>(y) + 0.5;
        const double dx = px - centre, dy = py - centre;
        const double along = dx * ux + dy * uy, across = (dy * ux - dx * uy) / aspect;
        const double rho = std::sqrt(along * along + across * across) / radius;
        const double wobble = 0.62 * (broad.at(px * kCellKm, py * kCellKm) - 0.5) +
                              0.38 * (fine.at(px * kCellKm, py * kCellKm) - 0.5);
        const bool margin = x < 2 || y < 2 || x + 2 >= side || y + 2 >= side;
        inside[y * side + x] = !margin && rho < 1.0 + 1.9 * wobble ? 1 : 0;
      }
    }
    return keep_largest_piece(side, side, inside);
  };
  // Largest radius whose outline has at most target_cells cells (bisection; the count grows
  // with the radius except for rare jumps when a second piece joins the first).
  double low = 0.5, high = centre;
  for (int iteration = 0; iteration < 48; ++iteration) {
    const double mid = 0.5 * (low + high);
    (build(mid) <= target_cells ? low : high) = mid;
  }
  outline.cell_count = build(low);
  outline.inside = inside;
  return outline;
}

namespace {

std::uint64_t spread_bits(std::uint64_t v) {
  v &= 0xFFFFFFFFULL;
  v = (v | (v << 16)) & 0x0000FFFF0000FFFFULL;
  v = (v | (v << 8)) & 0x00FF00FF00FF00FFULL;
  v = (v | (v << 4)) & 0x0F0F0F0F0F0F0F0FULL;
  v = (v | (v << 2)) & 0x3333333333333333ULL;
  v = (v | (v << 1)) & 0x5555555555555555ULL;
  return v;
}

std::uint64_t morton(const Rect& r) {
  return spread_bits(static_cast<std::uint64_t>(r.x0)) |
         (spread_bits(static_cast<std::uint64_t>(r.y0)) << 1);
}

}  // namespace

std::vector<Rect> subdivide(const Outline& outline, std::size_t units,
                            const std::function<double(double, double)>& density) {
  std::vector<Rect> cells;
  for (std::size_t y = 0; y < outline.height; ++y) {
    for (std::size_t x = 0; x < outline.width; ++x) {
      if (!outline.inside[y * outline.width + x]) continue;
      const auto x0 = static_cast<std::int64_t>(x) * kCellSide;
      const auto y0 = static_cast<std::int64_t>(y) * kCellSide;
      cells.push_back({x0, y0, x0 + kCellSide, y0 + kCellSide, 0});
    }
  }
  if (cells.size() > units) throw std::logic_error("synth: outline has more cells than units");
  std::vector<char> alive(cells.size(), 1);
  using Entry = std::pair<double, std::uint32_t>;  // (expected people, cell); ties by index
  std::priority_queue<Entry> queue;
  const auto push = [&](std::uint32_t c) {
    const Rect& r = cells[c];
    if (r.depth >= kMaxDepth) return;
    const double km2 = static_cast<double>(r.area()) * kKmPerStep * kKmPerStep;
    queue.push({density(r.centre_x_km(), r.centre_y_km()) * km2, c});
  };
  for (std::uint32_t c = 0; c < cells.size(); ++c) push(c);
  std::size_t count = cells.size();
  const auto take = [&] {
    if (queue.empty()) throw std::logic_error("synth: no cell left to split");
    const std::uint32_t c = queue.top().second;
    queue.pop();
    alive[c] = 0;
    return cells[c];
  };
  while (count + 3 <= units) {
    const Rect r = take();
    const std::int64_t mx = (r.x0 + r.x1) / 2, my = (r.y0 + r.y1) / 2;
    const Rect quads[4] = {{r.x0, r.y0, mx, my, r.depth + 1},
                           {mx, r.y0, r.x1, my, r.depth + 1},
                           {r.x0, my, mx, r.y1, r.depth + 1},
                           {mx, my, r.x1, r.y1, r.depth + 1}};
    for (const Rect& q : quads) {
      cells.push_back(q);
      alive.push_back(1);
      push(static_cast<std::uint32_t>(cells.size() - 1));
    }
    count += 3;
  }
  while (count < units) {  // at most two halvings make the count exact
    const Rect r = take();
    Rect first = r, second = r;
    if (r.x1 - r.x0 >= r.y1 - r.y0) {
      first.x1 = second.x0 = (r.x0 + r.x1) / 2;
    } else {
      first.y1 = second.y0 = (r.y0 + r.y1) / 2;
    }
    first.depth = second.depth = kMaxDepth;  // not split again
    cells.push_back(first);
    cells.push_back(second);
    alive.push_back(1);
    alive.push_back(1);
    count += 1;
  }
  std::vector<Rect> result;
  result.reserve(units);
  for (std::size_t c = 0; c < cells.size(); ++c) {
    if (alive[c]) result.push_back(cells[c]);
  }
  std::sort(result.begin(), result.end(),
            [](const Rect& a, const Rect& b) { return morton(a) < morton(b); });
  return result;
}

std::vector<SharedEdge> shared_edges(const std::vector<Rect>& rects) {
  // One side of a rectangle lying on the line `at`, spanning [from, to).
  struct Side {
    std::int64_t at, from, to;
    int facing;  // 0: the rectangle lies before the line, 1: after it
    std::uint32_t unit;
  };
  std::vector<SharedEdge> found;
  const auto sweep = [&](std::vector<Side>& sides) {
    std::sort(sides.begin(), sides.end(), [](const Side& a, const Side& b) {
      if (a.at != b.at) return a.at < b.at;
      if (a.facing != b.facing) return a.facing < b.facing;
      return a.from < b.from;
    });
    std::size_t i = 0;
    while (i < sides.size()) {
      std::size_t mid = i, end = i;
      while (mid < sides.size() && sides[mid].at == sides[i].at && sides[mid].facing == 0) ++mid;
      end = mid;
      while (end < sides.size() && sides[end].at == sides[i].at) ++end;
      // Sides before the line do not overlap each other (they tile); nor do those after it.
      std::size_t p = i, q = mid;
      while (p < mid && q < end) {
        const std::int64_t overlap =
            std::min(sides[p].to, sides[q].to) - std::max(sides[p].from, sides[q].from);
        if (overlap > 0) {
          const auto [a, b] = std::minmax(sides[p].unit, sides[q].unit);
          found.push_back({a, b, overlap});
        }
        (sides[p].to < sides[q].to ? p : q) += 1;
      }
      i = end;
    }
  };
  std::vector<Side> sides;
  sides.reserve(2 * rects.size());
  for (std::uint32_t u = 0; u < rects.size(); ++u) {
    sides.push_back({rects[u].x1, rects[u].y0, rects[u].y1, 0, u});
    sides.push_back({rects[u].x0, rects[u].y0, rects[u].y1, 1, u});
  }
  sweep(sides);
  sides.clear();
  for (std::uint32_t u = 0; u < rects.size(); ++u) {
    sides.push_back({rects[u].y1, rects[u].x0, rects[u].x1, 0, u});
    sides.push_back({rects[u].y0, rects[u].x0, rects[u].x1, 1, u});
  }
  sweep(sides);
  std::sort(found.begin(), found.end(), [](const SharedEdge& x, const SharedEdge& y) {
    return x.a != y.a ? x.a < y.a : x.b < y.b;
  });
  // Two rectangles share at most one segment, but merge defensively so each pair appears once.
  std::vector<SharedEdge> merged;
  for (const SharedEdge& e : found) {
    if (!merged.empty() && merged.back().a == e.a && merged.back().b == e.b) {
      merged.back().length += e.length;
    } else {
      merged.push_back(e);
    }
  }
  return merged;
}

}  // namespace planmill::synth
