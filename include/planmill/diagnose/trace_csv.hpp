#pragma once
// Reads the long trace CSV that `planmill diagnose --traces` takes (docs/diagnostics.md):
// header `chain,draw,<observable>...`, one row per (chain, draw), through the shared CSV reader
// (quotes, a byte-order mark, CRLF). Also read: planmill export's observables table
// (`chain,record,step,...`: record is the draw, step is not an observable) and R's write.csv output
// (a first column of row names under an empty name is skipped). Chains are any labels, kept in
// order of first appearance; draws must increase within a chain; every chain must have the same
// number of draws (one record per row). Bad input throws planmill::InputError naming file, line and column.
#include <string>

#include "planmill/diagnose/convergence.hpp"

namespace planmill::diagnose {

// Every chain whole, as assess_convergence() takes it (which drops leading records if asked).
[[nodiscard]] RecordedDraws read_traces(const std::string& path);

// One line to print when the traces hold a single chain (R-hat then compares only its halves);
// empty otherwise.
[[nodiscard]] std::string single_chain_warning(const RecordedDraws& traces);

}  // namespace planmill::diagnose
