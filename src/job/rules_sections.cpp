// [rules] and [measures] of the job file.
#include <algorithm>
#include <cmath>
#include <sstream>

#include "job/job_file.hpp"

namespace planmill::job_file {

namespace fs = std::filesystem;

void read_rules(Section& top, JobSpec& job) {
  const toml::table* table = top.table("rules");
  if (!table) return;
  Section rules(*table, "rules", job.path);
  RulesSpec& r = job.rules;
  if (rules.has("population_deviation"))  // the earlier name, now kept for a plan's measured deviation
    rules.fail("population_deviation", "is now called population_tolerance",
               "rename the key; a plan's measured deviation is the observable population_deviation");
  r.population_tolerance = rules.number("population_tolerance", r.population_tolerance, 0.0, 1.0);
  if (rules.has("population_range_max"))
    r.population_range_max = rules.number("population_range_max", -1.0, 0.0, 2.0);
  if (const toml::node* cap = rules.get("county_splits_max"); cap && cap->is_string()) {
    if (cap->value_or(std::string{}) != "fewest")
      rules.fail("county_splits_max", "must be a whole number or \"fewest\"",
                 "write a cap such as 12, or \"fewest\" to split counties only as needed");
    r.county_splits_fewest = true;
  } else {
    r.county_splits_max = rules.integer("county_splits_max", -1, 0, 1'000'000);
  }
  r.fewest_splits_attempts = rules.integer("fewest_splits_attempts", r.fewest_splits_attempts, 1, 100'000);
  if (rules.has("fewest_splits_attempts") && !r.county_splits_fewest)
    rules.fail("fewest_splits_attempts", "only counts with county_splits_max = \"fewest\"",
               "set county_splits_max = \"fewest\", or remove the key");
  r.county_pieces_max = rules.integer("county_pieces_max", -1, 0, 1'000'000);
  r.county_districts_max = rules.integer("county_districts_max", -1, 1, 65'534);
  r.municipality_splits_max = rules.integer("municipality_splits_max", -1, 0, 1'000'000);
  r.municipality_pieces_max = rules.integer("municipality_pieces_max", -1, 0, 1'000'000);
  r.municipality_districts_max = rules.integer("municipality_districts_max", -1, 1, 65'534);
  const auto needs = [&](const std::string& column, const char* kind) {
    for (const char* suffix : {"_splits_max", "_pieces_max", "_districts_max"}) {
      const std::string key = std::string(kind) + suffix;
      if (rules.has(key) && column.empty())
        rules.fail(key, std::string("a ") + kind + " limit needs " + kind + " codes, but [map] names no " + kind +
                            " column",
                   std::string("set map.") + kind + ", or remove the key");
    }
  };
  needs(job.map.county_column, "county");
  needs(job.map.municipality_column, "municipality");
  if (const toml::table* w = rules.table("weights")) {
    Section weights(*w, "rules.weights", job.path);
    r.cut_edges_weight = weights.number("cut_edges", 0.0, -1e6, 1e6);
    r.county_splits_weight = weights.number("county_splits", 0.0, -1e6, 1e6);
    weights.reject_unknown();
  }
  if (const toml::node* node = rules.get("group_share")) {
    const toml::array* list = node->as_array();
    if (!list || !list->is_array_of_tables())
      rules.fail("group_share", "must be a list of tables", "write each term as a [[rules.group_share]] section");
    for (const toml::node& item : *list) {
      Section g(*item.as_table(), "rules.group_share", job.path);
      GroupShareSpec spec;
      spec.group = g.string("group", "", true);
      spec.threshold = g.number("threshold", 0.5, 0.0, 1.0);
      spec.weight = g.number("weight", 0.0, -1e6, 1e6);
      spec.at_least = g.integer("at_least", -1, 0, 65'534);
      spec.at_most = g.integer("at_most", -1, 0, 65'534);
      if (spec.weight == 0.0 && spec.at_least < 0 && spec.at_most < 0)
        g.fail("group", "the term for '" + spec.group + "' has no weight, at_least or at_most, so it does nothing",
               "give a weight (soft), or at_least / at_most (hard), or remove the section");
      if (spec.at_least >= 0 && spec.at_most >= 0 && spec.at_least > spec.at_most)
        g.fail("at_least", "is above at_most, so no plan can meet the term", "lower at_least or raise at_most");
      if (spec.at_least > static_cast<std::int64_t>(job.districts))
        g.fail("at_least", "asks for more districts than the plan has (" + std::to_string(job.districts) + ")",
               "lower at_least");
      bool listed = false;
      for (const auto& name : job.map.group_columns) listed |= name == spec.group;
      if (!listed) g.fail("group", "'" + spec.group + "' is not listed in map.groups", "add it there or fix the name");
      g.reject_unknown();
      r.group_share.push_back(spec);
    }
  }
  rules.reject_unknown();
}

// A weight changes the target law exp(-beta J), so a kernel without a
// target (recombination) would drop it silently; refuse it and name the kernels that honour it.
void check_weights_honoured(Section& top, const JobSpec& job) {
  if (job.sampler.kernel != KernelKind::recombination) return;
  const toml::table* table = top.table("rules");
  if (!table) return;
  Section rules(*table, "rules", job.path);
  const std::string problem =
      "a soft weight, but sampler.kernel recombination has no target law and cannot honour it";
  const std::string remedy =
      "set sampler.kernel to \"merge-split\" or \"flip\" (they weigh plans by exp(-beta * energy)), or remove the weight";
  if (const toml::table* w = rules.table("weights")) {
    Section weights(*w, "rules.weights", job.path);
    if (job.rules.cut_edges_weight != 0.0) weights.fail("cut_edges", problem, remedy);
    if (job.rules.county_splits_weight != 0.0)
      weights.fail("county_splits", problem, remedy);
  }
  if (const toml::node* node = rules.get("group_share"))
    for (const toml::node& item : *node->as_array()) {
      Section g(*item.as_table(), "rules.group_share", job.path);
      const toml::node* weight = item.as_table()->get("weight");
      if (weight && weight->value_or(0.0) != 0.0)
        g.fail("weight", problem + " (a hard at_least / at_most is kept by every kernel)", remedy);
    }
}

// [measures]: names are checked against [map] here, where the line of each key is known.
void read_measures(Section& top, JobSpec& job) {
  const toml::table* table = top.table("measures");
  if (!table) return;
  Section s(*table, "measures", job.path);
  MeasuresSpec& m = job.measures;
  if (s.has("elections")) {
    m.elections = s.strings("elections");
    for (const std::string& name : *m.elections) {
      const auto e = std::find_if(job.map.elections.begin(), job.map.elections.end(),
                                  [&](const ElectionSpec& x) { return x.name == name; });
      if (e == job.map.elections.end())
        s.fail("elections", "'" + name + "' is not an election of [[map.elections]]", "fix the name or add the election");
      if (e->parties.size() != 2)
        s.fail("elections", "'" + name + "' has " + std::to_string(e->parties.size()) +
                                " parties; the measures compare two",
               "leave it out, or give it as a two-party election");
    }
  }
  const auto listed = [&](const std::string& name) {
    return std::find(job.map.group_columns.begin(), job.map.group_columns.end(), name) != job.map.group_columns.end();
  };
  if (s.has("competitive")) {
    const std::vector<double> band = s.numbers("competitive");
    if (band.size() != 2 || !(band[0] >= 0.0 && band[0] <= band[1] && band[1] <= 1.0))
      s.fail("competitive", "must be [low, high] with 0 <= low <= high <= 1", "write it as [0.45, 0.55]");
    m.competitive_low = band[0];
    m.competitive_high = band[1];
  }
  if (s.has("county_splits")) {
    m.county_splits = s.boolean("county_splits", false);
    if (*m.county_splits && job.map.county_column.empty())
      s.fail("county_splits", "county splits need county codes, but [map] names no county column",
             "set map.county, or write county_splits = false");
  }
  if (s.has("municipality_splits")) {
    m.municipality_splits = s.boolean("municipality_splits", false);
    if (*m.municipality_splits && job.map.municipality_column.empty())
      s.fail("municipality_splits", "municipality splits need municipality codes, but [map] names no municipality column",
             "set map.municipality, or write municipality_splits = false");
  }
  if (const toml::node* node = s.get("groups")) {
    const toml::array* list = node->as_array();
    // groups = [] measures no group; otherwise one [[measures.groups]] table per group.
    if (!list || (!list->empty() && !list->is_array_of_tables()))
      s.fail("groups", "must be a list of tables", "write each group as a [[measures.groups]] section");
    m.groups.emplace();
    for (const toml::node& item : *list) {
      Section g(*item.as_table(), "measures.groups", job.path);
      GroupMeasuresSpec spec;
      spec.group = g.string("group", "", true);
      if (!listed(spec.group)) g.fail("group", "'" + spec.group + "' is not listed in map.groups", "add it there or fix the name");
      spec.denominator = g.string("denominator", "");
      if (!spec.denominator.empty() && !listed(spec.denominator))
        g.fail("denominator", "'" + spec.denominator + "' is not listed in map.groups",
               "list the count column (e.g. a voting-age population) in map.groups, or leave the key out for total population");
      if (g.has("thresholds")) {
        spec.thresholds = g.numbers("thresholds");
        for (const double t : spec.thresholds)
          if (!(t >= 0.0 && t <= 1.0)) g.fail("thresholds", "must hold shares in [0, 1]", "write them as fractions, e.g. [0.5, 0.4]");
      }
      for (const auto& other : *m.groups)
        if (other.group == spec.group && other.denominator == spec.denominator)
          g.fail("group", "'" + spec.group + "' is measured twice with the same denominator", "merge the two sections");
      g.reject_unknown();
      m.groups->push_back(std::move(spec));
    }
  }
  s.reject_unknown();
}

}  // namespace planmill::job_file
