// The run state as the guard of a run folder: the plan files it committed (by SHA-256), the input
// files the job names (by content, wherever the folder and its inputs now are), the snapshots it
// resumes from, and files that went missing. Real `planmill` processes on real files.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "planmill/run/run_state.hpp"
#include "../support/run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::shell;

fs::path scratch(const std::string& name) { return test::scratch_dir("planmill-integrity-test", name); }

std::string text_of(const fs::path& path) {
  std::ifstream in(path);
  return {std::istreambuf_iterator<char>(in), {}};
}

// `planmill ARGS`, its stdout and stderr in `log`; returns the exit status.
int planmill(const std::string& args, const fs::path& log) {
  return shell(std::string(PLANMILL_BINARY) + " " + args + " >" + log.string() + " 2>&1");
}

int run(int ranks, const fs::path& job, const fs::path& out, const std::string& extra, const fs::path& log) {
  setenv("OMPI_ALLOW_RUN_AS_ROOT", "1", 1);
  setenv("OMPI_ALLOW_RUN_AS_ROOT_CONFIRM", "1", 1);
  return shell("mpiexec --oversubscribe -n " + std::to_string(ranks) + " " + PLANMILL_BINARY + " run " +
               job.string() + " --output " + out.string() + " --quiet " + extra + " >" + log.string() +
               " 2>&1");
}

// Blocks of 200 steps after a burn-in of 100, each ended by a checkpoint: with --max-steps 700 a
// run commits three plan files per rank, each with 40 records of every chain.
constexpr const char* kBlocks = "chains = 2\nsteps = 300\nburn_in = 100\nrecord_every = 5\nseed = 3";
constexpr const char* kUnreachable = "[verdict]\ness_min = 1000000\n";
const std::string kThreeBlocks = "--until-converged --max-steps 700";

fs::path blocks_job(const fs::path& dir) {
  const fs::path job = test::write_synth_job(dir, kBlocks);
  std::ofstream(job, std::ios::app) << kUnreachable;
  return job;
}

void edit_state(const fs::path& run_dir, const std::function<void(nlohmann::json&)>& edit) {
  const fs::path file = run_dir / "run-state.json";
  nlohmann::json state = nlohmann::json::parse(text_of(file));
  edit(state);
  std::ofstream(file, std::ios::trunc) << state.dump(1);
}

TEST(RunIntegrity, APlanFileReplacedByAnotherOfTheSameRankIsNotTheRunsFile) {
  const auto dir = scratch("swap");
  const auto job = blocks_job(dir);
  const auto out = dir / "out";
  ASSERT_EQ(run(1, job, out, kThreeBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  const RunState state = read_run_state(RunLayout{out});
  ASSERT_EQ(state.files.size(), 3U);
  for (const auto& f : state.files) EXPECT_EQ(f.sha256.size(), 64U) << f.file;
  const std::string diagnose = "diagnose " + out.string() + " --rhat-max 100 --ess-min 1 --min-records 8";
  const std::string exports = "export " + out.string() + " --out " + (dir / "csv").string();
  ASSERT_EQ(planmill("merge " + out.string(), dir / "merge0.log"), 0) << text_of(dir / "merge0.log");
  ASSERT_EQ(planmill(diagnose, dir / "diagnose0.log"), 0) << text_of(dir / "diagnose0.log");
  ASSERT_EQ(planmill(exports, dir / "export0.log"), 0) << text_of(dir / "export0.log");

  // Two valid files of rank 0, the same record counts: only their identity tells them apart.
  const fs::path a = out / "plans" / "seg-00000-rank-000.h5", b = out / "plans" / "seg-00001-rank-000.h5";
  fs::rename(a, dir / "tmp.h5");
  fs::rename(b, a);
  fs::rename(dir / "tmp.h5", b);
  const std::string message = "plans/seg-00000-rank-000.h5: is not the file the run committed";
  EXPECT_EQ(planmill("merge " + out.string(), dir / "merge.log"), 3);
  EXPECT_NE(text_of(dir / "merge.log").find(message), std::string::npos) << text_of(dir / "merge.log");
  EXPECT_NE(text_of(dir / "merge.log").find("plans/seg-00001-rank-000.h5: is not the file"), std::string::npos);
  const auto manifest = nlohmann::json::parse(text_of(out / "manifest.json"));
  EXPECT_EQ(manifest["plan_files"][0]["identity"], "differs");
  EXPECT_EQ(manifest["plan_files"][0]["verify"], "damaged");
  EXPECT_EQ(manifest["plan_files"][2]["identity"], "matches");
  EXPECT_EQ(planmill(diagnose, dir / "diagnose.log"), 3);
  EXPECT_NE(text_of(dir / "diagnose.log").find(message), std::string::npos) << text_of(dir / "diagnose.log");
  EXPECT_EQ(planmill(exports, dir / "export.log"), 3);
  EXPECT_NE(text_of(dir / "export.log").find(message), std::string::npos) << text_of(dir / "export.log");

  // Put back, the files match again.
  fs::rename(a, dir / "tmp.h5");
  fs::rename(b, a);
  fs::rename(dir / "tmp.h5", b);
  EXPECT_EQ(planmill("merge " + out.string(), dir / "merge1.log"), 0) << text_of(dir / "merge1.log");
}

TEST(RunIntegrity, ARunStateWithoutPlanFileHashesStaysReadable) {
  const auto dir = scratch("old-files");
  const auto job = blocks_job(dir);
  const auto out = dir / "out";
  ASSERT_EQ(run(1, job, out, kThreeBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  edit_state(out, [](nlohmann::json& s) {
    for (auto& f : s["files"]) f.erase("sha256");
  });
  EXPECT_EQ(planmill("merge " + out.string(), dir / "merge.log"), 0) << text_of(dir / "merge.log");
  const auto manifest = nlohmann::json::parse(text_of(out / "manifest.json"));
  EXPECT_EQ(manifest["plan_files"][0]["identity"], "not recorded");
  EXPECT_TRUE(manifest["plan_files"][0]["committed_sha256"].is_null());
}


std::vector<std::string> split_commas(const std::string& line) {
  std::vector<std::string> out(1);
  for (const char c : line) {
    if (c == ',') {
      out.emplace_back();
    } else {
      out.back().push_back(c);
    }
  }
  return out;
}

// One more person in the first unit of a unit table: a different file that still loads.
void change_unit_table(const fs::path& units) {
  std::ifstream in(units);
  std::string header, first;
  std::getline(in, header);
  std::getline(in, first);
  const std::string rest(std::istreambuf_iterator<char>(in), {});
  in.close();
  const auto names = split_commas(header);
  auto values = split_commas(first);
  const auto pop = std::find(names.begin(), names.end(), "pop");
  ASSERT_NE(pop, names.end()) << header;
  auto& value = values[static_cast<std::size_t>(pop - names.begin())];
  value = std::to_string(std::stol(value) + 1);
  std::string row;
  for (const auto& v : values) row += (row.empty() ? "" : ",") + v;
  std::ofstream(units, std::ios::trunc) << header << "\n" << row << "\n" << rest;
}

// Two blocks committed (finished at its step budget); --resume with a larger budget goes on.
const std::string kTwoBlocks = "--until-converged --max-steps 500";

TEST(RunIntegrity, ACopiedRunFolderDoesNotResumeOnAChangedUnitTable) {
  const auto dir = scratch("copy");
  const auto job = blocks_job(dir / "first");
  ASSERT_EQ(run(1, job, dir / "first" / "out", kTwoBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  fs::copy(dir / "first", dir / "second", fs::copy_options::recursive);
  change_unit_table(dir / "second" / "state" / "units.csv");
  ASSERT_EQ(planmill("check " + (dir / "second" / "state" / "job.toml").string(), dir / "check.log"), 0)
      << "the changed table must still load: " << text_of(dir / "check.log");
  const std::string before = text_of(dir / "second" / "out" / "run-state.json");
  EXPECT_EQ(run(1, dir / "second" / "state" / "job.toml", dir / "second" / "out", "--resume " + kThreeBlocks,
                dir / "resume.log"),
            2);
  const std::string log = text_of(dir / "resume.log");
  EXPECT_NE(log.find((dir / "second" / "state" / "units.csv").string() +
                     ": has changed since the run started (SHA-256 differs)"),
            std::string::npos)
      << log;
  EXPECT_EQ(text_of(dir / "second" / "out" / "run-state.json"), before) << "the copied run was touched";
  // The original, with its own unchanged inputs, still resumes.
  EXPECT_EQ(run(1, job, dir / "first" / "out", "--resume " + kThreeBlocks, dir / "first.log"), 3)
      << text_of(dir / "first.log");
}

TEST(RunIntegrity, AMovedRunFolderWithItsInputsResumesAndItsManifestFindsThem) {
  const auto dir = scratch("move");
  const auto job = blocks_job(dir / "before");
  ASSERT_EQ(run(1, job, dir / "before" / "out", kTwoBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  fs::rename(dir / "before", dir / "after");
  const auto moved = dir / "after" / "out";
  EXPECT_EQ(run(1, dir / "after" / "state" / "job.toml", moved, "--resume " + kThreeBlocks, dir / "resume.log"), 3)
      << text_of(dir / "resume.log");
  const RunState state = read_run_state(RunLayout{moved});
  EXPECT_EQ(state.chains[0].steps, 700U);
  for (const auto& input : state.inputs) {
    EXPECT_FALSE(fs::path(input.path).is_absolute()) << input.role << ": " << input.path;
  }
  ASSERT_EQ(planmill("merge " + moved.string(), dir / "merge.log"), 0) << text_of(dir / "merge.log");
  const auto manifest = nlohmann::json::parse(text_of(moved / "manifest.json"));
  for (const auto& input : manifest["inputs"]) EXPECT_EQ(input["status"], "matches") << input.dump();
  // The manifest looks for inputs where the job file of the latest session is.
  change_unit_table(dir / "after" / "state" / "units.csv");
  ASSERT_EQ(planmill("merge " + moved.string(), dir / "merge2.log"), 0) << text_of(dir / "merge2.log");
  const auto changed = nlohmann::json::parse(text_of(moved / "manifest.json"));
  EXPECT_EQ(changed["inputs"][1]["role"], "units");
  EXPECT_EQ(changed["inputs"][1]["status"], "differs");
  fs::remove(dir / "after" / "state" / "adjacency.csv");
  ASSERT_EQ(planmill("merge " + moved.string(), dir / "merge3.log"), 0) << text_of(dir / "merge3.log");
  EXPECT_EQ(nlohmann::json::parse(text_of(moved / "manifest.json"))["inputs"][2]["status"], "missing");
}

TEST(RunIntegrity, AResumeWithADeletedInputSaysItIsMissing) {
  const auto dir = scratch("deleted-input");
  const auto job = blocks_job(dir);
  ASSERT_EQ(run(1, job, dir / "out", kTwoBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  fs::remove(dir / "state" / "adjacency.csv");
  EXPECT_EQ(run(1, job, dir / "out", "--resume " + kThreeBlocks, dir / "resume.log"), 2);
  const std::string log = text_of(dir / "resume.log");
  EXPECT_NE(log.find((dir / "state" / "adjacency.csv").string() + ": is missing"), std::string::npos) << log;
  EXPECT_EQ(log.find("has changed"), std::string::npos) << log;
}

TEST(RunIntegrity, ARunStateWithAbsoluteInputPathsStillResumes) {
  const auto dir = scratch("old-inputs");
  const auto job = blocks_job(dir);
  ASSERT_EQ(run(1, job, dir / "out", kTwoBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  edit_state(dir / "out", [&](nlohmann::json& s) {  // as planmill wrote inputs before
    for (auto& input : s["inputs"]) {
      input["path"] = (dir / "state" / input["path"].get<std::string>()).lexically_normal().string();
    }
  });
  ASSERT_EQ(planmill("merge " + (dir / "out").string(), dir / "merge.log"), 0) << text_of(dir / "merge.log");
  for (const auto& input : nlohmann::json::parse(text_of(dir / "out" / "manifest.json"))["inputs"]) {
    EXPECT_EQ(input["status"], "matches") << input.dump();
  }
  EXPECT_EQ(run(1, job, dir / "out", "--resume " + kThreeBlocks, dir / "resume.log"), 3) << text_of(dir / "resume.log");
  EXPECT_EQ(read_run_state(RunLayout{dir / "out"}).chains[0].steps, 700U);
}

// The snapshot of chain 0 with its lines changed by `edit` (Chain::save(): header, numbers,
// random stream, counters, labels).
void edit_snapshot(const fs::path& run_dir, const std::function<void(std::vector<std::string>&)>& edit) {
  edit_state(run_dir, [&](nlohmann::json& s) {
    std::vector<std::string> lines(1);
    for (const char c : s["chains"][0]["snapshot"].get<std::string>()) {
      if (c == '\n') {
        lines.emplace_back();
      } else {
        lines.back().push_back(c);
      }
    }
    edit(lines);
    std::string text;
    for (std::size_t i = 0; i < lines.size(); ++i) text += (i ? "\n" : "") + lines[i];
    s["chains"][0]["snapshot"] = text;
  });
}

std::string labels_by(std::size_t units, std::size_t modulus) {
  std::string text;
  for (std::size_t u = 0; u < units; ++u) text += std::to_string(u % modulus) + " ";
  return text;
}

TEST(RunIntegrity, AResumeRefusesAChainWithoutASnapshotOrWithAPlanItCannotHold) {
  const auto dir = scratch("snapshot");
  const auto job = blocks_job(dir);
  const auto out = dir / "out";
  ASSERT_EQ(run(1, job, out, kTwoBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  const std::string committed = text_of(out / "run-state.json");
  const auto refused = [&](const std::string& what) {
    EXPECT_EQ(run(1, job, out, "--resume " + kThreeBlocks, dir / "resume.log"), 2) << what;
    const std::string log = text_of(dir / "resume.log");
    EXPECT_NE(log.find((out / "run-state.json").string() + ": 'chains': chain 0"), std::string::npos) << log;
    EXPECT_NE(log.find(what), std::string::npos) << log;
    std::ofstream(out / "run-state.json", std::ios::trunc) << committed;
  };
  edit_state(out, [](nlohmann::json& s) { s["chains"][0]["snapshot"] = ""; });
  refused("chain 0 has taken 500 steps but holds no snapshot");
  // Striped by unit index, the districts of the invented map fall apart.
  edit_snapshot(out, [](std::vector<std::string>& lines) { lines[4] = labels_by(200, 4); });
  refused("not contiguous");
  edit_snapshot(out, [](std::vector<std::string>& lines) { lines[4] = labels_by(200, 3); });
  refused("leaves district 3 empty");
  edit_snapshot(out, [](std::vector<std::string>& lines) {
    lines[1].replace(lines[1].find(" 200 4 "), 7, " 200 5 ");
  });
  refused("has 5 districts, the job 4");
  // Untouched, it resumes.
  EXPECT_EQ(run(1, job, out, "--resume " + kThreeBlocks, dir / "resume.log"), 3) << text_of(dir / "resume.log");
}

TEST(RunIntegrity, ADeletedPlanFileIsReportedAsMissing) {
  const auto dir = scratch("deleted-plans");
  const auto job = blocks_job(dir);
  const auto out = dir / "out";
  ASSERT_EQ(run(1, job, out, kTwoBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  fs::remove(out / "plans" / "seg-00001-rank-000.h5");
  const std::string message = "plans/seg-00001-rank-000.h5: missing";
  const auto says_missing = [&](const fs::path& log) {
    const std::string text = text_of(log);
    EXPECT_NE(text.find(message), std::string::npos) << text;
    EXPECT_EQ(text.find("H5"), std::string::npos) << "no HDF5 error stack: " << text;
  };
  EXPECT_EQ(planmill("merge " + out.string(), dir / "merge.log"), 3);
  says_missing(dir / "merge.log");
  EXPECT_EQ(planmill("diagnose " + out.string() + " --rhat-max 100 --ess-min 1", dir / "diagnose.log"), 3);
  says_missing(dir / "diagnose.log");
  EXPECT_EQ(planmill("export " + out.string() + " --out " + (dir / "csv").string(), dir / "export.log"), 3);
  says_missing(dir / "export.log");
  EXPECT_EQ(run(1, job, out, "--resume " + kThreeBlocks, dir / "resume.log"), 2);
  says_missing(dir / "resume.log");
}

TEST(RunIntegrity, AResumeByAnotherBuildIsRefusedUnlessAllowed) {
  const auto dir = scratch("build");
  const auto job = blocks_job(dir);
  const auto out = dir / "out";
  ASSERT_EQ(run(1, job, out, kTwoBlocks, dir / "run.log"), 3) << text_of(dir / "run.log");
  const RunState started = read_run_state(RunLayout{out});
  ASSERT_EQ(started.builds.size(), 1U);
  EXPECT_FALSE(started.builds[0].compiler.empty());
  EXPECT_FALSE(started.builds[0].isa.empty());
  EXPECT_FALSE(started.builds[0].hdf5.empty());
  EXPECT_FALSE(started.builds[0].mpi.empty());
  // As if another machine's compiler and instruction set had drawn the run so far.
  edit_state(out, [](nlohmann::json& s) {
    s["builds"][0]["compiler"] = "GCC 0.1";
    s["builds"][0]["isa"] = s["builds"][0]["isa"].get<std::string>() + " avx-imagined";
  });
  EXPECT_EQ(run(1, job, out, "--resume " + kThreeBlocks, dir / "resume.log"), 2);
  const std::string log = text_of(dir / "resume.log");
  EXPECT_NE(log.find("run-state.json: 'builds': the run was drawn by a build that could decide differently"),
            std::string::npos)
      << log;
  EXPECT_NE(log.find("compiler: '" + started.builds[0].compiler + "' here, 'GCC 0.1' in the run"), std::string::npos)
      << log;
  EXPECT_NE(log.find("instruction set: "), std::string::npos) << log;
  EXPECT_EQ(log.find("MPI: "), std::string::npos) << "only what differs: " << log;
  EXPECT_EQ(run(1, job, out, "--resume --allow-other-build " + kThreeBlocks, dir / "allowed.log"), 3)
      << text_of(dir / "allowed.log");
  const RunState resumed = read_run_state(RunLayout{out});
  ASSERT_EQ(resumed.builds.size(), 2U);
  EXPECT_EQ(resumed.builds[1], started.builds[0]);
  EXPECT_EQ(resumed.chains[0].steps, 700U);
  ASSERT_EQ(planmill("merge " + out.string(), dir / "merge.log"), 0) << text_of(dir / "merge.log");
  EXPECT_EQ(nlohmann::json::parse(text_of(out / "manifest.json"))["builds"].size(), 2U);
  // A run state from before builds were recorded resumes unchecked.
  edit_state(out, [](nlohmann::json& s) { s.erase("builds"); });
  EXPECT_EQ(run(1, job, out, "--resume --until-converged --max-steps 900", dir / "old.log"), 3) << text_of(dir / "old.log");
}

}  // namespace
}  // namespace planmill
