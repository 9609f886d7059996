#include "planmill/compare/record_filter.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>

#include "planmill/base/error.hpp"

namespace planmill::compare {
namespace {

std::string_view trim(std::string_view s) {
  while (!s.empty() && s.front() == ' ') s.remove_prefix(1);
  while (!s.empty() && s.back() == ' ') s.remove_suffix(1);
  return s;
}

bool name_char(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' || c == '.' ||
         c == '-';
}

}  // namespace

RecordFilter parse_record_filter(std::string_view text, const std::string& option) {
  const InputError bad({option, 0, std::string(text)}, "is not a filter 'NAME OP NUMBER' (OP one of < <= == >= >)",
                       "write it as e.g. 'splits.counties_split <= 3'");
  RecordFilter f;
  f.text = std::string(text);
  std::string_view s = trim(text);
  std::size_t i = 0;
  while (i < s.size() && name_char(s[i])) ++i;
  f.name = std::string(s.substr(0, i));
  s = trim(s.substr(i));
  if (f.name.empty() || s.empty()) throw bad;
  const bool two = s.size() > 1 && s[1] == '=';
  switch (s[0]) {
    case '<': f.op = two ? FilterOp::less_equal : FilterOp::less; break;
    case '>': f.op = two ? FilterOp::greater_equal : FilterOp::greater; break;
    case '=':
      if (!two) throw bad;
      f.op = FilterOp::equal;
      break;
    default: throw bad;
  }
  s = trim(s.substr(two ? 2 : 1));
  const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), f.value);
  if (s.empty() || ec != std::errc() || end != s.data() + s.size() || !std::isfinite(f.value)) throw bad;
  return f;
}

void check_filter_names(const std::vector<RecordFilter>& filters, const std::vector<std::string>& stored,
                        const std::string& run_dir, const std::string& option) {
  for (const RecordFilter& f : filters) {
    if (std::find(stored.begin(), stored.end(), f.name) != stored.end()) continue;
    std::string list;
    for (const std::string& n : stored) list += (list.empty() ? "" : ", ") + n;
    throw InputError({option, 0, f.text}, "names '" + f.name + "', which run " + run_dir + " does not store",
                     "use one of the stored observables: " + list);
  }
}

bool passes(const RecordFilter& f, double v) noexcept {
  switch (f.op) {
    case FilterOp::less: return v < f.value;
    case FilterOp::less_equal: return v <= f.value;
    case FilterOp::equal: return v == f.value;
    case FilterOp::greater_equal: return v >= f.value;
    case FilterOp::greater: return v > f.value;
  }
  return false;
}

FilteredRecords filter_records(const std::vector<RecordFilter>& filters, const std::vector<std::string>& stored,
                               const std::vector<std::vector<double>>& rows, std::size_t first, std::size_t count) {
  std::vector<std::size_t> column;
  for (const RecordFilter& f : filters)
    column.push_back(static_cast<std::size_t>(std::find(stored.begin(), stored.end(), f.name) - stored.begin()));
  FilteredRecords r;
  for (const RecordFilter& f : filters) r.counts.push_back({f.text, 0});
  r.kept.resize(rows.size());
  for (std::size_t c = 0; c < rows.size(); ++c) {
    for (std::size_t record = first; record < first + count; ++record) {
      ++r.considered;
      bool keep = true;
      for (std::size_t i = 0; i < filters.size() && keep; ++i) {
        if (passes(filters[i], rows[c][record * stored.size() + column[i]])) continue;
        ++r.counts[i].removed;
        keep = false;
      }
      if (keep) r.kept[c].push_back(record);
    }
    r.kept_total += r.kept[c].size();
  }
  r.draws = r.kept.empty() ? 0 : r.kept[0].size();
  for (const auto& k : r.kept) r.draws = std::min(r.draws, k.size());
  r.cut = r.kept_total - r.draws * r.kept.size();
  return r;
}

std::vector<std::vector<std::size_t>> used_records(const FilteredRecords& r) {
  std::vector<std::vector<std::size_t>> used;
  for (const auto& k : r.kept) used.emplace_back(k.begin(), k.begin() + static_cast<std::ptrdiff_t>(r.draws));
  return used;
}

ScalarTable kept_scalar_table(const std::string& name, std::size_t column, std::size_t columns,
                              const std::vector<std::vector<double>>& rows, const FilteredRecords& r) {
  ScalarTable t{name, std::vector<double>(r.draws * rows.size()), r.draws, rows.size()};
  for (std::size_t c = 0; c < rows.size(); ++c)
    for (std::size_t d = 0; d < r.draws; ++d) t.values[c * r.draws + d] = rows[c][r.kept[c][d] * columns + column];
  return t;
}

std::string describe_filters(const FilteredRecords& r) {
  if (r.counts.empty()) return "none";
  std::string text;
  std::size_t left = r.considered;
  for (const FilterCount& f : r.counts) {
    text += "'" + f.filter + "' removed " + std::to_string(f.removed) + " of " + std::to_string(left) + "; ";
    left -= f.removed;
  }
  return text + "kept " + std::to_string(r.kept_total) + " of " + std::to_string(r.considered) + " records, " +
         std::to_string(r.draws) + " per chain used (" + std::to_string(r.cut) +
         " later kept records of longer chains cut to a common length)";
}

}  // namespace planmill::compare
