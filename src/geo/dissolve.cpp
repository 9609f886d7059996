// Dissolving: each district is the union of its units' polygons (GEOS's cascaded union), kept as
// a multipolygon of its separate pieces.
#include <stdexcept>

#include "geo/shapes.hpp"

namespace planmill::geo {

DistrictShapes::DistrictShapes(const UnitShapes& units, std::span<const DistrictIndex> district_of_unit,
                               std::size_t k)
    : impl_(std::make_unique<Impl>()) {
  const auto& shapes = units.impl_->shapes;
  if (district_of_unit.size() != shapes.size()) {
    throw std::invalid_argument("DistrictShapes: a plan of " + std::to_string(district_of_unit.size()) +
                                " units on shapes of " + std::to_string(shapes.size()));
  }
  std::vector<OGRMultiPolygon> members(k);
  for (std::size_t u = 0; u < shapes.size(); ++u) {
    const DistrictIndex d = district_of_unit[u];
    if (d >= k) throw std::invalid_argument("DistrictShapes: a district label beyond k");
    const std::unique_ptr<OGRMultiPolygon> pieces = polygons_only(*shapes[u]);
    for (const OGRPolygon* p : *pieces) members[d].addGeometry(p);
  }
  impl_->districts.reserve(k);
  for (OGRMultiPolygon& m : members) {
    OGRGeometryUniquePtr united(m.IsEmpty() ? nullptr : m.UnionCascaded());
    impl_->districts.push_back(united ? polygons_only(*united) : std::make_unique<OGRMultiPolygon>());
  }
}

DistrictShapes::~DistrictShapes() = default;
DistrictShapes::DistrictShapes(DistrictShapes&&) noexcept = default;
DistrictShapes& DistrictShapes::operator=(DistrictShapes&&) noexcept = default;

std::size_t DistrictShapes::district_count() const noexcept { return impl_->districts.size(); }
std::size_t DistrictShapes::pieces(DistrictIndex d) const {
  return static_cast<std::size_t>(impl_->districts.at(d)->getNumGeometries());
}
double DistrictShapes::planar_area(DistrictIndex d) const { return impl_->districts.at(d)->get_Area(); }

Outline DistrictShapes::outline(DistrictIndex d) const {
  Outline out;
  for (const OGRPolygon* polygon : *impl_->districts.at(d)) {
    Polygon& p = out.emplace_back();
    for (const OGRLinearRing* ring : *polygon) {
      Ring& r = p.emplace_back();
      for (const OGRPoint& point : *ring) r.push_back({point.getX(), point.getY()});
    }
  }
  return out;
}

}  // namespace planmill::geo
