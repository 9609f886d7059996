#pragma once
// How the job file is read (private to src/job): Section, a TOML table read strictly, and one
// reader per section of the file, each filling its part of the JobSpec (docs/jobs.md).
#include <cstdint>
#include <filesystem>
#include <set>
#include <string>
#include <string_view>
#include <toml++/toml.h>
#include <vector>

#include "planmill/io/number_text.hpp"
#include "planmill/base/error.hpp"
#include "planmill/job/job.hpp"

namespace planmill::job_file {

// A TOML table read strictly: every key must be asked for, and what is left over is an error.
class Section {
 public:
  Section(const toml::table& table, std::string name, const std::string& file)
      : table_(table), name_(std::move(name)), file_(file) {}

  [[nodiscard]] std::string key_name(std::string_view key) const {
    return name_.empty() ? std::string(key) : name_ + "." + std::string(key);
  }
  [[nodiscard]] std::size_t line_of(const toml::node& node) const {
    return static_cast<std::size_t>(node.source().begin.line);
  }
  [[noreturn]] void fail(std::string_view key, const std::string& problem, const std::string& remedy) const {
    const toml::node* node = table_.get(key);
    throw InputError({file_, node ? line_of(*node) : line_of(table_), key_name(key)}, problem, remedy);
  }

  const toml::node* get(std::string_view key) {
    used_.insert(std::string(key));
    return table_.get(key);
  }
  bool has(std::string_view key) const { return table_.contains(key); }

  std::string string(std::string_view key, std::string fallback, bool required = false) {
    const toml::node* node = get(key);
    if (!node) {
      if (required) missing(key);
      return fallback;
    }
    if (!node->is_string()) fail(key, "must be a string", "write it in double quotes");
    std::string value = **node->as_string();
    if (value.empty()) fail(key, "must not be empty", "give a value or remove the key");
    return value;
  }

  std::int64_t integer(std::string_view key, std::int64_t fallback, std::int64_t lo, std::int64_t hi,
                       bool required = false) {
    const toml::node* node = get(key);
    if (!node) {
      if (required) missing(key);
      return fallback;
    }
    if (node->is_floating_point()) {
      // TOML reads 1e6 and 2.0 as floats, which may already have been rounded (2^53 + 1 cannot be
      // told from 2^53), so a float is never taken for an integer; say how to write one.
      const double v = **node->as_floating_point();
      if (std::isfinite(v) && v == std::floor(v) && std::fabs(v) < 1e15) {
        char digits[32];
        std::snprintf(digits, sizeof digits, "%.0f", v);
        fail(key, "must be a whole number written as an integer; TOML reads a point or an exponent as a float",
             std::string("write ") + digits + " (digit groups may be split with _, e.g. 1_000_000)");
      }
      fail(key, "must be a whole number, written without a decimal point or an exponent",
           "write it as digits, e.g. 1000000 or 1_000_000");
    }
    if (!node->is_integer()) fail(key, "must be a whole number", "write it without quotes or a decimal point");
    const std::int64_t value = **node->as_integer();
    if (value < lo || value > hi)
      fail(key, "is " + std::to_string(value) + ", outside " + std::to_string(lo) + ".." + std::to_string(hi),
           "choose a value in that range");
    return value;
  }

  double number(std::string_view key, double fallback, double lo, double hi, bool required = false) {
    const toml::node* node = get(key);
    if (!node) {
      if (required) missing(key);
      return fallback;
    }
    double value = 0;
    if (node->is_floating_point()) value = **node->as_floating_point();
    else if (node->is_integer()) value = static_cast<double>(**node->as_integer());
    else fail(key, "must be a number", "write it without quotes");
    if (!std::isfinite(value) || value < lo || value > hi) {
      fail(key, "is " + number_text(value) + ", outside [" + number_text(lo) + ", " + number_text(hi) + "]",
           "choose a value in that range");
    }
    return value;
  }

  std::vector<std::string> strings(std::string_view key) {
    std::vector<std::string> values;
    const toml::node* node = get(key);
    if (!node) return values;
    const toml::array* array = node->as_array();
    if (!array) fail(key, "must be a list of strings", "write it as [\"a\", \"b\"]");
    for (const toml::node& item : *array) {
      if (!item.is_string() || item.as_string()->get().empty())
        fail(key, "must be a list of non-empty strings", "write it as [\"a\", \"b\"]");
      values.push_back(**item.as_string());
    }
    return values;
  }

  std::vector<double> numbers(std::string_view key) {
    std::vector<double> values;
    const toml::node* node = get(key);
    if (!node) return values;
    const toml::array* array = node->as_array();
    if (!array) fail(key, "must be a list of numbers", "write it as [1.0, 0.5]");
    for (const toml::node& item : *array) {
      if (item.is_floating_point()) values.push_back(**item.as_floating_point());
      else if (item.is_integer()) values.push_back(static_cast<double>(**item.as_integer()));
      else fail(key, "must be a list of numbers", "write it as [1.0, 0.5]");
    }
    return values;
  }

  bool boolean(std::string_view key, bool fallback) {
    const toml::node* node = get(key);
    if (!node) return fallback;
    if (!node->is_boolean()) fail(key, "must be true or false", "write true or false without quotes");
    return **node->as_boolean();
  }

  const toml::table* table(std::string_view key) {
    const toml::node* node = get(key);
    if (!node) return nullptr;
    if (!node->is_table()) fail(key, "must be a table", "write it as a [" + key_name(key) + "] section");
    return node->as_table();
  }

  // Keys present in the file that nobody asked for.
  void reject_unknown() const {
    for (const auto& [key, node] : table_) {
      if (used_.count(std::string(key.str()))) continue;
      throw InputError({file_, line_of(node), key_name(key.str())}, "unknown key",
                       "check its spelling against docs/jobs.md or remove it");
    }
  }

 private:
  [[noreturn]] void missing(std::string_view key) const {
    throw InputError({file_, line_of(table_), key_name(key)}, "required key is missing",
                     "add it (see docs/jobs.md)");
  }

  const toml::table& table_;
  std::string name_;
  const std::string& file_;
  std::set<std::string> used_;
};

// `path` relative to the job file's folder `base_dir` (absolute paths kept), normalised.
std::string resolve(const std::string& base_dir, const std::string& path);

void read_map(Section& top, JobSpec& job, const std::string& base);
void read_rules(Section& top, JobSpec& job);
void read_measures(Section& top, JobSpec& job);  // after read_map: names are checked against [map]
void read_sampler(Section& top, JobSpec& job);
void read_tempering(Section& top, JobSpec& job);  // after read_sampler
void check_weights_honoured(Section& top, const JobSpec& job);  // after read_rules and read_sampler

}  // namespace planmill::job_file
