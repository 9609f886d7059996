# Reference check of `planmill export --plan-layout matrix --tallies`, with h5py and numpy only
# (Debian python3-h5py, python3-numpy), written from docs/format.md ("Plan matrix") and
# docs/export.md ("District tallies"):
#  - every row of plan-matrix.h5 equals the plan that tests/support/plan_records.py (an independent
#    reader of the run's plan files) decodes for its (chain, record, step), labels 1..k, the cell
#    type is the smallest of uint8/uint16 that holds k, and the shuffle and deflate filters are on;
#  - district-tallies.csv equals tallies recomputed here from the unit table and adjacency file:
#    population and counts as exact integers; area and perimeter in double precision, added in the
#    order docs/export.md states (so equal to the last bit).
# argv: run_dir out_dir job_toml rung [units_csv adjacency_csv]. Prints "matrix ROWS" and,
# when the out folder has tallies, "tallies ROWS".
import csv, json, os, sys, tomllib

import h5py
import numpy as np
from plan_records import records

run_dir, out_dir, job_path, rung = sys.argv[1], sys.argv[2], sys.argv[3], int(sys.argv[4])
suffix = "" if rung == 0 else "-rung-%d" % rung
group_of = lambda c: c if rung == 0 else (1 << 40) + 64 * c + rung


def fail(what):
    sys.exit("mismatch: " + what)


job = tomllib.load(open(job_path, "rb"))
here = os.path.dirname(os.path.abspath(job_path))
units_csv = sys.argv[5] if len(sys.argv) > 5 else os.path.join(here, job["map"]["units"])
adjacency_csv = sys.argv[6] if len(sys.argv) > 6 else os.path.join(here, job["map"]["adjacency"])
k = int(job["districts"]["count"])
with open(units_csv, newline="") as fh:
    units = list(csv.DictReader(fh))
ids = [row[job["map"]["id"]] for row in units]
index = {u: i for i, u in enumerate(ids)}

# Every plan of every chain, straight from the run's plan files.
state = json.load(open(os.path.join(run_dir, "run-state.json")))
plans = {}
for c in state["chains"]:
    plans[c["index"]] = []
    for span in c["spans"]:
        with h5py.File(os.path.join(run_dir, span["file"]), "r") as f:
            got = list(records(f, "chain_%d" % group_of(c["index"])))[: span["records"]]
            plans[c["index"]].extend((step, plan) for step, _, plan in got)

with h5py.File(os.path.join(out_dir, "plan-matrix%s.h5" % suffix), "r") as f:
    m = f["plans"]
    want_type = np.uint8 if k <= 255 else np.uint16
    if m.dtype != want_type or m.shape[1] != len(ids):
        fail("matrix type %s, shape %s" % (m.dtype, m.shape))
    if not m.shuffle or m.compression != "gzip" or m.chunks[1] != len(ids):
        fail("matrix filters or chunks: %s %s %s" % (m.shuffle, m.compression, m.chunks))
    if [u.decode() for u in f["unit"][...]] != ids:
        fail("unit ids of the matrix columns")
    if int(f.attrs["district_count"]) != k or int(f.attrs["first_label"]) != 1:
        fail("matrix attributes")
    if int(f.attrs["rung"]) != rung or f.attrs["run_id"] != state["run_id"]:
        fail("matrix run attributes")
    if f.attrs["job_sha256"] != state["job_sha256"]:
        fail("matrix job_sha256")
    matrix = m[...]
    chain, record, step = f["chain"][...], f["record"][...], f["step"][...]
if not (len(chain) == len(record) == len(step) == matrix.shape[0]):
    fail("row names and matrix rows differ in number")
rows = list(zip(chain.tolist(), record.tolist()))
if rows != sorted(set(rows)):
    fail("matrix rows are not ascending by chain and record")
for i, (c, r) in enumerate(rows):
    s, plan = plans[c][r]
    if step[i] != s:
        fail("step of row %d" % i)
    if not np.array_equal(matrix[i].astype(np.int64), plan + 1):
        fail("districts of row %d (chain %d, record %d)" % (i, c, r))
print("matrix %d" % len(rows))

tallies_csv = os.path.join(out_dir, "district-tallies%s.csv" % suffix)
if not os.path.exists(tallies_csv):
    sys.exit(0)
mp = job["map"]
count_columns = list(mp.get("groups", []))
for e in mp.get("elections", []):
    count_columns += e["columns"]
n = len(ids)
population = np.array([int(u[mp["population"]]) for u in units], dtype=np.int64)
counts = [np.array([int(u[col]) for u in units], dtype=np.int64) for col in count_columns]
area = [float(u[mp["area"]]) for u in units] if "area" in mp else None
outer = [float(u[mp["outer_boundary"]]) for u in units] if "outer_boundary" in mp else None
# Edges: each pair once (the first length given), ordered by (lower, higher) map index.
edges = {}
with open(adjacency_csv, newline="") as fh:
    for row in list(csv.reader(fh))[1:]:
        a, b = sorted((index[row[0]], index[row[1]]))
        length = max(0.0, float(row[2])) if len(row) > 2 and row[2] != "" else None
        if (a, b) not in edges or edges[(a, b)] is None:
            edges[(a, b)] = length
edge_order = sorted(edges)
lengths_known = any(v is not None for v in edges.values())


def number(text):
    return float("nan") if text == "NA" else float(text)


with open(tallies_csv, newline="") as fh:
    table = list(csv.reader(fh))
header = ["chain", "record", "step", "district", "population"] + count_columns + ["area", "perimeter"]
if table[0] != header:
    fail("tallies header %r" % table[0])
if len(table) - 1 != len(rows) * k:
    fail("tallies has %d rows for %d plans" % (len(table) - 1, len(rows)))
at = 1
for c, r in rows:
    s, plan = plans[c][r]
    pop = np.zeros(k, dtype=np.int64)
    np.add.at(pop, plan, population)
    sums = []
    for col in counts:
        t = np.zeros(k, dtype=np.int64)
        np.add.at(t, plan, col)
        sums.append(t)
    # Area: unit areas added in map order. Perimeter: outer boundaries in map order, then the
    # length of every cut edge to both its districts, in edge order.
    d_area, d_perimeter = [0.0] * k, [0.0] * k
    for u in range(n):
        if area is not None:
            d_area[plan[u]] += area[u]
        if outer is not None:
            d_perimeter[plan[u]] += outer[u]
    for a, b in edge_order:
        if plan[a] != plan[b] and lengths_known:
            d_perimeter[plan[a]] += edges[(a, b)] or 0.0
            d_perimeter[plan[b]] += edges[(a, b)] or 0.0
    for d in range(k):
        row = table[at]
        at += 1
        want = [str(c), str(r), str(s), str(d + 1), str(pop[d])] + [str(t[d]) for t in sums]
        if row[:-2] != want:
            fail("tallies row %d: %r, recomputed %r" % (at - 1, row, want))
        got_area, got_perimeter = number(row[-2]), number(row[-1])
        if area is None:
            if row[-2] != "NA":
                fail("area of row %d should be NA" % (at - 1))
        elif got_area != d_area[d]:
            fail("area of row %d: %r, recomputed %r" % (at - 1, row[-2], d_area[d]))
        if outer is None or not lengths_known:
            if row[-1] != "NA":
                fail("perimeter of row %d should be NA" % (at - 1))
        elif got_perimeter != d_perimeter[d]:
            fail("perimeter of row %d: %r, recomputed %r" % (at - 1, row[-1], d_perimeter[d]))
print("tallies %d" % (len(table) - 1))
