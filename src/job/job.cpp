#include "planmill/job/job.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <toml++/toml.h>

#include "planmill/base/error.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

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
      std::ostringstream range;
      range << "is " << value << ", outside [" << lo << ", " << hi << "]";
      fail(key, range.str(), "choose a value in that range");
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

std::string resolve(const std::string& base_dir, const std::string& path) {
  if (path.empty()) return path;
  fs::path p(path);
  if (p.is_absolute() || base_dir.empty()) return p.lexically_normal().string();
  return (fs::path(base_dir) / p).lexically_normal().string();
}

void read_map(Section& top, JobSpec& job, const std::string& base) {
  const toml::table* table = top.table("map");
  if (!table) top.fail("map", "section [map] is missing", "add [map] with units, adjacency, id and population");
  Section map(*table, "map", job.path);
  MapSpec& m = job.map;
  m.source = job.path;
  m.units_path = resolve(base, map.string("units", "", true));
  m.adjacency_path = resolve(base, map.string("adjacency", "", true));
  m.id_column = map.string("id", "", true);
  m.population_column = map.string("population", "", true);
  m.county_column = map.string("county", "");
  m.municipality_column = map.string("municipality", "");
  m.area_column = map.string("area", "");
  m.perimeter_column = map.string("perimeter", "");
  m.outer_boundary_column = map.string("outer_boundary", "");
  m.geometry_path = resolve(base, map.string("geometry", ""));
  m.group_columns = map.strings("groups");
  if (const toml::node* node = map.get("elections")) {
    const toml::array* list = node->as_array();
    if (!list || !list->is_array_of_tables())
      map.fail("elections", "must be a list of tables", "write each one as a [[map.elections]] section");
    std::set<std::string> names;
    for (const toml::node& item : *list) {
      Section e(*item.as_table(), "map.elections", job.path);
      ElectionSpec spec;
      spec.name = e.string("name", "", true);
      spec.parties = e.strings("parties");
      spec.columns = e.strings("columns");
      if (spec.parties.size() < 2) e.fail("parties", "an election needs at least two parties", "list them");
      if (spec.columns.size() != spec.parties.size())
        e.fail("columns", "must name one vote column per party (" + std::to_string(spec.parties.size()) + ")",
               "list the columns in the order of 'parties'");
      if (!names.insert(spec.name).second) e.fail("name", "election '" + spec.name + "' appears twice", "rename one");
      e.reject_unknown();
      m.elections.push_back(std::move(spec));
    }
  }
  map.reject_unknown();
}

void read_rules(Section& top, JobSpec& job) {
  const toml::table* table = top.table("rules");
  if (!table) return;
  Section rules(*table, "rules", job.path);
  RulesSpec& r = job.rules;
  if (rules.has("population_deviation"))  // the earlier name, now kept for a plan's measured deviation
    rules.fail("population_deviation", "is now called population_tolerance",
               "rename the key; a plan's measured deviation is the observable population_deviation");
  r.population_tolerance = rules.number("population_tolerance", r.population_tolerance, 0.0, 1.0);
  r.county_splits_max = rules.integer("county_splits_max", -1, 0, 1'000'000);
  if (const toml::table* w = rules.table("weights")) {
    Section weights(*w, "rules.weights", job.path);
    r.cut_edges_weight = weights.number("cut_edges", 0.0, -1e6, 1e6);
    r.county_splits_weight = weights.number("county_splits", 0.0, -1e6, 1e6);
    weights.reject_unknown();
  }
  if (const toml::node* node = rules.get("group_share")) {
    const toml::array* list = node->as_array();
    if (!list || !list->is_array_of_tables())
      rules.fail("group_share", "must be a list of tables", "write each term as a [[rules.group_share]] section");
    for (const toml::node& item : *list) {
      Section g(*item.as_table(), "rules.group_share", job.path);
      GroupShareSpec spec;
      spec.group = g.string("group", "", true);
      spec.threshold = g.number("threshold", 0.5, 0.0, 1.0);
      spec.weight = g.number("weight", 0.0, -1e6, 1e6, true);
      bool listed = false;
      for (const auto& name : job.map.group_columns) listed |= name == spec.group;
      if (!listed) g.fail("group", "'" + spec.group + "' is not listed in map.groups", "add it there or fix the name");
      g.reject_unknown();
      r.group_share.push_back(spec);
    }
  }
  rules.reject_unknown();
}

// [measures]: names are checked against [map] here, where the line of each key is known.
void read_measures(Section& top, JobSpec& job) {
  const toml::table* table = top.table("measures");
  if (!table) return;
  Section s(*table, "measures", job.path);
  MeasuresSpec& m = job.measures;
  if (s.has("elections")) {
    m.elections = s.strings("elections");
    for (const std::string& name : *m.elections) {
      const auto e = std::find_if(job.map.elections.begin(), job.map.elections.end(),
                                  [&](const ElectionSpec& x) { return x.name == name; });
      if (e == job.map.elections.end())
        s.fail("elections", "'" + name + "' is not an election of [[map.elections]]", "fix the name or add the election");
      if (e->parties.size() != 2)
        s.fail("elections", "'" + name + "' has " + std::to_string(e->parties.size()) +
                                " parties; the measures compare two",
               "leave it out, or give it as a two-party election");
    }
  }
  const auto listed = [&](const std::string& name) {
    return std::find(job.map.group_columns.begin(), job.map.group_columns.end(), name) != job.map.group_columns.end();
  };
  if (s.has("competitive")) {
    const std::vector<double> band = s.numbers("competitive");
    if (band.size() != 2 || !(band[0] >= 0.0 && band[0] <= band[1] && band[1] <= 1.0))
      s.fail("competitive", "must be [low, high] with 0 <= low <= high <= 1", "write it as [0.45, 0.55]");
    m.competitive_low = band[0];
    m.competitive_high = band[1];
  }
  if (s.has("county_splits")) {
    m.county_splits = s.boolean("county_splits", false);
    if (*m.county_splits && job.map.county_column.empty())
      s.fail("county_splits", "county splits need county codes, but [map] names no county column",
             "set map.county, or write county_splits = false");
  }
  if (s.has("municipality_splits")) {
    m.municipality_splits = s.boolean("municipality_splits", false);
    if (*m.municipality_splits && job.map.municipality_column.empty())
      s.fail("municipality_splits", "municipality splits need municipality codes, but [map] names no municipality column",
             "set map.municipality, or write municipality_splits = false");
  }
  if (const toml::node* node = s.get("groups")) {
    const toml::array* list = node->as_array();
    // groups = [] measures no group; otherwise one [[measures.groups]] table per group.
    if (!list || (!list->empty() && !list->is_array_of_tables()))
      s.fail("groups", "must be a list of tables", "write each group as a [[measures.groups]] section");
    m.groups.emplace();
    for (const toml::node& item : *list) {
      Section g(*item.as_table(), "measures.groups", job.path);
      GroupMeasuresSpec spec;
      spec.group = g.string("group", "", true);
      if (!listed(spec.group)) g.fail("group", "'" + spec.group + "' is not listed in map.groups", "add it there or fix the name");
      spec.denominator = g.string("denominator", "");
      if (!spec.denominator.empty() && !listed(spec.denominator))
        g.fail("denominator", "'" + spec.denominator + "' is not listed in map.groups",
               "list the count column (e.g. a voting-age population) in map.groups, or leave the key out for total population");
      if (g.has("thresholds")) {
        spec.thresholds = g.numbers("thresholds");
        for (const double t : spec.thresholds)
          if (!(t >= 0.0 && t <= 1.0)) g.fail("thresholds", "must hold shares in [0, 1]", "write them as fractions, e.g. [0.5, 0.4]");
      }
      for (const auto& other : *m.groups)
        if (other.group == spec.group && other.denominator == spec.denominator)
          g.fail("group", "'" + spec.group + "' is measured twice with the same denominator", "merge the two sections");
      g.reject_unknown();
      m.groups->push_back(std::move(spec));
    }
  }
  s.reject_unknown();
}

void read_sampler(Section& top, JobSpec& job) {
  const toml::table* table = top.table("sampler");
  if (!table) return;
  Section s(*table, "sampler", job.path);
  SamplerSpec& spec = job.sampler;
  const std::string kernel = s.string("kernel", "recombination");
  if (kernel == "recombination") spec.kernel = KernelKind::recombination;
  else if (kernel == "merge-split") spec.kernel = KernelKind::merge_split;
  else if (kernel == "flip") spec.kernel = KernelKind::flip;
  else s.fail("kernel", "unknown kernel '" + kernel + "'", "use \"recombination\", \"merge-split\" or \"flip\"");
  constexpr std::int64_t kMax = std::int64_t{1} << 50;
  spec.chains = static_cast<std::size_t>(s.integer("chains", 4, 1, 100'000));
  spec.steps = static_cast<std::uint64_t>(s.integer("steps", 1000, 1, kMax));
  spec.burn_in = static_cast<std::uint64_t>(s.integer("burn_in", 0, 0, kMax));
  spec.record_every = static_cast<std::uint64_t>(s.integer("record_every", 1, 1, kMax));
  spec.seed = static_cast<std::uint64_t>(s.integer("seed", 1, 0, std::numeric_limits<std::int64_t>::max()));
  spec.gamma = s.number("gamma", 0.0, 0.0, 10.0);
  spec.beta = s.number("beta", 1.0, 0.0, 1e6);
  spec.balanced_cut_bound = static_cast<std::size_t>(s.integer("balanced_cut_bound", 0, 0, 1'000'000));
  if (spec.burn_in >= spec.steps)
    s.fail("burn_in", "burn_in (" + std::to_string(spec.burn_in) + ") must be below steps (" +
                          std::to_string(spec.steps) + ")", "lower burn_in or raise steps");
  s.reject_unknown();
}

void read_tempering(Section& top, JobSpec& job) {
  const toml::table* table = top.table("tempering");
  if (!table) return;
  Section t(*table, "tempering", job.path);
  TemperingSpec& spec = job.tempering;
  spec.enabled = true;
  const double target = job.sampler.beta;
  constexpr std::int64_t kMax = std::int64_t{1} << 50;
  spec.betas = t.numbers("betas");
  const bool listed = t.has("betas");
  if (listed) {
    if (t.has("rungs") || t.has("hottest_beta"))
      t.fail(t.has("rungs") ? "rungs" : "hottest_beta", "conflicts with tempering.betas",
             "give either betas = [...] or rungs and hottest_beta, not both");
    if (spec.betas.size() < 2 || spec.betas.size() > 64)
      t.fail("betas", "must list 2 to 64 rungs, has " + std::to_string(spec.betas.size()), "list 2 to 64 betas");
    for (std::size_t r = 0; r < spec.betas.size(); ++r) {
      if (!std::isfinite(spec.betas[r]) || spec.betas[r] < 0.0)
        t.fail("betas", "must hold finite numbers >= 0", "fix entry " + std::to_string(r + 1));
      if (r > 0 && !(spec.betas[r] < spec.betas[r - 1]))
        t.fail("betas", "must decrease strictly from the target rung", "fix entry " + std::to_string(r + 1));
    }
    if (spec.betas.front() != target) {
      std::ostringstream what;
      what << "starts at " << spec.betas.front() << ", but the target rung must have sampler.beta = " << target;
      t.fail("betas", what.str(), "make the first entry equal to sampler.beta");
    }
    spec.rungs = spec.betas.size();
  } else {
    spec.rungs = static_cast<std::size_t>(t.integer("rungs", 0, 2, 64, true));
    spec.hottest_beta = t.number("hottest_beta", 0.0, 0.0, 1e6, true);
    if (!(spec.hottest_beta > 0.0 && spec.hottest_beta < target)) {
      std::ostringstream what;
      what << "must lie strictly between 0 and the target sampler.beta = " << target << " for a geometric ladder";
      t.fail("hottest_beta", what.str(), "choose a smaller positive value, or list betas = [...] to reach 0");
    }
  }
  spec.swap_every = static_cast<std::uint64_t>(t.integer("swap_every", 10, 1, kMax));
  spec.tune = t.boolean("tune", false);
  if (spec.tune && job.sampler.burn_in == 0)
    t.fail("tune", "tuning runs during burn-in, but sampler.burn_in is 0", "set sampler.burn_in or tune = false");
  const std::string record = t.string("record", "target");
  if (record == "target") spec.record = TemperingRecord::target;
  else if (record == "all") spec.record = TemperingRecord::all;
  else t.fail("record", "unknown value '" + record + "'", "use \"target\" or \"all\"");
  if (job.sampler.kernel == KernelKind::recombination)
    top.fail("tempering", "tempering needs a kernel that weighs the energy by beta; recombination ignores beta",
             "set sampler.kernel to \"merge-split\" or \"flip\", or remove [tempering]");
  t.reject_unknown();
}

}  // namespace

JobSpec parse_job_text(std::string_view text, const std::string& source) {
  JobSpec job;
  job.path = source;
  job.text = std::string(text);
  toml::table root;
  try {
    root = toml::parse(text, source);
  } catch (const toml::parse_error& e) {
    throw InputError({source, static_cast<std::size_t>(e.source().begin.line), ""},
                     "not valid TOML: " + std::string(e.description()), "fix the syntax at that line");
  }
  const std::string base = fs::path(source).parent_path().string();
  Section top(root, "", job.path);
  read_map(top, job, base);

  const toml::table* districts = top.table("districts");
  if (!districts) top.fail("districts", "section [districts] is missing", "add [districts] with count = K");
  Section d(*districts, "districts", job.path);
  // One district is no plan to sample: every kernel needs a pair of districts (a cut edge).
  if (const toml::node* count = districts->get("count"); count && count->is_integer() && **count->as_integer() < 2)
    d.fail("count", "is " + std::to_string(**count->as_integer()) + "; a plan needs at least 2 districts",
           "set districts.count to 2 or more");
  job.districts = static_cast<std::size_t>(d.integer("count", 0, 2, 65'534, true));
  const std::string start = d.string("start", "random");
  job.start = start == "random" ? start : resolve(base, start);
  const std::string starts = d.string("starts", start == "random" ? "random" : "mixed");
  if (starts == "mixed") job.starts = ChainStarts::mixed;
  else if (starts == "given") job.starts = ChainStarts::given;
  else if (starts == "random") job.starts = ChainStarts::random;
  else d.fail("starts", "unknown value '" + starts + "'", "use \"mixed\", \"given\" or \"random\"");
  if (start == "random" && job.starts != ChainStarts::random)
    d.fail("starts", "is \"" + starts + "\" but districts.start gives no plan",
           "name a plan CSV in districts.start, or leave districts.starts out");
  d.reject_unknown();

  read_rules(top, job);
  read_sampler(top, job);
  read_measures(top, job);

  if (const toml::table* out = top.table("output")) {
    Section o(*out, "output", job.path);
    job.output.dir = resolve(base, o.string("dir", ""));
    job.output.checkpoint_seconds = o.number("checkpoint_seconds", 300.0, 1.0, 1e7);
    o.reject_unknown();
  }
  if (const toml::table* v = top.table("verdict")) {
    Section s(*v, "verdict", job.path);
    const diagnose::VerdictRule defaults;
    job.verdict.rhat_max = s.number("rhat_max", defaults.rhat_max, 1.0, 10.0);
    job.verdict.ess_min = s.number("ess_min", defaults.ess_min, 1.0, 1e12);
    // At least 8: the later half of the record then holds 4 draws, the fewest the diagnostics take.
    job.verdict.min_records = static_cast<std::size_t>(
        s.integer("min_records", static_cast<std::int64_t>(defaults.min_records), 8, 1'000'000'000'000));
    if (s.has("judge")) {
      job.verdict_judge = s.strings("judge");
      job.verdict_judge_line = s.line_of(*v->get("judge"));
      if (job.verdict_judge->empty())
        s.fail("judge", "lists no observable", "name the observables to judge, or leave the key out to judge them all");
    }
    s.reject_unknown();
  }
  if (const toml::table* c = top.table("compare")) {
    Section s(*c, "compare", job.path);
    job.compare.declared = s.strings("declared");
    s.reject_unknown();
  }
  read_tempering(top, job);
  top.reject_unknown();
  return job;
}

JobSpec load_job(const std::string& path) {
  std::error_code ec;
  if (fs::is_directory(path, ec)) {
    const fs::path dir(path);
    std::string remedy = "give the path of a job file (TOML), e.g. " + (dir / "job.toml").string();
    if (fs::exists(dir / "run-state.json", ec))
      remedy = "it holds a run: to continue it, give the job file that started the run with --output " + path +
               " --resume (" + (dir / "job.toml").string() + " is a copy of its text)";
    else if (!fs::exists(dir / "job.toml", ec))
      remedy = "give the path of a job file (TOML); see docs/jobs.md";
    throw InputError({path, 0, ""}, "is a folder, not a job file", remedy);
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError({path, 0, ""}, "cannot open the job file", "check the path");
  std::ostringstream text;
  text << in.rdbuf();
  if (text.str().find_first_not_of(" \t\r\n") == std::string::npos)
    throw InputError({path, 0, ""}, "the job file is empty", "see docs/jobs.md for a complete example");
  return parse_job_text(text.str(), path);
}

}  // namespace planmill
