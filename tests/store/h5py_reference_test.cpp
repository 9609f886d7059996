// Reference check against h5py + numpy (Debian python3-h5py, python3-numpy via /usr/bin/python3):
// an independent Python reader, written from docs/format.md alone, decodes every recorded plan and
// reads the observables table; both must equal planmill's own EnsembleReader exactly.
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
import numpy as np

f = h5py.File(sys.argv[1], "r")
n = int(f.attrs["unit_count"])
k = int(f.attrs["district_count"])
w = 1 if k <= 255 else 2
out = open(sys.argv[2], "w")

def label(b, i):
    return int.from_bytes(bytes(b[i:i + w]), "little")

def varint(b, i):
    v, shift = 0, 0
    while True:
        v |= (int(b[i]) & 0x7F) << shift
        i += 1
        if not b[i - 1] & 0x80:
            return v, i
        shift += 7

for name in sorted((g for g in f if g.startswith("chain_")), key=lambda g: int(g[6:])):
    g = f[name]
    chain = name[6:]
    obs = g["observables"][...]
    names = [s.decode() if isinstance(s, bytes) else str(s) for s in g["observables"].attrs["names"]]
    for j, col in enumerate(names):
        out.write("obs %s %s %s\n" % (chain, col, " ".join(repr(float(x)) for x in obs[:, j])))
    records = g["plan_records"][...]
    data = g["plan_bytes"][...]
    plan = None
    for step, offset, length, kind in records:
        b = data[offset:offset + length]
        if kind == 0:
            plan = (b.view("<u2") if w == 2 else b).astype(np.int64)
        elif kind == 2:
            a, c = label(b, 0), label(b, w)
            members = np.flatnonzero((plan == a) | (plan == c))
            bits = np.unpackbits(b[2 * w:], bitorder="little")[:len(members)]
            plan[members] = np.where(bits == 1, c, a)
        elif kind == 3:
            i, u, guess = 0, 0, {}
            while i < len(b):
                gap, i = varint(b, i)
                coded, i = varint(b, i)
                u += gap
                run, old = coded // 2, int(plan[u])
                if coded % 2:
                    guess[old] = label(b, i)
                    i += w
                plan[u:u + run] = guess[old]
                u += run
        out.write("plan %s %d %s\n" % (chain, step, " ".join(str(x) for x in plan)))
)PY";

void check_against_h5py(std::size_t units, std::size_t k, std::uint32_t seed) {
  const std::string tag = std::to_string(getpid()) + "_" + std::to_string(seed);
  const fs::path file = fs::temp_directory_path() / ("planmill_h5py_" + tag + ".h5");
  const fs::path script = fs::temp_directory_path() / ("planmill_h5py_" + tag + ".py");
  const fs::path output = fs::temp_directory_path() / ("planmill_h5py_" + tag + ".txt");
  std::mt19937 rng(seed);
  {
    EnsembleWriter writer(file.string(), {units, k, "job"}, {8, 256, 4});
    for (std::uint64_t c : {0u, 3u}) {
      const std::size_t h = writer.add_chain(c, {"mean_label", "noise"});
      std::vector<DistrictIndex> plan(units);
      for (std::size_t u = 0; u < units; ++u) plan[u] = static_cast<DistrictIndex>(u * k / units);
      std::normal_distribution<double> normal;
      for (std::uint64_t r = 0; r < 40; ++r) {
        const auto a = static_cast<DistrictIndex>(rng() % k),
                   b = static_cast<DistrictIndex>(rng() % k);
        for (auto& d : plan)
          if ((d == a || d == b) && rng() % 2) d = d == a ? b : a;  // two-district change
        if (r % 5 == 0) plan[rng() % units] = static_cast<DistrictIndex>(rng() % k);  // one unit
        double mean = 0;
        for (auto d : plan) mean += d;
        const double obs[] = {mean / static_cast<double>(units), normal(rng)};
        writer.record(h, 3 * r, plan, obs);
      }
    }
  }
  std::ofstream(script) << kPythonReader;
  const std::string command =
      "/usr/bin/python3 " + script.string() + " " + file.string() + " " + output.string();
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
    if (what == "obs") {
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

}  // namespace
}  // namespace planmill
