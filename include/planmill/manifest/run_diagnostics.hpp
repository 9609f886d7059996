#pragma once
// Convergence diagnostics of a run: every observable across its chains, judged by one rule.
// `planmill diagnose RUNDIR` prints them, `planmill merge` stores them in the manifest's
// "diagnostics" section, and a runner can call diagnose_traces() on traces it holds in memory.
// The numbers are diagnose_quantity()'s and the verdict is judge()'s (planmill/diagnose/), so a
// run dir and the same draws given as a trace CSV get the same table and verdict.
#include <cstdint>
#include <iosfwd>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "planmill/diagnose/stopping_rule.hpp"
#include "planmill/diagnose/verdict.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill {

// One chain's recorded observables, row-major records x observables.
struct ChainTraces {
  std::uint64_t chain = 0;
  std::vector<double> rows;
};

struct RunDiagnosticsOptions {
  // Leading records dropped from every chain on top of the run's own burn-in (records are taken
  // only after sampler.burn_in, so 0 is the usual choice).
  std::size_t burn_in = 0;
  // reader.verify() if already known (it reads every file); otherwise diagnose_run calls it.
  std::optional<std::vector<ChainProblem>> problems;
};

struct LeftOutChain {
  std::uint64_t chain = 0;
  std::string why;
};

struct RunDiagnostics {
  diagnose::VerdictRule rule;
  std::string rule_source;             // where rule came from, e.g. "job [verdict]"
  std::size_t burn_in = 0;             // the extra records dropped per chain
  std::vector<std::uint64_t> chains;   // chains diagnosed, ascending
  std::vector<std::uint64_t> records;  // their record counts, before burn_in
  std::size_t draws = 0;               // per chain: the common prefix after burn_in
  std::vector<LeftOutChain> left_out;  // chains with damaged records
  std::vector<std::string> notes;      // e.g. unequal record counts and what was done
  diagnose::Verdict verdict;           // on the whole record (stop.whole), table worst first
  diagnose::StopCheck stop;            // the stopping rule: whole record, later half, length

  // Passes only by the stopping rule (diagnose/stopping_rule.hpp); a run with chains left out
  // does not pass, whatever the others show.
  [[nodiscard]] bool pass() const { return stop.pass() && left_out.empty(); }
};

// Chains of unequal length are cut to their common prefix (with a note); a chain shorter than
// burn_in leaves no draws, and every quantity gets NaN with a reason.
[[nodiscard]] RunDiagnostics diagnose_traces(const std::vector<std::string>& observable_names,
                                             const std::vector<ChainTraces>& chains,
                                             const diagnose::VerdictRule& rule,
                                             std::size_t burn_in = 0);

// Reads every chain's observables. A chain that verify() reports damaged is left out, with why.
[[nodiscard]] RunDiagnostics diagnose_run(const RunReader& reader,
                                          const diagnose::VerdictRule& rule,
                                          const RunDiagnosticsOptions& options = {});

struct RunVerdictRule {
  diagnose::VerdictRule rule;
  std::string source;
};

// The [verdict] section of the run's job text: RUNDIR/job.toml, else the job text stored in the
// first readable plan file. Defaults (diagnose::VerdictRule{}) when the text has no [verdict].
// Throws InputError when the section is present but invalid.
[[nodiscard]] RunVerdictRule verdict_rule_of_run(const RunReader& reader);

// The manifest's "diagnostics" section (docs/manifest.md); NaN is written as null.
[[nodiscard]] nlohmann::ordered_json diagnostics_to_json(const RunDiagnostics& diagnostics);

// The compact table that both forms of `planmill diagnose` print, worst first.
// The caution printed beside a verdict on chains that all started from one given plan.
[[nodiscard]] std::string shared_start_note(const std::string& start_plan);

void print_verdict_table(const diagnose::Verdict& verdict, std::ostream& out);
// The one "verdict: pass (...)" or "verdict: fail (...)" line, with every failing quantity, its
// values and a suggestion. left_out chains (damaged records) make it fail whatever the table
// shows; the line then says so and what the other chains alone show.
void print_verdict(const diagnose::Verdict& verdict, const diagnose::VerdictRule& rule,
                   std::ostream& out, std::size_t left_out = 0);
// The same by the stopping rule: pass only if it holds; otherwise the line names the part that
// failed (too short, whole record, later half) and lists that part's failing quantities.
void print_verdict(const diagnose::StopCheck& stop, const diagnose::VerdictRule& rule,
                   std::ostream& out, std::size_t left_out = 0);

}  // namespace planmill
