// Reference check against h5py + numpy (Debian python3-h5py, python3-numpy via /usr/bin/python3):
// an independent Python reader (tests/support/plan_records.py), written from docs/format.md alone
// (range decoder included), decodes every recorded plan and reads the observables table; both must equal planmill's own
// EnsembleReader exactly.
#include <gtest/gtest.h>
#include <unistd.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <random>
#include <sstream>

#include "planmill/store/ensemble.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

// Prints "obs CHAIN NAME V..." per observable column and "plan CHAIN STEP L..." per record.
const char* const kPythonReader = R"PY(
import sys
import h5py
from plan_records import records  # tests/support/plan_records.py

f = h5py.File(sys.argv[1], "r")
out = open(sys.argv[2], "w")

for name in sorted((g for g in f if g.startswith("chain_")), key=lambda g: int(g[6:])):
    g = f[name]
    chain = name[6:]
    obs = g["observables"][...]
    names = [s.decode() if isinstance(s, bytes) else str(s) for s in g["observables"].attrs["names"]]
    for j, col in enumerate(names):
        out.write("obs %s %s %s\n" % (chain, col, " ".join(repr(float(x)) for x in obs[:, j])))
    counts = [0] * 5
    for step, kind, plan in records(f, name):
        counts[kind] += 1
        out.write("plan %s %d %s\n" % (chain, step, " ".join(str(x) for x in plan)))
    out.write("kinds %s %s\n" % (chain, " ".join(str(c) for c in counts)))
)PY";

// Grid of `width` columns in row-major unit order, for files that carry a unit adjacency.
UnitAdjacency grid_adjacency(std::size_t units, std::size_t width) {
  UnitAdjacency a;
  a.offsets.push_back(0);
  for (std::size_t u = 0; u < units; ++u) {
    if (u >= width) a.neighbors.push_back(static_cast<std::uint32_t>(u - width));
    if (u % width) a.neighbors.push_back(static_cast<std::uint32_t>(u - 1));
    if ((u + 1) % width && u + 1 < units) a.neighbors.push_back(static_cast<std::uint32_t>(u + 1));
    if (u + width < units) a.neighbors.push_back(static_cast<std::uint32_t>(u + width));
    a.offsets.push_back(a.neighbors.size());
  }
  return a;
}

// with_hint: record() is given the changed units (padded with unchanged ones and repeats), as a
// chain's Plan::changes() would be.
void check_against_h5py(std::size_t units, std::size_t k, std::uint32_t seed,
                        bool with_adjacency = false, bool with_hint = false) {
  const std::string tag = std::to_string(getpid()) + "_" + std::to_string(seed);
  const fs::path file = fs::temp_directory_path() / ("planmill_h5py_" + tag + ".h5");
  const fs::path script = fs::temp_directory_path() / ("planmill_h5py_" + tag + ".py");
  const fs::path output = fs::temp_directory_path() / ("planmill_h5py_" + tag + ".txt");
  std::mt19937 rng(seed);
  std::map<std::uint64_t, std::vector<std::vector<DistrictIndex>>> written;
  {
    EnsembleHeader header{units, k, "job"};
    if (with_adjacency) header.adjacency = grid_adjacency(units, 20);
    EnsembleWriter writer(file.string(), header, {8, 256, 4});
    for (std::uint64_t c : {0u, 3u}) {
      const std::size_t h = writer.add_chain(c, {"mean_label", "noise"});
      std::vector<DistrictIndex> plan(units);
      for (std::size_t u = 0; u < units; ++u) plan[u] = static_cast<DistrictIndex>(u * k / units);
      std::normal_distribution<double> normal;
      std::vector<UnitIndex> changed;
      for (std::uint64_t r = 0; r < 40; ++r) {
        changed.clear();
        const auto a = static_cast<DistrictIndex>(rng() % k),
                   b = static_cast<DistrictIndex>(rng() % k);
        for (std::size_t u = 0; u < units; ++u) {
          auto& d = plan[u];
          if ((d == a || d == b) && rng() % 2) {  // two-district change
            d = d == a ? b : a;
            changed.push_back(static_cast<UnitIndex>(u));
          }
        }
        if (r % 5 == 0) {  // one unit
          const auto u = static_cast<UnitIndex>(rng() % units);
          plan[u] = static_cast<DistrictIndex>(rng() % k);
          changed.push_back(u);
        }
        for (int i = 0; i < 5; ++i) changed.push_back(static_cast<UnitIndex>(rng() % units));
        if (!changed.empty()) changed.push_back(changed.front());
        double mean = 0;
        for (auto d : plan) mean += d;
        const double obs[] = {mean / static_cast<double>(units), normal(rng)};
        if (with_hint)
          writer.record(h, 3 * r, plan, obs, PlanChanges{changed, false});
        else
          writer.record(h, 3 * r, plan, obs);
        written[c].push_back(plan);
      }
    }
    writer.close();
  }
  std::ofstream(script) << kPythonReader;
  const std::string command =
      "PYTHONPATH=" PLANMILL_SOURCE_DIR "/tests/support /usr/bin/python3 " + script.string() + " " +
      file.string() + " " + output.string();
  ASSERT_EQ(std::system(command.c_str()), 0) << command;

  EnsembleReader reader(file.string());
  std::ifstream in(output);
  std::string line;
  std::map<std::uint64_t, std::size_t> plan_lines;
  std::size_t obs_lines = 0;
  while (std::getline(in, line)) {
    std::istringstream fields(line);
    std::string what;
    std::uint64_t chain = 0;
    fields >> what >> chain;
    if (what == "kinds") {
      std::size_t count[5] = {};
      for (auto& c : count) fields >> c;
      // Self-contained records are graph records exactly when the file has an adjacency.
      EXPECT_EQ(count[4] > 0, with_adjacency) << line;
      EXPECT_EQ(count[0] > 0, !with_adjacency) << line;
    } else if (what == "obs") {
      std::string name;
      fields >> name;
      const auto names = reader.observable_names(chain);
      const auto column =
          static_cast<std::size_t>(std::find(names.begin(), names.end(), name) - names.begin());
      ASSERT_LT(column, names.size()) << name;
      const auto table = reader.read_observables(chain);
      std::string value;
      std::size_t row = 0;
      for (; fields >> value; ++row) {
        ASSERT_LT(row * names.size() + column, table.size());
        EXPECT_EQ(std::strtod(value.c_str(), nullptr), table[row * names.size() + column])
            << name << " " << row;
      }
      EXPECT_EQ(row, reader.record_count(chain));
      ++obs_lines;
    } else {
      ASSERT_EQ(what, "plan");
      std::uint64_t step = 0;
      fields >> step;
      const std::size_t r = plan_lines[chain]++;
      EXPECT_EQ(reader.record_steps(chain).at(r), step);
      std::vector<DistrictIndex> from_python;
      unsigned d = 0;
      while (fields >> d) from_python.push_back(static_cast<DistrictIndex>(d));
      ASSERT_EQ(from_python, reader.read_plan(chain, r)) << "chain " << chain << " record " << r;
      ASSERT_EQ(from_python, written[chain].at(r)) << "chain " << chain << " record " << r;
    }
  }
  EXPECT_EQ(obs_lines, 4u);
  EXPECT_EQ(plan_lines[0], 40u);
  EXPECT_EQ(plan_lines[3], 40u);
  fs::remove(file);
  fs::remove(script);
  fs::remove(output);
}

TEST(EnsembleH5py, PlansAndObservablesMatchUint8) { check_against_h5py(400, 9, 21); }
TEST(EnsembleH5py, PlansAndObservablesMatchUint16) { check_against_h5py(700, 320, 22); }
// Graph records (kind 4), range-coded against the grid adjacency stored in the file; 600 labels
// take the encoder's other way of ranking labels.
TEST(EnsembleH5py, GraphRecordsMatchUint8) { check_against_h5py(400, 9, 23, true); }
TEST(EnsembleH5py, GraphRecordsMatchUint16) { check_against_h5py(700, 320, 24, true); }
TEST(EnsembleH5py, GraphRecordsMatchManyLabels) { check_against_h5py(700, 600, 25, true); }
TEST(EnsembleH5py, RecordsWrittenWithChangedUnitsMatch) {
  check_against_h5py(400, 9, 26, false, true);
  check_against_h5py(700, 320, 27, true, true);
}

}  // namespace
}  // namespace planmill
