#include "planmill/rules/rules.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <stdexcept>


namespace planmill {
namespace {

// 1234567 -> "1,234,567".
std::string with_commas(std::int64_t value) {
  std::string digits = std::to_string(value < 0 ? -value : value);
  std::string out;
  for (std::size_t i = 0; i < digits.size(); ++i) {
    if (i > 0 && (digits.size() - i) % 3 == 0) out += ',';
    out += digits[i];
  }
  return value < 0 ? "-" + out : out;
}

// 100000 -> "100,000", 16/3 -> "5.33".
std::string ideal_text(double ideal) {
  const double whole = std::floor(ideal);
  const auto hundredths = static_cast<int>(std::lround((ideal - whole) * 100.0));
  if (hundredths == 0) return with_commas(static_cast<std::int64_t>(whole));
  if (hundredths == 100) return with_commas(static_cast<std::int64_t>(whole) + 1);
  char buf[8];
  std::snprintf(buf, sizeof buf, ".%02d", hundredths);
  return with_commas(static_cast<std::int64_t>(whole)) + buf;
}

std::string percent(double fraction) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%+.2f%%", 100.0 * fraction);
  return buf;
}

// x, or the integer next to it when x is that integer up to rounding of the inputs.
long double snap(long double x) {
  const long double r = std::round(x);
  return std::fabs(x - r) <= 1e-9L * std::max(1.0L, std::fabs(x)) ? r : x;
}

}  // namespace

PopulationBounds population_bounds(std::int64_t total_population, std::size_t district_count,
                                   double deviation) {
  const long double ideal =
      static_cast<long double>(total_population) / static_cast<long double>(district_count);
  const long double eps = deviation;
  const long double low = snap((1.0L - eps) * ideal), high = snap((1.0L + eps) * ideal);
  return {static_cast<std::int64_t>(std::ceil(low)), static_cast<std::int64_t>(std::floor(high))};
}

RuleTracker::RuleTracker(const Plan& plan, const RuleSet& rules)
    : rules_(rules), k_(plan.district_count()) {
  const UnitGraph& g = plan.graph();
  if (!(rules_.population_tolerance >= 0.0 && rules_.population_tolerance < 1.0))
    throw std::invalid_argument("population deviation must lie in [0, 1)");
  for (const GroupShareTerm& t : rules_.group_share)
    if (t.column >= g.count_column_count())
      throw std::invalid_argument("group-share term names count column " +
                                  std::to_string(t.column) +
                                  ", the map has " + std::to_string(g.count_column_count()));
  const bool county_rules = rules_.county_splits_max.has_value() || rules_.county_splits_weight != 0.0;
  if (county_rules && !g.has_counties())
    throw std::invalid_argument("county rules need county codes, the map has none");
  // Split counts are cheap, an observable and a measure, so keep them whenever the map has codes.
  if (g.has_counties()) counties_ = SplitTally(plan, g.counties());
  if (g.has_municipalities()) municipalities_ = SplitTally(plan, g.municipalities());
  bounds_ = population_bounds(g.total_population(), k_, rules_.population_tolerance);
  reset(plan);
}

void RuleTracker::reset(const Plan& plan) {
  counties_.reset(plan);
  municipalities_.reset(plan);
  group_met_.assign(rules_.group_share.size() * k_, 0);
  group_met_count_.assign(rules_.group_share.size(), 0);
  for (DistrictIndex d = 0; d < k_; ++d) update_group_terms(plan, d);
}

bool RuleTracker::meets(const Plan& plan, const GroupShareTerm& term, DistrictIndex d) noexcept {
  const std::int64_t pop = plan.population(d);
  if (pop <= 0) return false;
  return plan.count(d, term.column) / static_cast<double>(pop) >= term.threshold;
}

void RuleTracker::update_group_terms(const Plan& plan, DistrictIndex d) noexcept {
  for (std::size_t t = 0; t < rules_.group_share.size(); ++t) {
    const std::uint8_t now = meets(plan, rules_.group_share[t], d) ? 1 : 0;
    std::uint8_t& was = group_met_[t * k_ + d];
    if (now != was) {
      group_met_count_[t] = now ? group_met_count_[t] + 1 : group_met_count_[t] - 1;
      was = now;
    }
  }
}

void RuleTracker::move(Plan& plan, UnitIndex u, DistrictIndex to) noexcept {
  const DistrictIndex from = plan.district_of(u);
  if (from == to) return;
  plan.move(u, to);
  counties_.move(u, from, to);
  municipalities_.move(u, from, to);
  update_group_terms(plan, from);
  update_group_terms(plan, to);
}

void RuleTracker::assign(Plan& plan, std::span<const UnitIndex> units,
                         std::span<const DistrictIndex> to) noexcept {
  for (std::size_t i = 0; i < units.size(); ++i) move(plan, units[i], to[i]);
}

double RuleTracker::energy(const Plan& plan) const noexcept {
  // Terms are integer counts times weights, so the sum is the same however we got here.
  double j = rules_.cut_edges_weight * static_cast<double>(plan.cut_edge_count()) +
             rules_.county_splits_weight * static_cast<double>(counties_.split());
  for (std::size_t t = 0; t < rules_.group_share.size(); ++t)
    j -= rules_.group_share[t].weight * static_cast<double>(group_met_count_[t]);
  return j;
}

bool RuleTracker::hard_rules_ok(const Plan& plan) const noexcept {
  for (DistrictIndex d = 0; d < k_; ++d)
    if (!population_ok(plan, d)) return false;
  return !rules_.county_splits_max || counties_.split() <= *rules_.county_splits_max;
}

std::vector<PopulationBreach> population_breaches(const Plan& plan, PopulationBounds bounds) {
  std::vector<PopulationBreach> found;
  for (DistrictIndex d = 0; d < plan.district_count(); ++d) {
    const std::int64_t p = plan.population(d);
    if (p < bounds.min) found.push_back({d, p, p - bounds.min});
    else if (p > bounds.max) found.push_back({d, p, p - bounds.max});
  }
  return found;
}

std::string describe_population_breach(const PopulationBreach& breach, PopulationBounds bounds, double ideal) {
  const std::int64_t p = breach.population;
  const std::int64_t people = breach.beyond < 0 ? -breach.beyond : breach.beyond;
  return "district " + std::to_string(breach.district + 1) + " has population " + with_commas(p) + " (" +
         percent((static_cast<double>(p) - ideal) / ideal) + " from ideal " + ideal_text(ideal) + "), " +
         with_commas(people) + " (" + percent(static_cast<double>(people) / ideal).substr(1) + " of ideal) " +
         (breach.beyond < 0 ? "below the lower bound " + with_commas(bounds.min)
                            : "above the upper bound " + with_commas(bounds.max));
}

std::string RuleTracker::describe_violations(const Plan& plan) const {
  std::string text;
  auto add = [&text](const std::string& item) { text += (text.empty() ? "" : "; ") + item; };
  const double ideal = plan.ideal_population();
  if (bounds_.min > bounds_.max)
    add("no district population can meet the bounds: ideal " + ideal_text(ideal) +
        " with deviation " + percent(rules_.population_tolerance).substr(1) +
        " leaves no whole number between them; allow a larger deviation");
  for (const PopulationBreach& breach : population_breaches(plan, bounds_))
    add(describe_population_breach(breach, bounds_, ideal));
  if (rules_.county_splits_max && counties_.split() > *rules_.county_splits_max)
    add(std::to_string(counties_.split()) + " counties are split, the limit is " +
        std::to_string(*rules_.county_splits_max));
  return text;
}

}  // namespace planmill
