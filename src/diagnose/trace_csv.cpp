#include "planmill/diagnose/trace_csv.hpp"

#include <charconv>
#include <fstream>
#include <string_view>
#include <unordered_map>

#include "planmill/base/error.hpp"

namespace planmill::diagnose {
namespace {

std::string_view trim(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t' || s.back() == '\r')) s.remove_suffix(1);
  return s;
}

std::vector<std::string_view> split_cells(std::string_view line) {
  std::vector<std::string_view> cells;
  for (std::size_t start = 0;;) {
    const std::size_t comma = line.find(',', start);
    cells.push_back(trim(line.substr(start, comma - start)));
    if (comma == std::string_view::npos) return cells;
    start = comma + 1;
  }
}

bool parse_number(std::string_view cell, double& out) {
  if (!cell.empty() && cell.front() == '+') cell.remove_prefix(1);
  const auto [end, ec] = std::from_chars(cell.data(), cell.data() + cell.size(), out);
  return ec == std::errc() && end == cell.data() + cell.size() && !cell.empty();
}

struct ChainRows {
  std::vector<std::vector<double>> columns;  // per quantity
  double last_draw = 0.0;
  std::size_t last_line = 0;
};

}  // namespace

Traces read_traces(const std::string& path, std::size_t burn_in) {
  std::ifstream in(path);
  if (!in) throw InputError({path, 0, {}}, "cannot open the trace file", "check the path");
  std::string line;
  std::size_t line_no = 0;
  Traces traces;
  std::vector<std::string> header;
  while (std::getline(in, line)) {
    ++line_no;
    if (!trim(line).empty()) break;
  }
  for (auto cell : split_cells(line)) header.emplace_back(cell);
  if (header.size() < 3 || header[0] != "chain" || header[1] != "draw") {
    throw InputError({path, line_no, {}}, "header must be 'chain,draw,<quantity>,...'",
                     "see docs/diagnostics.md for the trace CSV");
  }
  for (std::size_t i = 2; i < header.size(); ++i) {
    if (header[i].empty()) throw InputError({path, line_no, {}}, "empty quantity name in header");
    for (std::size_t j = 2; j < i; ++j) {
      if (header[j] == header[i]) {
        throw InputError({path, line_no, header[i]}, "quantity named twice in header");
      }
    }
  }
  traces.quantity_names.assign(header.begin() + 2, header.end());
  const std::size_t nq = traces.quantity_names.size();

  std::vector<ChainRows> chains;
  std::unordered_map<std::string, std::size_t> chain_index;
  while (std::getline(in, line)) {
    ++line_no;
    if (trim(line).empty()) continue;
    const auto cells = split_cells(line);
    if (cells.size() != header.size()) {
      throw InputError({path, line_no, {}},
                       "row has " + std::to_string(cells.size()) + " cells, header has " +
                           std::to_string(header.size()));
    }
    if (cells[0].empty()) throw InputError({path, line_no, "chain"}, "empty chain label");
    auto [it, fresh] = chain_index.try_emplace(std::string(cells[0]), chains.size());
    if (fresh) {
      chains.push_back({std::vector<std::vector<double>>(nq), 0.0, 0});
      traces.chain_labels.emplace_back(cells[0]);
    }
    ChainRows& chain = chains[it->second];
    double draw = 0.0;
    if (!parse_number(cells[1], draw)) {
      throw InputError({path, line_no, "draw"}, "'" + std::string(cells[1]) + "' is not a number");
    }
    if (chain.last_line > 0 && !(draw > chain.last_draw)) {
      throw InputError({path, line_no, "draw"},
                       "draws of chain '" + std::string(cells[0]) + "' must increase",
                       "write each chain's rows in draw order");
    }
    chain.last_draw = draw;
    chain.last_line = line_no;
    for (std::size_t q = 0; q < nq; ++q) {
      double v = 0.0;
      if (!parse_number(cells[q + 2], v)) {
        throw InputError({path, line_no, header[q + 2]},
                         "'" + std::string(cells[q + 2]) + "' is not a number");
      }
      chain.columns[q].push_back(v);
    }
  }
  if (chains.empty()) throw InputError({path, line_no, {}}, "no draws after the header");
  const std::size_t draws = chains[0].columns[0].size();
  for (std::size_t c = 1; c < chains.size(); ++c) {
    if (chains[c].columns[0].size() != draws) {
      throw InputError({path, chains[c].last_line, "chain"},
                       "chain '" + traces.chain_labels[c] + "' has " +
                           std::to_string(chains[c].columns[0].size()) + " draws but chain '" +
                           traces.chain_labels[0] + "' has " + std::to_string(draws),
                       "every chain needs the same number of draws");
    }
  }
  if (burn_in >= draws) {
    throw InputError({path, 0, {}},
                     "burn-in " + std::to_string(burn_in) + " leaves no draws (chains have " +
                         std::to_string(draws) + ")");
  }
  traces.draws = draws - burn_in;
  traces.values.assign(nq, std::vector<double>(traces.draws * chains.size()));
  for (std::size_t q = 0; q < nq; ++q) {
    for (std::size_t c = 0; c < chains.size(); ++c) {
      std::copy(chains[c].columns[q].begin() + static_cast<std::ptrdiff_t>(burn_in),
                chains[c].columns[q].end(),
                traces.values[q].begin() + static_cast<std::ptrdiff_t>(c * traces.draws));
    }
  }
  return traces;
}

}  // namespace planmill::diagnose
