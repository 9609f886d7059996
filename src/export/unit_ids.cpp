// Unit ids for exported plans, taken from the unit table in row order: the order in which
// load_unit_graph numbers units, and so the order of labels in the plan files.
#include <filesystem>
#include <unordered_map>

#include "planmill/base/error.hpp"
#include "planmill/export/export.hpp"
#include "planmill/io/csv.hpp"

namespace planmill {

std::vector<std::string> read_unit_ids(const std::string& units_path,
                                       const std::string& id_column) {
  if (!std::filesystem::is_regular_file(units_path)) {
    throw InputError({units_path, 0, ""}, "the unit table is not there",
                     "give the unit table the run used with --map-units FILE");
  }
  const CsvTable table = read_csv_file(units_path);
  const std::size_t column = table.column_index(id_column);
  if (column == std::string::npos) {
    throw InputError({units_path, 1, id_column},
                     "the unit table has no id column '" + id_column + "' (columns are " +
                         table.header_list() + ")",
                     "give the id column with --map-id-column NAME");
  }
  std::vector<std::string> ids;
  ids.reserve(table.rows.size());
  std::unordered_map<std::string, std::size_t> line_of;
  for (const CsvRow& row : table.rows) {
    const std::string& id = row.fields[column];
    if (id.empty()) throw InputError({units_path, row.line, id_column}, "unit id is empty");
    const auto [it, added] = line_of.emplace(id, row.line);
    if (!added) {
      throw InputError(
          {units_path, row.line, id_column},
          "unit id '" + id + "' appears again (first on line " + std::to_string(it->second) + ")",
          "give the unit table the run used with --map-units FILE");
    }
    ids.push_back(id);
  }
  return ids;
}

}  // namespace planmill
