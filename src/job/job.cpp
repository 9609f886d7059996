#include "planmill/job/job.hpp"

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <toml++/toml.h>

#include "job/job_file.hpp"
#include "planmill/base/error.hpp"

namespace planmill {

namespace fs = std::filesystem;
using job_file::Section;
using job_file::resolve;
namespace {

// districts.frozen: district numbers of the start plan (1..k) kept as given while the rest are
// drawn. Needs a plan file; every chain then starts from it.
void read_frozen(job_file::Section& d, const toml::node& node, JobSpec& job) {
  const toml::array* array = node.as_array();
  const std::string range = "1.." + std::to_string(job.districts);
  if (!array) d.fail("frozen", "must be a list of district numbers", "write it as [3, 7]");
  for (const toml::node& item : *array) {
    if (!item.is_integer()) d.fail("frozen", "must hold whole district numbers", "write it as [3, 7]");
    const std::int64_t v = **item.as_integer();
    if (v < 1 || v > static_cast<std::int64_t>(job.districts))
      d.fail("frozen", "district " + std::to_string(v) + " is outside " + range, "name districts " + range);
    const auto number = static_cast<std::size_t>(v);
    if (std::find(job.frozen.begin(), job.frozen.end(), number) != job.frozen.end())
      d.fail("frozen", "names district " + std::to_string(v) + " twice", "name each district once");
    job.frozen.push_back(number);
  }
  if (job.frozen.size() + 2 > job.districts)
    d.fail("frozen", "leaves fewer than two districts to draw", "freeze at most districts.count - 2 districts");
  if (job.start == "random")
    d.fail("frozen", "needs the districts as given, but districts.start gives no plan",
           "name a plan CSV in districts.start");
  if (job.starts != ChainStarts::given)
    d.fail("frozen", "every chain must start from the given plan to keep its frozen districts",
           "set districts.starts = \"given\"");
}

}  // namespace

using job_file::read_map, job_file::read_rules, job_file::read_measures, job_file::read_sampler,
    job_file::read_tempering;

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
  if (const toml::node* frozen = d.get("frozen")) read_frozen(d, *frozen, job);
  d.reject_unknown();

  read_rules(top, job);
  read_sampler(top, job);
  job_file::check_weights_honoured(top, job);
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
