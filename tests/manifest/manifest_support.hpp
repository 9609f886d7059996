#pragma once
// Shared by the manifest tests: a fresh folder per test, a fixture run with a job.toml beside it,
// and running the planmill executable.
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "run_fixture.hpp"

namespace planmill::test {

// A folder of its own for the running test, removed when the test ends.
struct ScratchDir {
  std::filesystem::path path;
  explicit ScratchDir(const std::string& prefix)
      : path(std::filesystem::temp_directory_path() /
             (prefix + "-" + std::to_string(::getpid()) + "-" +
              ::testing::UnitTest::GetInstance()->current_test_info()->name())) {
    std::filesystem::remove_all(path);
    std::filesystem::create_directories(path);
  }
  ~ScratchDir() {
    std::error_code ec;
    std::filesystem::remove_all(path, ec);
  }
  ScratchDir(const ScratchDir&) = delete;
  ScratchDir& operator=(const ScratchDir&) = delete;
};

inline std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

// A job text that parse_job_text accepts (it does not open the map files), with an optional
// [verdict] section.
inline std::string job_text_with_verdict(const std::string& verdict_lines) {
  std::string text =
      "[map]\nunits = \"units.csv\"\nadjacency = \"adjacency.csv\"\nid = \"unit\"\n"
      "population = \"pop\"\n[districts]\ncount = 3\n";
  if (!verdict_lines.empty()) text += "[verdict]\n" + verdict_lines;
  return text;
}

struct Outcome {
  int status = -1;
  std::string out, err;
};

// Runs `planmill ARGS` with stdout and stderr captured in files of `dir`.
inline Outcome run_planmill(const std::filesystem::path& dir, const std::string& args) {
  const auto out = dir / "stdout.txt", err = dir / "stderr.txt";
  const std::string command = std::string("'") + PLANMILL_BINARY + "' " + args + " > '" +
                              out.string() + "' 2> '" + err.string() + "'";
  const int raw = std::system(command.c_str());
  return {WIFEXITED(raw) ? WEXITSTATUS(raw) : -1, slurp(out), slurp(err)};
}

// The fixture run of `options`, with its plan files written again so that observable q of chain
// c, record r is value(c, r, q) (the fixture's own observables include a 4-valued count whose
// tail ESS is NaN). Plans, steps, files, hot rungs and run-state.json stay as the fixture wrote
// them.
template <class Value>
FixtureRun write_run_with_observables(const std::filesystem::path& dir,
                                      const FixtureRunOptions& options, Value value) {
  FixtureRun run = write_fixture_run(dir, options);
  const RunLayout layout{dir};
  const std::string job_text = "# fixture job\n";
  for (auto& [chain, rows] : run.observables) {
    for (std::size_t r = 0; r < rows.size(); ++r) {
      for (std::size_t q = 0; q < rows[r].size(); ++q) rows[r][q] = value(chain, r, q);
    }
  }
  for (const auto& f : run.state.files) {
    EnsembleWriter writer(layout.resolve(f.file).string(),
                          {options.units, options.districts, job_text}, {.full_every = 8});
    for (const auto& chain : run.state.chains) {
      std::uint64_t first = 0;
      for (const auto& span : chain.spans) {
        if (span.file == f.file) {
          const auto handle = writer.add_chain(chain.index, run.state.observable_names);
          for (std::uint64_t r = first; r < first + span.records; ++r) {
            writer.record(handle, run.steps.at(chain.index)[r], run.plans.at(chain.index)[r],
                          run.observables.at(chain.index)[r]);
          }
          writer.set_counters(handle, chain.counters);
          // Hot rungs (recorded_rungs > 1) keep what the fixture wrote for them.
          for (std::uint64_t rung = 1; rung < chain.recorded_rungs; ++rung) {
            const auto& written = run.rungs.at({chain.index, rung});
            const auto rung_handle =
                writer.add_chain(rung_record_index(chain.index, rung), run.state.observable_names);
            for (std::uint64_t r = first; r < first + span.records; ++r) {
              writer.record(rung_handle, written.steps[r], written.plans[r],
                            written.observables[r]);
            }
          }
        }
        first += span.records;
      }
    }
    writer.close();
  }
  return run;
}

// Independent uniform draws for every observable: a run that has mixed.
inline FixtureRun write_mixed_run(const std::filesystem::path& dir,
                                  const FixtureRunOptions& options) {
  Rng rng = make_stream(options.seed, 7);
  return write_run_with_observables(
      dir, options, [&rng](std::uint64_t, std::size_t, std::size_t) { return uniform01(rng); });
}

// The table lines of `planmill diagnose` output: from its header to the verdict.
inline std::string table_of(const std::string& out) {
  const auto start = out.find("\njudged ");  // the header's first column
  const auto end = out.find("verdict:");
  if (start == std::string::npos || end == std::string::npos) return {};
  return out.substr(start + 1, end - start - 1);
}

}  // namespace planmill::test
