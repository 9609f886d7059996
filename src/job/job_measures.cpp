#include "planmill/job/job_measures.hpp"

#include <algorithm>
#include <stdexcept>

namespace planmill {

MeasureSpec make_measure_spec(const MeasuresSpec& spec, const UnitGraph& graph) {
  MeasureSpec out = default_measure_spec(graph);
  const auto column = [&](const std::string& name) {
    const auto c = graph.find_count_column(name);
    // parse_job_text checked every name against [map], which the loader turned into columns.
    if (!c) throw std::logic_error("measures: '" + name + "' is not a count column of the map");
    return *c;
  };
  if (spec.elections) {
    out.elections.clear();
    for (const std::string& name : *spec.elections) {
      const auto& all = graph.elections();
      const auto e = std::find_if(all.begin(), all.end(), [&](const Election& x) { return x.name == name; });
      if (e == all.end() || e->columns.size() != 2)
        throw std::logic_error("measures: '" + name + "' is not a two-party election of the map");
      out.elections.push_back({e->name, e->parties[0], e->parties[1], e->columns[0], e->columns[1]});
    }
  }
  if (spec.groups) {
    out.groups.clear();
    for (const GroupMeasuresSpec& g : *spec.groups) {
      GroupMeasureSpec m{g.group, column(g.group), std::nullopt, g.thresholds};
      if (!g.denominator.empty()) {
        m.denominator = column(g.denominator);
        m.name += "_of_" + g.denominator;
      }
      out.groups.push_back(std::move(m));
    }
  }
  out.competitive_low = spec.competitive_low;
  out.competitive_high = spec.competitive_high;
  if (spec.county_splits) out.county_splits = *spec.county_splits;
  if (spec.municipality_splits) out.municipality_splits = *spec.municipality_splits;
  return out;
}

}  // namespace planmill
