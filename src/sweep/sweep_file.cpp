// The sweep file: its axes, the grid of settings and each setting's job text, checked by the job
// reader on the base job's map before anything is written.
#include <algorithm>
#include <charconv>
#include <cctype>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <toml++/toml.h>

#include "planmill/base/error.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/sweep/sweep.hpp"

namespace planmill::sweep {
namespace {

namespace fs = std::filesystem;

// More settings than this is almost surely a mistake in the axes (and a folder nobody reads).
constexpr std::size_t kMostSettings = 10'000;

std::size_t line_of(const toml::node& node) { return static_cast<std::size_t>(node.source().begin.line); }

std::string read_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// Letters, digits, '.', '-' and '_' stay; anything else becomes '_' (file names and CSV cells).
std::string plain(std::string_view text) {
  std::string out;
  for (const char c : text)
    out += (std::isalnum(static_cast<unsigned char>(c)) || c == '.' || c == '-' || c == '_') ? c : '_';
  return out;
}

AxisValue read_value(const toml::node& node, const std::string& file, const std::string& key) {
  AxisValue v;
  if (const auto* s = node.as_string()) {
    const std::string text = **s;
    if (text == "none") {
      v.toml = "none", v.label = "none", v.unset = true;
      return v;
    }
    std::ostringstream quoted;
    quoted << toml::value<std::string>(text);
    v.toml = quoted.str(), v.label = plain(text);
  } else if (const auto* i = node.as_integer()) {
    v.toml = v.label = std::to_string(**i);
  } else if (const auto* f = node.as_floating_point()) {
    char digits[40];
    const auto end = std::to_chars(digits, digits + sizeof digits, **f).ptr;  // shortest round trip
    v.label = std::string(digits, end);
    v.toml = v.label.find_first_of(".eEn") == std::string::npos ? v.label + ".0" : v.label;
  } else if (const auto* b = node.as_boolean()) {
    v.toml = v.label = **b ? "true" : "false";
  } else {
    throw InputError({file, line_of(node), key}, "holds a value that is not a number, string or true/false",
                     "list plain values, e.g. values = [0.01, 0.02, 0.05], or \"none\" to leave the key out");
  }
  return v;
}

Axis read_axis(const toml::table& table, const std::string& file) {
  Axis axis;
  axis.line = line_of(table);
  for (const auto& [k, node] : table)
    if (k.str() != "key" && k.str() != "values")
      throw InputError({file, line_of(node), "axis." + std::string(k.str())}, "is not a key of an axis",
                       "an [[axis]] holds only key and values");
  const toml::node* key = table.get("key");
  if (!key || !key->is_string())
    throw InputError({file, axis.line, "axis.key"}, "is missing or not a string",
                     "name the job key to vary, e.g. key = \"rules.population_tolerance\"");
  axis.key = **key->as_string();
  axis.line = line_of(*key);
  const auto& keys = sweepable_keys();
  if (std::find(keys.begin(), keys.end(), axis.key) == keys.end()) {
    std::string list;
    for (const auto& k : keys) list += (list.empty() ? "" : ", ") + k;
    throw InputError({file, axis.line, axis.key}, "is not a job key a sweep can vary",
                     "vary one of " + list + " (docs/sweep.md)");
  }
  const toml::node* values = table.get("values");
  if (!values || !values->is_array())
    throw InputError({file, axis.line, axis.key}, "has no list of values",
                     "add values = [...] under its key, e.g. values = [0.01, 0.02, 0.05]");
  const toml::array& list = *values->as_array();
  if (list.empty())
    throw InputError({file, line_of(*values), axis.key}, "has an empty list of values",
                     "list at least one value (one value sets the key in every setting)");
  std::set<std::string> seen;
  for (const toml::node& item : list) {
    AxisValue v = read_value(item, file, axis.key);
    if (!seen.insert(v.toml).second)
      throw InputError({file, line_of(item), axis.key}, "lists " + v.label + " twice",
                       "list each value once");
    axis.values.push_back(std::move(v));
  }
  return axis;
}

std::string absolute(const fs::path& base_dir, const std::string& path) {
  const fs::path p(path);
  return (p.is_absolute() ? p : fs::absolute(base_dir / p)).lexically_normal().string();
}

// The table at a dotted path ("rules.weights"), made when missing.
toml::table& table_at(toml::table& root, std::string_view path) {
  toml::table* t = &root;
  std::size_t start = 0;
  while (start <= path.size()) {
    const std::size_t dot = std::min(path.find('.', start), path.size());
    const std::string part(path.substr(start, dot - start));
    if (!t->contains(part)) t->insert(part, toml::table{});
    toml::table* next = t->get(part)->as_table();
    if (!next) throw std::logic_error("job key '" + std::string(path) + "' does not lead to a table");
    t = next;
    start = dot + 1;
  }
  return *t;
}

void set_key(toml::table& root, const std::string& key, const AxisValue& value) {
  const std::size_t dot = key.rfind('.');
  toml::table& t = table_at(root, std::string_view(key).substr(0, dot));
  const std::string leaf = key.substr(dot + 1);
  if (value.unset) {
    t.erase(leaf);
    return;
  }
  toml::table parsed = toml::parse("v = " + value.toml);
  parsed.get("v")->visit([&](const auto& node) { t.insert_or_assign(leaf, node); });
}

// The base job with the setting's values, its input paths absolute (the job moves into the sweep
// folder) and its runs in the setting's folder.
std::string setting_text(const toml::table& base, const fs::path& base_dir, const SweepPlan& plan,
                         const Setting& s) {
  toml::table job = base;
  if (toml::table* map = job["map"].as_table())
    for (const char* key : {"units", "adjacency", "geometry"})
      if (const auto* p = map->get_as<std::string>(key)) map->insert_or_assign(key, absolute(base_dir, **p));
  if (toml::table* d = job["districts"].as_table())
    if (const auto* p = d->get_as<std::string>("start"); p && **p != "random")
      d->insert_or_assign("start", absolute(base_dir, **p));
  for (std::size_t a = 0; a < plan.axes.size(); ++a) set_key(job, plan.axes[a].key, plan.axes[a].values[s.pick[a]]);
  table_at(job, "output").insert_or_assign("dir", "run");
  std::ostringstream text;
  text << "# Setting " << s.index << " of the sweep " << plan.sweep_file << " on the job " << plan.base_job << ":\n";
  for (std::size_t a = 0; a < plan.axes.size(); ++a) {
    const AxisValue& v = plan.axes[a].values[s.pick[a]];
    text << "#   " << plan.axes[a].key << (v.unset ? " left out" : " = " + v.toml) << "\n";
  }
  text << "# Written by planmill sweep plan; output.dir is this folder's run/.\n" << job << "\n";
  return text.str();
}

std::string folder_of(const SweepPlan& plan, const Setting& s, std::size_t width) {
  std::string index = std::to_string(s.index);
  index.insert(0, width - std::min(width, index.size()), '0');
  std::string label;
  for (std::size_t a = 0; a < plan.axes.size(); ++a) {
    if (plan.axes[a].values.size() < 2) continue;  // the same in every setting: no name needed
    const std::string& key = plan.axes[a].key;
    label += "-" + key.substr(key.rfind('.') + 1) + "=" + plan.axes[a].values[s.pick[a]].label;
  }
  if (label.size() > 100) label.resize(100);
  return "settings/" + index + label;
}

// The job reader's words, without the place (the setting's job file, not written yet).
std::string problem_of(const InputError& e) {
  std::string prefix = e.where().file;
  if (e.where().line > 0) prefix += ":" + std::to_string(e.where().line);
  if (!prefix.empty()) prefix += ": ";
  const std::string what = e.what();
  return what.rfind(prefix, 0) == 0 ? what.substr(prefix.size()) : what;
}

std::string values_of(const SweepPlan& plan, const Setting& s) {
  std::string text;
  for (std::size_t a = 0; a < plan.axes.size(); ++a)
    text += (text.empty() ? "" : ", ") + plan.axes[a].key + " = " + plan.axes[a].values[s.pick[a]].label;
  return text;
}

void check_setting(const SweepPlan& plan, const Setting& s, const std::string& job_path, const GraphHandle& graph) {
  try {
    (void)check_job_on_graph(parse_job_text(s.job_text, job_path), graph);
  } catch (const InputError& e) {
    const std::string where = "setting " + std::to_string(s.index) + " (" + values_of(plan, s) + ")";
    for (const Axis& axis : plan.axes)
      if (axis.key == e.where().column)
        throw InputError({plan.sweep_file, axis.line, axis.key},
                         "the value " + axis.values[s.pick[&axis - plan.axes.data()]].label + " of " + where +
                             " is refused by the job reader: " + problem_of(e),
                         "change or remove that value");
    throw InputError({plan.sweep_file, 0, e.where().column},
                     where + " is refused by the job reader: " + problem_of(e),
                     "change the axes' values or the base job " + plan.base_job + " so that every setting is a valid job");
  } catch (const InfeasibleError& e) {
    throw InfeasibleError(plan.sweep_file + ": setting " + std::to_string(s.index) + " (" + values_of(plan, s) +
                          ") cannot be run: " + e.what());
  }
}

}  // namespace

const std::vector<std::string>& sweepable_keys() {
  static const std::vector<std::string> keys = {
      "rules.population_tolerance", "rules.population_range_max", "rules.county_splits_max",
      "rules.county_pieces_max", "rules.county_districts_max", "rules.municipality_splits_max",
      "rules.municipality_pieces_max", "rules.municipality_districts_max", "rules.weights.cut_edges",
      "rules.weights.county_splits", "sampler.kernel", "sampler.chains", "sampler.steps", "sampler.burn_in",
      "sampler.record_every", "sampler.seed", "sampler.gamma", "sampler.beta", "sampler.tree_weight_county",
      "sampler.tree_weight_municipality"};
  return keys;
}

SweepPlan plan_sweep(const std::string& sweep_file, const std::string& out_dir) {
  SweepPlan plan;
  plan.sweep_file = sweep_file;
  if (!fs::is_regular_file(sweep_file))
    throw InputError({sweep_file, 0, {}}, "cannot be read", "give the path of a sweep file (docs/sweep.md)");
  plan.sweep_text = read_text(sweep_file);
  toml::table root;
  try {
    root = toml::parse(plan.sweep_text, sweep_file);
  } catch (const toml::parse_error& e) {
    throw InputError({sweep_file, static_cast<std::size_t>(e.source().begin.line), {}},
                     "not valid TOML: " + std::string(e.description()), "fix the syntax at that line");
  }
  for (const auto& [k, node] : root)
    if (k.str() != "job" && k.str() != "axis")
      throw InputError({sweep_file, line_of(node), std::string(k.str())}, "is not a key of a sweep file",
                       "a sweep file holds job = \"...\" and [[axis]] tables (docs/sweep.md)");
  const toml::node* job = root.get("job");
  if (!job || !job->is_string())
    throw InputError({sweep_file, 0, "job"}, "is missing or not a string",
                     "name the base job file, e.g. job = \"job.toml\" (relative to the sweep file)");
  const fs::path sweep_dir = fs::path(sweep_file).parent_path();
  plan.base_job = absolute(sweep_dir, **job->as_string());
  if (!fs::is_regular_file(plan.base_job))
    throw InputError({sweep_file, line_of(*job), "job"}, "names " + plan.base_job + ", which is not a file",
                     "give the path of the base job file, relative to the sweep file's folder");
  const toml::array* axes = root.get_as<toml::array>("axis");
  if (!axes || !axes->is_array_of_tables() || axes->empty())
    throw InputError({sweep_file, 0, "axis"}, "no [[axis]] is given",
                     "add at least one [[axis]] with key = \"...\" and values = [...]");
  std::set<std::string> keys;
  for (const toml::node& a : *axes) {
    Axis axis = read_axis(*a.as_table(), sweep_file);
    if (!keys.insert(axis.key).second)
      throw InputError({sweep_file, axis.line, axis.key}, "is an axis twice", "list all its values in one [[axis]]");
    plan.axes.push_back(std::move(axis));
  }
  std::size_t count = 1;
  for (const Axis& a : plan.axes) {
    count *= a.values.size();
    if (count > kMostSettings)
      throw InputError({sweep_file, a.line, a.key}, "makes the grid more than " + std::to_string(kMostSettings) + " settings",
                       "list fewer values, or split the sweep in several files");
  }

  // The base job must be a job of its own; its map is loaded once and serves every setting.
  const LoadedJob base = load_and_check_job(plan.base_job);
  const toml::table base_table = toml::parse(base.job.text, plan.base_job);
  const std::size_t width = std::max<std::size_t>(3, std::to_string(count - 1).size());
  for (std::size_t i = 0; i < count; ++i) {
    Setting s;
    s.index = i;
    s.pick.resize(plan.axes.size());
    for (std::size_t a = plan.axes.size(), rest = i; a-- > 0;) {
      s.pick[a] = rest % plan.axes[a].values.size();
      rest /= plan.axes[a].values.size();
    }
    s.folder = folder_of(plan, s, width);
    s.job_text = setting_text(base_table, fs::path(plan.base_job).parent_path(), plan, s);
    const std::string job_path = (fs::absolute(out_dir) / s.folder / "job.toml").lexically_normal().string();
    check_setting(plan, s, job_path, base.graph);
    plan.settings.push_back(std::move(s));
  }
  return plan;
}

std::string describe_plan(const SweepPlan& plan) {
  std::ostringstream out;
  out << "sweep " << plan.sweep_file << " on the job " << plan.base_job << ": " << plan.settings.size()
      << " setting" << (plan.settings.size() == 1 ? "" : "s") << "\n";
  for (const Setting& s : plan.settings) out << "  " << s.folder.substr(s.folder.find('/') + 1) << "  " << values_of(plan, s) << "\n";
  return out.str();
}

}  // namespace planmill::sweep
