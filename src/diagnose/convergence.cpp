#include "planmill/diagnose/convergence.hpp"

#include <algorithm>
#include <cstdint>
#include <stdexcept>

#include "planmill/base/error.hpp"

namespace planmill::diagnose {

ConvergenceReport assess_convergence(const RecordedDraws& in, const VerdictRule& rule) {
  const std::size_t width = in.observables.size();
  const std::size_t drop = in.dropped_records;
  ConvergenceReport r;
  r.rule = rule;
  r.dropped_records = drop;
  r.left_out = in.left_out;
  std::size_t fewest = in.chains.empty() ? 0 : SIZE_MAX, most = 0;
  for (const ChainRecords& c : in.chains) {
    if (width == 0 ? !c.rows.empty() : c.rows.size() % width != 0) {
      throw std::invalid_argument("chain " + c.chain + " has " + std::to_string(c.rows.size()) +
                                  " values, not a multiple of " + std::to_string(width) +
                                  " observables");
    }
    const std::size_t n = width == 0 ? 0 : c.rows.size() / width;
    r.chains.push_back(c.chain);
    r.records.push_back(n);
    fewest = std::min(fewest, n);
    most = std::max(most, n);
  }
  if (drop > 0 && drop >= fewest && !in.chains.empty()) {
    throw InputError({{}, 0, "--drop-records"},
                     "dropping " + std::to_string(drop) + " records leaves no draws of the shortest chain (" +
                         std::to_string(fewest) + " records)",
                     "drop fewer records");
  }
  r.draws = fewest > drop ? fewest - drop : 0;
  if (fewest != most) {
    r.notes.push_back("chains have between " + std::to_string(fewest) + " and " +
                      std::to_string(most) + " records; the common prefix of " +
                      std::to_string(fewest) + " records per chain is used");
  }

  // One draws x chains matrix per observable.
  const std::size_t chains = in.chains.size();
  const std::size_t cells = r.draws * chains;
  std::vector<double> values(cells * width);
  std::vector<NamedDraws> observables;
  observables.reserve(width);
  for (std::size_t j = 0; j < width; ++j) {
    double* matrix = values.data() + j * cells;
    for (std::size_t c = 0; c < chains; ++c) {
      const double* rows = in.chains[c].rows.data();
      for (std::size_t t = 0; t < r.draws; ++t) matrix[c * r.draws + t] = rows[(drop + t) * width + j];
    }
    observables.push_back({in.observables[j], {{matrix, cells}, r.draws, chains}});
  }
  r.stop = check_stop(observables, rule);
  return r;
}

}  // namespace planmill::diagnose
