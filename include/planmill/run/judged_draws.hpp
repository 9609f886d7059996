#pragma once
// Which observables a verdict judges, for `run --until-converged`, `diagnose RUNDIR` and the
// manifest alike: the job's verdict.judge (every observable when it is not given), less any
// observable with a value that is not a number in a draw (a declination where one party wins
// every district, Polsby-Popper on a map without geometry). Such a value cannot show mixing and
// would fail the verdict for a reason that is not the chains': it is left out with a note.
#include <optional>
#include <string>
#include <vector>

#include "planmill/diagnose/convergence.hpp"
#include "planmill/job/job.hpp"

namespace planmill {

// Throws InputError naming verdict.judge (file and line) for a name the run does not record.
void check_judged_names(const JobSpec& job, const std::vector<std::string>& observable_names);

struct JudgedDraws {
  diagnose::RecordedDraws draws;   // only the columns judged
  std::vector<std::string> notes;  // one per observable left out for its values
};

// `all` with only the judged columns. A name in `judge` that `all` lacks is skipped (the run's
// job was checked when it started).
[[nodiscard]] JudgedDraws judged_draws(const diagnose::RecordedDraws& all,
                                       const std::optional<std::vector<std::string>>& judge);

}  // namespace planmill
