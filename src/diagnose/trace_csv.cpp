#include "planmill/diagnose/trace_csv.hpp"

#include <charconv>
#include <cmath>
#include <fstream>
#include <limits>
#include <sstream>
#include <string_view>
#include <unordered_map>

#include "planmill/base/error.hpp"
#include "planmill/io/csv.hpp"

namespace planmill::diagnose {
namespace {

std::string_view trim(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}

// A decimal number as C++ reads it (with nan and inf), or R's and planmill export's NA, NaN, Inf
// and -Inf; NA is read as NaN.
bool parse_number(std::string_view cell, double& out) {
  cell = trim(cell);
  if (cell == "NA") {
    out = std::numeric_limits<double>::quiet_NaN();
    return true;
  }
  if (!cell.empty() && cell.front() == '+') cell.remove_prefix(1);
  const auto [end, ec] = std::from_chars(cell.data(), cell.data() + cell.size(), out);
  return ec == std::errc() && end == cell.data() + cell.size() && !cell.empty();
}

struct ChainRows {
  std::size_t draws = 0;
  double last_draw = 0.0;
  std::size_t last_line = 0;
};

// Which columns of the header hold what.
struct Columns {
  std::size_t chain = 0, order = 0;
  std::string order_name;              // "draw", or "record" in planmill export's table
  std::vector<std::size_t> observables;  // in header order
};

Columns find_columns(const CsvTable& table, const std::string& path) {
  const auto& header = table.header;
  Columns c;
  // R's write.csv puts the row names first, under an empty name.
  std::size_t first = !header.empty() && header[0].empty() ? 1 : 0;
  const bool has_order = header.size() > first + 1;
  if (!has_order || header[first] != "chain" ||
      (header[first + 1] != "draw" && header[first + 1] != "record")) {
    throw InputError({path, 1, {}}, "header must be 'chain,draw,<observable>,...' (it is " + table.header_list() + ")",
                     "planmill export's 'chain,record,step,...' and R's write.csv output are read too; "
                     "see docs/diagnostics.md");
  }
  c.chain = first;
  c.order = first + 1;
  c.order_name = header[c.order];
  first += 2;
  // planmill export writes the chain step beside the record number: an index, not an observable.
  if (c.order_name == "record" && first < header.size() && header[first] == "step") ++first;
  for (std::size_t i = first; i < header.size(); ++i) {
    if (trim(header[i]).empty()) {
      throw InputError({path, 1, {}}, "column " + std::to_string(i + 1) + " has no name",
                       "name every observable in the header");
    }
    for (const std::size_t j : c.observables) {
      if (header[j] == header[i]) throw InputError({path, 1, header[i]}, "observable named twice in header");
    }
    c.observables.push_back(i);
  }
  if (c.observables.empty()) {
    throw InputError({path, 1, {}}, "the header names no observable", "add one column per observable");
  }
  return c;
}

}  // namespace

RecordedDraws read_traces(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError({path, 0, {}}, "cannot open the trace file", "check the path");
  std::ostringstream text;
  text << in.rdbuf();
  const CsvTable table = parse_csv_text(text.view(), path);
  const Columns columns = find_columns(table, path);
  const std::size_t nq = columns.observables.size();
  RecordedDraws traces;
  for (const std::size_t i : columns.observables) traces.observables.push_back(table.header[i]);

  std::vector<ChainRows> chains;
  std::unordered_map<std::string, std::size_t> chain_index;
  for (const CsvRow& row : table.rows) {
    const std::string_view label = trim(row.fields[columns.chain]);
    if (label.empty()) throw InputError({path, row.line, "chain"}, "empty chain label");
    auto [it, fresh] = chain_index.try_emplace(std::string(label), chains.size());
    if (fresh) {
      chains.push_back({});
      traces.chains.push_back({std::string(label), {}});
    }
    ChainRows& chain = chains[it->second];
    std::vector<double>& rows = traces.chains[it->second].rows;
    double draw = 0.0;
    const std::string& order_cell = row.fields[columns.order];
    if (!parse_number(order_cell, draw) || std::isnan(draw)) {
      throw InputError({path, row.line, columns.order_name}, "'" + order_cell + "' is not a number");
    }
    if (chain.last_line > 0 && !(draw > chain.last_draw)) {
      throw InputError({path, row.line, columns.order_name},
                       columns.order_name + "s of chain '" + std::string(label) + "' must increase",
                       "write each chain's rows in " + columns.order_name + " order");
    }
    chain.last_draw = draw;
    chain.last_line = row.line;
    for (std::size_t q = 0; q < nq; ++q) {
      const std::string& cell = row.fields[columns.observables[q]];
      double v = 0.0;
      if (!parse_number(cell, v)) {
        throw InputError({path, row.line, traces.observables[q]}, "'" + cell + "' is not a number");
      }
      rows.push_back(v);
    }
    ++chain.draws;
  }
  if (chains.empty()) throw InputError({path, 1, {}}, "no draws after the header");
  const std::size_t draws = chains[0].draws;
  for (std::size_t c = 1; c < chains.size(); ++c) {
    if (chains[c].draws != draws) {
      throw InputError({path, chains[c].last_line, "chain"},
                       "chain '" + traces.chains[c].chain + "' has " + std::to_string(chains[c].draws) +
                           " draws but chain '" + traces.chains[0].chain + "' has " +
                           std::to_string(draws),
                       "every chain needs the same number of draws");
    }
  }
  return traces;
}

std::string single_chain_warning(const RecordedDraws& traces) {
  if (traces.chains.size() != 1) return {};
  return "the traces hold one chain ('" + traces.chains[0].chain +
         "'): R-hat then compares only its two halves and cannot show that chains from different "
         "starts agree; give at least two chains (Vehtari et al. 2021 advise four)";
}

}  // namespace planmill::diagnose
