// Lengths and areas: GeographicLib on the CRS's ellipsoid for longitude/latitude, the shoelace
// formula and Euclidean lengths otherwise.
#include <GeographicLib/PolygonArea.hpp>
#include <cmath>

#include "ingest/layer.hpp"

namespace planmill::ingest {

Metric Metric::planar(std::string unit) {
  Metric m;
  m.description_ = "planar, lengths in " + unit + ", areas in square " + unit;
  return m;
}

Metric Metric::geodesic(double semi_major, double flattening, bool lon_is_x, std::string datum) {
  Metric m;
  m.geod_.emplace(semi_major, flattening);
  m.lon_is_x_ = lon_is_x;
  m.description_ = "geodesic on the ellipsoid of " + datum + ", lengths in metres, areas in square metres";
  return m;
}

double Metric::line_length(const OGRSimpleCurve& line) const {
  const int n = line.getNumPoints();
  double total = 0;
  for (int i = 1; i < n; ++i) {
    if (geod_) {
      double lon1 = line.getX(i - 1), lat1 = line.getY(i - 1), lon2 = line.getX(i), lat2 = line.getY(i);
      if (!lon_is_x_) std::swap(lon1, lat1), std::swap(lon2, lat2);
      double s12 = 0;
      geod_->Inverse(lat1, lon1, lat2, lon2, s12);
      total += s12;
    } else {
      total += std::hypot(line.getX(i) - line.getX(i - 1), line.getY(i) - line.getY(i - 1));
    }
  }
  return total;
}

double Metric::ring_area(const OGRSimpleCurve& ring) const {
  if (!geod_) return std::abs(static_cast<const OGRLinearRing&>(ring).get_Area());
  GeographicLib::PolygonArea poly(*geod_);
  const int n = ring.getNumPoints();
  const int last = (n > 1 && ring.getX(0) == ring.getX(n - 1) && ring.getY(0) == ring.getY(n - 1)) ? n - 1 : n;
  for (int i = 0; i < last; ++i) {
    if (lon_is_x_) poly.AddPoint(ring.getY(i), ring.getX(i));
    else poly.AddPoint(ring.getX(i), ring.getY(i));
  }
  double perimeter = 0, area = 0;
  poly.Compute(false, true, perimeter, area);
  return std::abs(area);
}

double Metric::length(const OGRGeometry& g) const {
  const OGRwkbGeometryType type = wkbFlatten(g.getGeometryType());
  if (type == wkbLineString || type == wkbLinearRing) return line_length(*g.toSimpleCurve());
  if (type == wkbPolygon) {
    double total = 0;
    for (const OGRLinearRing* ring : *g.toPolygon()) total += line_length(*ring);
    return total;
  }
  if (OGR_GT_IsSubClassOf(type, wkbGeometryCollection)) {
    double total = 0;
    for (const OGRGeometry* part : *g.toGeometryCollection()) total += length(*part);
    return total;
  }
  return 0;
}

void Metric::measure(const OGRGeometry& shape, double& area, double& perimeter) const {
  area = 0;
  perimeter = 0;
  const auto add_polygon = [&](const OGRPolygon& polygon) {
    bool outer = true;
    for (const OGRLinearRing* ring : polygon) {
      const double a = ring_area(*ring);
      area += outer ? a : -a;
      perimeter += line_length(*ring);
      outer = false;
    }
  };
  if (wkbFlatten(shape.getGeometryType()) == wkbPolygon) {
    add_polygon(*shape.toPolygon());
  } else {
    for (const OGRGeometry* part : *shape.toGeometryCollection()) {
      if (wkbFlatten(part->getGeometryType()) == wkbPolygon) add_polygon(*part->toPolygon());
    }
  }
}

}  // namespace planmill::ingest
