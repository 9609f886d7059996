"""Independent recomputation for the tests of `planmill score` (tests/score/score_reference_test.cpp).

Run with /usr/bin/python3 (Debian python3-numpy, python3-networkx). Modes:
  break STATE PLAN OUT          a plan with a district above the population band and one not contiguous
  rules STATE JOB PLAN JSON     the band (exact fractions), each district outside it, each district's
                                connected pieces (networkx.connected_components) and the counties split
                                (and the job's county cap) against score's JSON
  fine STATE PLAN FPLAN XWALK   fine units made by splitting each unit, a plan on them that splits some
                                units (with a population tie), and the crosswalk
  carry STATE FPLAN XWALK JSON  each unit's district by the documented rule (numpy), the split units and
                                their population, against score's JSON
Prints "ok ..." or "mismatch: ..." (exit 1).
"""
import csv
import math
import sys
import tomllib
from fractions import Fraction

import networkx as nx
import numpy as np


def load_state(state):
    with open(f"{state}/units.csv", newline="") as fh:
        units = list(csv.DictReader(fh))
    ids = [u["unit"] for u in units]
    pop = np.array([int(u["pop"]) for u in units], dtype=np.int64)
    graph = nx.Graph()
    graph.add_nodes_from(ids)
    with open(f"{state}/adjacency.csv", newline="") as fh:
        reader = csv.reader(fh)
        next(reader)
        graph.add_edges_from((row[0], row[1]) for row in reader)
    return ids, pop, graph


def read_plan(path):
    with open(path, newline="") as fh:
        reader = csv.reader(fh)
        next(reader)
        return {row[0]: int(row[1]) for row in reader}


def write_plan(path, rows):
    with open(path, "w", newline="") as fh:
        fh.write("unit,district\n")
        for unit, district in rows:
            fh.write(f"{unit},{district}\n")


def fail(message):
    print("mismatch: " + message)
    sys.exit(1)


def band(total, k, tolerance_text):
    # [ceil((1 - eps) total / k), floor((1 + eps) total / k)] in exact rational arithmetic.
    eps = Fraction(tolerance_text)
    ideal = Fraction(total, k)
    return math.ceil((1 - eps) * ideal), math.floor((1 + eps) * ideal)


def make_broken(state, plan_path, out):
    ids, pop, graph = load_state(state)
    plan = read_plan(plan_path)
    k = max(plan.values())
    # Grow district 1 over its neighbours (breadth first) by a tenth of the map's population.
    grown, target = 1, pop.sum() // k + pop.sum() // 10
    by_id = dict(zip(ids, pop))
    district_pop = sum(by_id[u] for u in ids if plan[u] == grown)
    frontier = [u for u in ids if plan[u] == grown]
    while district_pop < target:
        nxt = []
        for u in frontier:
            for v in graph.neighbors(u):
                if plan[v] != grown and district_pop < target:
                    plan[v] = grown
                    district_pop += by_id[v]
                    nxt.append(v)
        frontier = nxt
    # A unit of another district that touches none of district 2's units joins district 2, alone.
    for u in ids:
        if plan[u] not in (2, grown) and all(plan[v] != 2 for v in graph.neighbors(u)):
            plan[u] = 2
            break
    write_plan(out, [(u, plan[u]) for u in ids])
    print("ok broken plan written")


def check_rules(state, job_path, plan_path, json_path):
    import json

    ids, pop, graph = load_state(state)
    with open(job_path, "rb") as fh:
        job = tomllib.load(fh)
    with open(job_path) as fh:  # the tolerance as written, for exact arithmetic
        tolerance_text = next(
            (line.split("=")[1].strip() for line in fh if line.strip().startswith("population_tolerance")), "0.05")
    k = job["districts"]["count"]
    plan = read_plan(plan_path)
    got = json.load(open(json_path))
    lo, hi = band(int(pop.sum()), k, tolerance_text)
    rules = got["rules"]
    if (rules["population_min"], rules["population_max"]) != (lo, hi):
        fail(f"band {rules['population_min']}..{rules['population_max']}, expected {lo}..{hi}")
    by_id = dict(zip(ids, pop))
    expect_pop, expect_pieces = [], []
    for d in range(1, k + 1):
        members = [u for u in ids if plan[u] == d]
        p = int(sum(by_id[u] for u in members))
        if p < lo or p > hi:
            expect_pop.append({"district": d, "population": p, "beyond": p - lo if p < lo else p - hi})
        pieces = [(int(sum(by_id[u] for u in c)), len(c)) for c in nx.connected_components(graph.subgraph(members))]
        if len(pieces) > 1:
            pieces.sort(reverse=True)  # by population, then units, largest first
            expect_pieces.append({"district": d, "pieces": [{"units": n, "population": q} for q, n in pieces]})
    hard = got["hard_rules"]
    got_pop = [{key: b[key] for key in ("district", "population", "beyond")} for b in hard["population"]]
    if got_pop != expect_pop:
        fail(f"population breaches {got_pop}, expected {expect_pop}")
    if hard["not_contiguous"] != expect_pieces:
        fail(f"pieces {hard['not_contiguous']}, expected {expect_pieces}")
    with open(f"{state}/units.csv", newline="") as fh:
        county = {u["unit"]: u["county"] for u in csv.DictReader(fh)}
    meets = {}
    for u in ids:
        meets.setdefault(county[u], set()).add(plan[u])
    split = sum(1 for districts in meets.values() if len(districts) > 1)
    if hard["counties_split"] != split:
        fail(f"counties split {hard['counties_split']}, expected {split}")
    cap = job["rules"].get("county_splits_max")
    if hard["county_cap_broken"] != (cap is not None and split > cap):
        fail(f"county cap {cap}: broken {hard['county_cap_broken']} with {split} split")
    if not expect_pop or not expect_pieces:
        fail("the plan was meant to break both rules")
    print(f"ok {len(expect_pop)} outside the band {lo}..{hi}, {len(expect_pieces)} not contiguous, {split} counties split")


def make_fine(state, plan_path, fine_plan, crosswalk):
    ids, pop, graph = load_state(state)
    plan = read_plan(plan_path)
    k = max(plan.values())
    fine = []  # (fine id, unit, population, district)
    for i, u in enumerate(ids):
        parts = 1 + i % 3
        shares = [pop[i] // parts] * parts
        shares[0] += pop[i] - sum(shares)
        for j in range(parts):
            district = plan[u]
            if i % 10 == 1 and j == 1:  # two parts: split the unit, the larger part (j = 0) keeps it
                district = district % k + 1
            if i % 10 == 4 and j >= 1:  # three parts: two of them move, so the unit moves
                district = district % k + 1
            fine.append([f"{u}-b{j}", u, int(shares[j]), district])
    # A tie: unit 7 (two parts) in two districts with equal population: the lower district wins.
    tie = [f for f in fine if f[1] == ids[7]]
    assert len(tie) == 2
    half = (tie[0][2] + tie[1][2]) // 2 + 1  # so the crosswalk exceeds the unit table (a warning)
    tie[0][2] = tie[1][2] = half
    tie[0][3], tie[1][3] = 3, 2
    with open(fine_plan, "w") as fh:
        fh.write("block,district\n")
        for f in reversed(fine):  # any order
            fh.write(f"{f[0]},{f[3]}\n")
    with open(crosswalk, "w") as fh:
        fh.write("population,fine_unit,unit,note\n")  # columns found by name; others ignored
        for f in fine:
            fh.write(f"{f[2]},{f[0]},{f[1]},x\n")
    print(f"ok {len(fine)} fine units")


def check_carry(state, fine_plan, crosswalk, json_path):
    import json

    ids, pop, graph = load_state(state)
    index = {u: i for i, u in enumerate(ids)}
    with open(crosswalk, newline="") as fh:
        rows = list(csv.DictReader(fh))
    unit_of = {r["fine_unit"]: index[r["unit"]] for r in rows}
    fine_pop = {r["fine_unit"]: int(r["population"]) for r in rows}
    plan = read_plan(fine_plan)
    k = max(plan.values())
    n = len(ids)
    # Crosswalk population and fine-unit count of each (unit, district) cell.
    cell_pop = np.zeros((n, k + 1), dtype=np.int64)
    cell_count = np.zeros((n, k + 1), dtype=np.int64)
    fine_ids = list(plan)
    u = np.array([unit_of[f] for f in fine_ids])
    d = np.array([plan[f] for f in fine_ids])
    np.add.at(cell_pop, (u, d), np.array([fine_pop[f] for f in fine_ids]))
    np.add.at(cell_count, (u, d), 1)
    # Most population, then most fine units, then the lower district: lexsort's last key is primary.
    expect = []
    for i in range(n):
        districts = np.arange(1, k + 1)
        order = np.lexsort((districts, -cell_count[i, 1:], -cell_pop[i, 1:]))
        expect.append(int(districts[order[0]]))
    split = [i for i in range(n) if np.count_nonzero(cell_count[i, 1:]) > 1]
    split_pop = int(pop[split].sum())
    got = json.load(open(json_path))["reading"]
    if got["unit_districts"] != [expect[index[x]] for x in ids]:
        fail("unit districts differ")
    if [s["unit"] for s in got["split_units"]] != [ids[i] for i in split]:
        fail(f"split units {[s['unit'] for s in got['split_units']]}, expected {[ids[i] for i in split]}")
    for s, i in zip(got["split_units"], split):
        parts = [{"district": int(c), "fine_units": int(cell_count[i, c]), "population": int(cell_pop[i, c])}
                 for c in range(1, k + 1) if cell_count[i, c] > 0]
        if s["parts"] != parts or s["district"] != expect[i]:
            fail(f"unit {ids[i]}: {s}, expected {parts} -> {expect[i]}")
    if got["split_population"] != split_pop:
        fail(f"split population {got['split_population']}, expected {split_pop}")
    sums = np.zeros(n, dtype=np.int64)
    np.add.at(sums, np.array(list(unit_of.values())), np.array([fine_pop[f] for f in unit_of]))
    off = int(np.abs(sums - pop).sum())
    if off == 0 or not any(f"({off} people in all" in w for w in got["warnings"]):
        fail(f"warnings {got['warnings']}, expected {off} people off")
    if abs(got["split_population_share"] - split_pop / pop.sum()) > 1e-15:
        fail("split population share")
    print(f"ok {len(split)} units split, {split_pop} people in them, share {split_pop / pop.sum():.6f}")


if __name__ == "__main__":
    mode, args = sys.argv[1], sys.argv[2:]
    {"break": make_broken, "rules": check_rules, "fine": make_fine, "carry": check_carry}[mode](*args)
