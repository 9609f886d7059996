#pragma once
// Filters of an ensemble's records by their stored scalar observables ("keep the plans with at
// most 3 split counties"), used by `compare --keep` and `pick --keep` (docs/pick.md). A filter is
// "NAME OP NUMBER", OP one of < <= == >= >, NAME an observable the run stores. Filters apply in
// the order given; a record is kept when it passes all of them. A NaN value passes none.
#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/compare/comparison.hpp"

namespace planmill::compare {

enum class FilterOp { less, less_equal, equal, greater_equal, greater };

struct RecordFilter {
  std::string text;  // as given
  std::string name;
  FilterOp op = FilterOp::less_equal;
  double value = 0.0;
};

// InputError (key `option`) naming the text when it is not "NAME OP NUMBER".
[[nodiscard]] RecordFilter parse_record_filter(std::string_view text, const std::string& option = "--keep");
// InputError naming the filter and listing the stored observables when its name is not stored.
void check_filter_names(const std::vector<RecordFilter>& filters, const std::vector<std::string>& stored,
                        const std::string& run_dir, const std::string& option = "--keep");
[[nodiscard]] bool passes(const RecordFilter& filter, double value) noexcept;

// What a filter did: the records that passed the earlier filters and fail this one.
struct FilterCount {
  std::string filter;
  std::size_t removed = 0;
};

struct FilteredRecords {
  std::vector<FilterCount> counts;              // one per filter, in order
  std::size_t considered = 0, kept_total = 0;   // records looked at / kept, over all chains
  std::vector<std::vector<std::size_t>> kept;   // per chain: kept record indices, in order
  // Records per chain the statistics use: the fewest any chain kept (chains must be of one
  // length for the ESS); the later kept records of longer chains are `cut`.
  std::size_t draws = 0, cut = 0;
};

// rows[c]: chain c's observables, records x columns (columns = stored.size()), row-major. Records
// [first, first + count) of each chain are considered.
[[nodiscard]] FilteredRecords filter_records(const std::vector<RecordFilter>& filters,
                                             const std::vector<std::string>& stored,
                                             const std::vector<std::vector<double>>& rows, std::size_t first,
                                             std::size_t count);

// One observable (column `column` of `columns`) over the first `draws` kept records of each chain.
[[nodiscard]] ScalarTable kept_scalar_table(const std::string& name, std::size_t column, std::size_t columns,
                                            const std::vector<std::vector<double>>& rows,
                                            const FilteredRecords& records);

// The first `draws` kept records of each chain: the rows every statistic uses.
[[nodiscard]] std::vector<std::vector<std::size_t>> used_records(const FilteredRecords& records);

// "none", or "splits.counties_split <= 3 removed 12 of 400; kept 388 of 400, 97 per chain used".
[[nodiscard]] std::string describe_filters(const FilteredRecords& records);

}  // namespace planmill::compare
