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

std::int64_t population_spread_max(std::int64_t total_population, std::size_t district_count, double range) {
  const long double ideal =
      static_cast<long double>(total_population) / static_cast<long double>(district_count);
  return static_cast<std::int64_t>(std::floor(snap(static_cast<long double>(range) * ideal)));
}

bool RuleSet::has_soft_terms() const noexcept {
  bool any = cut_edges_weight != 0.0 || county_splits_weight != 0.0;
  for (const GroupShareTerm& t : group_share) any |= t.weight != 0.0;
  return any;
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
  if ((rules_.caps_counties() || rules_.county_splits_weight != 0.0) && !g.has_counties())
    throw std::invalid_argument("county rules need county codes, the map has none");
  if (rules_.caps_municipalities() && !g.has_municipalities())
    throw std::invalid_argument("municipality rules need municipality codes, the map has none");
  if (rules_.county_districts_max == std::size_t{0} || rules_.municipality_districts_max == std::size_t{0})
    throw std::invalid_argument("an area meets at least one district: the districts-per-area limit must be >= 1");
  if (rules_.population_range_max && !(*rules_.population_range_max >= 0.0))
    throw std::invalid_argument("the overall population range must be >= 0");
  // Split counts are cheap, an observable and a measure, so keep them whenever the map has codes.
  if (g.has_counties()) counties_ = SplitTally(plan, g.counties());
  if (g.has_municipalities()) municipalities_ = SplitTally(plan, g.municipalities());
  if (rules_.county_districts_max) counties_.set_district_limit(*rules_.county_districts_max);
  if (rules_.municipality_districts_max) municipalities_.set_district_limit(*rules_.municipality_districts_max);
  bounds_ = population_bounds(g.total_population(), k_, rules_.population_tolerance);
  if (rules_.population_range_max)
    spread_max_ = population_spread_max(g.total_population(), k_, *rules_.population_range_max);
  reset(plan);
}

void RuleTracker::reset(const Plan& plan) {
  counties_.reset(plan);
  municipalities_.reset(plan);
  group_met_.assign(rules_.group_share.size() * k_, 0);
  group_met_count_.assign(rules_.group_share.size(), 0);
  for (DistrictIndex d = 0; d < k_; ++d) update_group_terms(plan, d);
  spread_stale_ = true;
}

std::int64_t RuleTracker::population_spread(const Plan& plan) const noexcept {
  if (spread_stale_ || !rules_.population_range_max) {
    low_d_ = high_d_ = 0;
    for (DistrictIndex d = 1; d < k_; ++d) {
      if (plan.population(d) < plan.population(low_d_)) low_d_ = d;
      if (plan.population(d) > plan.population(high_d_)) high_d_ = d;
    }
    low_ = plan.population(low_d_);
    high_ = plan.population(high_d_);
    spread_stale_ = false;
  }
  return high_ - low_;
}

void RuleTracker::update_spread(const Plan& plan, DistrictIndex from, DistrictIndex to) noexcept {
  if (spread_stale_) return;
  // `from` lost people and `to` gained them: the extremes stay known unless the largest district
  // shrank or the smallest grew.
  if (from == high_d_ || to == low_d_) {
    spread_stale_ = true;
    return;
  }
  if (plan.population(from) < low_) low_ = plan.population(low_d_ = from);
  if (plan.population(to) > high_) high_ = plan.population(high_d_ = to);
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
  if (rules_.population_range_max) update_spread(plan, from, to);
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

bool RuleTracker::limits_ok(const Plan& plan) const noexcept {
  const auto within = [](const std::optional<std::size_t>& limit, std::size_t value) {
    return !limit || value <= *limit;
  };
  if (!within(rules_.county_splits_max, counties_.split()) || !within(rules_.county_pieces_max, counties_.pieces()) ||
      counties_.over_limit() > 0)
    return false;
  if (!within(rules_.municipality_splits_max, municipalities_.split()) ||
      !within(rules_.municipality_pieces_max, municipalities_.pieces()) || municipalities_.over_limit() > 0)
    return false;
  for (std::size_t t = 0; t < rules_.group_share.size(); ++t) {
    const GroupShareTerm& term = rules_.group_share[t];
    if ((term.at_least && group_met_count_[t] < *term.at_least) || !within(term.at_most, group_met_count_[t]))
      return false;
  }
  return !rules_.population_range_max || population_spread(plan) <= spread_max_;
}

bool RuleTracker::hard_rules_ok(const Plan& plan) const noexcept {
  for (DistrictIndex d = 0; d < k_; ++d)
    if (!population_ok(plan, d)) return false;
  return limits_ok(plan);
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

namespace {

std::string over(std::size_t value, std::size_t limit) {
  return " (" + std::to_string(value - limit) + " over)";
}

// Breaches of the split, piece and per-area caps on one kind of area.
void split_breaches(const SplitTally& tally, const UnitCodes* codes, const std::string& kind, const std::string& plural,
                    const std::optional<std::size_t>& splits, const std::optional<std::size_t>& pieces,
                    const std::optional<std::size_t>& districts, std::vector<RuleTracker::Breach>& out) {
  if (splits && tally.split() > *splits)
    out.push_back({"rules." + kind + "_splits_max", std::to_string(tally.split()) + " " + plural +
                                                        " are split, the limit is " + std::to_string(*splits) +
                                                        over(tally.split(), *splits)});
  if (pieces && tally.pieces() > *pieces)
    out.push_back({"rules." + kind + "_pieces_max", std::to_string(tally.pieces()) + " " + kind +
                                                        " pieces, the limit is " + std::to_string(*pieces) +
                                                        over(tally.pieces(), *pieces)});
  if (districts && tally.over_limit() > 0) {
    std::string named;
    std::size_t listed = 0;
    for (std::uint32_t c = 0; c < tally.code_count(); ++c) {
      if (tally.districts_meeting(c) <= *districts) continue;
      if (++listed > 5) {
        named += ", ...";
        break;
      }
      const std::string name = codes && c < codes->names.size() ? codes->names[c] : std::to_string(c);
      named += (listed > 1 ? ", " : "") + name + " meets " + std::to_string(tally.districts_meeting(c));
    }
    out.push_back({"rules." + kind + "_districts_max",
                   std::to_string(tally.over_limit()) + " " + plural + " meet more than " + std::to_string(*districts) +
                       " districts (" + named + ")"});
  }
}

}  // namespace

std::vector<std::string> describe_limits(const RuleSet& rules, const UnitGraph& graph) {
  std::vector<std::string> out;
  if (rules.population_range_max)
    out.push_back("overall population range at most " + percent(*rules.population_range_max).substr(1) +
                  " of the ideal");
  const auto caps = [&out](const char* kind, const char* plural, const std::optional<std::size_t>& splits,
                           const std::optional<std::size_t>& pieces, const std::optional<std::size_t>& districts) {
    if (splits) out.push_back("at most " + std::to_string(*splits) + " " + plural + " split");
    if (pieces) out.push_back("at most " + std::to_string(*pieces) + " " + kind + " pieces");
    if (districts) out.push_back("no " + std::string(kind) + " in more than " + std::to_string(*districts) + " districts");
  };
  caps("county", "counties", rules.county_splits_max, rules.county_pieces_max, rules.county_districts_max);
  caps("municipality", "municipalities", rules.municipality_splits_max, rules.municipality_pieces_max,
       rules.municipality_districts_max);
  for (const GroupShareTerm& t : rules.group_share) {
    if (!t.at_least && !t.at_most) continue;
    char share[32];
    std::snprintf(share, sizeof share, "%g", t.threshold);
    std::string bound = t.at_least && t.at_most ? std::to_string(*t.at_least) + " to " + std::to_string(*t.at_most)
                        : t.at_least           ? "at least " + std::to_string(*t.at_least)
                                               : "at most " + std::to_string(*t.at_most);
    out.push_back(bound + " districts with a " + graph.count_column_name(t.column) + " share of at least " + share);
  }
  return out;
}

std::vector<RuleTracker::Breach> RuleTracker::limit_breaches(const Plan& plan) const {
  std::vector<Breach> out;
  const UnitGraph& g = plan.graph();
  if (rules_.population_range_max && population_spread(plan) > spread_max_) {
    const double ideal = plan.ideal_population();
    out.push_back({"rules.population_range_max",
                   "overall population range " + with_commas(population_spread(plan)) + " (" +
                       percent(static_cast<double>(population_spread(plan)) / ideal).substr(1) +
                       " of ideal) between the largest and the smallest district, the limit is " +
                       with_commas(spread_max_) + " (" + percent(*rules_.population_range_max).substr(1) + ")"});
  }
  split_breaches(counties_, g.has_counties() ? &g.counties() : nullptr, "county", "counties", rules_.county_splits_max,
                 rules_.county_pieces_max, rules_.county_districts_max, out);
  split_breaches(municipalities_, g.has_municipalities() ? &g.municipalities() : nullptr, "municipality",
                 "municipalities", rules_.municipality_splits_max, rules_.municipality_pieces_max,
                 rules_.municipality_districts_max, out);
  for (std::size_t t = 0; t < rules_.group_share.size(); ++t) {
    const GroupShareTerm& term = rules_.group_share[t];
    const std::size_t met = group_met_count_[t];
    char share[32];
    std::snprintf(share, sizeof share, "%g", term.threshold);
    const std::string what = std::to_string(met) + " districts have a " + g.count_column_name(term.column) +
                             " share of at least " + share;
    if (term.at_least && met < *term.at_least)
      out.push_back({"rules.group_share.at_least", what + ", at least " + std::to_string(*term.at_least) +
                                                       " must (" + std::to_string(*term.at_least - met) + " short)"});
    if (term.at_most && met > *term.at_most)
      out.push_back({"rules.group_share.at_most",
                     what + ", at most " + std::to_string(*term.at_most) + " may" + over(met, *term.at_most)});
  }
  return out;
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
  for (const Breach& breach : limit_breaches(plan)) add(breach.text);
  return text;
}

}  // namespace planmill
