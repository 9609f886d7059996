// End-to-end checks of `planmill diagnose --traces`: exit status 0 pass / 3 fail / 2 bad input,
// error messages naming file and line, and the JSON it writes (parsed back and checked against
// the library's own numbers for the same draws).
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "planmill/diagnose/observable_diagnostics.hpp"
#include "synthetic_draws.hpp"

namespace planmill::diagnose {
namespace {

namespace fs = std::filesystem;

struct Outcome {
  int status = -1;
  std::string out, err;
};

std::string slurp(const fs::path& p) {
  std::ifstream in(p);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

class DiagnoseCli : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = fs::temp_directory_path() /
           ("planmill_diagnose_cli_" + std::to_string(::getpid()) + "_" +
            ::testing::UnitTest::GetInstance()->current_test_info()->name());
    fs::create_directories(dir_);
  }
  void TearDown() override { fs::remove_all(dir_); }

  Outcome run(const std::string& args) const {
    const auto out = dir_ / "stdout.txt", err = dir_ / "stderr.txt";
    const std::string command = std::string("'") + PLANMILL_BINARY + "' diagnose " + args + " > '" +
                                out.string() + "' 2> '" + err.string() + "'";
    const int raw = std::system(command.c_str());
    return {WIFEXITED(raw) ? WEXITSTATUS(raw) : -1, slurp(out), slurp(err)};
  }

  // Long CSV of the given observables (all with the same chains and draws), chains labelled.
  fs::path write_traces(const std::vector<testing::Draws>& observables) const {
    const auto path = dir_ / "traces.csv";
    std::ofstream csv(path);
    csv << "chain,draw";
    for (const auto& q : observables) csv << ',' << q.name;
    csv << '\n';
    const auto& first = observables.front();
    char number[40];
    for (std::size_t c = 0; c < first.chains; ++c) {
      for (std::size_t t = 0; t < first.draws; ++t) {
        csv << "run-" << char('a' + c) << ',' << 10 * t;
        for (const auto& q : observables) {
          std::snprintf(number, sizeof number, "%.17g", q.values[c * q.draws + t]);
          csv << ',' << number;
        }
        csv << '\n';
      }
    }
    return path;
  }

  static std::string data(const std::string& name) {
    return std::string(PLANMILL_TEST_DATA_DIR) + "/diagnose/" + name;
  }

  fs::path dir_;
};

TEST_F(DiagnoseCli, WellMixedTracesPassAndJsonMatchesLibrary) {
  const auto a = testing::ar1("cut_edges", 400, 4, 0.0, 31);
  const auto b = testing::seats("seats_a", 400, 4, 0.0, 32);
  const auto traces = write_traces({a, b});
  const auto json_path = dir_ / "out.json";
  const Outcome o = run("--traces '" + traces.string() + "' --json '" + json_path.string() + "'");
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  EXPECT_NE(o.out.find("verdict: pass"), std::string::npos) << o.out;

  const auto json = nlohmann::json::parse(slurp(json_path));
  EXPECT_EQ(json["verdict"], "pass");
  ASSERT_EQ(json["observables"].size(), 2U);
  for (const auto& q : json["observables"]) {
    const auto& source = q["observable"] == "cut_edges" ? a : b;
    const auto expected = diagnose_observable(source.name, source.matrix());
    // The CSV carries 17 significant digits, so the numbers agree to rounding.
    EXPECT_EQ(q["judged"], "pass");
    EXPECT_NEAR(q["mixing"]["rhat"].get<double>(), expected.rhat, 1e-12);
    EXPECT_NEAR(q["mixing"]["ess_bulk"].get<double>(), expected.ess_bulk, 1e-9 * expected.ess_bulk);
    EXPECT_NEAR(q["mixing"]["ess_tail"].get<double>(), expected.ess_tail, 1e-9 * expected.ess_tail);
    EXPECT_NEAR(q["summary"]["mcse_mean"].get<double>(), expected.mcse_mean, 1e-9 * expected.mcse_mean);
  }
  for (const auto& entry : fs::directory_iterator(dir_)) {
    EXPECT_EQ(entry.path().string().find(".tmp."), std::string::npos) << "temp file left behind";
  }
}

TEST_F(DiagnoseCli, ChainsWithDifferentMeansFailWithExitThree) {
  const auto stuck = testing::ar1("districts_split", 400, 4, 0.5, 33, 1.0);
  const auto fine = testing::ar1("cut_edges", 400, 4, 0.0, 34);
  const Outcome o = run("--traces '" + write_traces({fine, stuck}).string() + "'");
  EXPECT_EQ(o.status, 3) << o.out << o.err;
  EXPECT_NE(o.out.find("verdict: fail"), std::string::npos) << o.out;
  // Worst first: the stuck observable is the first row of the table, and it fails.
  const auto table_start = o.out.find('\n', o.out.find("\njudged ") + 1) + 1;
  EXPECT_EQ(o.out.compare(table_start, 23, "fail    districts_split"), 0) << o.out;
  EXPECT_NE(o.out.find("tempering"), std::string::npos) << o.out;
}

TEST_F(DiagnoseCli, StricterThresholdsTurnPassIntoFail) {
  const auto a = testing::ar1("cut_edges", 400, 4, 0.0, 35);
  const auto traces = write_traces({a}).string();
  EXPECT_EQ(run("--traces '" + traces + "'").status, 0);
  EXPECT_EQ(run("--traces '" + traces + "' --ess-min 5000").status, 3);
  // Dropped records: 100 of 400 left, the ESS falls below 1000.
  EXPECT_EQ(run("--traces '" + traces + "' --drop-records 300 --ess-min 1000").status, 3);
  const Outcome all = run("--traces '" + traces + "' --drop-records 400");
  EXPECT_EQ(all.status, 2) << all.out << all.err;
  EXPECT_NE(all.err.find("--drop-records"), std::string::npos) << all.err;
  // The former --burn-in counted records while the job's burn_in counts steps: it now says so.
  const Outcome renamed = run("--traces '" + traces + "' --burn-in 300");
  EXPECT_EQ(renamed.status, 2) << renamed.out << renamed.err;
  EXPECT_NE(renamed.err.find("is now --drop-records"), std::string::npos) << renamed.err;
}

TEST_F(DiagnoseCli, UnequalChainLengthsNameFileAndLine) {
  const Outcome o = run("--traces '" + data("unequal_chains.csv") + "'");
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("unequal_chains.csv:8:"), std::string::npos) << o.err;
  EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << "one-line error: " << o.err;
}

TEST_F(DiagnoseCli, NonNumericCellNamesLineAndColumn) {
  const Outcome o = run("--traces '" + data("non_numeric.csv") + "'");
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("non_numeric.csv:5: 'seats_a'"), std::string::npos) << o.err;
}

TEST_F(DiagnoseCli, OtherBadInputExitsTwo) {
  EXPECT_EQ(run("--traces '" + data("draws_out_of_order.csv") + "'").status, 2);
  EXPECT_EQ(run("--traces '" + data("bad_header.csv") + "'").status, 2);
  const Outcome missing = run("--traces '" + (dir_ / "absent.csv").string() + "'");
  EXPECT_EQ(missing.status, 2);
  EXPECT_NE(missing.err.find("absent.csv"), std::string::npos) << missing.err;
}

// The stopping rule (stopping_rule.hpp) through the CLI: chains that drift apart in the last
// quarter pass on the whole record but fail on the later half, and the verdict line says which.
TEST_F(DiagnoseCli, TheVerdictLineNamesThePartOfTheStoppingRuleThatFailed) {
  auto drift = testing::ar1("energy", 4000, 4, 0.0, 62);
  for (std::size_t c = 0; c < 4; ++c)
    for (std::size_t t = 3000; t < 4000; ++t) drift.values[c * 4000 + t] += c < 2 ? 0.25 : -0.25;
  const Outcome late = run("--traces '" + write_traces({drift}).string() + "'");
  EXPECT_EQ(late.status, 3) << late.out << late.err;
  EXPECT_NE(late.out.find("fail on the later half (records 2000..3999"), std::string::npos) << late.out;
  EXPECT_NE(late.out.find("the whole record passes"), std::string::npos) << late.out;

  const auto traces = write_traces({testing::ar1("cut_edges", 400, 4, 0.0, 35)}).string();
  EXPECT_EQ(run("--traces '" + traces + "' --min-records 400").status, 0);
  const Outcome short_run = run("--traces '" + traces + "' --min-records 401");
  EXPECT_EQ(short_run.status, 3);
  EXPECT_NE(short_run.out.find("verdict: fail (too short: 400 records per chain"), std::string::npos)
      << short_run.out;
}

// A folder without run-state.json is not a run folder: bad input, named in the message.
TEST_F(DiagnoseCli, FolderWithoutRunStateExitsTwo) {
  const Outcome o = run("'" + dir_.string() + "'");
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("run-state.json"), std::string::npos) << o.err;
}

}  // namespace
}  // namespace planmill::diagnose
