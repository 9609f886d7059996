#pragma once
// A fixture run folder with its job and map, as `planmill run` would leave them, for export tests:
//   DIR/job/job.toml (the job as given), DIR/map/units.csv, DIR/run/ (job.toml copy, plans, state).
#include <sys/wait.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "../io/temp_files.hpp"
#include "../support/run_fixture.hpp"

namespace planmill::test {

// Fixture shapes both reference checks use: 300 districts (two-byte labels and cells), and a
// tempered run that recorded 3 rungs.
inline constexpr FixtureRunOptions kThreeHundredDistricts{
    .chains = 2, .ranks = 1, .segments = 2, .records_per_segment = 30, .units = 400, .districts = 300};
inline constexpr FixtureRunOptions kThreeRecordedRungs{.chains = 3,
                                                       .ranks = 2,
                                                       .segments = 2,
                                                       .records_per_segment = 15,
                                                       .units = 40,
                                                       .districts = 4,
                                                       .recorded_rungs = 3};

struct ExportFixture {
  TempDir dir;
  FixtureRun run;
  std::vector<std::string> ids;  // unit ids in map order
  std::filesystem::path run_dir, out_dir, units_csv;

  explicit ExportFixture(const FixtureRunOptions& options = {.chains = 3, .ranks = 2}) {
    run_dir = dir.path() / "run";
    out_dir = dir.path() / "out";
    run = write_fixture_run(run_dir, options);
    std::string units = "unit,pop\n";
    for (std::size_t u = 0; u < options.units; ++u) {
      // One id needs quoting, to check that ids survive the CSV round trip.
      ids.push_back(u == 7 ? "unit, 7" : "u" + std::to_string(1000 - u));
      units += (u == 7 ? "\"unit, 7\"" : ids.back()) + "," + std::to_string(100 + u) + "\n";
    }
    std::filesystem::create_directories(dir.path() / "map");
    std::filesystem::create_directories(dir.path() / "job");
    units_csv = dir.path() / "map" / "units.csv";
    dir.write("map/units.csv", units);
    const std::string job =
        "[map]\nunits = \"../map/units.csv\"\nadjacency = \"../map/adjacency.csv\"\nid = \"unit\"\n"
        "population = \"pop\"\n[districts]\ncount = " +
        std::to_string(options.districts) + "\n";
    const std::string job_path = dir.write("job/job.toml", job);
    dir.write("run/job.toml", job);
    run.state.job_path = job_path;
    write_run_state(RunLayout{run_dir}, run.state);
  }
};

// Runs `planmill export ARGS`; returns its exit status, with stderr in `errors`.
inline int run_export(const std::string& args, std::string* errors = nullptr) {
  const std::string err = (std::filesystem::temp_directory_path() /
                           ("planmill-export-err-" + std::to_string(::getpid())))
                              .string();
  const std::string command =
      std::string(PLANMILL_BINARY) + " export " + args + " > /dev/null 2> " + err;
  const int status = std::system(command.c_str());
  if (errors) *errors = read_file(err);
  std::filesystem::remove(err);
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

// A real run: `planmill synth` writes a small invented state with its job, `planmill run` samples
// it (alone, without mpiexec). DIR/state/{job.toml,units.csv,...}, DIR/run.
struct RealRun {
  std::filesystem::path job, units_csv, run_dir;
};

inline int shell_status(const std::string& command) {
  const int raw = std::system(command.c_str());
  return WIFEXITED(raw) ? WEXITSTATUS(raw) : -1;
}

inline RealRun write_real_run(const std::filesystem::path& dir) {
  RealRun r{dir / "state" / "job.toml", dir / "state" / "units.csv", dir / "run"};
  const std::string binary = PLANMILL_BINARY;
  EXPECT_EQ(shell_status(binary + " synth --units 200 --districts 4 --seed 8 --out " +
                         (dir / "state").string() + " > /dev/null"),
            0);
  std::ofstream(r.job, std::ios::app)
      << "[sampler]\nchains = 2\nsteps = 400\nburn_in = 50\nrecord_every = 5\nseed = 4\n";
  ::setenv("OMPI_ALLOW_RUN_AS_ROOT", "1", 1);
  ::setenv("OMPI_ALLOW_RUN_AS_ROOT_CONFIRM", "1", 1);
  EXPECT_EQ(shell_status(binary + " run " + r.job.string() + " --output " + r.run_dir.string() +
                         " --quiet > " + (dir / "run.log").string() + " 2>&1"),
            0)
      << read_file((dir / "run.log").string());
  return r;
}

}  // namespace planmill::test
