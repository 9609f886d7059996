// The cautions and what was run: job, map, provenance and checksums (from the manifest when
// `planmill merge` wrote one, else what the run state recorded), planmill's version.
#include <string>
#include <vector>

#include "planmill/compare/report.hpp"
#include "planmill/moves/kernel_kind.hpp"
#include "planmill/report/svg.hpp"
#include "planmill/version.hpp"
#include "report/sections.hpp"

namespace planmill::report {
namespace {

using nlohmann::json;

std::string text_of(const json& j, const char* key) {
  if (!j.is_object() || !j.contains(key) || j[key].is_null()) return "not known";
  const json& v = j[key];
  return v.is_string() ? v.get<std::string>() : v.dump();
}

bool flag(const std::optional<json>& j, const char* key) {
  return j && j->is_object() && j->contains(key) && (*j)[key].is_boolean() && (*j)[key].get<bool>();
}

std::string number(double v) { return format_number(v, 6); }

}  // namespace

Section cautions_section(const RunFacts& f) {
  Section s{"cautions", "Read this first", {}};
  s.body += paragraph(
      "This report describes an ensemble of districting plans drawn by Markov chains under the rules this run "
      "states. It is a baseline under those rules, not a verdict on anyone's intent. Legal conclusions belong to "
      "counsel and to the law and courts of the jurisdiction.",
      "caution");
  s.body += paragraph(compare::caution(), "note");
  // Only a rule or soft term changes which plans are drawn; measures only describe them.
  std::vector<std::string> terms;
  for (const auto& g : f.job.rules.group_share)
    terms.push_back("group '" + g.group + "' (weight " + number(g.weight) + ", threshold " + number(g.threshold) + ")");
  const bool rules_read = !terms.empty() || flag(f.measures, "rules_read_group_columns");
  if (rules_read) {
    std::string list;
    for (const auto& t : terms) list += (list.empty() ? "" : "; ") + t;
    s.body += paragraph("This ensemble is NOT a race-blind or party-blind baseline: a rule or soft term of the run "
                        "read group (race or ethnicity) or vote columns, so which plans were drawn depended on that "
                        "data" + (list.empty() ? std::string(".") : " (rules.group_share: " + list + ")."),
                        "caution");
  } else if (flag(f.measures, "reads_group_or_vote_columns")) {
    s.body += paragraph("No rule or soft term of this run read group or vote columns, so which plans were drawn did "
                        "not depend on them. The run's measures read group and vote columns only to describe the "
                        "plans drawn (the manifest records reads_group_or_vote_columns = true for that reason).");
  } else if (!f.measures) {
    s.body += paragraph("The run state does not record what the run measured (a run from before measures were "
                        "recorded); the job's rules list no term on group columns.");
  } else {
    s.body += paragraph("No rule, soft term or measure of this run read group or vote columns.");
  }
  // The manifest's blind check (docs/manifest.md, "blind_check"), when it drew chains again.
  const json* blind = f.manifest && f.manifest->contains("blind_check") ? &(*f.manifest)["blind_check"] : nullptr;
  if (blind && blind->is_object() && blind->value("applicable", json(false)) == json(true)) {
    const std::string result = blind->value("result", std::string());
    const std::string chains = std::to_string(blind->value("stretches", json::array()).size());
    if (result == "identical") {
      s.body += paragraph("planmill merge drew " + chains + " chains again from their first state on the map with "
                          "every group and vote column permuted across units and found the very same plans, "
                          "record for record (the manifest's blind_check).");
    } else if (result == "differed") {
      s.body += paragraph("planmill merge drew chains again on the map with its group and vote columns permuted "
                          "and found other plans (the manifest's blind_check): something in this build reads "
                          "those columns when drawing plans.",
                          "caution");
    }
  }
  return s;
}

Section run_section(const RunFacts& f) {
  Section s{"run", "What was run", {}};
  const RunState& st = f.reader->state();
  const JobSpec& j = f.job;
  std::vector<std::vector<std::string>> rows{
      {"run id", st.run_id},
      {"kernel", kernel_name(j.sampler.kernel)},
      {"chains", std::to_string(j.sampler.chains) + (j.tempering.enabled ? " ladders of " + std::to_string(j.tempering.rungs) + " rungs" : "")},
      {"steps per chain (burn-in included)", std::to_string(st.target_steps)},
      {"burn-in steps", std::to_string(st.burn_in)},
      {"steps between records", std::to_string(st.record_every)},
      {"seed", std::to_string(st.seed)},
      {"beta, gamma", number(j.sampler.beta) + ", " + number(j.sampler.gamma)},
      {"units, districts", std::to_string(f.reader->unit_count()) + ", " + std::to_string(f.reader->district_count())},
      {"population tolerance", number(j.rules.population_tolerance)},
      {"county splits limit", j.rules.county_splits_max < 0 ? "none" : std::to_string(j.rules.county_splits_max)},
      {"energy weights", "cut edges " + number(j.rules.cut_edges_weight) + ", county splits " +
                             number(j.rules.county_splits_weight) + ", group share terms " +
                             std::to_string(j.rules.group_share.size())},
      {"start", j.start == "random" ? "every chain from its own random seed plan" : j.start},
      {"finished", st.finished ? "yes" : "no (" + st.stop_reason + ")"},
      {"run by planmill", st.planmill_version + " (" + st.git_commit + ")"},
      {"this report by planmill", std::string(kVersion) + " (" + kGitCommit + ")"},
  };
  s.body += table({"", ""}, rows);
  std::vector<std::vector<std::string>> chains;
  for (const auto& c : st.chains)
    chains.push_back({std::to_string(c.index), std::to_string(c.steps), std::to_string(c.records),
                      c.counters.steps == 0 ? std::string("none")
                                            : format_number(static_cast<double>(c.counters.accepted) /
                                                            static_cast<double>(c.counters.steps), 4),
                      c.last_checkpoint});
  s.body += table({"chain", "steps", "records", "acceptance rate", "last checkpoint"}, chains, "Chains as committed");

  s.body += "<h3>Provenance and checksums</h3>\n";
  if (!f.manifest) {
    s.body += paragraph("The manifest is missing: " + f.manifest_problem +
                            ". Without it the plan files have not been checked against their checksums for this "
                            "report beyond what the verdict reads; below is what the run state recorded at commit.",
                        "verdict");
    std::vector<std::vector<std::string>> inputs{{"job", st.job_path, st.job_sha256}};
    for (const auto& in : st.inputs) inputs.push_back({in.role, in.path, in.sha256});
    s.body += table({"role", "path", "SHA-256 at run start"}, inputs, "Inputs (as recorded by the run state)");
    std::vector<std::vector<std::string>> files;
    for (const auto& p : st.files) files.push_back({p.file, std::to_string(p.rank), p.host, p.sha256});
    s.body += table({"plan file", "rank", "host", "SHA-256 at commit"}, files, "Plan files (as recorded by the run state)");
    return s;
  }
  const json& m = *f.manifest;
  s.body += paragraph("From manifest.json (schema " + text_of(m, "manifest_schema") + "), written " +
                      text_of(m, "written") + " by planmill " +
                      (m.contains("merged_by") ? text_of(m["merged_by"], "planmill_version") : "not known") + ".");
  std::vector<std::vector<std::string>> inputs;
  if (m.contains("job"))
    inputs.push_back({"job", text_of(m["job"], "path"), text_of(m["job"], "sha256"), text_of(m["job"], "copy_status")});
  if (m.contains("inputs") && m["inputs"].is_array())
    for (const auto& in : m["inputs"])
      inputs.push_back({text_of(in, "role"), text_of(in, "path"), text_of(in, "sha256_at_start"), text_of(in, "status")});
  s.body += table({"role", "path", "SHA-256 at run start", "now"}, inputs, "Inputs");
  std::vector<std::vector<std::string>> builds;
  if (m.contains("builds") && m["builds"].is_array())
    for (const auto& b : m["builds"])
      builds.push_back({text_of(b, "compiler"), text_of(b, "isa"), text_of(b, "hdf5"), text_of(b, "mpi")});
  if (!builds.empty()) s.body += table({"compiler", "instruction set", "HDF5", "MPI"}, builds, "Builds that drew the plans");
  std::vector<std::vector<std::string>> files;
  if (m.contains("plan_files") && m["plan_files"].is_array())
    for (const auto& p : m["plan_files"])
      files.push_back({text_of(p, "file"), text_of(p, "size_bytes"), text_of(p, "sha256"), text_of(p, "identity"),
                       text_of(p, "verify")});
  s.body += table({"plan file", "bytes", "SHA-256", "identity", "verify"}, files, "Plan files at merge");
  if (m.contains("totals"))
    s.body += paragraph("Totals at merge: " + text_of(m["totals"], "records") + " records, " +
                        text_of(m["totals"], "problems") + " damaged record ranges, " +
                        text_of(m["totals"], "inputs_not_matching") + " inputs not matching.");
  return s;
}

}  // namespace planmill::report
