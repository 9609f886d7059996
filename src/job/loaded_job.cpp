#include "planmill/job/loaded_job.hpp"

#include "planmill/graph/feasibility.hpp"
#include "planmill/base/error.hpp"
#include "planmill/job/job_measures.hpp"
#include "planmill/job/job_rules.hpp"
#include "planmill/seed/plan_csv.hpp"
#include "planmill/seed/seed_plan.hpp"

namespace planmill {

LoadedJob load_and_check_job(const std::string& job_path) {
  JobSpec job = load_job(job_path);
  LoadReport report;
  GraphHandle graph = share_graph(load_unit_graph(job.map, &report));
  return check_job_on_graph(std::move(job), std::move(graph), std::move(report));
}

LoadedJob check_job_on_graph(JobSpec job, GraphHandle graph, LoadReport report) {
  const std::string job_path = job.path;
  LoadedJob loaded{std::move(job), std::move(graph), std::move(report), std::nullopt, {}, {}, std::nullopt};
  check_feasible(*loaded.graph, loaded.job.districts, loaded.job.rules.population_tolerance, job_path);
  (void)make_rule_set(loaded.job.rules, *loaded.graph, job_path);  // the data the rules need, before any search
  if (loaded.job.sampler.tree_weight_county != 1.0 && !loaded.graph->has_counties())
    throw InputError({job_path, 0, "sampler.tree_weight_county"},
                     "county tree weights need county codes, but the map has none",
                     "name the county column as map.county, or remove the key");
  if (loaded.job.sampler.tree_weight_municipality != 1.0 && !loaded.graph->has_municipalities())
    throw InputError({job_path, 0, "sampler.tree_weight_municipality"},
                     "municipality tree weights need municipality codes, but the map has none",
                     "name the municipality column as map.municipality, or remove the key");
  loaded.measures = make_measure_spec(loaded.job.measures, *loaded.graph);
  try {
    (void)MeasureEvaluator(loaded.graph, loaded.job.districts, loaded.measures);
  } catch (const std::invalid_argument& e) {
    throw InputError({job_path, 0, "measures"}, e.what(), "fix the [measures] section (docs/jobs.md)");
  }
  FewestSplits fewest;
  loaded.rules = resolve_rules(loaded.job, loaded.graph, &fewest);
  if (loaded.job.rules.county_splits_fewest) loaded.fewest = std::move(fewest);
  if (loaded.job.start != "random") {
    loaded.start.emplace(read_plan_csv(loaded.job.start, loaded.graph, loaded.job.districts));
    check_seed_plan(*loaded.start, loaded.rules, loaded.job.start);
  }
  return loaded;
}

}  // namespace planmill
