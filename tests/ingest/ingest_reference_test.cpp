// planmill ingest against outside references on layers the test writes:
// - planar: a jittered 8 x 8 tiling with a hole (and a unit filling it), checked with Python's
//   shapely (Debian python3-shapely) by tests/ingest/planar_check.py: areas, perimeters (`length`,
//   holes included), every pair's boundary intersection (rook: positive length; queen: not empty)
//   and its length, and each unit's outer boundary as the length of its boundary on the boundary
//   of the union of all units;
// - geographic: a 3 x 3 grid of 0.5 degree lon/lat cells on WGS 84, against the ellipsoid's
//   area element M N cos(phi) dphi dlambda and meridian arc M dphi integrated numerically
//   (textbook ellipsoid geometry; M = a(1-e^2)/W^3, N = a/W, W = sqrt(1 - e^2 sin^2 phi)) and the
//   closed-form band area (b^2 dlambda / 2)[sin/(1-e^2 sin^2) + atanh(e sin)/e] (Snyder, Map
//   Projections - A Working Manual, 1987, eq. 3-12 for q; from memory, so the quadrature checks it
//   too). The cells' parallels are drawn as 0.005 degree steps, so the geodesic polygon differs
//   from the parallel-bounded cell by far less than the 1e-6 tolerance (sagitta estimate).
#include <gtest/gtest.h>

#include <cmath>
#include <cstdint>
#include <fstream>

#include "ingest_support.hpp"

namespace planmill::test {
namespace {

namespace fs = std::filesystem;

// Lattice point (i, j) moved by up to 0.3 in each direction (a fixed LCG, so the layer is the same
// on every run); the outline's points stay on the square's sides.
double jitter(int i, int j, int axis) {
  std::uint64_t s = static_cast<std::uint64_t>(i * 131 + j * 17 + axis * 7919 + 1);
  for (int k = 0; k < 4; ++k) s = s * 6364136223846793005ULL + 1442695040888963407ULL;
  return (static_cast<double>(s >> 11) / 9007199254740992.0 - 0.5) * 0.6;
}

fs::path write_jittered_tiling(const fs::path& path) {
  constexpr int n = 8;
  const auto point = [&](int i, int j) {
    const double x = i + ((i == 0 || i == n) ? 0 : jitter(i, j, 0));
    const double y = j + ((j == 0 || j == n) ? 0 : jitter(i, j, 1));
    return "[" + std::to_string(x) + "," + std::to_string(y) + "]";
  };
  const std::string hole = "[[3.3,3.3],[3.3,3.7],[3.7,3.7],[3.7,3.3],[3.3,3.3]]";
  std::vector<Feature> features;
  for (int i = 0; i < n; ++i) {
    for (int j = 0; j < n; ++j) {
      std::string ring = "[" + point(i, j) + "," + point(i + 1, j) + "," + point(i + 1, j + 1) + "," + point(i, j + 1) + "," + point(i, j) + "]";
      if (i == 3 && j == 3) ring += "," + hole;  // the lattice jitter keeps (3.3..3.7)^2 inside the cell
      features.push_back({"c" + std::to_string(i) + "_" + std::to_string(j), "{\"type\":\"Polygon\",\"coordinates\":[" + ring + "]}"});
    }
  }
  features.push_back({"hole", "{\"type\":\"Polygon\",\"coordinates\":[" + hole + "]}"});
  return write_layer(path, features);
}

TEST(IngestReference, PlanarTilingAgainstShapely) {
  const fs::path dir = scratch_dir("ingest-ref", "planar");
  const fs::path layer = write_jittered_tiling(dir / "tiling.geojson");
  for (const std::string mode : {"rook", "queen"}) {
    const std::string run = ingest(layer, dir / mode, "--planar" + std::string(mode == "queen" ? " --queen" : ""));
    ASSERT_NE(run.find("ingest: 65 units"), std::string::npos) << run;
    const std::string check = command_output(std::string("/usr/bin/python3 ") + PLANMILL_SOURCE_DIR + "/tests/ingest/planar_check.py " + layer.string() + " " + (dir / mode).string() +
                                             " " + mode + " 2>&1");
    EXPECT_EQ(check.rfind("ok ", 0), 0u) << mode << ": " << check;
  }
}

const char* const kGeodesicCheck = R"PY(
import csv, math, sys
out, lon0, lat0, step, n = sys.argv[1], 10.0, 40.0, 0.5, 3
a = 6378137.0; f = 1 / 298.257223563; e2 = f * (2 - f); e = math.sqrt(e2); b = a * (1 - f)
W = lambda p: math.sqrt(1 - e2 * math.sin(p) ** 2)
M = lambda p: a * (1 - e2) / W(p) ** 3
N = lambda p: a / W(p)
def simpson(g, x0, x1, k=2000):
    h = (x1 - x0) / k
    return h / 3 * (g(x0) + g(x1) + sum((4 if i % 2 else 2) * g(x0 + i * h) for i in range(1, k)))
def q(p):
    s = math.sin(p)
    return s / (1 - e2 * s * s) + math.atanh(e * s) / e
dl = math.radians(step)
rows = {r["unit"]: r for r in csv.DictReader(open(out + "/units.csv"))}
edges = {frozenset(r[:2]): float(r[2]) for r in list(csv.reader(open(out + "/adjacency.csv")))[1:]}
bad = []
def near(x, y, tol=1e-6):
    if abs(x - y) > tol * abs(y): bad.append("%s != %s" % (x, y))
for j in range(n):
    p1, p2 = math.radians(lat0 + j * step), math.radians(lat0 + (j + 1) * step)
    quad = dl * simpson(lambda p: M(p) * N(p) * math.cos(p), p1, p2)
    closed = b * b * dl / 2 * (q(p2) - q(p1))
    near(closed, quad, 1e-9)
    meridian = simpson(M, p1, p2)
    south, north = N(p1) * math.cos(p1) * dl, N(p2) * math.cos(p2) * dl
    for i in range(n):
        u = "g%d_%d" % (i, j)
        near(float(rows[u]["area"]), quad)
        near(float(rows[u]["perimeter"]), 2 * meridian + south + north)
        outer = (meridian if i == 0 else 0) + (meridian if i == n - 1 else 0) + (south if j == 0 else 0) + (north if j == n - 1 else 0)
        near(float(rows[u]["outer"]) + 1, outer + 1)
        if i + 1 < n: near(edges[frozenset((u, "g%d_%d" % (i + 1, j)))], meridian)
        if j + 1 < n: near(edges[frozenset((u, "g%d_%d" % (i, j + 1)))], north)
if len(edges) != 2 * n * (n - 1): bad.append("%d edges" % len(edges))
print("\n".join(bad[:10]) if bad else "ok")
)PY";

TEST(IngestReference, LonLatCellsAgainstEllipsoidFormulas) {
  const fs::path dir = scratch_dir("ingest-ref", "geodesic");
  constexpr int n = 3, steps = 100;  // 0.005 degree steps along each parallel
  std::vector<Feature> features;
  for (int i = 0; i < n; ++i) {
    for (int j = 0; j < n; ++j) {
      const double lon0 = 10 + 0.5 * i, lat0 = 40 + 0.5 * j;
      std::string ring;
      const auto add = [&](double lon, double lat) { ring += (ring.empty() ? "" : ",") + ("[" + std::to_string(lon) + "," + std::to_string(lat) + "]"); };
      for (int k = 0; k <= steps; ++k) add(lon0 + 0.5 * k / steps, lat0);
      for (int k = steps; k >= 0; --k) add(lon0 + 0.5 * k / steps, lat0 + 0.5);
      add(lon0, lat0);
      features.push_back({"g" + std::to_string(i) + "_" + std::to_string(j), "{\"type\":\"Polygon\",\"coordinates\":[[" + ring + "]]}"});
    }
  }
  const fs::path layer = write_layer(dir / "cells.geojson", features);
  const std::string run = ingest(layer, dir / "out", "");
  ASSERT_NE(run.find("measured geodesic on the ellipsoid of WGS_1984, lengths in metres"), std::string::npos) << run;
  std::ofstream(dir / "check.py") << kGeodesicCheck;
  EXPECT_EQ(command_output("/usr/bin/python3 " + (dir / "check.py").string() + " " + (dir / "out").string() + " 2>&1"), "ok\n");
}

}  // namespace
}  // namespace planmill::test
