// planmill pick and compare --keep end to end on a small synth run: the picks against an
// independent numpy/h5py recomputation (tests/pick/pick_reference.py), the filters' counts, the
// caution in every output, and bad aims, filters and output folders refused with exit 2.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "command_output.hpp"
#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

using test::split_csv_line;

class PickCli : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(test::scratch_dir("planmill-pick-cli", std::to_string(::getpid())));
    test::run_and_export(*dir_, "chains = 2\nsteps = 300\nseed = 11", "--every 1 --plan-layout matrix");
  }
  static void TearDownTestSuite() {
    fs::remove_all(*dir_);
    delete dir_;
  }
  static std::string bin() { return PLANMILL_BINARY; }
  static std::string run() { return (*dir_ / "run").string(); }
  static int command(const std::string& args) {
    return test::shell(bin() + " " + args + " >" + (*dir_ / "out").string() + " 2>" + (*dir_ / "err").string());
  }
  static std::string out() { return test::read_text(*dir_ / "out"); }
  static std::string err() { return test::read_text(*dir_ / "err"); }
  // The median of an exported observable: a threshold that removes records but not all.
  static std::string median(const std::string& name) {
    std::ifstream in(*dir_ / "csv" / "observables.csv");
    std::string line;
    std::getline(in, line);
    const auto header = split_csv_line(line);
    const auto col = static_cast<std::size_t>(std::find(header.begin(), header.end(), name) - header.begin());
    std::vector<double> values;
    while (std::getline(in, line)) values.push_back(std::stod(split_csv_line(line).at(col)));
    std::nth_element(values.begin(), values.begin() + static_cast<std::ptrdiff_t>(values.size() / 2), values.end());
    std::ostringstream text;
    text << values[values.size() / 2];
    return text.str();
  }
  static fs::path* dir_;
};
fs::path* PickCli::dir_ = nullptr;

TEST_F(PickCli, PicksEqualNumpysLexsortOverTheExportedObservables) {
  const std::vector<std::string> aims{"fewest:splits.counties_split", "most:compactness.polsby_popper_mean"};
  const std::vector<std::string> keep{"compactness.cut_edges <= " + median("compactness.cut_edges"),
                                      "population_deviation < " + median("population_deviation")};
  const fs::path picks = *dir_ / "picks";
  std::string args = "pick " + run() + " --count 6 --out " + picks.string();
  for (const auto& a : aims) args += " --aim " + a;
  for (const auto& k : keep) args += " --keep '" + k + "'";
  const int status = command(args);
  ASSERT_TRUE(status == 0 || status == 3) << status << err();
  EXPECT_NE(out().find("6 distinct plans picked"), std::string::npos) << out();
  std::string reference = "/usr/bin/python3 " PLANMILL_SOURCE_DIR "/tests/pick/pick_reference.py " + (*dir_ / "csv").string() +
                          " " + picks.string() + " 6";
  for (const auto& a : aims) reference += " " + a;
  reference += " --";
  for (const auto& k : keep) reference += " '" + k + "'";
  const std::string checked = test::command_output(reference + " 2>&1");
  EXPECT_EQ(checked.rfind("picks [", 0), 0u) << checked;
  EXPECT_EQ(checked.find("PROBLEM"), std::string::npos) << checked;
  // The filters did remove records (so their counts were tested), and not all of them.
  EXPECT_EQ(checked.find("removed [0,"), std::string::npos) << checked;
  for (const char* file : {"picks.csv", "summary.txt"})
    EXPECT_NE(test::read_text(picks / file).find("not a finding of intent"), std::string::npos) << file;
  EXPECT_NE(out().find("not a finding of intent"), std::string::npos);
}

// Records of the export with `name` above `limit`, and the fewest any chain keeps.
std::pair<std::size_t, std::size_t> count_above(const fs::path& csv, const std::string& name, double limit) {
  std::ifstream in(csv);
  std::string line;
  std::getline(in, line);
  const auto header = split_csv_line(line);
  const auto col = static_cast<std::size_t>(std::find(header.begin(), header.end(), name) - header.begin());
  std::size_t removed = 0;
  std::map<std::string, std::size_t> kept;
  while (std::getline(in, line)) {
    const auto cells = split_csv_line(line);
    if (std::stod(cells.at(col)) > limit) {
      ++removed;
    } else {
      ++kept[cells[0]];
    }
  }
  std::size_t fewest = SIZE_MAX;
  for (const auto& [chain, n] : kept) fewest = std::min(fewest, n);
  return {removed, kept.size() == 2 ? fewest : 0};
}

TEST_F(PickCli, CompareKeepSaysWhichFiltersItUsedInEveryOutput) {
  const fs::path one = *dir_ / "one";
  const int picked = command("pick " + run() + " --aim most:compactness.cut_edges --out " + one.string());
  ASSERT_TRUE(picked == 0 || picked == 3) << err();
  const std::string limit = median("compactness.cut_edges");
  const auto [removed, per_chain] = count_above(*dir_ / "csv" / "observables.csv", "compactness.cut_edges",
                                                std::stod(limit));
  ASSERT_GT(removed, 0u);
  ASSERT_GT(per_chain, 0u);
  const std::string filter = "compactness.cut_edges <= " + limit;
  const fs::path json = *dir_ / "k.json", csv = *dir_ / "k.csv";
  const int status = command("compare " + run() + " " + (one / "plan-1.csv").string() + " --keep '" + filter +
                             "' --json " + json.string() + " --csv " + csv.string());
  ASSERT_TRUE(status == 0 || status == 3) << status << err();
  const std::string counted = "'" + filter + "' removed " + std::to_string(removed) + " of 600";
  EXPECT_NE(out().find("filters (--keep): " + counted), std::string::npos) << out();
  EXPECT_NE(out().find(std::to_string(per_chain) + " records used per chain"), std::string::npos) << out();
  const auto j = nlohmann::json::parse(test::read_text(json));
  EXPECT_EQ(j["filters"]["applied"][0]["filter"], filter);
  EXPECT_EQ(j["filters"]["applied"][0]["removed"], removed);
  EXPECT_EQ(j["ensemble"]["records_used_per_chain"], per_chain);
  EXPECT_NE(j["caution"].get<std::string>().find("not a finding of intent"), std::string::npos);
  const std::string table = test::read_text(csv);
  EXPECT_EQ(table.rfind("# Caution: ", 0), 0u) << table.substr(0, 200);
  EXPECT_NE(table.find("\n# Filters (--keep): " + counted), std::string::npos) << table.substr(0, 400);
}

TEST_F(PickCli, BadAimsFiltersAndFoldersAreRefusedWithExit2) {
  const fs::path o = *dir_ / "bad";
  EXPECT_EQ(command("pick " + run() + " --aim most:no.such --out " + o.string()), 2);
  EXPECT_NE(err().find("no.such"), std::string::npos) << err();
  EXPECT_NE(err().find("compactness.cut_edges"), std::string::npos) << err();  // lists what is stored
  EXPECT_EQ(command("pick " + run() + " --aim best:compactness.cut_edges --out " + o.string()), 2);
  EXPECT_NE(err().find("best:compactness.cut_edges"), std::string::npos) << err();
  EXPECT_EQ(command("pick " + run() + " --aim most:compactness.cut_edges --keep 'no.such <= 3' --out " + o.string()), 2);
  EXPECT_NE(err().find("no.such"), std::string::npos) << err();
  EXPECT_EQ(command("pick " + run() + " --aim most:compactness.cut_edges --keep 'compactness.cut_edges ~ 3' --out " +
                    o.string()),
            2);
  EXPECT_NE(err().find("compactness.cut_edges ~ 3"), std::string::npos) << err();
  EXPECT_FALSE(fs::exists(o));
  const fs::path any = *dir_ / "any";
  const int picked = command("pick " + run() + " --aim fewest:compactness.cut_edges --out " + any.string());
  ASSERT_TRUE(picked == 0 || picked == 3) << err();
  EXPECT_EQ(command("compare " + run() + " " + (any / "plan-1.csv").string() + " --keep 'no.such >= 1'"), 2);
  EXPECT_NE(err().find("no.such"), std::string::npos) << err();
  EXPECT_NE(err().find("compactness.cut_edges"), std::string::npos) << err();

  fs::create_directories(o);
  std::ofstream(o / "keep-me.txt") << "x";
  EXPECT_EQ(command("pick " + run() + " --aim most:compactness.cut_edges --out " + o.string()), 2);
  EXPECT_NE(err().find("exists and is not empty"), std::string::npos) << err();
  EXPECT_TRUE(fs::exists(o / "keep-me.txt"));
  const int forced = command("pick " + run() + " --aim most:compactness.cut_edges --force --out " + o.string());
  EXPECT_TRUE(forced == 0 || forced == 3) << err();
  EXPECT_FALSE(fs::exists(o / "keep-me.txt"));
  EXPECT_TRUE(fs::exists(o / "plan-1.csv"));
}

}  // namespace
}  // namespace planmill
