// `planmill diagnose --traces` reads the trace files users actually have: R's write.csv output
// (quoted header, a row-name column), a file with a UTF-8 byte-order mark and CRLF line ends, and
// the observables.csv that `planmill export` writes; it warns when the traces hold one chain.
// Each file carries the same draws as a plain trace CSV (or, for the export, as the run folder),
// so the diagnostics must be the same.
#include <gtest/gtest.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>

#include "../support/run_jobs.hpp"
#include "synthetic_draws.hpp"

namespace planmill::diagnose {
namespace {

namespace fs = std::filesystem;
using test::shell;
using test::read_text;

struct Outcome {
  int status = -1;
  std::string out, err;
};

class TraceInputs : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = test::scratch_dir("planmill-trace-inputs",
                             ::testing::UnitTest::GetInstance()->current_test_info()->name());
  }
  void TearDown() override { fs::remove_all(dir_); }

  Outcome diagnose(const std::string& args) const {
    const auto out = dir_ / "stdout.txt", err = dir_ / "stderr.txt";
    const int status = shell(std::string(PLANMILL_BINARY) + " diagnose " + args + " > '" + out.string() +
                             "' 2> '" + err.string() + "'");
    return {status, read_text(out), read_text(err)};
  }

  // The observables of `diagnose --json` (one shape for a run dir and a trace file) by name:
  // name -> {rhat, ess_bulk, ess_tail, mcse_mean}.
  nlohmann::json diagnose_json(const std::string& args) const {
    const auto json_path = dir_ / "out.json";
    fs::remove(json_path);
    const Outcome o = diagnose(args + " --json '" + json_path.string() + "'");
    EXPECT_TRUE(o.status == 0 || o.status == 3) << o.out << o.err;
    nlohmann::json by_name = nlohmann::json::object();
    if (!fs::exists(json_path)) return by_name;
    const nlohmann::json written = nlohmann::json::parse(read_text(json_path));
    for (const auto& q : written["observables"]) {
      const auto& mixing = q["mixing"];
      by_name[q["observable"].get<std::string>()] = {mixing["rhat"], mixing["ess_bulk"], mixing["ess_tail"],
                                                     q["summary"]["mcse_mean"]};
    }
    return by_name;
  }

  // A plain trace CSV (chain,draw,<observables>), LF line ends; `eol` and `bom` change that. Numbers
  // have 15 significant digits, as R writes them (write.csv), so a round trip through R is exact.
  fs::path write_traces(const std::string& name, const std::vector<testing::Draws>& observables,
                        const std::string& eol = "\n", bool bom = false) const {
    const auto path = dir_ / name;
    std::ofstream csv(path, std::ios::binary);
    if (bom) csv << "\xEF\xBB\xBF";
    csv << "chain,draw";
    for (const auto& q : observables) csv << ',' << q.name;
    csv << eol;
    const auto& first = observables.front();
    char number[40];
    for (std::size_t c = 0; c < first.chains; ++c) {
      for (std::size_t t = 0; t < first.draws; ++t) {
        csv << "chain " << char('a' + c) << ',' << 5 * t;
        for (const auto& q : observables) {
          std::snprintf(number, sizeof number, "%.15g", q.values[c * q.draws + t]);
          csv << ',' << number;
        }
        csv << eol;
      }
    }
    return path;
  }

  fs::path dir_;
};

TEST_F(TraceInputs, ReadsRWriteCsvOutput) {
  if (shell("command -v Rscript > /dev/null 2>&1") != 0) GTEST_SKIP() << "Rscript is not installed";
  const auto plain = write_traces("plain.csv", {testing::ar1("cut_edges", 300, 3, 0.3, 41),
                                                testing::seats("seats_a", 300, 3, 0.2, 42)});
  // R's own writer (utils::write.csv, R >= 3): every name and the chain labels in double quotes,
  // and a first column of row names whose header is "".
  const auto from_r = dir_ / "from_r.csv";
  ASSERT_EQ(shell("Rscript -e 'x <- read.csv(\"" + plain.string() + "\"); write.csv(x, \"" + from_r.string() +
                  "\")' > /dev/null 2>&1"),
            0);
  const std::string text = read_text(from_r);
  ASSERT_EQ(text.rfind("\"\",\"chain\",\"draw\",\"cut_edges\",\"seats_a\"", 0), 0u) << text.substr(0, 80);

  const Outcome o = diagnose("--traces '" + from_r.string() + "'");
  EXPECT_TRUE(o.status == 0 || o.status == 3) << o.out << o.err;
  EXPECT_NE(o.out.find("3 chains x 300 draws, 2 observables"), std::string::npos) << o.out << o.err;
  const auto expected = diagnose_json("--traces '" + plain.string() + "'");
  ASSERT_EQ(expected.size(), 2u);
  EXPECT_EQ(diagnose_json("--traces '" + from_r.string() + "'"), expected);
}

TEST_F(TraceInputs, ReadsByteOrderMarkAndCrlf) {
  const std::vector<testing::Draws> q = {testing::ar1("cut_edges", 200, 2, 0.5, 43)};
  const auto plain = write_traces("plain.csv", q);
  const auto windows = write_traces("windows.csv", q, "\r\n", true);
  const Outcome o = diagnose("--traces '" + windows.string() + "'");
  EXPECT_TRUE(o.status == 0 || o.status == 3) << o.out << o.err;
  EXPECT_NE(o.out.find("2 chains x 200 draws, 1 observables"), std::string::npos) << o.out << o.err;
  const auto expected = diagnose_json("--traces '" + plain.string() + "'");
  ASSERT_EQ(expected.size(), 1u);
  EXPECT_EQ(diagnose_json("--traces '" + windows.string() + "'"), expected);
}

// A small real run (planmill synth + planmill run), exported with planmill export: its
// observables.csv read as traces gives the table that diagnose gives for the run folder itself.
TEST_F(TraceInputs, ReadsPlanmillExportObservables) {
  const fs::path job = test::write_synth_job(dir_, "chains = 2\nsteps = 300\nburn_in = 20\nrecord_every = 2\nseed = 6");
  const fs::path run_dir = dir_ / "run", csv_dir = dir_ / "csv";
  ASSERT_EQ(shell(std::string(PLANMILL_BINARY) + " run " + job.string() + " --output " + run_dir.string() +
                  " --quiet > " + (dir_ / "run.log").string() + " 2>&1"),
            0)
      << read_text(dir_ / "run.log");
  ASSERT_EQ(shell(std::string(PLANMILL_BINARY) + " export " + run_dir.string() + " --out " + csv_dir.string() +
                  " > /dev/null"),
            0);
  const fs::path observables = csv_dir / "observables.csv";
  ASSERT_EQ(read_text(observables).rfind("chain,record,step,", 0), 0u);

  const Outcome o = diagnose("--traces '" + observables.string() + "'");
  EXPECT_TRUE(o.status == 0 || o.status == 3) << o.out << o.err;
  EXPECT_EQ(o.err.find("warning"), std::string::npos) << o.err;
  const auto from_csv = diagnose_json("--traces '" + observables.string() + "'");
  const auto from_run = diagnose_json("'" + run_dir.string() + "'");
  ASSERT_FALSE(from_run.empty());
  EXPECT_EQ(from_csv, from_run);
  EXPECT_FALSE(from_csv.contains("step")) << "step is an index, not an observable";
}

TEST_F(TraceInputs, WarnsOnOneLineWhenThereIsOneChain) {
  const Outcome one = diagnose("--traces '" + write_traces("one.csv", {testing::ar1("x", 400, 1, 0.0, 44)}).string() + "'");
  EXPECT_TRUE(one.status == 0 || one.status == 3) << one.out << one.err;
  EXPECT_NE(one.err.find("warning: "), std::string::npos) << one.err;
  EXPECT_NE(one.err.find("one chain"), std::string::npos) << one.err;
  EXPECT_EQ(std::count(one.err.begin(), one.err.end(), '\n'), 1) << one.err;
  const Outcome two = diagnose("--traces '" + write_traces("two.csv", {testing::ar1("x", 400, 2, 0.0, 44)}).string() + "'");
  EXPECT_EQ(two.err, "");
}

}  // namespace
}  // namespace planmill::diagnose
