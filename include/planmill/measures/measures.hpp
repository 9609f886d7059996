#pragma once
// Measures analysts cite, computed from a plan's district tallies: per election (party A against
// party B) seats, efficiency gap, mean-median difference, partisan bias, declination, competitive
// districts and the sorted district shares; per group the sorted district shares and the districts
// above thresholds; compactness (cut edges, Polsby-Popper); county and municipality splits.
// Definitions, sign conventions and sources: docs/measures.md. Every partisan measure is positive
// when it favours party A.
//
// The pure functions take per-district numbers; MeasureEvaluator applies them to a Plan with
// buffers made once, so evaluate() allocates nothing (it runs on every recorded plan).
#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/plan/split_tally.hpp"

namespace planmill {

// ---- Pure functions. "sorted" spans are ascending with any NaN last (ShareSorter); a sorted
// span ending in NaN (a district without votes or without denominator) gives NaN. ----

struct Seats {
  std::size_t a = 0;  // districts where A has strictly more votes than B
  std::size_t b = 0;  // and the other way round; a tie goes to nobody
};
[[nodiscard]] Seats seats(std::span<const double> votes_a, std::span<const double> votes_b) noexcept;

// (wasted B - wasted A) / all votes; a district's winner wastes its votes beyond half the
// district's votes, the loser all of its votes, a tie half each. NaN if there are no votes.
[[nodiscard]] double efficiency_gap(std::span<const double> votes_a,
                                    std::span<const double> votes_b) noexcept;

// A's share a / (a + b) of each district into `shares` (NaN where a + b = 0); returns A's
// statewide share sum(a) / sum(a + b).
double vote_shares(std::span<const double> votes_a, std::span<const double> votes_b,
                   std::span<double> shares) noexcept;

// Sorts shares ascending, NaN last, with buffers made once for up to `capacity` values (shares
// are expected in [0, 1]; others are sorted too, only more slowly).
class ShareSorter {
 public:
  explicit ShareSorter(std::size_t capacity = 0);
  void sort(std::span<double> shares) noexcept;  // shares.size() <= capacity; no allocation

 private:
  std::vector<double> scratch_;
  std::vector<std::uint32_t> bucket_;
};

// median - mean of A's district shares (unweighted mean).
[[nodiscard]] double mean_median(std::span<const double> sorted_shares) noexcept;

// A's seat share minus 1/2 after a uniform swing that moves A's statewide share to 1/2: a
// district is A's after the swing when its share exceeds `statewide_share`; equal counts half.
[[nodiscard]] double partisan_bias(std::span<const double> sorted_shares,
                                   double statewide_share) noexcept;

// 2 (theta_B - theta_A) / pi with theta_A = atan((2 mean(A-won shares) - 1) k / k_A) and
// theta_B = atan((1 - 2 mean(B-won shares)) k / k_B); a share of exactly 1/2 counts as won by B.
// NaN when one party wins every district (undefined). Warrington's own sign is the opposite.
[[nodiscard]] double declination(std::span<const double> sorted_shares) noexcept;

// Districts whose share lies in [low, high].
[[nodiscard]] std::size_t count_within(std::span<const double> sorted_shares, double low,
                                       double high) noexcept;
// Districts whose share is strictly above `threshold` (a majority is more than 1/2).
[[nodiscard]] std::size_t count_above(std::span<const double> sorted_shares,
                                      double threshold) noexcept;

// 4 pi area / perimeter^2: 1 for a disc, pi/4 for a square. NaN if the perimeter is not > 0.
[[nodiscard]] double polsby_popper(double area, double perimeter) noexcept;

// ---- What to measure (the job file fills it; default_measure_spec otherwise). ----

struct ElectionMeasureSpec {
  std::string name;          // output names use it
  std::string party_a, party_b;
  std::size_t votes_a = 0;   // count columns of the map
  std::size_t votes_b = 0;
};

struct GroupMeasureSpec {
  std::string name;                        // output names use it
  std::size_t column = 0;                  // count column of the group
  std::optional<std::size_t> denominator;  // count column; total population when not given
  std::vector<double> thresholds;          // districts strictly above each
};

struct MeasureSpec {
  std::vector<ElectionMeasureSpec> elections;
  std::vector<GroupMeasureSpec> groups;
  double competitive_low = 0.45;  // a district is competitive when A's share is in [low, high]
  double competitive_high = 0.55;
  bool county_splits = false;
  bool municipality_splits = false;
};

// Every two-party election of the map, every group share of total population with threshold 1/2,
// the band [0.45, 0.55], and the splits of whatever codes the map has.
[[nodiscard]] MeasureSpec default_measure_spec(const UnitGraph& graph);

// ---- The evaluator. ----

// Where the county and municipality splits come from: tallies kept up to date by the caller (the
// chain's RuleTracker), or, when null, recounted from the plan's labels (O(units) per call).
struct SplitSources {
  const SplitTally* counties = nullptr;
  const SplitTally* municipalities = nullptr;
};

class MeasureEvaluator {
 public:
  // Throws std::invalid_argument for a spec that does not fit the map (a column out of range, the
  // same output name twice, splits of codes the map lacks, a band with low > high or a threshold
  // that is not a number), naming what is wrong.
  MeasureEvaluator(GraphHandle graph, std::size_t district_count, MeasureSpec spec);

  // Scalar outputs, in this order (<e> an election's name, <g> a group's, <t> a threshold):
  //   election.<e>.seats.<party A>, election.<e>.seats.<party B>, election.<e>.efficiency_gap,
  //   election.<e>.mean_median, election.<e>.partisan_bias, election.<e>.declination,
  //   election.<e>.competitive_districts                                   (per election)
  //   group.<g>.districts_above_<t>                                        (per group, threshold)
  //   compactness.cut_edges, compactness.polsby_popper_min, compactness.polsby_popper_mean
  //   splits.counties_split, splits.county_pieces                         (if asked for)
  //   splits.municipalities_split, splits.municipality_pieces             (if asked for)
  // Polsby-Popper is NaN on a map without areas, outer boundaries and shared boundary lengths.
  [[nodiscard]] const std::vector<std::string>& scalar_names() const noexcept { return scalar_names_; }
  // Sorted vectors of district_count() values: election.<e>.sorted_shares (A's share) per
  // election, then group.<g>.sorted_shares per group.
  [[nodiscard]] const std::vector<std::string>& vector_names() const noexcept { return vector_names_; }

  // Measures `plan` (of the same map and district count). No allocation, no I/O.
  void evaluate(const Plan& plan, SplitSources splits = {}) noexcept;

  // Results of the last evaluate().
  [[nodiscard]] std::span<const double> scalars() const noexcept { return scalars_; }
  [[nodiscard]] std::span<const double> sorted_vector(std::size_t v) const noexcept {
    return {vectors_.data() + v * k_, k_};
  }

  [[nodiscard]] const MeasureSpec& spec() const noexcept { return spec_; }
  [[nodiscard]] std::size_t district_count() const noexcept { return k_; }

 private:
  GraphHandle graph_;
  MeasureSpec spec_;
  std::size_t k_;
  bool has_geometry_;
  std::vector<std::string> scalar_names_, vector_names_;
  std::vector<double> scalars_;
  std::vector<double> vectors_;         // vector v at [v * k, (v + 1) * k), sorted
  std::vector<double> last_;            // the same, unsorted (by district), of the last plan
  std::vector<double> fresh_;           // one vector of this plan, by district
  bool have_last_ = false;
  std::vector<double> votes_a_, votes_b_;  // per district
  ShareSorter sorter_;
  SplitTally own_counties_, own_municipalities_;
};

}  // namespace planmill
