"""Recomputes a sweep comparison's bands from each setting's exported run, with numpy.

Usage: bands_check.py SWEEP_CSV INDEX=EXPORT_DIR ...

For every row of SWEEP_CSV (planmill sweep compare --csv) of the listed settings: scalar measures
from EXPORT_DIR/observables.csv, sorted group-share positions from EXPORT_DIR/district-tallies.csv
(the group's count over the district's population, sorted per plan, lowest first). The median and
the 10th and 90th percentiles are numpy.quantile's default method, "linear", which is type 7 of
Hyndman and Fan (1996). Prints one line per mismatch and exits 1 if there is any.
"""
import csv
import sys

import numpy as np


def bands(values):
    values = np.asarray([v for v in values if np.isfinite(v)], dtype=float)
    return len(values), np.quantile(values, [0.5, 0.1, 0.9])


def number(text):
    return float("nan") if text in ("", "NA") else float(text)


def main():
    rows = list(csv.DictReader(open(sys.argv[1])))
    exports = dict(arg.split("=", 1) for arg in sys.argv[2:])
    bad, checked = 0, 0
    for index, folder in exports.items():
        obs = list(csv.DictReader(open(folder + "/observables.csv")))
        tallies = list(csv.DictReader(open(folder + "/district-tallies.csv")))
        plans = {}
        for t in tallies:
            plans.setdefault((t["chain"], t["record"]), []).append(t)
        mine = [r for r in rows if r["index"] == index]
        if not mine:
            print(f"setting {index}: no rows in the sweep CSV")
            bad += 1
        for r in mine:
            name = r["measure"]
            if ".position_" in name:
                vector, position = name.rsplit(".position_", 1)
                group = vector[len("group."):-len(".sorted_shares")]
                values = [sorted(float(t[group]) / float(t["population"]) for t in p)[int(position) - 1]
                          for p in plans.values()]
            else:
                values = [number(o[name]) for o in obs]
            n, (median, low, high) = bands(values)
            got = (int(r["draws"]), number(r["median"]), number(r["low"]), number(r["high"]))
            want = (n, median, low, high)
            checked += 1
            if got[0] != want[0] or not np.allclose(got[1:], want[1:], rtol=1e-8, atol=1e-9):
                print(f"setting {index} {name}: sweep {got}, numpy {want}")
                bad += 1
    print(f"{checked} bands checked, {bad} mismatches")
    sys.exit(1 if bad or checked == 0 else 0)


main()
