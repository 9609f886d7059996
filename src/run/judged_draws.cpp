#include "planmill/run/judged_draws.hpp"

#include <algorithm>
#include <cmath>

#include "planmill/base/error.hpp"

namespace planmill {

void check_judged_names(const JobSpec& job, const std::vector<std::string>& names) {
  if (!job.verdict_judge) return;
  for (const std::string& name : *job.verdict_judge) {
    if (std::find(names.begin(), names.end(), name) != names.end()) continue;
    std::string known;
    for (const auto& n : names) known += (known.empty() ? "" : ", ") + n;
    throw InputError({job.path, job.verdict_judge_line, "verdict.judge"},
                     "'" + name + "' is not an observable of this run",
                     "name observables the run records: " + known);
  }
}

JudgedDraws judged_draws(const diagnose::RecordedDraws& all,
                         const std::optional<std::vector<std::string>>& judge) {
  const std::size_t width = all.observables.size();
  std::vector<std::size_t> keep;
  JudgedDraws out;
  for (std::size_t c = 0; c < width; ++c) {
    const std::string& name = all.observables[c];
    if (judge && std::find(judge->begin(), judge->end(), name) == judge->end()) continue;
    std::size_t undefined = 0, records = 0;
    for (const auto& chain : all.chains) {
      // Rows past the dropped records only count: the verdict never sees the others.
      const std::size_t rows = width == 0 ? 0 : chain.rows.size() / width;
      for (std::size_t r = std::min(all.dropped_records, rows); r < rows; ++r, ++records)
        undefined += std::isfinite(chain.rows[r * width + c]) ? 0 : 1;
    }
    if (undefined > 0) {
      out.notes.push_back(name + ": not judged: not a number in " + std::to_string(undefined) + " of " +
                          std::to_string(records) + " records (undefined for those plans)");
      continue;
    }
    keep.push_back(c);
  }
  diagnose::RecordedDraws& d = out.draws;
  d.left_out = all.left_out;
  d.dropped_records = all.dropped_records;
  for (const std::size_t c : keep) d.observables.push_back(all.observables[c]);
  for (const auto& chain : all.chains) {
    diagnose::ChainRecords kept{chain.chain, {}};
    const std::size_t rows = width == 0 ? 0 : chain.rows.size() / width;
    kept.rows.reserve(rows * keep.size());
    for (std::size_t r = 0; r < rows; ++r)
      for (const std::size_t c : keep) kept.rows.push_back(chain.rows[r * width + c]);
    d.chains.push_back(std::move(kept));
  }
  return out;
}

}  // namespace planmill
