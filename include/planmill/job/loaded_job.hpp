#pragma once
// A job file with everything it names loaded and validated: the map, the feasibility of the
// district count and tolerance, the starting plan if one is given, and what is measured.
#include <optional>
#include <string>

#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/measures/measures.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/rules/rules.hpp"
#include "planmill/seed/seed_plan.hpp"

namespace planmill {

struct LoadedJob {
  JobSpec job;
  GraphHandle graph;  // shared with every plan drawn on it
  LoadReport report;
  std::optional<Plan> start;  // set when districts.start names a plan file
  MeasureSpec measures;       // the job's [measures] for this map (job_measures.hpp)
  RuleSet rules;              // the job's [rules] for this map, resolved (job_rules.hpp)
  std::optional<FewestSplits> fewest;  // set when county splits are "fewest": the search's result
};

// Throws InputError / InfeasibleError with the file, line and key of the first problem.
[[nodiscard]] LoadedJob load_and_check_job(const std::string& job_path);
// The same checks of a job already read on a map already loaded (a sweep's settings share one).
[[nodiscard]] LoadedJob check_job_on_graph(JobSpec job, GraphHandle graph, LoadReport report = {});

}  // namespace planmill
