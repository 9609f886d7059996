#pragma once
// Rules: hard limits a plan must meet (population bounds and overall range, caps on county and
// municipality splits, pieces and districts per area, counts of districts meeting a group share)
// and weighted soft terms whose sum is the energy J(P) the samplers weigh by exp(-beta J).
// RuleTracker keeps every rule's state for one Plan up to date as units move, in
// O(degree + #terms) per move and without allocating, so kernels can ask "is this plan
// allowed, what is its energy" at every step. Contiguity is not a rule here: the kernels keep
// it (recombination by construction, flips through Plan::is_connected).
#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/plan/split_tally.hpp"

namespace planmill {

// Districts whose share of group `column` (count / district population) is at least
// `threshold`: soft, the energy falls by `weight` for each; hard, their number must lie in
// [at_least, at_most] where given.
struct GroupShareTerm {
  std::size_t column;  // count column of the UnitGraph
  double threshold;
  double weight;
  std::optional<std::size_t> at_least{};
  std::optional<std::size_t> at_most{};
};

struct RuleSet {
  double population_tolerance = 0.05;            // hard: pop in [(1-eps) ideal, (1+eps) ideal]
  // hard: (largest - smallest district population) / ideal at most this
  std::optional<double> population_range_max;
  // hard, on counties and on municipalities: areas meeting >= 2 districts; pieces (sum over areas
  // of the districts each meets); the districts any one area may meet (>= 1).
  std::optional<std::size_t> county_splits_max, county_pieces_max, county_districts_max;
  std::optional<std::size_t> municipality_splits_max, municipality_pieces_max, municipality_districts_max;
  double cut_edges_weight = 0.0;                  // soft
  double county_splits_weight = 0.0;              // soft
  std::vector<GroupShareTerm> group_share;        // soft and hard

  // Some rule or term reads a group (or vote) count column, so the target depends on them.
  [[nodiscard]] bool reads_group_columns() const noexcept { return !group_share.empty(); }
  // Some term of the energy has a nonzero weight.
  [[nodiscard]] bool has_soft_terms() const noexcept;
  // Some hard limit caps county (municipality) splits, pieces or districts per area.
  [[nodiscard]] bool caps_counties() const noexcept {
    return county_splits_max || county_pieces_max || county_districts_max;
  }
  [[nodiscard]] bool caps_municipalities() const noexcept {
    return municipality_splits_max || municipality_pieces_max || municipality_districts_max;
  }
};

// The hard rules beyond the population tolerance, in words ("overall range at most 10%",
// "at most 40 county pieces", ...), for check and score; column names from `graph`.
[[nodiscard]] std::vector<std::string> describe_limits(const RuleSet& rules, const UnitGraph& graph);

// The largest allowed spread max - min of district populations, in people:
// floor(range * total / k), snapped like the bounds below.
[[nodiscard]] std::int64_t population_spread_max(std::int64_t total_population, std::size_t district_count,
                                                 double range);

// Integer population bounds of a district: [ceil((1-eps) ideal), floor((1+eps) ideal)] with
// ideal = total / k. Products within 1e-9 (relative) of an integer count as that integer, so
// eps = 0.05 and ideal 100,000 give exactly [95,000, 105,000] despite binary rounding of 0.95.
struct PopulationBounds {
  std::int64_t min;
  std::int64_t max;
};
[[nodiscard]] PopulationBounds population_bounds(std::int64_t total_population,
                                                 std::size_t district_count, double deviation);

// A district outside its population bounds: `beyond` people below the lower bound (negative) or
// above the upper bound (positive).
struct PopulationBreach {
  DistrictIndex district;
  std::int64_t population;
  std::int64_t beyond;
};
// Every district of `plan` outside `bounds`, in district order (also an empty one: 0 people).
[[nodiscard]] std::vector<PopulationBreach> population_breaches(const Plan& plan, PopulationBounds bounds);
// "district 3 has population 13,500 (+9.35% from ideal 12,345.50), 538 (4.36% of ideal) above the
// upper bound 12,962", districts numbered 1..k.
[[nodiscard]] std::string describe_population_breach(const PopulationBreach& breach, PopulationBounds bounds,
                                                     double ideal);

class RuleTracker {
 public:
  // Throws std::invalid_argument if the rules do not fit the plan's graph (a county rule on a map
  // without counties, a group column out of range, a deviation outside [0, 1)).
  RuleTracker(const Plan& plan, const RuleSet& rules);

  // plan.move(u, to) and the matching update of every rule. No allocation.
  void move(Plan& plan, UnitIndex u, DistrictIndex to) noexcept;
  // Moves units[i] to to[i] in turn (a recombination's relabelling), in place of Plan::assign.
  void assign(Plan& plan, std::span<const UnitIndex> units,
              std::span<const DistrictIndex> to) noexcept;
  // Recomputes everything from the plan (after Plan::assign or any change made behind our back).
  void reset(const Plan& plan);

  // J(P) = w_cut * cut edges + w_county * split counties - sum_t w_t * (districts meeting t).
  [[nodiscard]] double energy(const Plan& plan) const noexcept;

  // Per-term values, for observables.
  [[nodiscard]] static std::size_t cut_edges(const Plan& plan) noexcept {
    return plan.cut_edge_count();
  }
  // Counties meeting two or more districts.
  [[nodiscard]] std::size_t county_splits() const noexcept { return counties_.split(); }
  // Counties and municipalities by district, kept whenever the map has the codes (for measures);
  // an empty tally (tracking() false) when it has not.
  [[nodiscard]] const SplitTally& county_tally() const noexcept { return counties_; }
  [[nodiscard]] const SplitTally& municipality_tally() const noexcept { return municipalities_; }
  [[nodiscard]] std::size_t group_term_count() const noexcept { return rules_.group_share.size(); }
  // Districts meeting group term t's threshold.
  [[nodiscard]] std::size_t group_districts(std::size_t term) const noexcept {
    return group_met_count_[term];
  }
  [[nodiscard]] bool group_term_met(std::size_t term, DistrictIndex d) const noexcept {
    return group_met_[term * k_ + d] != 0;
  }

  // Largest minus smallest district population (O(1) after a move that keeps the extremes' holders,
  // else one O(k) scan on the next call).
  [[nodiscard]] std::int64_t population_spread(const Plan& plan) const noexcept;
  [[nodiscard]] std::size_t municipality_splits() const noexcept { return municipalities_.split(); }

  [[nodiscard]] std::int64_t population_min() const noexcept { return bounds_.min; }
  [[nodiscard]] std::int64_t population_max() const noexcept { return bounds_.max; }
  [[nodiscard]] bool population_ok(const Plan& plan, DistrictIndex d) const noexcept {
    const std::int64_t p = plan.population(d);
    return p >= bounds_.min && p <= bounds_.max;
  }
  // Every hard rule but each district's population bounds, which the kernels keep themselves
  // (balanced cuts, the flip's test before it moves): the overall range, the county and
  // municipality caps, the group-share counts. O(#group terms), no allocation.
  [[nodiscard]] bool limits_ok(const Plan& plan) const noexcept;
  // Population of every district and limits_ok (contiguity is the kernels' job).
  [[nodiscard]] bool hard_rules_ok(const Plan& plan) const noexcept;
  // Every broken hard rule but contiguity: the job key it comes from and what is wrong, districts
  // numbered 1..k. Allocates (for messages, not for chains).
  struct Breach {
    std::string key;   // e.g. "rules.county_pieces_max"
    std::string text;  // e.g. "31 county pieces, the limit is 30 (1 over)"
  };
  [[nodiscard]] std::vector<Breach> limit_breaches(const Plan& plan) const;
  // Human-readable list of broken hard rules ("" if none), districts numbered 1..k.
  [[nodiscard]] std::string describe_violations(const Plan& plan) const;

  [[nodiscard]] const RuleSet& rules() const noexcept { return rules_; }

 private:
  void update_group_terms(const Plan& plan, DistrictIndex d) noexcept;
  void update_spread(const Plan& plan, DistrictIndex from, DistrictIndex to) noexcept;
  [[nodiscard]] static bool meets(const Plan& plan, const GroupShareTerm& term,
                                  DistrictIndex d) noexcept;

  RuleSet rules_;
  std::size_t k_;
  PopulationBounds bounds_;
  SplitTally counties_, municipalities_;
  // Group terms: term t met in district d at [t * k + d]; districts meeting each term.
  std::vector<std::uint8_t> group_met_;
  std::vector<std::size_t> group_met_count_;
  // Overall range, when the rule is set: the extremes and their districts, rescanned lazily after a
  // move took people from the largest district or gave them to the smallest.
  std::int64_t spread_max_ = 0;
  mutable std::int64_t low_ = 0, high_ = 0;
  mutable DistrictIndex low_d_ = 0, high_d_ = 0;
  mutable bool spread_stale_ = true;
};

}  // namespace planmill
