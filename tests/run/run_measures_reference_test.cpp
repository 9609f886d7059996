// Reference check of the measures a run stores, against numpy and h5py (Debian python3-numpy,
// python3-h5py via /usr/bin/python3): `planmill run` draws 3,000 plans of a synth state with the
// default measures; the plans, read back through RunReader, go to a text file; a Python script
// reads the observables and the sorted datasets straight from the run's plan files with h5py
// (paths from run-state.json, layout of docs/format.md) and recomputes every value from the unit
// table, the adjacency and the plan alone (tests/support/measures_python.hpp, tolerances there:
// counts and sorted shares to the last bit, sums over districts within 1e-12, Polsby-Popper
// within 1e-9, relative).
#include <gtest/gtest.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <string>

#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/run/run_reader.hpp"
#include "../support/measures_python.hpp"
#include "../support/run_jobs.hpp"
#include "../support/run_processes.hpp"
#include "../support/command_output.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

// argv[4]: the run folder. Chains in the run state's order, each chain's records file by file
// in segment order: the order RunReader gives them.
const char* const kReadRun = R"PY(
import h5py, json, os
run_dir = sys.argv[4]
with open(os.path.join(run_dir, "run-state.json")) as fh:
    state = json.load(fh)
files = sorted(state["files"], key=lambda f: (f["segment"], f["rank"]))
text = lambda x: x.decode() if isinstance(x, bytes) else str(x)
names, got = None, []
for chain in state["chains"]:
    group = "chain_%d" % chain["index"]
    for f in files:
        with h5py.File(os.path.join(run_dir, f["file"]), "r") as h5:
            if group not in h5:
                continue
            k = int(h5.attrs["district_count"])
            obs = h5[group + "/observables"]
            sorted_names = [text(n) for n in h5[group + "/sorted"].attrs["names"]]
            here = [text(n) for n in obs.attrs["names"]] + \
                ["%s[%d]" % (n, i) for n in sorted_names for i in range(k)]
            assert names is None or names == here, "names differ between files"
            names = here
            rows = obs[...]
            vectors = [h5[group + "/sorted/" + n][...] for n in sorted_names]
            assert all(v.shape == (rows.shape[0], k) for v in vectors)
            for r in range(rows.shape[0]):
                got.append(list(rows[r]) + [x for v in vectors for x in v[r]])
)PY";

std::string python(const fs::path& dir, const std::string& script_text, const fs::path& run) {
  const fs::path script = dir / "check.py";
  std::ofstream(script) << test::kMeasuresPythonLoad << script_text << test::kMeasuresPythonCheck;
  const std::string command = "/usr/bin/python3 " + script.string() + " " + (dir / "state" / "units.csv").string() +
                              " " + (dir / "state" / "adjacency.csv").string() + " " + (dir / "plans.txt").string() +
                              " " + run.string() + " 2>&1";
  return test::command_output(command);
}

// The stored plans of every chain, in RunReader's order, one line each.
std::size_t write_plans(const fs::path& job, const fs::path& run, const fs::path& out) {
  const JobSpec spec = load_job(job.string());
  const UnitGraph graph = load_unit_graph(spec.map);
  std::ofstream file(out);
  for (UnitIndex u = 0; u < graph.unit_count(); ++u) file << (u ? " " : "") << graph.unit_id(u);
  file << "\n";
  const RunReader reader(run.string());
  std::size_t plans = 0;
  for (const auto c : reader.chains()) {
    reader.for_each_plan(c, 0, reader.record_count(c) - 1, [&](std::uint64_t, std::span<const DistrictIndex> plan) {
      for (std::size_t u = 0; u < plan.size(); ++u) file << (u ? " " : "") << plan[u];
      file << "\n";
      ++plans;
    });
  }
  return plans;
}

TEST(RunMeasuresNumpy, EveryStoredMeasureOfThousandsOfRecordsMatchesAnIndependentRecomputation) {
  const auto dir = test::scratch_dir("planmill-run-measures-reference", "run");
  // Checkpoints every second or so: the records of a chain span several plan files.
  const fs::path job = test::write_synth_job(dir, "chains = 4\nsteps = 760\nburn_in = 10\nseed = 12", 1);
  const fs::path run = dir / "out";
  ASSERT_EQ(test::shell(test::mpiexec_prefix(2) + PLANMILL_BINARY + " run " + job.string() + " --output " +
                        run.string() + " --quiet >" + dir.string() + "/run.log 2>&1"),
            0)
      << test::read_text(dir / "run.log");
  const std::size_t plans = write_plans(job, run, dir / "plans.txt");
  ASSERT_EQ(plans, 4U * 750);
  const std::string result = python(dir, kReadRun, run);
  // Names: population_deviation, energy, 24 measure scalars (population.max_deviation and
  // population.overall_range among them), 3 sorted vectors of 4.
  ASSERT_EQ(result.substr(0, result.find('\n') + 1), "checked 3000 " + std::to_string(2 + 24 + 3 * 4) + "\n")
      << result;
  EXPECT_GT(std::stoul(result.substr(result.find("distinct ") + 9)), 1000U) << result;
  std::cout << result;

  // The check must catch a wrong stored value: nudge one sorted share by 2^-40 in the first
  // record of chain 0 (the first plan file, in segment order, holding records of it).
  const std::string nudge =
      "import h5py, json, os, sys\nrun = sys.argv[1]\nstate = json.load(open(os.path.join(run, 'run-state.json')))\n"
      "for f in sorted(state['files'], key=lambda f: (f['segment'], f['rank'])):\n"
      "    with h5py.File(os.path.join(run, f['file']), 'r+') as h5:\n"
      "        if 'chain_0' in h5 and h5['chain_0/observables'].shape[0] > 0:\n"
      "            d = h5['chain_0/sorted/election.sen.sorted_shares']\n"
      "            d[0, 2] = d[0, 2] + 2.0 ** -40\n"
      "            break\n";
  std::ofstream(dir / "nudge.py") << nudge;
  ASSERT_EQ(test::shell("/usr/bin/python3 " + (dir / "nudge.py").string() + " " + run.string()), 0);
  const std::string caught = python(dir, kReadRun, run);
  EXPECT_NE(caught.find("mismatch: election.sen.sorted_shares[2] of plan 0"), std::string::npos) << caught;
}

}  // namespace
}  // namespace planmill
