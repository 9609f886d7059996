#pragma once
// Map ingest: a polygon layer that GDAL/OGR reads becomes the unit table, adjacency table and job
// file skeleton of docs/inputs.md (docs/ingest.md). Bad input throws InputError naming the unit;
// nothing is written unless every file is complete.
#include <cstddef>
#include <string>
#include <vector>

namespace planmill {

struct IngestOptions {
  std::string map_path;               // any vector source GDAL opens (GeoPackage, Shapefile, GeoJSON...)
  std::string layer;                  // layer name; empty = the first layer
  std::string id_field;               // attribute holding the unit id (unique, non-empty)
  std::string out_dir;                // receives units.csv, adjacency.csv, job.toml
  std::vector<std::string> keep;      // attribute columns copied to units.csv
  std::string population, county, municipality;  // roles for the job file (copied as well)
  bool queen = false;                 // also join units touching at a point only
  double snap = 0;                    // tolerance in map units for slivers and small gaps
  bool planar = false;                // take coordinates as planar whatever the layer's CRS says
  std::string bridges;                // CSV of extra edges (id,id) joining separate parts
  bool join_islands = false;          // join each separate part to its nearest unit
  bool source_order = false;          // units in feature order, not along a Hilbert curve
};

struct IngestSummary {
  std::size_t units = 0, edges = 0;
  std::string measure;                // "geodesic on WGS 84 (metres, square metres)" or "planar (...)"
  std::vector<std::string> notes;     // repairs, snapped pairs, joined islands, zero populations
  std::vector<std::string> written;   // file names written into out_dir
};

[[nodiscard]] IngestSummary ingest_map(const IngestOptions& options);

}  // namespace planmill
