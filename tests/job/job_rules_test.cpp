// The job file's rules resolved against a map: group names become count columns, and a rule the
// map cannot support is an InputError naming the key and the job file.
#include "planmill/job/job_rules.hpp"

#include <gtest/gtest.h>

#include <vector>

#include "planmill/base/error.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

TEST(MakeRuleSet, ResolvesGroupsAndNamesMissingData) {
  test::GraphExtras x;
  x.counts = {{"votes_a", std::vector<double>(9, 1.0)}, {"black", std::vector<double>(9, 0.5)}};
  x.groups = {1};
  const GraphHandle g_handle = share_graph(test::grid(3, 3, x));
  const UnitGraph& g = *g_handle;
  RulesSpec spec;
  spec.population_tolerance = 0.02;
  spec.cut_edges_weight = 0.5;
  spec.group_share = {{"black", 0.4, 3.0}};
  const RuleSet rules = make_rule_set(spec, g, "job.toml");
  EXPECT_EQ(rules.population_tolerance, 0.02);
  EXPECT_FALSE(rules.county_splits_max.has_value());
  ASSERT_EQ(rules.group_share.size(), 1U);
  EXPECT_EQ(rules.group_share[0].column, 1U);
  EXPECT_EQ(rules.group_share[0].weight, 3.0);

  RulesSpec county = spec;
  county.county_splits_max = 3;
  try {
    (void)make_rule_set(county, g, "job.toml");
    ADD_FAILURE() << "expected InputError";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().column, "rules.county_splits_max");
    EXPECT_EQ(e.where().file, "job.toml");
  }
  RulesSpec wide = spec;
  wide.population_tolerance = 1.5;
  EXPECT_THROW((void)make_rule_set(wide, g, "job.toml"), InputError);
  RulesSpec unknown = spec;
  unknown.group_share = {{"hispanic", 0.4, 3.0}};
  EXPECT_THROW((void)make_rule_set(unknown, g, "job.toml"), InputError);
}

}  // namespace
}  // namespace planmill
