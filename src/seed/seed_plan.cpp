#include "planmill/seed/seed_plan.hpp"

#include <algorithm>
#include <numeric>
#include <optional>
#include <sstream>
#include <stdexcept>

#include "planmill/base/error.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"
#include "planmill/tree/tree_weights.hpp"
#include "seed/line_tree.hpp"

namespace planmill {
namespace {

struct Candidate {
  std::uint32_t child;
  bool child_is_district;  // else the side away from the child becomes the district
};

// What a first plan must meet beyond the population band, and so what a cut is judged by: areas
// whose lines it should follow, and group-share counts it should build toward.
struct Aims {
  bool counties = false, towns = false;
  std::vector<const GroupShareTerm*> groups;  // terms with at_least or at_most
  [[nodiscard]] bool any() const noexcept { return counties || towns || !groups.empty(); }
};

Aims aims_of(const UnitGraph& graph, const RuleSet& rules, bool fewest) {
  Aims a;
  a.counties = graph.has_counties() && (rules.caps_counties() || fewest);
  a.towns = graph.has_municipalities() && rules.caps_municipalities();
  for (const GroupShareTerm& t : rules.group_share)
    if (t.at_least || t.at_most) a.groups.push_back(&t);
  return a;
}

// Attempt a's trees: uniform Wilson trees unless the rules cap counties or municipalities (so a
// job without such caps draws the first plan it always drew). Under caps, attempts cycle through
// uniform trees, Wilson trees favouring edges inside counties and municipalities by 4 and by 30,
// and line-following trees (line_tree.hpp: each county spanned inside itself first), so that
// districts are cut along the lines; the fewest-splits search alternates line-following trees
// with Wilson trees weighted 10. (Weighted walks slow down about as much as the weight is large,
// so larger weights are left to the line-following trees.)
struct TreeKind {
  double factor;       // Wilson's edge weight inside an area (1: uniform)
  bool follows_lines;  // a line-following tree instead
};
TreeKind attempt_trees(const Aims& aims, bool fewest, std::size_t attempt) {
  static constexpr TreeKind kCaps[] = {{1.0, false}, {4.0, false}, {30.0, false}, {1.0, true}};
  static constexpr TreeKind kFewest[] = {{1.0, true}, {10.0, false}, {1.0, true}, {4.0, false}};
  if (fewest) return kFewest[attempt % 4];
  return aims.counties || aims.towns ? kCaps[attempt % 4] : TreeKind{1.0, false};
}

// Rank of a finished plan that breaks a hard rule: fewer broken rules first, then fewer county
// splits over the limit.
struct Miss {
  std::size_t rules = 0, excess = 0;
  std::string what;
  [[nodiscard]] bool better_than(const Miss& o) const { return rules != o.rules ? rules < o.rules : excess < o.excess; }
};

Miss describe_miss(const Plan& plan, const RuleTracker& tracker) {
  Miss m;
  m.what = tracker.describe_violations(plan);
  m.rules = 1;
  for (std::size_t at = m.what.find("; "); at != std::string::npos; at = m.what.find("; ", at + 2)) ++m.rules;
  const auto& limit = tracker.rules().county_splits_max;
  if (limit && tracker.county_splits() > *limit) m.excess = tracker.county_splits() - *limit;
  return m;
}

// Recursive bisection with buffers kept across attempts.
class Bisector {
 public:
  Bisector(const GraphHandle& handle, std::size_t districts, const RuleSet& rules, bool fewest)
      : handle_(handle), graph_(*handle), k_(districts), aims_(aims_of(*handle, rules, fewest)), fewest_(fewest) {
    const std::size_t n = graph_.unit_count();
    // The bounds come from a tracker on a trivial plan, so rounding matches the kernels exactly.
    const Plan probe(handle, districts, std::vector<DistrictIndex>(n, 0));
    const RuleTracker bounds(probe, rules);
    lo_ = bounds.population_min();
    hi_ = bounds.population_max();
    label_.assign(n, 0);
    side_.assign(n, 0);
    best_side_.assign(n, 0);
    county_in_.assign(graph_.has_counties() ? graph_.counties().names.size() : 0, 0);
    county_out_ = county_in_;
    town_in_.assign(graph_.has_municipalities() ? graph_.municipalities().names.size() : 0, 0);
    town_out_ = town_in_;
    met_.assign(aims_.groups.size(), 0);
  }

  // One attempt: a plan whose districts are connected and within the population bounds, or none.
  std::optional<Plan> attempt(std::size_t index, Rng& rng, std::size_t trees_per_split) {
    const std::size_t n = graph_.unit_count();
    remaining_.resize(n);
    std::iota(remaining_.begin(), remaining_.end(), UnitIndex{0});
    std::fill(met_.begin(), met_.end(), 0);
    const TreeKind kind = attempt_trees(aims_, fewest_, index);
    const double f = kind.factor;
    const TreeWeights weights{graph_.has_counties() ? f : 1.0, graph_.has_municipalities() ? f : 1.0};
    region_.set_weights(weights);
    lines_ = kind.follows_lines;
    // Uniform trees with no aims draw exactly what the first search drew; anything else may judge.
    const bool judge = aims_.any() && (!weights.trivial() || lines_ || !aims_.groups.empty());
    for (std::size_t m = k_; m >= 2; --m) {
      region_.build(graph_, remaining_);
      const std::int64_t total = region_.total_population();
      const auto rest_lo = static_cast<std::int64_t>(m - 1) * lo_, rest_hi = static_cast<std::int64_t>(m - 1) * hi_;
      const auto balanced_cuts = [&] {
        candidates_.clear();
        if (lines_) line_tree_.sample(region_, graph_, aims_.counties, aims_.towns, rng);
        else sampler_.sample(region_, rng);
        const auto sub = lines_ ? line_tree_.subtree_population() : sampler_.subtree_population();
        const std::uint32_t root = lines_ ? line_tree_.root() : sampler_.root();
        for (std::uint32_t v = 0; v < region_.size(); ++v) {
          if (v == root) continue;
          const std::int64_t s = sub[v], r = total - s;
          if (s >= lo_ && s <= hi_ && r >= rest_lo && r <= rest_hi) candidates_.push_back({v, true});
          if (r >= lo_ && r <= hi_ && s >= rest_lo && s <= rest_hi) candidates_.push_back({v, false});
        }
        return !candidates_.empty();
      };
      bool found = false;
      for (std::size_t t = 0; t < trees_per_split && !found; ++t) found = balanced_cuts();
      if (!found) return std::nullopt;
      const std::span<std::uint8_t> marks(side_.data(), region_.size());
      Candidate pick = candidates_[uniform_below(rng, static_cast<std::uint32_t>(candidates_.size()))];
      mark_side(pick.child, marks);
      bool in_district = pick.child_is_district;
      if (judge) {
        // Of a few balanced cuts, from a few trees, the one that serves the aims best (a seed needs
        // no stated law); its sides are kept in best_side_, since a later tree renumbers nothing
        // but replaces the tree the cut was on.
        std::size_t best = cost(pick, m);
        std::copy(marks.begin(), marks.end(), best_side_.begin());
        const int tries = fewest_ ? 32 : 24, per_tree = 4;
        for (int t = 1; t <= tries && best > 0; ++t) {
          if (t % per_tree == 0) {  // a fresh tree; stop looking if none of a few has a balanced cut
            bool more = false;
            for (int extra = 0; extra < 8 && !more; ++extra) more = balanced_cuts();
            if (!more) break;
          }
          const Candidate other = candidates_[uniform_below(rng, static_cast<std::uint32_t>(candidates_.size()))];
          const std::size_t c = cost(other, m);
          if (c < best) {
            best = c;
            in_district = other.child_is_district;
            std::copy(marks.begin(), marks.end(), best_side_.begin());
          }
        }
        std::copy(best_side_.begin(), best_side_.begin() + region_.size(), marks.begin());
      }
      for (std::size_t t = 0; t < aims_.groups.size(); ++t) met_[t] += meets(*aims_.groups[t], marks, in_district);
      next_.clear();
      const auto district = static_cast<DistrictIndex>(k_ - m);
      for (std::uint32_t i = 0; i < region_.size(); ++i) {
        if ((marks[i] != 0) == in_district) label_[region_.global(i)] = district;
        else next_.push_back(region_.global(i));
      }
      remaining_.swap(next_);
    }
    for (UnitIndex u : remaining_) label_[u] = static_cast<DistrictIndex>(k_ - 1);
    return Plan(handle_, k_, label_);
  }

 private:
  void mark_side(std::uint32_t child, std::span<std::uint8_t> marks) const noexcept {
    if (lines_) line_tree_.mark_side(child, marks);
    else sampler_.mark_side(child, marks);
  }

  // Areas of `codes` the cut splits (units on both sides), over the region.
  std::size_t codes_cut(const UnitCodes& codes, std::span<const std::uint8_t> marks, std::vector<std::uint32_t>& in,
                        std::vector<std::uint32_t>& out) const {
    std::fill(in.begin(), in.end(), 0U);
    std::fill(out.begin(), out.end(), 0U);
    for (std::uint32_t i = 0; i < region_.size(); ++i) {
      const std::uint32_t c = codes.code[region_.global(i)];
      if (c != UnitCodes::kNone) ++(marks[i] != 0 ? in : out)[c];
    }
    std::size_t cut = 0;
    for (std::size_t c = 0; c < in.size(); ++c) cut += in[c] > 0 && out[c] > 0;
    return cut;
  }

  // Whether the district side of the cut meets the term's threshold.
  bool meets(const GroupShareTerm& term, std::span<const std::uint8_t> marks, bool in_district) const {
    const std::span<const double> count = graph_.count_column(term.column);
    double group = 0.0;
    std::int64_t people = 0;
    for (std::uint32_t i = 0; i < region_.size(); ++i)
      if ((marks[i] != 0) == in_district) {
        group += count[region_.global(i)];
        people += graph_.population(region_.global(i));
      }
    return people > 0 && group / static_cast<double>(people) >= term.threshold;
  }

  // Areas split, and a large penalty per group-share count the district moves away from.
  std::size_t cost(const Candidate& c, std::size_t m) {
    const std::span<std::uint8_t> marks(side_.data(), region_.size());
    mark_side(c.child, marks);
    std::size_t total = 0;
    if (aims_.counties) total += codes_cut(graph_.counties(), marks, county_in_, county_out_);
    if (aims_.towns) total += codes_cut(graph_.municipalities(), marks, town_in_, town_out_);
    for (std::size_t t = 0; t < aims_.groups.size(); ++t) {
      const GroupShareTerm& term = *aims_.groups[t];
      const bool yes = meets(term, marks, c.child_is_district);
      const std::size_t left = m - 1;  // districts still to draw after this one
      if (term.at_least && !yes && met_[t] + left < *term.at_least) total += 10'000;
      else if (term.at_least && !yes && met_[t] < *term.at_least) total += 100;
      if (term.at_most && yes && met_[t] >= *term.at_most) total += 10'000;
    }
    return total;
  }

  const GraphHandle& handle_;
  const UnitGraph& graph_;
  std::size_t k_;
  Aims aims_;
  bool fewest_;
  std::int64_t lo_ = 0, hi_ = 0;
  Region region_;
  SpanningTreeSampler sampler_;
  seed::LineFollowingTree line_tree_;
  bool lines_ = false;  // this attempt draws line-following trees
  std::vector<UnitIndex> remaining_, next_;
  std::vector<DistrictIndex> label_;
  std::vector<std::uint8_t> side_, best_side_;
  std::vector<Candidate> candidates_;
  std::vector<std::uint32_t> county_in_, county_out_, town_in_, town_out_;
  std::vector<std::size_t> met_;
};

[[noreturn]] void no_plan(std::size_t districts, const RuleSet& rules, const SeedEffort& effort,
                          std::size_t balanced_plans, const Miss& closest) {
  std::ostringstream message;
  message << "no valid starting plan found for " << districts << " districts after " << effort.restarts
          << " attempts of up to " << effort.trees_per_split << " spanning trees per split: ";
  if (balanced_plans == 0) {
    message << "no attempt could cut every district within +/-" << 100.0 * rules.population_tolerance
            << "% of the ideal population; loosen rules.population_tolerance";
  } else {
    message << balanced_plans << " of them met the population band (+/-" << 100.0 * rules.population_tolerance
            << "%) but broke another hard rule; the closest: " << closest.what << "; loosen that rule";
  }
  message << ", or give a plan file as districts.start";
  throw InfeasibleError(message.str());
}

}  // namespace

Plan random_seed_plan(const GraphHandle& handle, std::size_t districts, const RuleSet& rules, Rng& rng,
                      const SeedEffort& effort) {
  Bisector bisect(handle, districts, rules, false);
  std::size_t balanced_plans = 0;
  Miss closest;
  for (std::size_t attempt = 0; attempt < effort.restarts; ++attempt) {
    std::optional<Plan> plan = bisect.attempt(attempt, rng, effort.trees_per_split);
    if (!plan) continue;
    const RuleTracker tracker(*plan, rules);
    if (tracker.hard_rules_ok(*plan)) return std::move(*plan);
    // Every district is connected and within the population bounds: another hard rule failed.
    const Miss miss = describe_miss(*plan, tracker);
    if (balanced_plans++ == 0 || miss.better_than(closest)) closest = miss;
  }
  no_plan(districts, rules, effort, balanced_plans, closest);
}

std::size_t counties_too_big_to_keep(const UnitGraph& graph, std::size_t districts, const RuleSet& rules) {
  if (!graph.has_counties()) return 0;
  const PopulationBounds bounds = population_bounds(graph.total_population(), districts, rules.population_tolerance);
  std::vector<std::int64_t> people(graph.counties().names.size(), 0);
  for (UnitIndex u = 0; u < graph.unit_count(); ++u) {
    const std::uint32_t c = graph.counties().code[u];
    if (c != UnitCodes::kNone) people[c] += graph.population(u);
  }
  return static_cast<std::size_t>(std::count_if(people.begin(), people.end(), [&](std::int64_t p) { return p > bounds.max; }));
}

FewestSplits fewest_county_splits(const GraphHandle& handle, std::size_t districts, RuleSet rules, Rng& rng,
                                  std::size_t attempts) {
  if (!handle->has_counties()) throw std::invalid_argument("the fewest county splits need county codes");
  rules.county_splits_max.reset();
  static constexpr std::size_t kKept = 16;
  const SeedEffort effort{200, attempts};
  FewestSplits out;
  out.attempts = attempts;
  out.lower_bound = counties_too_big_to_keep(*handle, districts, rules);
  Bisector bisect(handle, districts, rules, true);
  std::size_t balanced_plans = 0;
  Miss closest;
  for (std::size_t attempt = 0; attempt < attempts; ++attempt) {
    std::optional<Plan> plan = bisect.attempt(attempt, rng, effort.trees_per_split);
    if (!plan) continue;
    const RuleTracker tracker(*plan, rules);
    if (!tracker.hard_rules_ok(*plan)) {
      const Miss miss = describe_miss(*plan, tracker);
      if (balanced_plans++ == 0 || miss.better_than(closest)) closest = miss;
      continue;
    }
    const std::size_t splits = tracker.county_splits();
    if (out.valid_plans++ == 0 || splits < out.found) {
      out.found = splits;
      out.plans.clear();
    }
    if (splits == out.found && out.plans.size() < kKept &&
        std::none_of(out.plans.begin(), out.plans.end(), [&](const Plan& p) { return p == *plan; }))
      out.plans.push_back(std::move(*plan));
  }
  if (out.valid_plans == 0) no_plan(districts, rules, effort, balanced_plans, closest);
  return out;
}

void check_seed_plan(const Plan& plan, const RuleSet& rules, const std::string& source) {
  const RuleTracker tracker(plan, rules);
  std::string problems;
  for (DistrictIndex d = 0; d < plan.district_count(); ++d)
    if (!plan.is_connected(d)) problems += " district " + std::to_string(d + 1) + " is not contiguous;";
  if (!tracker.hard_rules_ok(plan)) problems += " " + tracker.describe_violations(plan) + ";";
  if (!problems.empty())
    throw InfeasibleError(source + ": the starting plan breaks the rules:" + problems +
                          " fix the plan or loosen the rules in the job file");
}

}  // namespace planmill
