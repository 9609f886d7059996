#pragma once
// `planmill export`: a run's observables and chosen plans as plain CSV for R, Python and GIS users,
// the chosen plans' district tallies as one long CSV, and the chosen plans as one dense HDF5
// matrix (docs/export.md, docs/format.md). Everything the user asked for is checked before the
// first file is written, so a bad choice (a chain or record that does not exist, a map that
// cannot be found) writes nothing. Each file is replaced atomically. A chain whose plan file is damaged is left out and reported;
// the other chains are still exported. With a rung R > 0 everything written is rung R of each
// chain's ladder, and only damage to that rung's records leaves a chain out.
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/run/run_reader.hpp"

namespace planmill {

struct RecordRef {
  std::uint64_t chain = 0;
  std::uint64_t record = 0;  // 0-based within the chain, in record order
  friend auto operator<=>(const RecordRef&, const RecordRef&) = default;
};

// Which recorded plans to write. Nothing set = no plans (observables only).
struct PlanChoice {
  std::vector<RecordRef> records;  // named one by one
  std::uint64_t every = 0;         // records 0, N, 2N, ... of each chosen chain; 0 = off
  bool chains_given = false;       // `chains` restricts `every`; alone it takes every record
  std::vector<std::uint64_t> chains;
};

// The forms the chosen plans are written in; any mix, or none (e.g. only tallies).
struct PlanLayout {
  bool files = true;    // plans/chain-C-record-N.csv, one per plan
  bool wide = false;    // plans-wide.csv, a column per plan
  bool matrix = false;  // plan-matrix.h5, plans x units (docs/format.md)
  friend bool operator==(const PlanLayout&, const PlanLayout&) = default;
};

struct ExportOptions {
  std::string run_dir;
  std::string out_dir;
  PlanChoice plans;
  PlanLayout layout;
  bool tallies = false;  // district-tallies.csv: a row per chosen plan and district
  std::string units_path;  // unit table overriding the job's map.units; empty = the job's
  std::string id_column;   // overriding the job's map.id; empty = the job's
  std::string adjacency_path;  // overriding the job's map.adjacency (for tallies); empty = job's
  // Rung of each chain's ladder to export: 0 = the chains (the ensemble); R > 0 needs every chain
  // of the run to have recorded rung R ([tempering] record = "all"), else InputError.
  std::uint64_t rung = 0;
  // The chosen plans and plan_files as one GIS layer, a feature per district (docs/export.md,
  // "Plans back to GIS"). Empty gis_path: none.
  std::string gis_path;
  std::string gis_format;     // "gpkg", "geojson"; empty: from gis_path's extension
  std::string geometry_path;  // the units' shapes; empty: the job's map.geometry
  std::string geometry_id;    // their id attribute; empty: the map's id column
  std::vector<std::string> plan_files;  // plan CSVs on the run's units (or through crosswalk_path)
  std::string crosswalk_path;
};

struct ExportResult {
  std::vector<std::string> written;    // files written, relative to out_dir
  std::vector<ChainProblem> left_out;  // damaged chains, not exported
  std::vector<std::string> warnings;   // one line each
  std::uint64_t observable_rows = 0;
  std::uint64_t plans = 0;
  std::uint64_t gis_plans = 0;  // plans in the GIS layer (k features each)
};

// "3:120,0:5" -> {{3,120},{0,5}}. InputError (key `option`) on anything else.
[[nodiscard]] std::vector<RecordRef> parse_record_list(std::string_view text,
                                                       const std::string& option);
// "0,2,5-7" -> {0,2,5,6,7}. InputError (key `option`) on anything else.
[[nodiscard]] std::vector<std::uint64_t> parse_chain_list(std::string_view text,
                                                          const std::string& option);

// "files,matrix" -> the forms named; "both" is files and wide, "none" no plan files. InputError
// (key `option`) on anything else.
[[nodiscard]] PlanLayout parse_plan_layout(std::string_view text, const std::string& option);

// The chosen records, ascending and without repeats. InputError naming the first chain or record
// that the run does not have.
[[nodiscard]] std::vector<RecordRef> choose_records(const RunReader& run, const PlanChoice& choice);

// Unit ids in map order (the unit table's row order, as load_unit_graph builds it).
// InputError naming the file when it is missing, lacks the column, or repeats or omits an id.
[[nodiscard]] std::vector<std::string> read_unit_ids(const std::string& units_path,
                                                     const std::string& id_column);

// A number as written to the CSVs: shortest text that reads back to the same double; NA for NaN,
// Inf and -Inf for infinities (what R's read.csv and pandas read as such).
[[nodiscard]] std::string csv_number(double value);

// File names inside out_dir; a rung R > 0 appears in them, rung 0 (the ensemble) does not.
[[nodiscard]] std::string observables_file_name(std::uint64_t rung = 0);  // observables-rung-R.csv
// plans/chain-C-record-N.csv; plans/chain-C-rung-R-record-N.csv
[[nodiscard]] std::string plan_file_name(const RecordRef& ref, std::uint64_t rung = 0);
[[nodiscard]] std::string wide_file_name(std::uint64_t rung = 0);  // plans-wide-rung-R.csv
[[nodiscard]] std::string wide_column_name(const RecordRef& ref);  // cC_rN, whatever the rung
[[nodiscard]] std::string tallies_file_name(std::uint64_t rung = 0);  // district-tallies-rung-R.csv
[[nodiscard]] std::string matrix_file_name(std::uint64_t rung = 0);   // plan-matrix-rung-R.h5

// InputError naming the first chain of the run that did not record `rung` (0 always passes).
void check_rung_recorded(const RunReader& run, std::uint64_t rung);

[[nodiscard]] ExportResult export_run(const ExportOptions& options);

}  // namespace planmill
