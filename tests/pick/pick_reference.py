#!/usr/bin/python3
"""Independent check of `planmill pick` (reference: numpy.lexsort over `planmill export`'s
observables.csv, plans from export's plan-matrix.h5 read with h5py).

usage: pick_reference.py EXPORT_DIR PICK_DIR COUNT AIM... -- FILTER...
AIM is most:NAME or fewest:NAME; FILTER is 'NAME OP NUMBER'. Prints the checks made; exit 1 on
any difference."""
import csv, operator, re, sys
import h5py
import numpy as np

export_dir, pick_dir, count = sys.argv[1], sys.argv[2], int(sys.argv[3])
rest = sys.argv[4:]
sep = rest.index("--")
aims, filters = rest[:sep], rest[sep + 1:]

with open(f"{export_dir}/observables.csv") as f:
    rows = list(csv.reader(f))
header, body = rows[0], rows[1:]
def column(name):
    i = header.index(name)
    return np.array([float("nan") if r[i] == "NA" else float(r[i]) for r in body])
chain, record = column("chain").astype(int), column("record").astype(int)

ops = {"<": operator.lt, "<=": operator.le, "==": operator.eq, ">=": operator.ge, ">": operator.gt}
keep = np.ones(len(body), bool)
removed = []
for text in filters:
    name, op, value = re.fullmatch(r"\s*([\w.\-]+)\s*(<=|>=|==|<|>)\s*(\S+)\s*", text).groups()
    ok = ops[op](column(name), float(value))  # NaN compares False: removed
    removed.append(int(np.sum(keep & ~ok)))
    keep &= ok

problems = []
summary = open(f"{pick_dir}/summary.txt").read()
considered = len(body)
for text, n in zip(filters, removed):
    expect = f"'{text}' removed {n} of {considered}"
    if expect not in summary:
        problems.append(f"summary lacks: {expect}")
    considered -= n

# Lexicographic: first aim first; numpy.lexsort takes the last key as the primary one. Ties go to
# the lower chain, then the lower record. NaN sorts last either way (-NaN is NaN).
keys = [record, chain] + [(-column(a.split(":", 1)[1]) if a.startswith("most:") else column(a.split(":", 1)[1]))
                          for a in reversed(aims)]
order = [i for i in np.lexsort(keys) if keep[i]]

with h5py.File(f"{export_dir}/plan-matrix.h5", "r") as f:
    plans = f["plans"][...]
    where = {(int(c), int(r)): i for i, (c, r) in enumerate(zip(f["chain"][...], f["record"][...]))}
def canonical(labels):
    first = {}
    return tuple(first.setdefault(x, len(first)) for x in labels)
expected, seen = [], set()
for i in order:
    if len(expected) == count:
        break
    form = canonical(plans[where[(chain[i], record[i])]])
    if form in seen:
        continue
    seen.add(form)
    expected.append((int(chain[i]), int(record[i])))

with open(f"{pick_dir}/picks.csv") as f:
    table = list(csv.DictReader(line for line in f if not line.startswith("#")))
got = []
for r in table:
    p = (int(r["chain"]), int(r["record"]))
    if not got or got[-1] != p:
        got.append(p)
if got != expected:
    problems.append(f"picks {got} != numpy's {expected}")

# Each pick's plan file is its record's plan; its share below among the kept records (cut to the
# fewest any chain kept, in record order) is numpy's.
kept_by_chain = {c: [i for i in range(len(body)) if keep[i] and chain[i] == c] for c in sorted(set(chain))}
draws = min(len(v) for v in kept_by_chain.values())
used = [i for v in kept_by_chain.values() for i in v[:draws]]
first_aim = aims[0].split(":", 1)[1]
for n, (c, r) in enumerate(got, start=1):
    with open(f"{pick_dir}/plan-{n}.csv") as f:
        labels = [int(line.split(",")[1]) for line in list(f)[1:]]
    if labels != list(plans[where[(c, r)]]):
        problems.append(f"plan-{n}.csv is not chain {c} record {r}")
    row = next(t for t in table if int(t["pick"]) == n and t["measure"] == first_aim)
    values = column(first_aim)[used]
    below = float(np.mean(values < float(row["value"])))
    if abs(below - float(row["below"])) > 1e-12:
        problems.append(f"pick {n} below {row['below']} != numpy's {below}")

print(f"picks {got}; removed {removed}; {draws} kept records per chain used")
for p in problems:
    print("PROBLEM:", p)
sys.exit(1 if problems else 0)
