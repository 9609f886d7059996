#pragma once
// One plan against a run folder: reads the run (its chains after burn-in, the same records the
// verdict judges), reads and checks the plan against the run's map, measures the plan with the
// run's own observables and the MeasureEvaluator, and compares every measure the run has stored
// under the same name.
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "planmill/compare/record_filter.hpp"
#include "planmill/compare/report.hpp"
#include "planmill/job/job.hpp"
#include "planmill/manifest/run_diagnostics.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill::compare {

struct CompareOptions {
  std::string run_dir;
  std::string plan_file;
  std::string crosswalk_file;  // when set, PLAN is on the crosswalk's fine units (score/crosswalk.hpp)
  std::size_t dropped_records = 0;  // leading records dropped per chain, beyond the job's burn-in
  std::vector<RecordFilter> filters;  // --keep: only records passing all of them are compared
};

// The job a run was started with (its copy in the run folder), paths as `planmill run` saw them.
// InputError when the copy is missing.
[[nodiscard]] JobSpec job_of_run(const RunReader& reader);

// Throws InputError (exit 2 in the CLI) when the run or its job cannot be read, when the plan's
// units do not match the run's map, or when no chain has records to compare with.
[[nodiscard]] CompareReport compare_plan_with_run(const CompareOptions& options);

// A run its caller has already opened, verified and diagnosed (with the job's verdict rule and
// judged list, and options.dropped_records), so that nothing is read or judged twice (the report).
struct DiagnosedRun {
  const RunReader& reader;
  const std::vector<ChainProblem>& problems;
  const RunDiagnostics& diagnostics;
};
[[nodiscard]] CompareReport compare_plan_with_run(const DiagnosedRun& run, const CompareOptions& options);

// THE ONE PLACE that reads sorted-position vectors from a run: for each name (the
// MeasureEvaluator's vector_names()) that the run stores, chains' records [first, first + draws)
// as a VectorTable; a name the run does not store is left out (the report lists it as not stored).
[[nodiscard]] std::vector<VectorTable> read_sorted_vectors(const RunReader& reader,
                                                           const std::vector<std::uint64_t>& chains,
                                                           std::size_t first, std::size_t draws,
                                                           std::size_t positions,
                                                           const std::vector<std::string>& names);
// The same for chosen records: records[c] lists chain c's records, the same count for every chain.
[[nodiscard]] std::vector<VectorTable> read_sorted_vectors(const RunReader& reader,
                                                           const std::vector<std::uint64_t>& chains,
                                                           const std::vector<std::vector<std::size_t>>& records,
                                                           std::size_t positions,
                                                           const std::vector<std::string>& names);

}  // namespace planmill::compare
