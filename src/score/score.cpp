#include "planmill/score/score.hpp"

#include <algorithm>

#include "planmill/job/job_rules.hpp"
#include "planmill/plan/split_tally.hpp"
#include "planmill/rules/rules.hpp"
#include "planmill/seed/plan_csv.hpp"

namespace planmill::score {

namespace {

ReadPlan districts_of(const PlanRows& rows, const std::string& crosswalk_file, const UnitGraph& graph) {
  ReadPlan r;
  if (crosswalk_file.empty()) {
    r.district = unit_districts(rows, graph);
    return r;
  }
  const Crosswalk crosswalk = read_crosswalk(crosswalk_file, graph);
  r.carried = carry_plan(rows, crosswalk, graph);
  r.district = r.carried->district;
  r.warnings = crosswalk.warnings;
  return r;
}

}  // namespace

ReadPlan read_unit_districts(const std::string& plan_file, const std::string& crosswalk_file, const UnitGraph& graph,
                             std::size_t max_district) {
  return districts_of(read_plan_rows(plan_file, max_district), crosswalk_file, graph);
}

Plan read_plan(const std::string& plan_file, const std::string& crosswalk_file, const GraphHandle& graph,
               std::size_t k, ReadPlan* how) {
  const PlanRows rows = read_plan_rows(plan_file, k);
  ReadPlan r = districts_of(rows, crosswalk_file, *graph);
  Plan plan = plan_of_every_district(rows, graph, k, r.district);
  if (how != nullptr) *how = std::move(r);
  return plan;
}

ScoreReport score_plan(const LoadedJob& job, const std::string& plan_file, const std::string& crosswalk_file) {
  const UnitGraph& graph = *job.graph;
  const std::size_t k = job.job.districts;
  ScoreReport s;
  s.job_file = job.job.path;
  s.plan_file = plan_file;
  s.crosswalk_file = crosswalk_file;
  s.units = graph.unit_count();
  s.districts = k;
  // Districts above k are read, so that the report can say which they are.
  s.reading = read_unit_districts(plan_file, crosswalk_file, graph, kNoDistrict - 1);
  s.reading_text = s.reading.describe(graph);

  const RuleSet& rules = job.rules;
  s.tolerance = rules.population_tolerance;
  s.ideal = static_cast<double>(graph.total_population()) / static_cast<double>(k);
  s.bounds = population_bounds(graph.total_population(), k, rules.population_tolerance);
  s.county_splits_max = rules.county_splits_max;
  s.limit_rules = describe_limits(rules, graph);

  std::size_t held = k;
  for (DistrictIndex d : s.reading.district) held = std::max<std::size_t>(held, d + std::size_t{1});
  const Plan plan(job.graph, held, s.reading.district);
  for (DistrictIndex d = 0; d < held; ++d) {
    if (d >= k) {
      if (plan.unit_count(d) > 0) s.out_of_range.push_back({d + std::size_t{1}, plan.unit_count(d), plan.population(d)});
      continue;
    }
    if (plan.unit_count(d) == 0) {
      s.empty_districts.push_back(d + std::size_t{1});
      continue;
    }
    if (!plan.is_connected(d)) s.not_contiguous.push_back({d, plan.pieces(d)});
  }
  // The band is the job's (ideal = total / k); empty districts and those above k are listed above.
  for (const PopulationBreach& b : population_breaches(plan, s.bounds)) {
    if (b.district >= k || plan.unit_count(b.district) == 0) continue;
    s.population.push_back(b);
    s.population_text.push_back(describe_population_breach(b, s.bounds, s.ideal));
  }
  if (graph.has_counties()) {
    const SplitTally counties(plan, graph.counties());
    s.counties_split = counties.split();
    s.county_cap_broken = rules.county_splits_max && s.counties_split > *rules.county_splits_max;
  }
  if (held == k) {
    s.limits = RuleTracker(plan, rules).limit_breaches(plan);
  } else if (s.county_cap_broken) {  // the tracker needs the job's k districts; say what can be said
    s.limits.push_back({"rules.county_splits_max", std::to_string(s.counties_split) +
                                                       " counties are split, the limit is " +
                                                       std::to_string(*rules.county_splits_max)});
  }
  if (held == k && s.empty_districts.empty())
    s.values = measure_plan(plan, job.graph, rules, job.measures);
  else
    s.values_missing = "the plan does not have the job's " + std::to_string(k) +
                       " districts, each with a unit, so its measures are not computed";
  return s;
}

}  // namespace planmill::score
