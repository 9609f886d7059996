// The stopping rule (stopping_rule.hpp): a verdict counts only on a long enough record that
// passes both whole and in its later half alone.
#include "planmill/diagnose/stopping_rule.hpp"

#include <gtest/gtest.h>

#include "synthetic_draws.hpp"

namespace planmill::diagnose {
namespace {

StopCheck check(const testing::Draws& d, const VerdictRule& rule) {
  const NamedDraws q{d.name, d.matrix()};
  return check_stop({&q, 1}, rule);
}

TEST(StoppingRule, AWellMixedRecordPassesWholeAndInItsLaterHalf) {
  const auto d = testing::ar1("cut_edges", 1000, 4, 0.3, 61);
  const StopCheck s = check(d, {});
  EXPECT_TRUE(s.pass()) << s.summary();
  EXPECT_EQ(s.records, 1000u);
  EXPECT_EQ(s.later_first, 500u);
  EXPECT_EQ(s.failed_part(), "");
  // The later half is judged on its own draws: the same table as diagnose_observable on them.
  const auto later = testing::ar1("cut_edges", 1000, 4, 0.3, 61);
  std::vector<double> tail;
  for (std::size_t c = 0; c < 4; ++c)
    tail.insert(tail.end(), later.values.begin() + static_cast<std::ptrdiff_t>(c * 1000 + 500),
                later.values.begin() + static_cast<std::ptrdiff_t>(c * 1000 + 1000));
  EXPECT_EQ(s.later.table[0].rhat, diagnose_observable("cut_edges", {tail, 500, 4}).rhat);
}

// iid N(0, 1) draws, then in the last quarter of every chain a shift of +0.25 (chains 0, 1) or
// -0.25 (chains 2, 3): chains that were together drift apart late. Over the whole record the
// shift is diluted (a rough calculation gives split R-hat near 1.004); the later half alone
// shows it (near 1.018), against the default rhat_max 1.01.
TEST(StoppingRule, ARecordThatPassesWholeButNotInItsLaterHalfFails) {
  auto d = testing::ar1("energy", 4000, 4, 0.0, 62);
  for (std::size_t c = 0; c < 4; ++c)
    for (std::size_t t = 3000; t < 4000; ++t) d.values[c * 4000 + t] += c < 2 ? 0.25 : -0.25;
  const StopCheck s = check(d, {});
  EXPECT_TRUE(s.whole.pass) << s.whole.table[0].rhat;
  EXPECT_FALSE(s.later.pass) << s.later.table[0].rhat;
  EXPECT_FALSE(s.pass());
  EXPECT_EQ(s.failed_part(), "later half");
  EXPECT_NE(s.summary().find("later half (records 2000..3999"), std::string::npos) << s.summary();
  EXPECT_NE(s.summary().find("the whole record passes"), std::string::npos) << s.summary();
}

TEST(StoppingRule, ARecordShorterThanMinRecordsFailsEvenIfItsVerdictPasses) {
  const auto d = testing::ar1("cut_edges", 150, 4, 0.0, 63);
  VerdictRule rule;
  rule.ess_min = 100;
  rule.min_records = 151;
  const StopCheck s = check(d, rule);
  EXPECT_TRUE(s.whole.pass);
  EXPECT_TRUE(s.later.pass);
  EXPECT_FALSE(s.pass());
  EXPECT_EQ(s.failed_part(), "too short");
  EXPECT_NE(s.summary().find("150 records per chain"), std::string::npos) << s.summary();
  rule.min_records = 150;
  EXPECT_TRUE(check(d, rule).pass());
}

TEST(StoppingRule, AFailingWholeRecordIsNamedFirst) {
  const auto d = testing::ar1("seats", 1000, 4, 0.0, 64, 1.0);  // chain means 0, 1, 2, 3
  const StopCheck s = check(d, {});
  EXPECT_FALSE(s.whole.pass);
  EXPECT_EQ(s.failed_part(), "whole record");
}

}  // namespace
}  // namespace planmill::diagnose
