// Parsing --plans / --chains lists and turning a PlanChoice into the records it names.
#include <algorithm>
#include <charconv>
#include <set>

#include "planmill/base/error.hpp"
#include "planmill/export/export.hpp"

namespace planmill {
namespace {

std::string_view trim(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}

std::vector<std::string_view> split(std::string_view text, char sep) {
  std::vector<std::string_view> parts;
  std::size_t start = 0;
  while (true) {
    const std::size_t end = text.find(sep, start);
    parts.push_back(trim(text.substr(start, end == std::string_view::npos ? end : end - start)));
    if (end == std::string_view::npos) return parts;
    start = end + 1;
  }
}

bool to_index(std::string_view s, std::uint64_t& out) {
  if (s.empty()) return false;
  const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), out);
  return ec == std::errc() && end == s.data() + s.size();
}

[[noreturn]] void bad_item(const std::string& option, std::string_view item, const char* form) {
  throw InputError({"", 0, option}, "'" + std::string(item) + "' is not of the form " + form,
                   std::string("write it as ") + form + ", items separated by commas");
}

}  // namespace

std::vector<RecordRef> parse_record_list(std::string_view text, const std::string& option) {
  std::vector<RecordRef> out;
  for (std::string_view item : split(text, ',')) {
    const std::size_t colon = item.find(':');
    RecordRef ref;
    if (colon == std::string_view::npos || !to_index(trim(item.substr(0, colon)), ref.chain) ||
        !to_index(trim(item.substr(colon + 1)), ref.record)) {
      bad_item(option, item, "CHAIN:RECORD (e.g. 0:120)");
    }
    out.push_back(ref);
  }
  return out;
}

std::vector<std::uint64_t> parse_chain_list(std::string_view text, const std::string& option) {
  std::vector<std::uint64_t> out;
  for (std::string_view item : split(text, ',')) {
    const std::size_t dash = item.find('-');
    std::uint64_t first = 0, last = 0;
    if (dash == std::string_view::npos) {
      if (!to_index(item, first)) bad_item(option, item, "CHAIN or FIRST-LAST (e.g. 2 or 0-3)");
      last = first;
    } else if (!to_index(trim(item.substr(0, dash)), first) ||
               !to_index(trim(item.substr(dash + 1)), last) || last < first) {
      bad_item(option, item, "CHAIN or FIRST-LAST (e.g. 2 or 0-3)");
    }
    if (last - first > 1'000'000) bad_item(option, item, "a range of at most a million chains");
    for (std::uint64_t c = first;; ++c) {
      out.push_back(c);
      if (c == last) break;
    }
  }
  return out;
}

PlanLayout parse_plan_layout(std::string_view text, const std::string& option) {
  PlanLayout layout{.files = false};
  const std::vector<std::string_view> items = split(text, ',');
  for (std::string_view item : items) {
    if (item == "files") {
      layout.files = true;
    } else if (item == "wide") {
      layout.wide = true;
    } else if (item == "both") {
      layout.files = layout.wide = true;
    } else if (item == "matrix") {
      layout.matrix = true;
    } else if (item != "none" || items.size() > 1) {
      throw InputError({"", 0, option},
                       "'" + std::string(item) + "' is not a plan layout" +
                           (item == "none" ? " to combine with others" : ""),
                       "give files, wide, matrix (several separated by commas), both (files and "
                       "wide) or none");
    }
  }
  return layout;
}

std::vector<RecordRef> choose_records(const RunReader& run, const PlanChoice& choice) {
  const std::vector<std::uint64_t> run_chains = run.chains();
  const auto check_chain = [&](std::uint64_t chain, const char* option) {
    if (!std::binary_search(run_chains.begin(), run_chains.end(), chain)) {
      throw InputError({run.layout().state_file().string(), 0, option},
                       "the run has no chain " + std::to_string(chain) + " (its chains are 0.." +
                           std::to_string(run_chains.empty() ? 0 : run_chains.back()) + ")",
                       "name chains that the run has");
    }
  };
  std::set<RecordRef> chosen;
  for (const RecordRef& ref : choice.records) {
    check_chain(ref.chain, "--plans");
    const std::uint64_t records = run.record_count(ref.chain);
    if (ref.record >= records) {
      throw InputError({run.layout().state_file().string(), 0, "--plans"},
                       "chain " + std::to_string(ref.chain) + " has no record " +
                           std::to_string(ref.record) + " (it has " + std::to_string(records) +
                           " records, numbered from 0)",
                       "name records that the chain has");
    }
    chosen.insert(ref);
  }
  if (choice.every > 0 || choice.chains_given) {
    std::vector<std::uint64_t> chains = choice.chains_given ? choice.chains : run_chains;
    for (std::uint64_t chain : chains) check_chain(chain, "--chains");
    const std::uint64_t step = choice.every > 0 ? choice.every : 1;
    for (std::uint64_t chain : chains) {
      const std::uint64_t records = run.record_count(chain);
      for (std::uint64_t r = 0; r < records; r += step) chosen.insert({chain, r});
    }
  }
  return {chosen.begin(), chosen.end()};
}

}  // namespace planmill
