// What the verdict judges (run/judged_draws.hpp): verdict.judge picks columns, and a column with a
// value that is not a number in a counted record is left out with a note rather than failing
// the verdict.
#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "planmill/base/error.hpp"
#include "planmill/diagnose/convergence.hpp"
#include "planmill/run/judged_draws.hpp"

namespace planmill {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

diagnose::RecordedDraws three_columns() {
  // Columns a, b, c over 2 chains of 3 records; b is NaN in chain 1's first record only.
  diagnose::RecordedDraws d;
  d.observables = {"a", "b", "c"};
  d.chains = {{"0", {1, 2, 3, 4, 5, 6, 7, 8, 9}}, {"1", {10, kNaN, 12, 13, 14, 15, 16, 17, 18}}};
  return d;
}

TEST(JudgedDraws, AColumnWithANaNIsLeftOutWithANoteAndTheOthersKeepTheirValues) {
  const JudgedDraws j = judged_draws(three_columns(), std::nullopt);
  EXPECT_EQ(j.draws.observables, (std::vector<std::string>{"a", "c"}));
  ASSERT_EQ(j.draws.chains.size(), 2U);
  EXPECT_EQ(j.draws.chains[1].rows, (std::vector<double>{10, 12, 13, 15, 16, 18}));
  ASSERT_EQ(j.notes.size(), 1U);
  EXPECT_EQ(j.notes[0], "b: not judged: not a number in 1 of 6 records (undefined for those plans)");
}

TEST(JudgedDraws, ANaNInADroppedRecordDoesNotCountAndTheJudgeListPicksColumns) {
  diagnose::RecordedDraws d = three_columns();
  d.dropped_records = 1;
  const JudgedDraws all = judged_draws(d, std::nullopt);
  EXPECT_EQ(all.draws.observables, (std::vector<std::string>{"a", "b", "c"}));
  EXPECT_TRUE(all.notes.empty());
  const JudgedDraws picked = judged_draws(d, std::vector<std::string>{"c", "b"});
  EXPECT_EQ(picked.draws.observables, (std::vector<std::string>{"b", "c"}));  // in the run's order
  EXPECT_EQ(picked.draws.chains[0].rows, (std::vector<double>{2, 3, 5, 6, 8, 9}));
  EXPECT_EQ(picked.draws.dropped_records, 1U);
}

TEST(JudgedDraws, AnUnknownJudgedNameIsAnInputErrorNamingTheKeyAndLine) {
  JobSpec job;
  job.path = "job.toml";
  job.verdict_judge = std::vector<std::string>{"a", "nope"};
  job.verdict_judge_line = 7;
  try {
    check_judged_names(job, {"a", "b"});
    FAIL() << "no error";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().column, "verdict.judge");
    EXPECT_EQ(e.where().line, 7U);
    EXPECT_NE(std::string(e.what()).find("'nope' is not an observable of this run"), std::string::npos) << e.what();
  }
  job.verdict_judge = std::vector<std::string>{"b"};
  EXPECT_NO_THROW(check_judged_names(job, {"a", "b"}));
}

}  // namespace
}  // namespace planmill
