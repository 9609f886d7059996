// The manifest's numbers against libraries outside the project:
// - every SHA-256 (plan files, job copy, inputs) against Python's hashlib (/usr/bin/python3);
// - the diagnostics of `diagnose RUNDIR` against the R package posterior (Debian
//   r-cran-posterior) on the same draws matrices, read back from the plan files, via the script
//   that the diagnose reference test uses (tests/diagnose/posterior_reference.R). Tolerances as
//   there: 1e-6 relative for R-hat, 1e-3 relative for ESS and MCSE.
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include "manifest_support.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/manifest/manifest.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using json = nlohmann::ordered_json;

// Lines of stdout of `command`.
std::vector<std::string> lines_of(const std::string& command) {
  std::vector<std::string> out;
  FILE* pipe = ::popen(command.c_str(), "r");
  if (pipe == nullptr) return out;
  char buffer[512];
  std::string line;
  while (std::fgets(buffer, sizeof buffer, pipe) != nullptr) {
    line += buffer;
    if (!line.empty() && line.back() == '\n') {
      line.pop_back();
      out.push_back(line);
      line.clear();
    }
  }
  EXPECT_EQ(::pclose(pipe), 0) << command;
  return out;
}

TEST(ManifestReference, EveryDigestEqualsPythonHashlib) {
  const test::ScratchDir scratch("planmill-manifest-ref");
  const auto& dir = scratch.path;
  auto run = test::write_fixture_run(dir, {.chains = 3, .ranks = 2, .segments = 2});
  std::ofstream(dir / "units.csv") << "unit,pop\na,1\nb,2\n";
  const std::string job = test::job_text_with_verdict("");
  std::ofstream(dir / "job.toml") << job;
  run.state.job_sha256 = sha256_hex(job);
  run.state.inputs.push_back(
      {"units", (dir / "units.csv").string(), sha256_file_hex((dir / "units.csv").string())});
  write_run_state(RunLayout{dir}, run.state);

  const RunReader reader(dir.string());
  const auto problems = reader.verify();
  const json m = build_manifest(reader, problems, reader.verify_rungs(),
                                diagnose_run(reader, {}, {.problems = problems}));

  std::vector<std::string> paths;
  std::vector<json> ours;
  for (const auto& f : m["plan_files"]) {
    paths.push_back((dir / f["file"].get<std::string>()).string());
    ours.push_back(f["sha256"]);
  }
  paths.push_back((dir / "job.toml").string());
  ours.push_back(m["job"]["copy_sha256"]);
  paths.push_back(m["inputs"][0]["path"].get<std::string>());
  ours.push_back(m["inputs"][0]["sha256_now"]);
  std::string command =
      "/usr/bin/python3 -c 'import hashlib, sys\n"
      "for p in sys.argv[1:]: print(hashlib.sha256(open(p, \"rb\").read()).hexdigest())'";
  for (const auto& p : paths) command += " '" + p + "'";
  const auto theirs = lines_of(command);
  ASSERT_EQ(theirs.size(), paths.size());
  for (std::size_t i = 0; i < paths.size(); ++i) EXPECT_EQ(ours[i], theirs[i]) << paths[i];
  EXPECT_EQ(m["job"]["sha256"], theirs[theirs.size() - 2]);  // the job text as recorded at start
}

// h5py (/usr/bin/python3) finds where the second stored chunk of chain 1's observable table lies
// in the file and which rows it holds; one byte flipped there must be reported for exactly those
// records of chain 1, and nothing else.
TEST(ManifestReference, AFlippedByteIsReportedForTheRecordsOfItsChunk) {
  const test::ScratchDir scratch("planmill-manifest-ref");
  const auto& dir = scratch.path;
  test::write_fixture_run(dir,
                          {.chains = 2, .ranks = 2, .segments = 2, .records_per_segment = 600});
  const std::string file = RunLayout::plan_file_name(0, 1);  // chain 1's records 0..599
  const auto found = lines_of(
      "/usr/bin/python3 -c 'import h5py, sys\n"
      "d = h5py.File(sys.argv[1], \"r\")[\"chain_1/observables\"]\n"
      "c = d.id.get_chunk_info(1)\n"
      "print(c.byte_offset + c.size // 2)\n"
      "print(c.chunk_offset[0])\n"
      "print(min(d.shape[0], c.chunk_offset[0] + d.chunks[0]) - 1)' '" +
      (dir / file).string() + "'");
  ASSERT_EQ(found.size(), 3U);
  const long offset = std::stol(found[0]);
  {
    std::fstream f(dir / file, std::ios::in | std::ios::out | std::ios::binary);
    f.seekg(offset);
    const char byte = static_cast<char>(f.get());
    f.seekp(offset);
    f.put(static_cast<char>(byte ^ 0x5a));
  }
  const RunReader reader(dir.string());
  const auto problems = reader.verify();
  const json m = build_manifest(reader, problems, reader.verify_rungs(),
                                diagnose_run(reader, {}, {.problems = problems}));
  ASSERT_EQ(m["problems"].size(), 1U) << m["problems"].dump(1);
  EXPECT_EQ(m["problems"][0]["chain"], 1U);
  EXPECT_EQ(m["problems"][0]["first_record"], std::stoull(found[1]));
  EXPECT_EQ(m["problems"][0]["last_record"], std::stoull(found[2]));
  EXPECT_EQ(m["problems"][0]["file"], file);
  EXPECT_EQ(m["diagnostics"]["left_out"][0]["chain"], "1");
}

TEST(ManifestReference, DiagnosticsOfTheRunEqualPosteriorOnTheSameMatrices) {
  const test::ScratchDir scratch("planmill-manifest-ref");
  const auto& dir = scratch.path;
  // Chains that differ a little (a drifting mean per chain) and an autocorrelated observable, so
  // that R-hat and ESS are away from their trivial values.
  std::map<std::uint64_t, double> level;
  Rng rng = make_stream(3, 3);
  auto value = [&](std::uint64_t chain, std::size_t record, std::size_t q) {
    double& x = level[chain * 10 + q];
    const double e = uniform01(rng) - 0.5;
    x = q == 0   ? e
        : q == 1 ? 0.9 * x + e
        : q == 2 ? std::floor(4 * uniform01(rng))
                 : e + 0.05 * static_cast<double>(chain);
    (void)record;
    return x;
  };
  test::write_run_with_observables(
      dir / "run", {.chains = 4, .ranks = 2, .segments = 2, .records_per_segment = 150}, value);
  const RunReader reader((dir / "run").string());
  const std::size_t dropped = 10;
  const RunDiagnostics d = diagnose_run(reader, {}, {.dropped_records = dropped});
  ASSERT_EQ(d.draws, 290U);

  // The draws as read back from the plan files, in the script's long format.
  const auto in = dir / "draws.csv", out = dir / "posterior.csv";
  {
    std::ofstream csv(in);
    csv << "case,chain,draw,value\n";
    char number[40];
    const auto& names = reader.observable_names();
    for (const auto chain : reader.chains()) {
      const auto rows = reader.read_observables(chain);
      for (std::size_t q = 0; q < names.size(); ++q) {
        for (std::size_t t = 0; t < d.draws; ++t) {
          std::snprintf(number, sizeof number, "%.17g", rows[(dropped + t) * names.size() + q]);
          csv << names[q] << ',' << chain + 1 << ',' << t + 1 << ',' << number << '\n';
        }
      }
    }
  }
  const std::string command = "Rscript '" + std::string(PLANMILL_SOURCE_DIR) +
                              "/tests/diagnose/posterior_reference.R' '" + in.string() + "' '" +
                              out.string() + "'";
  ASSERT_EQ(std::system(command.c_str()), 0) << command;
  std::ifstream result(out);
  std::string line;
  std::getline(result, line);
  std::cout << "reference: R package " << line.substr(2) << "\n";
  std::getline(result, line);
  std::vector<std::string> header;
  {
    std::stringstream s(line);
    for (std::string cell; std::getline(s, cell, ',');) header.push_back(cell);
  }
  std::map<std::string, std::map<std::string, double>> ref;
  while (std::getline(result, line)) {
    std::stringstream s(line);
    std::vector<std::string> cells;
    for (std::string cell; std::getline(s, cell, ',');) cells.push_back(cell);
    for (std::size_t i = 1; i < cells.size() && i < header.size(); ++i) {
      ref[cells[0]][header[i]] =
          cells[i] == "NA" ? std::nan("") : std::strtod(cells[i].c_str(), nullptr);
    }
  }
  ASSERT_EQ(ref.size(), 4U);
  auto expect_close = [](double ours, double theirs, double rel, const std::string& what) {
    if (std::isnan(theirs)) {
      EXPECT_TRUE(std::isnan(ours)) << what << ": posterior NA, ours " << ours;
      return;
    }
    EXPECT_LE(std::abs(ours - theirs), rel * std::abs(theirs))
        << what << ": ours " << ours << " posterior " << theirs;
  };
  for (const auto& row : d.verdict().table) {
    const auto& r = ref.at(row.name);
    expect_close(row.rhat, r.at("rhat"), 1e-6, row.name + " rhat");
    expect_close(row.ess_bulk, r.at("ess_bulk"), 1e-3, row.name + " ess_bulk");
    expect_close(row.ess_tail, r.at("ess_tail"), 1e-3, row.name + " ess_tail");
    expect_close(row.mcse_mean, r.at("mcse_mean"), 1e-3, row.name + " mcse_mean");
  }
}

}  // namespace
}  // namespace planmill
