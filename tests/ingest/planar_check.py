"""planmill ingest's units.csv and adjacency.csv against shapely on the same planar GeoJSON layer.

Reference: shapely (Debian python3-shapely, GEOS): areas, perimeters (`length`, holes included),
every pair's boundary intersection (rook: positive length; queen: not empty) and its length, and
each unit's outer boundary as the length of its boundary on the boundary of the union of all units.
Usage: planar_check.py LAYER OUT rook|queen [ID_FIELD]. Prints "ok N" (N edges) or the differences.
"""
import csv, json, sys, warnings
warnings.filterwarnings("ignore")
from shapely.geometry import shape
from shapely.ops import unary_union
layer, out, queen = sys.argv[1], sys.argv[2], sys.argv[3] == "queen"
id_field = sys.argv[4] if len(sys.argv) > 4 else "unit"
polys = {f["properties"][id_field]: shape(f["geometry"]) for f in json.load(open(layer))["features"]}
rows = {r[id_field]: r for r in csv.DictReader(open(out + "/units.csv"))}
edges = {}
for r in list(csv.reader(open(out + "/adjacency.csv")))[1:]:
    edges[frozenset(r[:2])] = float(r[2])
bad = []
def near(x, y): return abs(x - y) <= 1e-9 * max(1.0, abs(y))
outline = unary_union(list(polys.values())).boundary
for u, p in polys.items():
    r = rows[u]
    for name, want in (("area", p.area), ("perimeter", p.length), ("outer", p.boundary.intersection(outline).length)):
        if not near(float(r[name]), want): bad.append("%s %s %s != %s" % (u, name, r[name], want))
ids = sorted(polys)
count = 0
for i, a in enumerate(ids):
    for b in ids[i + 1:]:
        common = polys[a].boundary.intersection(polys[b].boundary)
        joined = common.length > 1e-12 or (queen and not common.is_empty)
        got = edges.get(frozenset((a, b)))
        if joined != (got is not None): bad.append("pair %s %s: shapely %s, ingest %s" % (a, b, joined, got))
        elif joined:
            count += 1
            if not near(got, common.length): bad.append("pair %s %s length %s != %s" % (a, b, got, common.length))
if count != len(edges): bad.append("ingest lists %d edges, shapely %d" % (len(edges), count))
print("\n".join(bad[:10]) if bad else "ok %d" % count)
