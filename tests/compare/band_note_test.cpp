// compare's warning when the run's population band is much looser than the compared plan's own
// balance (docs/compare.md): worked numbers, plain arithmetic.
#include <gtest/gtest.h>

#include "planmill/compare/report.hpp"

namespace planmill::compare {
namespace {

TEST(BandNote, SaysPlainlyWhenTheRunsBandIsMuchLooser) {
  // A plan within 0.4% (range 0.7%) against a run at +/-5%: 0.05 / 0.004 = 12.5 times looser.
  const std::string note = band_note(0.004, 0.007, 0.05, 0.10);
  EXPECT_NE(note.find("much looser than the plan's"), std::string::npos) << note;
  EXPECT_NE(note.find("+/-5% of the ideal"), std::string::npos) << note;
  EXPECT_NE(note.find("largest deviation is 0.4%"), std::string::npos) << note;
  EXPECT_NE(note.find("(12.5 times looser)"), std::string::npos) << note;
  EXPECT_NE(note.find("population_tolerance near 0.004"), std::string::npos) << note;
  // Half the tolerance exactly still counts; more than half does not.
  EXPECT_FALSE(band_note(0.025, 0.05, 0.05, 0.10).empty());
  EXPECT_TRUE(band_note(0.04, 0.07, 0.05, 0.10).empty());
  // The range alone: deviation 3% of 5% is not loose, range 4% of 10% is (2.5 times).
  const std::string by_range = band_note(0.03, 0.04, 0.05, 0.10);
  EXPECT_NE(by_range.find("(2.5 times looser)"), std::string::npos) << by_range;
  // A plan of exactly equal districts against a positive band.
  EXPECT_NE(band_note(0.0, 0.0, 0.01, 0.02).find("over a million"), std::string::npos);
}

}  // namespace
}  // namespace planmill::compare
