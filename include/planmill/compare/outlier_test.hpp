#pragma once
// The ε-outlier test, which needs no mixing (Chikina, Frieze and Pegden, "Assessing significance
// in a Markov chain without mixing", PNAS 114(11), 2017; arXiv:1608.02014). For a reversible chain
// with X0 ~ π, X0 is an ε-outlier of X0..Xk on a score ω when at most ε(k+1) of the Xi (X0
// included) have ω(Xi) ≤ ω(X0); then P(ε-outlier) ≤ √(2ε), so √(2ε) of the observed share is a
// p-value bound for "the plan is a draw from the chain's target law". Here: per chain started at
// the compared plan, per declared measure, both tails; the formula, its assumptions and how
// chains are combined: docs/compare.md, "The ε-outlier test".
#include <cstddef>
#include <functional>
#include <map>
#include <span>
#include <string>
#include <vector>

#include "planmill/job/job.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill::compare {

// The tail named in advance for the test: `name:low` or `name:high` in [compare] declared.
enum class OutlierTail { two_sided, low, high };

struct DeclaredMeasure {
  std::string name;
  OutlierTail tail = OutlierTail::two_sided;
};

// "name", "name:low" or "name:high". Throws InputError (key compare.declared) on another suffix.
[[nodiscard]] DeclaredMeasure parse_declared(const std::string& entry, const std::string& job_file);

// The shares of one trajectory: ε_low = #{i in 0..k: x_i ≤ x_0} / (k+1), ε_high the same with ≥
// (ties and X0 itself count against X0). A NaN x_i (i ≥ 1) counts against X0 in both tails: each
// tail is then the theorem's share for a fixed score that puts NaN beyond every number, so the
// bound still holds. NaN shares when x0 is NaN.
struct OutlierShares {
  double low = 0.0, high = 0.0;
  std::size_t states = 0;  // k + 1
};
[[nodiscard]] OutlierShares outlier_shares(double x0, std::span<const double> after_x0) noexcept;

// min(1, √(2ε)).
[[nodiscard]] double outlier_bound(double epsilon) noexcept;
// The p-value bound of one chain for the tail: √(2ε) of that tail, or for two_sided
// min(1, 2·√(2·min(ε_low, ε_high))) (union bound over the two tails).
[[nodiscard]] double chain_p_bound(const OutlierShares& shares, OutlierTail tail) noexcept;
// Several chains from the same plan, each valid alone but not independent of each other:
// Bonferroni, min(1, c · min_c p_c).
[[nodiscard]] double combine_chains(std::span<const double> chain_bounds) noexcept;

struct ChainOutlier {
  std::string chain;
  OutlierShares shares;
  double bound_low = 0.0, bound_high = 0.0, p = 0.0;  // p: chain_p_bound for the measure's tail
};

struct MeasureOutlier {
  std::string name;
  OutlierTail tail = OutlierTail::two_sided;
  double plan = 0.0;
  std::vector<ChainOutlier> chains;
  double p = 0.0;    // combine_chains of the chains' p
  std::string note;  // why there is no result (not stored, NaN), else empty
};

struct OutlierSection {
  bool ran = false;
  std::string status;                    // one line: what was tested, or why not and how to run it
  std::vector<std::string> assumptions;  // stated with every output
  std::vector<std::string> warnings;
  std::vector<MeasureOutlier> measures;
};

// The test for the compared plan over `reader`'s run: runs only when chains of the run started at
// `plan` (the job's districts.start, the same partition up to district labels, its file unchanged
// since the run started), with a reversible kernel (merge-split or flip), no tempering, and every
// step from the start recorded at the spacing record_every; otherwise `ran` is false and
// `status` says why. `problems` is reader.verify() (a chain with problems is left out);
// `measure` gives a plan's value of every scalar by name: X0 is the run's own start plan, measured
// so (its labels may differ from the compared plan's, and a sum over districts in another order may
// differ in the last bit).
using PlanMeasure = std::function<std::map<std::string, double>(const Plan&)>;
[[nodiscard]] OutlierSection outlier_test(const RunReader& reader, const JobSpec& job, const Plan& plan,
                                          const std::vector<ChainProblem>& problems,
                                          const std::vector<DeclaredMeasure>& declared, const PlanMeasure& measure);

[[nodiscard]] const char* tail_name(OutlierTail tail) noexcept;  // "two-sided", "low", "high"

}  // namespace planmill::compare
