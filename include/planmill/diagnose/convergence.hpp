#pragma once
// The one path from recorded draws to a verdict. `planmill run --until-converged`, `planmill
// diagnose RUNDIR`, `planmill diagnose --traces FILE.csv` and the manifest's diagnostics all hand
// their chains to assess_convergence(), which alone decides:
//  - which records count: the first dropped_records records of every chain are dropped (records
//    are counted, not steps: a run's records already start after its job's burn_in steps), and
//    chains of unequal length are cut to their common prefix (with a note);
//  - damaged chains: a chain whose records cannot be trusted is given as left out, with why; it
//    takes no part in the table, and the verdict fails whatever the other chains show;
//  - the verdict: the stopping rule (stopping_rule.hpp) on the records that count.
#include <cstddef>
#include <string>
#include <vector>

#include "planmill/diagnose/stopping_rule.hpp"
#include "planmill/diagnose/verdict_rule.hpp"

namespace planmill::diagnose {

// One chain's records, row-major: records x observables.
struct ChainRecords {
  std::string chain;  // its label: a run's chain index, or a trace file's chain label
  std::vector<double> rows;
};

struct LeftOutChain {
  std::string chain;
  std::string why;
};

struct RecordedDraws {
  std::vector<std::string> observables;  // names, one per column of every chain's rows
  std::vector<ChainRecords> chains;      // the chains to diagnose
  std::vector<LeftOutChain> left_out;    // damaged chains, not among `chains`
  std::size_t dropped_records = 0;       // leading records dropped from every chain
};

struct ConvergenceReport {
  VerdictRule rule;
  std::string rule_source;              // where rule came from, e.g. "job [verdict] in ..."
  std::size_t dropped_records = 0;
  std::vector<std::string> chains;      // chains diagnosed, in the order given
  std::vector<std::size_t> records;     // their record counts, before dropping
  std::size_t draws = 0;                // per chain: the common prefix after dropping
  std::vector<LeftOutChain> left_out;
  std::vector<std::string> notes;       // e.g. unequal record counts and what was done
  StopCheck stop;                       // the stopping rule on the draws that count

  // The table shown and stored: the verdict on the whole record, worst first.
  [[nodiscard]] const Verdict& verdict() const { return stop.whole; }
  // Only by the stopping rule, and only with no chain left out.
  [[nodiscard]] bool pass() const { return stop.pass() && left_out.empty(); }
};

// Throws planmill::InputError when dropped_records > 0 leaves no draws of the shortest chain, and
// std::invalid_argument when a chain's rows are not whole records.
[[nodiscard]] ConvergenceReport assess_convergence(const RecordedDraws& draws, const VerdictRule& rule);

}  // namespace planmill::diagnose
