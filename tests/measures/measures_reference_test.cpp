// Reference check against numpy (Debian python3-numpy via /usr/bin/python3): for a few hundred
// plans of a recombination chain on a synth state, a Python script recomputes every measure from
// the unit table, the adjacency and each plan's labels alone (tallies by np.bincount, perimeters
// from outer boundaries and cut shared lengths, splits from county-district pairs, then the
// formulas of docs/measures.md as the papers write them) and compares with the evaluator.
#include <gtest/gtest.h>

#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>

#include "planmill/chain/chain.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/measures/measures.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"
#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

// argv: units.csv adjacency.csv plans.txt measures.csv. Prints "checked PLANS MEASURES", then
// "distinct N", the number of different plans among them.
// Counts and the sorted shares (exact integer tallies, one division) must agree to the last bit;
// sums over districts in another order within 1e-12, Polsby-Popper (tallies of decimal areas and
// lengths kept by +/- over many moves) within 1e-9, relative.
const char* const kPythonCheck = R"PY(
import csv, math, sys
import numpy as np

units_csv, adjacency_csv, plans_txt, measures_csv = sys.argv[1:5]
LOW, HIGH = 0.45, 0.55

with open(units_csv, newline="") as fh:
    rows = list(csv.DictReader(fh))
index = {r["unit"]: i for i, r in enumerate(rows)}
col = lambda name: np.array([float(r[name]) for r in rows])
pop, area, outer, grp = col("pop"), col("area"), col("outer"), col("grp")
votes = {e: (col(e + "_a"), col(e + "_b")) for e in ("gov", "sen")}
def codes(name):
    names = {}
    return np.array([names.setdefault(r[name], len(names)) if r[name] != "" else -1 for r in rows])
county, town = codes("county"), codes("town")
with open(adjacency_csv, newline="") as fh:
    adj = list(csv.DictReader(fh))
ea = np.array([index[r["a"]] for r in adj]); eb = np.array([index[r["b"]] for r in adj])
elen = np.array([float(r["length"]) for r in adj])

with open(plans_txt) as fh:
    ids = fh.readline().split()
    order = np.array([index[i] for i in ids])  # plan position -> row of units.csv
    plans = []
    for line in fh:
        labels = np.empty(len(rows), dtype=np.int64)
        labels[order] = np.array(line.split(), dtype=np.int64)
        plans.append(labels)
with open(measures_csv, newline="") as fh:
    reader = csv.reader(fh)
    header = next(reader)
    got = [[float(x) for x in row[1:]] for row in reader]  # row[0]: the plan number
k = int(header[0].split("=")[1])
names = header[1:]

def fail(what):
    sys.exit("mismatch: " + what)

def election(a, b):
    s = a / (a + b)
    total = (a + b).sum()
    # Stephanopoulos and McGhee (2015): the winner wastes votes beyond half, the loser all.
    half = (a + b) / 2
    wasted_a = np.where(a > b, a - half, np.where(a < b, a, half))
    wasted_b = np.where(b > a, b - half, np.where(b < a, b, half))
    v = a.sum() / total
    swung = s + (0.5 - v)  # uniform swing to 50% statewide
    bias = (np.sum(swung > 0.5) + 0.5 * np.sum(swung == 0.5)) / k - 0.5
    # Warrington (2018) reference code on A's shares, negated (positive favours A here).
    won_a, won_b = s[s > 0.5], s[s <= 0.5]
    if len(won_a) == 0 or len(won_b) == 0:
        dec = math.nan
    else:
        theta = math.atan((1 - 2 * won_b.mean()) * k / len(won_b))
        gamma = math.atan((2 * won_a.mean() - 1) * k / len(won_a))
        dec = -2.0 * (gamma - theta) / math.pi
    return {"seats": (np.sum(a > b), np.sum(b > a)), "efficiency_gap": (wasted_b.sum() - wasted_a.sum()) / total,
            "mean_median": np.median(s) - np.mean(s), "partisan_bias": bias, "declination": dec,
            "competitive_districts": np.sum((s >= LOW) & (s <= HIGH)), "sorted": np.sort(s)}

def pieces(code, d):
    inside = code >= 0
    pairs = np.unique(code[inside] * k + d[inside])
    per_code = np.bincount(pairs // k)
    return np.sum(per_code >= 2), len(pairs)

EXACT, CLOSE, LOOSE = 0.0, 1e-12, 1e-9
def check(p, name, want, tol):
    j = names.index(name)
    g = got[p][j]
    if math.isnan(want) and math.isnan(g):
        return
    if not (abs(g - want) <= tol * max(1.0, abs(want))):
        fail("%s of plan %d: %r vs numpy %r" % (name, p, g, want))

vector_width = k
checked = 0
for p, d in enumerate(plans):
    tally = lambda x: np.bincount(d, weights=x, minlength=k)
    for e, (ua, ub) in votes.items():
        m = election(tally(ua), tally(ub))
        check(p, "election.%s.seats.A" % e, m["seats"][0], EXACT)
        check(p, "election.%s.seats.B" % e, m["seats"][1], EXACT)
        for key in ("efficiency_gap", "mean_median", "partisan_bias", "declination"):
            check(p, "election.%s.%s" % (e, key), m[key], CLOSE)
        check(p, "election.%s.competitive_districts" % e, m["competitive_districts"], EXACT)
        for i, x in enumerate(m["sorted"]):
            check(p, "election.%s.sorted_shares[%d]" % (e, i), x, EXACT)
    share = np.sort(tally(grp) / tally(pop))
    check(p, "group.grp.districts_above_0.5", np.sum(share > 0.5), EXACT)
    for i, x in enumerate(share):
        check(p, "group.grp.sorted_shares[%d]" % i, x, EXACT)
    cut = d[ea] != d[eb]
    check(p, "compactness.cut_edges", np.sum(cut), EXACT)
    perimeter = tally(outer) + np.bincount(d[ea][cut], weights=elen[cut], minlength=k) \
        + np.bincount(d[eb][cut], weights=elen[cut], minlength=k)
    pp = 4 * math.pi * tally(area) / perimeter ** 2  # Polsby and Popper (1991)
    check(p, "compactness.polsby_popper_min", pp.min(), LOOSE)
    check(p, "compactness.polsby_popper_mean", pp.mean(), LOOSE)
    split, count = pieces(county, d)
    check(p, "splits.counties_split", split, EXACT)
    check(p, "splits.county_pieces", count, EXACT)
    split, count = pieces(town, d)
    check(p, "splits.municipalities_split", split, EXACT)
    check(p, "splits.municipality_pieces", count, EXACT)
    checked += 1
print("checked %d %d" % (checked, len(names)))
print("distinct %d" % len({d.tobytes() for d in plans}))
)PY";

struct Written {
  fs::path dir;
  std::size_t plans = 0;
  std::size_t columns = 0;
};

// A synth state, a recombination chain on it and the evaluator's outputs for `plans` plans: every
// scalar, then every sorted vector as <name>[i]. Even records use the chain's split tallies, odd
// ones a recount.
Written write_plans_and_measures(std::size_t plans) {
  Written w{test::scratch_dir("planmill-measures-reference", "state")};
  (void)write_synthetic_state({600, 6, 3, w.dir.string()});
  JobSpec job = load_job((w.dir / "job.toml").string());
  const GraphHandle graph = share_graph(load_unit_graph(job.map));
  ChainSetup setup;
  setup.graph = graph;
  setup.rules.population_tolerance = 0.05;
  setup.kernel.kind = KernelKind::recombination;
  setup.run_seed = 21;
  Rng rng = make_stream(21, 1);
  Chain chain(setup, random_seed_plan(graph, 6, setup.rules, rng));
  MeasureEvaluator measures(graph, 6, default_measure_spec(*graph));

  std::ofstream plan_file(w.dir / "plans.txt"), measure_file(w.dir / "measures.csv");
  for (UnitIndex u = 0; u < graph->unit_count(); ++u) plan_file << (u ? " " : "") << graph->unit_id(u);
  plan_file << "\n";
  measure_file << "k=6";
  for (const std::string& name : measures.scalar_names()) measure_file << "," << name;
  for (const std::string& name : measures.vector_names())
    for (std::size_t i = 0; i < 6; ++i) measure_file << "," << name << "[" << i << "]";
  measure_file << "\n";
  char buf[40];
  for (std::size_t p = 0; p < plans; ++p) {
    for (int s = 0; s < 3; ++s) (void)chain.step();
    const ChainState& state = chain.state();
    if (p % 2 == 0)
      measures.evaluate(state.plan, {&state.rules.county_tally(), &state.rules.municipality_tally()});
    else
      measures.evaluate(state.plan);
    for (UnitIndex u = 0; u < graph->unit_count(); ++u) plan_file << (u ? " " : "") << state.plan.district_of(u);
    plan_file << "\n";
    measure_file << p;
    for (const double x : measures.scalars()) std::snprintf(buf, sizeof buf, ",%.17g", x), measure_file << buf;
    for (std::size_t v = 0; v < measures.vector_names().size(); ++v)
      for (const double x : measures.sorted_vector(v)) std::snprintf(buf, sizeof buf, ",%.17g", x), measure_file << buf;
    measure_file << "\n";
  }
  w.plans = plans;
  w.columns = measures.scalar_names().size() + 6 * measures.vector_names().size();
  return w;
}

// The first column of measures.csv is the plan number; the script reads the rest by name.
std::string python_check(const Written& w) {
  const fs::path script = w.dir / "check.py";
  std::ofstream(script) << kPythonCheck;
  const std::string command = "/usr/bin/python3 " + script.string() + " " + (w.dir / "units.csv").string() + " " +
                              (w.dir / "adjacency.csv").string() + " " + (w.dir / "plans.txt").string() + " " +
                              (w.dir / "measures.csv").string() + " 2>&1";
  FILE* pipe = ::popen(command.c_str(), "r");
  std::string output;
  char buffer[512];
  while (pipe && std::fgets(buffer, sizeof buffer, pipe)) output += buffer;
  const int status = pipe ? ::pclose(pipe) : -1;
  return status == 0 ? output : "failed (" + std::to_string(status) + "): " + output;
}

TEST(MeasuresNumpy, EveryMeasureOfEveryPlanMatchesAnIndependentRecomputation) {
  const Written w = write_plans_and_measures(300);
  // 22 scalars (2 elections x 7, 1 group threshold, 3 compactness, 4 splits) and 3 x 6 shares.
  EXPECT_EQ(w.columns, 22U + 18U);
  const std::string result = python_check(w);
  ASSERT_EQ(result.substr(0, result.find('\n') + 1), "checked 300 " + std::to_string(w.columns) + "\n") << result;
  const std::size_t distinct = std::stoul(result.substr(result.find("distinct ") + 9));
  EXPECT_GT(distinct, 200U) << "the chain should give mostly different plans";
  std::cout << result;
}

// The check must catch a wrong value: one measure of one plan nudged by one part in 10^9.
TEST(MeasuresNumpy, TheCheckCatchesAChangedMeasure) {
  const Written w = write_plans_and_measures(20);
  const fs::path csv = w.dir / "measures.csv";
  std::string text = test::read_text(csv);
  // Plan 7's efficiency gap of gov is its fourth field: replace the value with itself + 1e-9.
  const std::size_t row = text.find("\n7,") + 1;
  std::size_t start = row;
  for (int field = 0; field < 3; ++field) start = text.find(',', start) + 1;
  const std::size_t end = text.find(',', start);
  const double value = std::stod(text.substr(start, end - start));
  char buf[40];
  std::snprintf(buf, sizeof buf, "%.17g", value + 1e-9);
  text.replace(start, end - start, buf);
  std::ofstream(csv, std::ios::trunc) << text;
  const std::string result = python_check(w);
  EXPECT_NE(result.find("mismatch: election.gov.efficiency_gap of plan 7"), std::string::npos) << result;
}

}  // namespace
}  // namespace planmill
