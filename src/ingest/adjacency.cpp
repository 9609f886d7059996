// Neighbours: a uniform grid over the units' boxes proposes the pairs whose boxes meet; GEOS
// (through OGR) intersects their boundaries, and the lines they share are measured.
#include <algorithm>
#include <cmath>
#include <cstdint>

#include "ingest/layer.hpp"

namespace planmill::ingest {
namespace {

// About one unit per cell; every unit is listed in each cell its box (grown by `margin`) meets.
class Grid {
 public:
  Grid(const std::vector<LayerUnit>& units, double margin) : margin_(margin) {
    box_ = units.front().box;
    for (const LayerUnit& u : units) {
      box_.min_x = std::min(box_.min_x, u.box.min_x), box_.min_y = std::min(box_.min_y, u.box.min_y);
      box_.max_x = std::max(box_.max_x, u.box.max_x), box_.max_y = std::max(box_.max_y, u.box.max_y);
    }
    const double w = std::max(box_.max_x - box_.min_x, 1e-300), h = std::max(box_.max_y - box_.min_y, 1e-300);
    const double side = std::sqrt(w * h / static_cast<double>(units.size()));
    columns_ = std::clamp<std::int64_t>(static_cast<std::int64_t>(w / side), 1, 4096);
    rows_ = std::clamp<std::int64_t>(static_cast<std::int64_t>(h / side), 1, 4096);
    cell_w_ = w / static_cast<double>(columns_), cell_h_ = h / static_cast<double>(rows_);
    cells_.resize(static_cast<std::size_t>(columns_ * rows_));
    for (std::size_t i = 0; i < units.size(); ++i) {
      for_cells(units[i].box, [&](std::vector<std::size_t>& cell) { cell.push_back(i); });
    }
  }
  template <class F>
  void for_cells(const Box& b, F&& f) {
    const auto col = [&](double x) { return std::clamp<std::int64_t>(static_cast<std::int64_t>(std::floor((x - box_.min_x) / cell_w_)), 0, columns_ - 1); };
    const auto row = [&](double y) { return std::clamp<std::int64_t>(static_cast<std::int64_t>(std::floor((y - box_.min_y) / cell_h_)), 0, rows_ - 1); };
    for (std::int64_t r = row(b.min_y - margin_); r <= row(b.max_y + margin_); ++r) {
      for (std::int64_t c = col(b.min_x - margin_); c <= col(b.max_x + margin_); ++c) f(cells_[static_cast<std::size_t>(r * columns_ + c)]);
    }
  }

 private:
  double margin_;
  Box box_{};
  std::int64_t columns_ = 1, rows_ = 1;
  double cell_w_ = 1, cell_h_ = 1;
  std::vector<std::vector<std::size_t>> cells_;
};

bool boxes_meet(const Box& a, const Box& b, double margin) {
  return a.min_x <= b.max_x + margin && b.min_x <= a.max_x + margin && a.min_y <= b.max_y + margin && b.min_y <= a.max_y + margin;
}

// The polygons of an intersection (which may also hold the lines and points where units touch).
OGRGeometryUniquePtr polygonal(const OGRGeometry& g) {
  auto multi = std::make_unique<OGRMultiPolygon>();
  const OGRwkbGeometryType type = wkbFlatten(g.getGeometryType());
  if (type == wkbPolygon) multi->addGeometry(&g);
  if (OGR_GT_IsSubClassOf(type, wkbGeometryCollection)) {
    for (const OGRGeometry* part : *g.toGeometryCollection()) {
      if (wkbFlatten(part->getGeometryType()) == wkbPolygon) multi->addGeometry(part);
    }
  }
  return OGRGeometryUniquePtr(multi.release());
}

}  // namespace

std::vector<Edge> find_adjacency(const Layer& layer, const IngestOptions& o, std::vector<std::string>& notes) {
  const std::vector<LayerUnit>& units = layer.units;
  const double margin = o.snap;
  Grid grid(units, margin);
  std::vector<Edge> edges;
  std::vector<std::size_t> seen(units.size(), SIZE_MAX);  // seen[b] == a: pair (a, b) already tried
  std::size_t snapped = 0, overlapping = 0;
  std::string snapped_pairs, overlapping_pairs;
  std::vector<OGRGeometryUniquePtr> grown(units.size());  // boundary buffers, made when first needed
  const auto grown_boundary = [&](std::size_t i) -> const OGRGeometry& {
    if (!grown[i]) grown[i].reset(units[i].boundary->Buffer(o.snap, 4));
    return *grown[i];
  };
  for (std::size_t a = 0; a < units.size(); ++a) {
    std::vector<std::size_t> candidates;
    grid.for_cells(units[a].box, [&](std::vector<std::size_t>& cell) {
      for (std::size_t b : cell) {
        if (b > a && seen[b] != a && boxes_meet(units[a].box, units[b].box, margin)) {
          seen[b] = a;
          candidates.push_back(b);
        }
      }
    });
    std::sort(candidates.begin(), candidates.end());
    for (std::size_t b : candidates) {
      double length = 0;
      bool touch = false;
      if (units[a].boundary->Intersects(units[b].boundary.get())) {
        OGRGeometryUniquePtr common(units[a].boundary->Intersection(units[b].boundary.get()));
        touch = common && !common->IsEmpty();
        if (common) length = layer.metric.length(*common);
        // Boundaries that meet while the interiors do too: the units overlap.
        if (!units[a].shape->Touches(units[b].shape.get())) {
          OGRGeometryUniquePtr both(units[a].shape->Intersection(units[b].shape.get()));
          double area = 0, ignored = 0;
          if (both) layer.metric.measure(*polygonal(*both), area, ignored);
          if (area > 0 && overlapping++ < 10) {
            overlapping_pairs += (overlapping > 1 ? ", " : "") + units[a].id + "-" + units[b].id + " (area " + std::to_string(area) + ")";
          }
        }
      }
      if (o.snap > 0) {
        // The stretch of each boundary within `snap` of the other, averaged. A corner touch gives
        // at most 2 x snap, so more than 4 x snap is a shared side.
        OGRGeometryUniquePtr near_a(units[a].boundary->Intersection(&grown_boundary(b)));
        OGRGeometryUniquePtr near_b(units[b].boundary->Intersection(&grown_boundary(a)));
        const double close = 0.5 * ((near_a ? layer.metric.length(*near_a) : 0) + (near_b ? layer.metric.length(*near_b) : 0));
        if (length == 0 && close > 4 * o.snap) {
          if (snapped++ < 10) snapped_pairs += (snapped > 1 ? ", " : "") + units[a].id + "-" + units[b].id;
          length = close;
        } else if (length > 0) {
          length = std::max(length, close);
        }
        touch = touch || (near_a && !near_a->IsEmpty());
      }
      if (length > 0 || (o.queen && touch)) edges.push_back({a, b, length});
    }
  }
  if (overlapping) {
    notes.push_back(std::to_string(overlapping) + " pair(s) overlap, their areas counting the overlap twice: " + overlapping_pairs +
                    (overlapping > 10 ? ", ..." : "") + "; fix the layer in a GIS if the overlaps are not slivers");
  }
  if (snapped) {
    notes.push_back(std::to_string(snapped) + " pair(s) joined only by the snapping tolerance " + std::to_string(o.snap) + ": " + snapped_pairs +
                    (snapped > 10 ? ", ..." : ""));
  }
  return edges;
}

}  // namespace planmill::ingest
