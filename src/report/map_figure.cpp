#include "planmill/report/map_figure.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <string>
#include <tuple>
#include <unordered_map>

#include "planmill/report/svg.hpp"

namespace planmill::report {
namespace {

// An edge of a unit's ring by its end points on a fine grid, in a fixed order, so that the two
// units on either side of a shared edge find the same key.
struct EdgeKey {
  std::int64_t ax, ay, bx, by;
  bool operator==(const EdgeKey&) const = default;
};
struct EdgeKeyHash {
  std::size_t operator()(const EdgeKey& k) const noexcept {
    std::uint64_t h = 1469598103934665603ULL;
    for (const std::int64_t v : {k.ax, k.ay, k.bx, k.by}) h = (h ^ static_cast<std::uint64_t>(v)) * 1099511628211ULL;
    return static_cast<std::size_t>(h);
  }
};
// Districts seen on an edge's sides: `sides` counts the rings that trace it.
struct EdgeSides {
  std::uint16_t first = 0;
  bool differ = false;
  std::uint32_t sides = 0;
};

class EdgeGrid {
 public:
  EdgeGrid(double x0, double y0, double span) : x0_(x0), y0_(y0), step_(span > 0 ? span * 1e-9 : 1.0) {}
  [[nodiscard]] EdgeKey key(std::pair<double, double> a, std::pair<double, double> b) const {
    std::int64_t ax = snap(a.first - x0_), ay = snap(a.second - y0_), bx = snap(b.first - x0_), by = snap(b.second - y0_);
    if (std::tie(bx, by) < std::tie(ax, ay)) std::swap(ax, bx), std::swap(ay, by);
    return {ax, ay, bx, by};
  }

 private:
  [[nodiscard]] std::int64_t snap(double v) const { return std::llround(v / step_); }
  double x0_, y0_, step_;
};

}  // namespace

Figure map_figure(std::string_view name, std::string_view title, std::span<const std::vector<Shape>> shapes,
                  std::span<const std::uint16_t> district, std::size_t districts, AdjacencyView neighbours) {
  Figure f{figure_slug("", name), std::string(title), {}, {}, "unit_index,district\n"};
  double x0 = std::numeric_limits<double>::infinity(), x1 = -x0, y0 = x0, y1 = -x0;
  for (const auto& unit : shapes)
    for (const auto& shape : unit)
      for (const auto& ring : shape)
        for (const auto& [x, y] : ring) x0 = std::min(x0, x), x1 = std::max(x1, x), y0 = std::min(y0, y), y1 = std::max(y1, y);
  const double side = 560, pad = 10;
  const double span = std::max(x1 - x0, y1 - y0);
  const double unit_scale = span > 0 ? (side - 2 * pad) / span : 1.0;
  const double w = (x1 - x0) * unit_scale + 2 * pad, h = (y1 - y0) * unit_scale + 2 * pad;
  const auto to_page = [&](std::pair<double, double> p) {
    return std::pair<double, double>{pad + (p.first - x0) * unit_scale, pad + (y1 - p.second) * unit_scale};
  };
  // A point within half a user unit of the last one kept adds nothing visible: dropped, so that
  // detailed shapes do not swell the file.
  const auto keep = [](std::vector<std::pair<double, double>>& run, std::pair<double, double> p) {
    if (run.empty() || std::abs(p.first - run.back().first) >= 0.5 || std::abs(p.second - run.back().second) >= 0.5)
      run.push_back(p);
  };
  Svg svg(std::max(w, 100.0), std::max(h, 100.0), f.title);

  const EdgeGrid grid(x0, y0, span);
  std::unordered_map<EdgeKey, EdgeSides, EdgeKeyHash> edges;
  std::vector<double> cx(districts, 0), cy(districts, 0), n(districts, 0);
  std::size_t without = 0;
  std::vector<std::vector<std::pair<double, double>>> pieces;
  for (std::size_t u = 0; u < shapes.size(); ++u) {
    const std::uint16_t d = district[u];
    f.csv += std::to_string(u) + "," + std::to_string(d + 1) + "\n";
    if (shapes[u].empty()) {
      ++without;
      continue;
    }
    for (const Shape& shape : shapes[u]) {
      pieces.clear();
      for (const Ring& ring : shape) {
        std::vector<std::pair<double, double>> points;
        for (std::size_t i = 0; i < ring.size(); ++i) {
          const auto p = to_page(ring[i]);
          if (d < districts) cx[d] += p.first, cy[d] += p.second, n[d] += 1;
          keep(points, p);
          if (i + 1 < ring.size() && ring[i] != ring[i + 1]) {
            EdgeSides& e = edges[grid.key(ring[i], ring[i + 1])];
            if (e.sides++ == 0) e.first = d;
            else if (e.first != d) e.differ = true;
          }
        }
        if (points.size() >= 3) pieces.push_back(std::move(points));  // smaller than a point otherwise
      }
      if (!pieces.empty()) svg.path(pieces, true, fill_style(std::string(district_fill(d)), "#ffffff", 0.3));
    }
  }

  // Outlines: each ring walked again, its outline edges joined into runs. An edge two rings trace
  // is drawn once, from the side that traced it first, when their districts differ. An edge only
  // one ring traces is split where the collinear edges of the unit's neighbours begin and end (a
  // large unit beside several small ones); a piece no neighbour covers is the map's edge and drawn,
  // a piece covered only by other districts is drawn from the side of the lowest district.
  pieces.clear();
  std::vector<std::pair<double, double>> run;
  std::pair<double, double> run_end{};
  const auto end_run = [&] {
    if (run.size() >= 2) pieces.push_back(run);
    run.clear();
  };
  const auto emit = [&](std::pair<double, double> a, std::pair<double, double> b) {
    const auto pa = to_page(a), pb = to_page(b);
    if (run.empty() || pa != run_end) {
      end_run();
      run.push_back(pa);
    }
    keep(run, pb);
    if (run.size() == 1) run.push_back(pb);  // a short edge still draws
    run_end = pb;
  };
  const double tolerance = span > 0 ? span * 1e-9 : 0.0;
  struct Cover {
    double lo, hi;
    std::uint16_t district;
  };
  std::vector<Cover> covers;
  std::vector<double> cuts;
  for (std::size_t u = 0; u < shapes.size(); ++u)
    for (const Shape& shape : shapes[u])
      for (const Ring& ring : shape) {
        for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
          const auto a = ring[i], b = ring[i + 1];
          if (a == b) continue;
          const EdgeSides& e = edges.at(grid.key(a, b));
          if (e.sides > 1) {
            if (e.differ && district[u] == e.first) emit(a, b);
            else end_run();
            continue;
          }
          const double dx = b.first - a.first, dy = b.second - a.second, length = std::hypot(dx, dy);
          covers.clear();
          if (u < neighbours.vertex_count())
            for (const auto v : neighbours.neighbors(static_cast<AdjacencyView::Vertex>(u))) {
              if (v >= shapes.size()) continue;
              for (const Shape& other : shapes[v])
                for (const Ring& r : other)
                  for (std::size_t j = 0; j + 1 < r.size(); ++j) {
                    const auto c = r[j], q = r[j + 1];
                    const auto off_line = [&](std::pair<double, double> p) {
                      return std::abs(dx * (p.second - a.second) - dy * (p.first - a.first)) / length > tolerance;
                    };
                    if (off_line(c) || off_line(q)) continue;
                    const auto along = [&](std::pair<double, double> p) {
                      return (dx * (p.first - a.first) + dy * (p.second - a.second)) / (length * length);
                    };
                    const double lo = std::max(0.0, std::min(along(c), along(q)));
                    const double hi = std::min(1.0, std::max(along(c), along(q)));
                    if ((hi - lo) * length > tolerance) covers.push_back({lo, hi, district[v]});
                  }
            }
          cuts.assign({0.0, 1.0});
          for (const Cover& c : covers) cuts.push_back(c.lo), cuts.push_back(c.hi);
          std::sort(cuts.begin(), cuts.end());
          for (std::size_t k = 0; k + 1 < cuts.size(); ++k) {
            if ((cuts[k + 1] - cuts[k]) * length <= tolerance) continue;
            const double mid = (cuts[k] + cuts[k + 1]) / 2;
            bool covered = false, same = false;
            std::uint16_t lowest = std::numeric_limits<std::uint16_t>::max();
            for (const Cover& c : covers)
              if (c.lo <= mid && mid <= c.hi) {
                covered = true;
                same = same || c.district == district[u];
                lowest = std::min(lowest, c.district);
              }
            if (!covered || (!same && district[u] < lowest)) {
              const auto at = [&](double t) { return std::pair<double, double>{a.first + t * dx, a.second + t * dy}; };
              emit(at(cuts[k]), at(cuts[k + 1]));
            } else {
              end_run();
            }
          }
        }
        end_run();
      }
  if (!pieces.empty()) {
    svg.begin_group("district-outlines");
    svg.path(pieces, false, stroke_style("#1f1f1f", 1.2));
    svg.end_group();
  }
  for (std::size_t d = 0; d < districts; ++d)
    if (n[d] > 0) svg.text(cx[d] / n[d], cy[d] / n[d] + 4, std::to_string(d + 1), 12, Anchor::middle, "#000", true);
  f.caption = "Units filled by district, district outlines in black; each district's number sits at the mean of its "
              "units' corners. Fills repeat after 8 districts, so read the numbers." +
              (without > 0 ? " " + std::to_string(without) + " units have no shape in the geometry file." : "");
  f.svg = svg.str();
  return f;
}

}  // namespace planmill::report
