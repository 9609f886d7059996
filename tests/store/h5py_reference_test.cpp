// Reference check against h5py + numpy (Debian python3-h5py, python3-numpy via /usr/bin/python3):
// an independent Python reader, written from docs/format.md alone (range decoder included),
// decodes every recorded plan and reads the observables table; both must equal planmill's own
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

lower = None  # per unit: its neighbours v < u, from /unit_adjacency (docs/format.md)
if "unit_adjacency" in f:
    offsets = f["unit_adjacency/offsets"][...]
    neighbors = f["unit_adjacency/neighbors"][...]
    lower = [[int(v) for v in neighbors[offsets[u]:offsets[u + 1]] if v < u] for u in range(n)]

class RangeDecoder:
    def __init__(self, b):
        self.b, self.at = b, 5
        self.range, self.code = 0xFFFFFFFF, int.from_bytes(bytes(b[:5]), "big")
    def normalize(self):
        while self.range < 1 << 24:
            self.range = (self.range << 8) & 0xFFFFFFFF
            self.code = ((self.code << 8) | int(self.b[self.at])) & 0xFFFFFFFF
            self.at += 1
    def bit(self, p, i):
        bound = (self.range >> 11) * p[i]
        if self.code < bound:
            self.range, p[i], bit = bound, p[i] + ((2048 - p[i]) >> 5), 0
        else:
            self.code, self.range, p[i], bit = self.code - bound, self.range - bound, p[i] - (p[i] >> 5), 1
        self.normalize()
        return bit
    def direct(self):
        self.range >>= 1
        bit = int(self.code >= self.range)
        if bit:
            self.code -= self.range
        self.normalize()
        return bit

def graph_plan(b):
    rc, p, plan, latest, prev = RangeDecoder(b), [1024] * 86, [0] * n, {}, -1
    for u in range(n):
        count = {}
        for v in lower[u]:
            count[plan[v]] = count.get(plan[v], 0) + 1
        cands = sorted(count, key=lambda d: (-count[d], d))
        label = None
        for i, d in enumerate(cands):
            ctx = (((min(len(cands), 3) - 1) * 3 + min(i, 2)) * 3 + min(count[d], 3) - 1) * 2
            if rc.bit(p, ctx + (d == prev)):
                label = d
                break
        if label is None:
            g, length, m = 54 + (16 if cands else 0), 1, 1
            while rc.bit(p, g + length - 1):
                length += 1
            for _ in range(length - 1):
                m = 2 * m + rc.direct()
            rest = sorted((d for d in range(k) if d not in count), key=lambda d: (-latest.get(d, -1), d))
            label = rest[m - 1]
        plan[u], latest[label], prev = label, u, label
    assert rc.at == len(b)
    return np.array(plan, dtype=np.int64)

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
    out.write("kinds %s %s\n" % (chain, " ".join(str(int((records[:, 3] == c).sum())) for c in range(5))))
    for step, offset, length, kind in records:
        b = data[offset:offset + length]
        if kind == 0:
            plan = (b.view("<u2") if w == 2 else b).astype(np.int64)
        elif kind == 4:
            plan = graph_plan(b)
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
