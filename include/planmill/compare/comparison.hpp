#pragma once
// Where one plan stands in an ensemble: pure statistics on draws already in memory (no files).
// Definitions and the sources they follow: docs/compare.md.
//  - per scalar measure: the shares of ensemble draws below, equal to and above the plan's value,
//    the ensemble's 0.5/2.5/25/50/75/97.5/99.5 percentiles (type 7, as numpy's default and R's
//    quantile(type = 7)), and Monte Carlo standard errors from the effective sample size of the
//    indicator "draw at or beyond the plan's value" (diagnose::ess_mean of that indicator); a plan
//    beyond every draw gets a bound (3 / ESS, the rule of three) instead of a share of zero;
//  - per sorted-position vector: the plan's value at each position against the ensemble's
//    percentiles there, flagged outside the central 95% and 99%, and one overall statistic (sum
//    over positions of squared departures from the ensemble's mean position values) compared as a
//    scalar.
#include <array>
#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace planmill::compare {

inline constexpr std::array<double, 7> kPercentileProbs{0.005, 0.025, 0.25, 0.5, 0.75, 0.975, 0.995};
using Percentiles = std::array<double, kPercentileProbs.size()>;

// One scalar's draws after burn-in: chain c holds values[c * draws, (c + 1) * draws), in order.
struct ScalarTable {
  std::string name;
  std::vector<double> values;
  std::size_t draws = 0, chains = 0;
};

// One sorted-position vector's draws: chain c, draw d, position j at ((c * draws) + d) * positions + j.
struct VectorTable {
  std::string name;
  std::vector<double> values;
  std::size_t draws = 0, chains = 0, positions = 0;
};

// The tail the plan lies in: upper when no more draws lie at or above it than at or below it.
enum class Tail { upper, lower };

struct ScalarComparison {
  std::string name;
  double plan = 0.0;
  std::size_t finite = 0, missing = 0;  // draws that are numbers / NaN (NaN draws count nowhere)
  double below = 0.0, equal = 0.0, above = 0.0;  // shares of the finite draws
  Tail tail = Tail::upper;
  double beyond = 0.0;  // share of draws at or beyond the plan, on its tail (equal + above, or equal + below)
  double ess = 0.0;     // of the indicator "at or beyond"; see ess_source
  std::string_view ess_source;  // "indicator", or why another ESS stands in, or why it is NaN
  double mcse_below = 0.0, mcse_equal = 0.0, mcse_above = 0.0, mcse_beyond = 0.0;  // sqrt(s(1-s)/ess)
  bool beyond_every_draw = false;  // no draw at or beyond the plan: only `bound` is meaningful
  double bound = 0.0;              // with beyond_every_draw: the share beyond is below about 3 / ess
  Percentiles percentiles{};       // of the finite draws
  Percentiles percentile_mcse{};   // diagnose::mcse_quantile of each
};

struct PositionComparison {
  double plan = 0.0;
  Percentiles percentiles{};
  double below = 0.0, above = 0.0;  // shares of draws strictly below / above the plan here
  bool outside95 = false;  // plan < 2.5th or > 97.5th percentile
  bool outside99 = false;  // plan < 0.5th or > 99.5th percentile
};

struct VectorComparison {
  std::string name;
  std::vector<double> mean;  // the ensemble's mean at each position
  std::vector<PositionComparison> positions;
  ScalarComparison overall;  // name + ".sum_squared_departure"
};

// Type-7 percentiles of `values` (reordered in place; NaN must have been removed): with
// h = (n - 1) p, x[floor h] + (h - floor h)(x[floor h + 1] - x[floor h]) of the sorted values.
// NaN for n = 0.
[[nodiscard]] Percentiles percentiles_type7(std::span<double> values);

// Throws std::invalid_argument when the table's shape does not match its values.
[[nodiscard]] ScalarComparison compare_scalar(const ScalarTable& table, double plan);
// `plan` has table.positions values. A draw with a NaN position takes no part in the mean and
// its overall statistic is NaN.
[[nodiscard]] VectorComparison compare_vector(const VectorTable& table, std::span<const double> plan);

// sum_j (x_j - mean_j)^2.
[[nodiscard]] double sum_squared_departure(std::span<const double> x, std::span<const double> mean) noexcept;

}  // namespace planmill::compare
