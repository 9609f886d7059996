#pragma once
// All diagnostics of one observable in one pass (one sort of the draws shared by every rank-based
// step), and the table row that `planmill diagnose` prints. Values agree with the single-purpose
// functions (rhat.hpp, ess_bulk.hpp, ...); NaN entries carry the first reason in `note`.
#include <string>

#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

struct ObservableDiagnostics {
  std::string name;
  double rhat, rhat_bulk, rhat_folded;  // max(bulk, folded), and its two parts
  double ess_bulk, ess_tail;
  double mcse_mean, mcse_q05, mcse_q95;
  double mean, sd;                      // over all draws of all chains
  std::string note;                     // why some entry is NaN; empty when all are numbers
  // Exactly equal (==) in every draw of every chain: the only case the verdict leaves unjudged.
  bool all_equal = false;
  // Exactly equal within every chain but not across chains: the chains never moved apart from
  // where they sit, the plainest failure to mix (R-hat is NaN there, W = 0).
  bool constant_within_chains = false;
};

[[nodiscard]] ObservableDiagnostics diagnose_observable(std::string name, DrawMatrix x);

}  // namespace planmill::diagnose
