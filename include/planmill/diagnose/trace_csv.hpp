#pragma once
// Reads the long trace CSV that `planmill diagnose --traces` takes (docs/diagnostics.md):
// header `chain,draw,<quantity>...`, one row per (chain, draw), through the shared CSV reader
// (quotes, a byte-order mark, CRLF). Also read: planmill export's observables table
// (`chain,record,step,...`: record is the draw, step is not a quantity) and R's write.csv output
// (a first column of row names under an empty name is skipped). Chains are any labels, kept in
// order of first appearance; draws must increase within a chain; every chain must have the same
// number of draws. Bad input throws planmill::InputError naming file, line and column.
#include <cstddef>
#include <string>
#include <vector>

#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

struct Traces {
  std::vector<std::string> chain_labels;
  std::vector<std::string> quantity_names;
  std::size_t draws = 0;  // per chain, after burn-in
  // values[q] is quantity q as a column-major draws x chains matrix.
  std::vector<std::vector<double>> values;

  [[nodiscard]] DrawMatrix matrix(std::size_t q) const {
    return {values[q], draws, chain_labels.size()};
  }
};

// Drops the first `burn_in` draws of every chain (counted by position, not by the draw column).
[[nodiscard]] Traces read_traces(const std::string& path, std::size_t burn_in = 0);

// One line to print when the traces hold a single chain (R-hat then compares only its halves);
// empty otherwise.
[[nodiscard]] std::string single_chain_warning(const Traces& traces);

}  // namespace planmill::diagnose
