"""Recomputes planmill export --gis's GeoJSON layer from the units' shapes with shapely.

Reference: shapely (Debian python3-shapely, GEOS) for areas and unions; Python's json and csv
modules read the files. Usage: gis_check.py LAYER UNITS_GEOJSON PLANS_DIR TALLIES_CSV K ID.
Prints "ok", or one line per difference.
"""
import collections
import csv
import json
import os
import sys

from shapely.geometry import shape
from shapely.ops import unary_union

layer_path, units_path, plans_dir, tallies_path, k, id_field = sys.argv[1:7]
k = int(k)
units = {f["properties"][id_field]: shape(f["geometry"]) for f in json.load(open(units_path))["features"]}
layer = json.load(open(layer_path))
tallies = {}
with open(tallies_path) as f:
    for row in csv.DictReader(f):
        tallies[("c%s_r%s" % (row["chain"], row["record"]), int(row["district"]))] = row

problems = []
per_plan = collections.Counter()
plans = {}
for feature in layer["features"]:
    p = feature["properties"]
    name, d = p["plan"], p["district"]
    per_plan[name] += 1
    if name not in plans:
        chain, record = name[1:].split("_r")
        with open(os.path.join(plans_dir, "chain-%s-record-%s.csv" % (chain, record))) as f:
            plans[name] = [(row[0], int(row[1])) for row in list(csv.reader(f))[1:]]
    members = [units[u] for u, district in plans[name] if district == d]
    geometry = shape(feature["geometry"])
    unit_sum = sum(m.area for m in members)
    union = unary_union(members)
    if not geometry.is_valid:
        problems.append("%s/%d: invalid geometry" % (name, d))
    if abs(geometry.area - unit_sum) > 1e-9 * unit_sum:
        problems.append("%s/%d: area %r, units' areas add to %r" % (name, d, geometry.area, unit_sum))
    if geometry.symmetric_difference(union).area > 1e-9 * unit_sum:
        problems.append("%s/%d: not the union of its units" % (name, d))
    kind = "Polygon" if len(getattr(union, "geoms", [union])) == 1 else "MultiPolygon"
    if feature["geometry"]["type"] != kind:
        problems.append("%s/%d: a %s, expected a %s" % (name, d, feature["geometry"]["type"], kind))
    row = tallies.get((name, d))
    if row is None:
        problems.append("%s/%d: no row in the tallies" % (name, d))
        continue
    for column, value in row.items():
        if column in ("area", "perimeter"):
            if abs(p[column] - float(value)) > 1e-9 * float(value):
                problems.append("%s/%d: %s %r, tallies %s" % (name, d, column, p[column], value))
        elif p[column] != int(value):
            problems.append("%s/%d: %s %r, tallies %s" % (name, d, column, p[column], value))
for name, count in per_plan.items():
    if count != k:
        problems.append("%s: %d districts, expected %d" % (name, count, k))
if len(per_plan) * k != len(tallies):
    problems.append("%d plans in the layer, the tallies have %d rows" % (len(per_plan), len(tallies)))
print("\n".join(problems) if problems else "ok")
