#pragma once
// The numpy recomputation of every measure (docs/measures.md) from the unit table, the adjacency
// and plan labels alone, shared by the reference tests of the measures part (values from the
// evaluator, in a CSV) and of the runner (values a run stored, read with h5py). A test joins
// kMeasuresPythonLoad, its own reader of the values, and kMeasuresPythonCheck into one script.
// Sources of each formula are named in the script; tolerances are stated where they are set.
//
// argv[1:4]: units.csv adjacency.csv plans.txt (first line the unit ids, then one plan's labels a
// line). The reader must set `names` (one per value of a plan, sorted vectors as <name>[i]),
// `got` (per plan its values in that order) and `k`. The check prints "checked PLANS NAMES" and
// "distinct N" (the different plans among them), or exits with "mismatch: ...".

namespace planmill::test {

inline constexpr const char* kMeasuresPythonLoad = R"PY(
import csv, math, sys
import numpy as np

units_csv, adjacency_csv, plans_txt = sys.argv[1:4]
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
)PY";

inline constexpr const char* kMeasuresPythonCheck = R"PY(def fail(what):
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
    if "population_deviation" in names:  # the chain's own observable, recorded by runs
        ideal = pop.sum() / k
        check(p, "population_deviation", np.max(np.abs(tally(pop) - ideal)) / ideal, CLOSE)
    cut = d[ea] != d[eb]
    check(p, "compactness.cut_edges", np.sum(cut), EXACT)
    perimeter = tally(outer) + np.bincount(d[ea][cut], weights=elen[cut], minlength=k) \
        + np.bincount(d[eb][cut], weights=elen[cut], minlength=k)
    pp = 4 * math.pi * tally(area) / perimeter ** 2  # Polsby and Popper (1991)
    check(p, "compactness.polsby_popper_min", pp.min(), LOOSE)
    check(p, "compactness.polsby_popper_mean", pp.mean(), LOOSE)
    ideal = pop.sum() / k  # overall range and max deviation over the ideal, by their definitions
    check(p, "population.max_deviation", np.max(np.abs(tally(pop) - ideal)) / ideal, CLOSE)
    check(p, "population.overall_range", (tally(pop).max() - tally(pop).min()) / ideal, CLOSE)
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

}  // namespace planmill::test
