// The generator's geometry recomputed by an outside library: shapely (Debian python3-shapely)
// reads units.geojson and recomputes every unit's area and perimeter, every shared boundary
// length (and finds any touching pair the adjacency missed), every outer-boundary length, and
// the outline (one polygon, area = sum of unit areas). Compared with units.csv and
// adjacency.csv to 1e-9 km (the coordinates are exact binary fractions).
#include <gtest/gtest.h>

#include <cstdlib>
#include <fstream>

#include "planmill/synth/synth.hpp"
#include "synth_support.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

const char* const kScript = R"PY(
import csv, json, sys, warnings
warnings.filterwarnings("ignore")  # shapely 1.8 announces its 2.0 STRtree change
from shapely.geometry import shape
from shapely.ops import unary_union
from shapely.strtree import STRtree

folder = sys.argv[1]
features = json.load(open(folder + "/units.geojson"))["features"]
polys = {f["properties"]["unit"]: shape(f["geometry"]) for f in features}
rows = {r["unit"]: r for r in csv.DictReader(open(folder + "/units.csv"))}
listed = {}
for r in csv.DictReader(open(folder + "/adjacency.csv")):
    listed[(r["a"], r["b"])] = float(r["length"])
tol = 1e-9
bad = []
if set(polys) != set(rows):
    bad.append("unit ids differ between units.geojson and units.csv")
for uid, p in polys.items():
    r = rows[uid]
    if not p.is_valid: bad.append(uid + " invalid polygon")
    if abs(p.area - float(r["area"])) > tol:
        bad.append(uid + " area %r vs %s" % (p.area, r["area"]))
    if abs(p.length - float(r["perimeter"])) > tol:
        bad.append(uid + " perimeter %r vs %s" % (p.length, r["perimeter"]))
ids = list(polys)
geoms = [polys[i] for i in ids]
where = {id(g): i for g, i in zip(geoms, ids)}
tree = STRtree(geoms)
found = {}
for uid in ids:
    p = polys[uid]
    for q in tree.query(p):
        if not hasattr(q, "geom_type"): q = geoms[int(q)]  # shapely 2 returns indices
        vid = where[id(q)]
        if vid <= uid: continue
        shared = p.boundary.intersection(q.boundary).length
        if p.intersection(q).area > tol: bad.append("%s and %s overlap" % (uid, vid))
        if shared > tol: found[(uid, vid)] = shared
for pair, length in found.items():
    if pair not in listed: bad.append("pair %s,%s (shared %r) missing" % (pair + (length,)))
    elif abs(listed[pair] - length) > tol:
        bad.append("pair %s,%s length %r vs %r" % (pair + (listed[pair], length)))
for pair in listed:
    if pair not in found:
        bad.append("pair %s,%s listed but shapely finds no shared boundary" % pair)
outline = unary_union(geoms)
if outline.geom_type != "Polygon": bad.append("outline is a " + outline.geom_type)
total = sum(float(r["area"]) for r in rows.values())
if abs(outline.area - total) > 1e-6: bad.append("outline area %r vs sum %r" % (outline.area, total))
for uid, p in polys.items():
    outer = p.boundary.intersection(outline.boundary).length
    if abs(outer - float(rows[uid]["outer"])) > tol:
        bad.append(uid + " outer %r vs %s" % (outer, rows[uid]["outer"]))
minx, miny, maxx, maxy = outline.bounds
if outline.area > 0.9 * (maxx - minx) * (maxy - miny): bad.append("outline is nearly a rectangle")
print("checked %d units, %d shared boundaries" % (len(polys), len(found)))
for line in bad[:20]: print("MISMATCH", line)
sys.exit(1 if bad else 0)
)PY";

TEST(SynthReference, ShapelyAgreesWithAreasPerimetersAndSharedLengths) {
  const fs::path dir = synth_test::scratch_dir("shapely");
  write_synthetic_state({1200, 12, 99, dir.string()});
  { std::ofstream(dir / "check.py") << kScript; }
  const std::string command = "/usr/bin/python3 " + (dir / "check.py").string() + " " +
                              dir.string() + " > " + (dir / "log.txt").string() + " 2>&1";
  const int status = std::system(command.c_str());
  const std::string log = synth_test::read_bytes(dir / "log.txt");
  EXPECT_EQ(status, 0) << "shapely check failed (needs Debian python3-shapely):\n" << log;
  EXPECT_NE(log.find("checked 1200 units"), std::string::npos) << log;
  fs::remove_all(dir);
}

}  // namespace
}  // namespace planmill
