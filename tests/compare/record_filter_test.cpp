// Record filters (compare/record_filter.hpp) on hand-made tables: each operator at its boundary,
// NaN passing nothing, bad text refused, and the sequential counts worked out by hand.
#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "planmill/base/error.hpp"
#include "planmill/compare/record_filter.hpp"

namespace planmill::compare {
namespace {

TEST(RecordFilter, EachOperatorHoldsExactlyWhereItSays) {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  struct Case {
    const char* text;
    bool at_2, at_3, at_4;
  };
  for (const Case& c : {Case{"x < 3", true, false, false}, Case{"x<=3", true, true, false},
                        Case{" x == 3 ", false, true, false}, Case{"x >= 3", false, true, true},
                        Case{"x>3", false, false, true}}) {
    const RecordFilter f = parse_record_filter(c.text);
    EXPECT_EQ(f.name, "x") << c.text;
    EXPECT_EQ(passes(f, 2.0), c.at_2) << c.text;
    EXPECT_EQ(passes(f, 3.0), c.at_3) << c.text;
    EXPECT_EQ(passes(f, 4.0), c.at_4) << c.text;
    EXPECT_FALSE(passes(f, nan)) << c.text;
  }
  EXPECT_DOUBLE_EQ(parse_record_filter("group.grp.districts_above_0.5 >= -1.5e-1").value, -0.15);
  for (const char* bad : {"x", "x <", "< 3", "x = 3", "x => 3", "x < 3 4", "x < nan", "x ! 3"})
    EXPECT_THROW((void)parse_record_filter(bad), InputError) << bad;
}

TEST(RecordFilter, UnknownNamesAreRefusedWithTheStoredList) {
  try {
    check_filter_names({parse_record_filter("y <= 1")}, {"a", "b"}, "runs/r");
    FAIL() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("'y'"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("a, b"), std::string::npos) << e.what();
  }
}

TEST(RecordFilter, CountsWhatEachFilterRemovesInOrder) {
  // Two chains, observables (a, b), four records each; records 0..3 considered from record 0.
  const std::vector<std::string> stored{"a", "b"};
  const std::vector<std::vector<double>> rows{{1, 10, 2, 20, 3, 30, 4, 40}, {4, 10, 3, 10, 2, 10, 1, 99}};
  const FilteredRecords r =
      filter_records({parse_record_filter("a <= 3"), parse_record_filter("b < 25")}, stored, rows, 0, 4);
  // a <= 3 removes chain 0 record 3 (a = 4) and chain 1 record 0 (a = 4); of the 6 left, b < 25
  // removes chain 0 record 2 (b = 30) and chain 1 record 3 (b = 99).
  EXPECT_EQ(r.considered, 8u);
  EXPECT_EQ(r.counts[0].removed, 2u);
  EXPECT_EQ(r.counts[1].removed, 2u);
  EXPECT_EQ(r.kept[0], (std::vector<std::size_t>{0, 1}));
  EXPECT_EQ(r.kept[1], (std::vector<std::size_t>{1, 2}));
  EXPECT_EQ(r.kept_total, 4u);
  EXPECT_EQ(r.draws, 2u);
  EXPECT_EQ(r.cut, 0u);
  const ScalarTable t = kept_scalar_table("b", 1, 2, rows, r);
  EXPECT_EQ(t.values, (std::vector<double>{10, 20, 10, 10}));
  // From record 1 on, no filter: every record kept, in order.
  const FilteredRecords all = filter_records({}, stored, rows, 1, 3);
  EXPECT_EQ(all.kept[1], (std::vector<std::size_t>{1, 2, 3}));
  EXPECT_EQ(describe_filters(all), "none");
}

}  // namespace
}  // namespace planmill::compare
