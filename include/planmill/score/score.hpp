#pragma once
// One plan scored against a job, without an ensemble (docs/score.md): how the plan was read (on
// the map's units, or carried from finer units through a crosswalk), every hard rule it breaks and
// by how much, and its value of every observable the runner records and every measure of the
// job's [measures].
#include <cstddef>
#include <cstdint>
#include <optional>
#include <ostream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/rules/rules.hpp"
#include "planmill/score/crosswalk.hpp"
#include "planmill/score/plan_values.hpp"

namespace planmill::score {

// The district of every map unit from PLAN.csv: on the map's own unit ids when `crosswalk_file`
// is empty, else on the crosswalk's fine units (carried, set in `carried`). Districts 1..max_district.
struct ReadPlan {
  std::vector<DistrictIndex> district;  // per map unit, 0-based
  std::optional<CarriedPlan> carried;
  std::vector<std::string> warnings;    // the crosswalk's
  // "read on the map's 200 units" or "carried from ... (N units split, P people in them)".
  [[nodiscard]] std::string describe(const UnitGraph& graph) const;
};
[[nodiscard]] ReadPlan read_unit_districts(const std::string& plan_file, const std::string& crosswalk_file,
                                           const UnitGraph& graph, std::size_t max_district);
// The same as a Plan of k districts, each with a unit (InputError otherwise), for `compare`.
[[nodiscard]] Plan read_plan(const std::string& plan_file, const std::string& crosswalk_file,
                             const GraphHandle& graph, std::size_t k, ReadPlan* how = nullptr);

struct NotContiguous {
  DistrictIndex district;
  std::vector<DistrictPiece> pieces;  // largest first
};
struct OutOfRange {
  std::size_t district;  // as numbered in the plan, above k
  std::size_t units;
  std::int64_t population;
};

struct ScoreReport {
  std::string job_file, plan_file, crosswalk_file;
  std::size_t units = 0, districts = 0;
  ReadPlan reading;
  std::string reading_text;
  // The rules as the job states them.
  double tolerance = 0;
  double ideal = 0;
  PopulationBounds bounds{};
  std::optional<std::size_t> county_splits_max;
  std::vector<std::string> limit_rules;  // describe_limits: the hard rules beyond the tolerance
  // What the plan breaks.
  std::vector<std::size_t> empty_districts;  // 1-based
  std::vector<OutOfRange> out_of_range;
  std::vector<PopulationBreach> population;
  std::vector<std::string> population_text;
  std::vector<NotContiguous> not_contiguous;
  std::size_t counties_split = 0;
  bool county_cap_broken = false;
  // Every broken rule the rule tracker keeps (overall range, county and municipality caps,
  // group-share counts), with its job key; the county cap is among them.
  std::vector<RuleTracker::Breach> limits;
  // The plan's values; not computed (with the reason) when the plan does not have k districts.
  std::optional<PlanValues> values;
  std::string values_missing;

  [[nodiscard]] bool meets_every_rule() const noexcept {
    return empty_districts.empty() && out_of_range.empty() && population.empty() && not_contiguous.empty() &&
           !county_cap_broken && limits.empty();
  }
};

// Throws InputError for a plan or crosswalk that cannot be read (docs/score.md lists the cases).
[[nodiscard]] ScoreReport score_plan(const LoadedJob& job, const std::string& plan_file,
                                     const std::string& crosswalk_file);

void print_score(const ScoreReport& report, std::ostream& out);
[[nodiscard]] nlohmann::json score_json(const ScoreReport& report);

}  // namespace planmill::score
