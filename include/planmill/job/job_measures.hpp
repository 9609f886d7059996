#pragma once
// The job's [measures] as a MeasureSpec for the map: what a list leaves out takes the defaults of
// default_measure_spec (every two-party election, every group of total population above 1/2,
// the splits of whatever codes the map has).
#include "planmill/graph/unit_graph.hpp"
#include "planmill/job/job.hpp"
#include "planmill/measures/measures.hpp"

namespace planmill {

// A group measured against a denominator is named "<group>_of_<denominator>" in the outputs.
[[nodiscard]] MeasureSpec make_measure_spec(const MeasuresSpec& spec, const UnitGraph& graph);

}  // namespace planmill
