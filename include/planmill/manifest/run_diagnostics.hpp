#pragma once
// Convergence diagnostics of a run folder, and how a verdict is shown. The verdict itself comes from
// diagnose::assess_convergence() (planmill/diagnose/convergence.hpp), the one path that
// `planmill run --until-converged`, `planmill diagnose` (run folder or trace file) and `planmill merge`
// share; this part reads a run's chains into it and writes its result: one text table and one
// JSON shape (docs/diagnostics.md), laid out by one list of fields.
#include <cstdint>
#include <iosfwd>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "planmill/diagnose/convergence.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill {

using RunDiagnostics = diagnose::ConvergenceReport;

struct RunDiagnosticsOptions {
  // Leading records dropped from every chain. A run records only after its job's burn_in steps,
  // so 0 is the usual choice.
  std::size_t dropped_records = 0;
  // reader.verify() if already known (it reads every file); otherwise diagnose_run calls it.
  std::optional<std::vector<ChainProblem>> problems;
  // The observables judged (the job's verdict.judge); unset: all. Either way an observable with a
  // value that is not a number is left out with a note (planmill/run/judged_draws.hpp).
  std::optional<std::vector<std::string>> judge;
};

// Reads every chain's observables. A chain that verify() reports damaged, or whose observables
// cannot be read, is left out, with why.
[[nodiscard]] RunDiagnostics diagnose_run(const RunReader& reader,
                                          const diagnose::VerdictRule& rule,
                                          const RunDiagnosticsOptions& options = {});

struct RunVerdictRule {
  diagnose::VerdictRule rule;
  std::string source;
  std::optional<std::vector<std::string>> judge;  // verdict.judge of the run's job
};

// The [verdict] section of the run's job text: RUNDIR/job.toml, else the job text stored in the
// first readable plan file. Defaults (diagnose::VerdictRule{}) when the text has no [verdict].
// Throws InputError when the section is present but invalid.
[[nodiscard]] RunVerdictRule verdict_rule_of_run(const RunReader& reader);

// The one JSON shape of a verdict: `diagnose --json` (both forms) and the manifest's
// "diagnostics" section (docs/diagnostics.md, "JSON"); NaN is written as null.
[[nodiscard]] nlohmann::ordered_json diagnostics_to_json(const RunDiagnostics& diagnostics);

// The caution printed beside a verdict on chains that all started from one given plan.
[[nodiscard]] std::string shared_start_note(const std::string& start_plan);

// The table that both forms of `planmill diagnose` print, worst first, with the same fields as
// the JSON's "observables".
void print_verdict_table(const diagnose::Verdict& verdict, std::ostream& out);

// The one "verdict: pass (...)" or "verdict: fail (...)" line, by the stopping rule: it names the
// part that failed (too short, whole record, later half) and lists that part's failing
// observables, each with its values and a suggestion. Left-out chains make it fail whatever the
// table shows; the line then says so and what the other chains alone show.
void print_verdict(const RunDiagnostics& diagnostics, std::ostream& out);

}  // namespace planmill
