// planmill report end to end: a small synth run, its report without a plan (no manifest yet),
// then with a plan, the manifest and --figures, and a tempered run whose rules read a group column.
// Checks the sections, honest mixing words, self-containment, and that every standalone SVG parses
// as XML (Debian's /usr/bin/python3: xml.etree.ElementTree, an outside parser), and the
// figures' numbers against numpy.
#include <gtest/gtest.h>

#include <filesystem>
#include <regex>
#include <string>

#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + what.size())) ++n;
  return n;
}

// No reference leaves the file: no URL, no protocol-relative link, no script, no import, no url()
// but data: ones.
void expect_self_contained(const std::string& html) {
  for (const char* outside : {"http:", "https:", "//", "<script", "@import", "<link", "<img", "<iframe"})
    EXPECT_EQ(html.find(outside), std::string::npos) << outside;
  for (std::size_t at = html.find("url("); at != std::string::npos; at = html.find("url(", at + 4))
    EXPECT_EQ(html.compare(at, 9, "url(data:"), 0) << html.substr(at, 40);
}

void expect_sections(const std::string& html, const std::vector<std::string>& ids) {
  for (const auto& id : ids) EXPECT_NE(html.find("<section id=\"" + id + "\">"), std::string::npos) << id;
}

class ReportCli : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(test::scratch_dir("planmill-report-cli", std::to_string(::getpid())));
    test::run_and_export(*dir_, "chains = 2\nsteps = 240\nburn_in = 20\nseed = 4", "--plans 1:37");
  }
  static void TearDownTestSuite() {
    fs::remove_all(*dir_);
    delete dir_;
  }
  static std::string bin() { return PLANMILL_BINARY; }
  static std::string run() { return (*dir_ / "run").string(); }
  static int report(const std::string& args) {
    return test::shell(bin() + " report " + args + " >" + (*dir_ / "out").string() + " 2>&1");
  }
  static std::string out() { return test::read_text(*dir_ / "out"); }
  static fs::path* dir_;
};
fs::path* ReportCli::dir_ = nullptr;

TEST_F(ReportCli, WithoutAPlanOrManifestItSaysWhatWasRunAndHowTheChainsMix) {
  const fs::path html = *dir_ / "plain.html";
  const int status = report(run() + " --out " + html.string());
  ASSERT_TRUE(status == 0 || status == 3) << out();
  const std::string h = test::read_text(html);
  expect_sections(h, {"cautions", "run", "mixing", "maps"});
  EXPECT_EQ(h.find("<section id=\"plan\">"), std::string::npos);
  EXPECT_EQ(h.find("<section id=\"ladder\">"), std::string::npos);
  expect_self_contained(h);
  EXPECT_NE(h.find("The manifest is missing"), std::string::npos);
  EXPECT_NE(h.find("not a verdict on anyone&#39;s intent"), std::string::npos);
  EXPECT_NE(h.find("counsel"), std::string::npos);
  EXPECT_NE(h.find("not known in closed form"), std::string::npos);  // recombination, the default kernel
  EXPECT_NE(h.find("No rule or soft term of this run read group or vote columns"), std::string::npos);
  EXPECT_EQ(h.find("chains mixed"), std::string::npos);
  EXPECT_EQ(h.find("chains have mixed"), std::string::npos);
  if (status == 0)
    EXPECT_NE(h.find("No sign of poor mixing on the judged measures"), std::string::npos);
  else
    EXPECT_NE(h.find("The chains show signs of poor mixing, or too few records to tell"), std::string::npos);
  // A trace and an autocorrelation per judged observable, and the map of one ensemble plan.
  const std::size_t judged = count(h, "<tr><td>pass</td>") + count(h, "<tr><td>fail</td>");
  ASSERT_GT(judged, 0u);
  EXPECT_EQ(count(h, "<b>Trace of "), judged);
  EXPECT_EQ(count(h, "<b>Autocorrelation of "), judged);
  EXPECT_EQ(count(h, "<b>One ensemble plan: chain 0, record 219"), 1u);  // (240 - 20) records, the last
  EXPECT_NE(h.find("@page { size: A4;"), std::string::npos);
}

TEST_F(ReportCli, WithAPlanAManifestAndFiguresEveryFigureStandsAlone) {
  ASSERT_EQ(test::shell(bin() + " merge " + run() + " >/dev/null 2>&1"), 0);
  const fs::path html = *dir_ / "plan.html", figures = *dir_ / "figures";
  const std::string plan = (*dir_ / "csv" / "plans" / "chain-1-record-37.csv").string();
  const int status = report(run() + " --plan " + plan + " --out " + html.string() + " --figures " +
                            figures.string() + " --paper letter");
  ASSERT_TRUE(status == 0 || status == 3) << out();
  const std::string h = test::read_text(html);
  expect_sections(h, {"cautions", "run", "mixing", "plan", "maps"});
  expect_self_contained(h);
  EXPECT_NE(h.find("@page { size: letter;"), std::string::npos);
  EXPECT_NE(h.find("Plan files at merge"), std::string::npos);
  EXPECT_EQ(h.find("The manifest is missing"), std::string::npos);
  // merge's blind check passed (a job with no group rule), and the cautions say so.
  EXPECT_NE(h.find("found the very same plans, record for record"), std::string::npos);
  EXPECT_NE(h.find("<b>Ordered districts: election.gov.sorted_shares."), std::string::npos);
  EXPECT_NE(h.find("<b>Ordered districts: group.grp.sorted_shares."), std::string::npos);
  EXPECT_NE(h.find("<b>Distribution of compactness.cut_edges."), std::string::npos);
  EXPECT_NE(h.find("<b>The compared plan."), std::string::npos);
  // compare's summary: without [compare] declared, the overall statistic of each sorted vector.
  EXPECT_NE(h.find("election.gov.sorted_shares.sum_squared_departure: the plan&#39;s value"), std::string::npos)
      << "the summary is missing";

  // Every figure of the page is a file pair, and each SVG parses as XML.
  const std::size_t in_page = count(h, "<figure>");
  std::size_t svgs = 0;
  for (const auto& e : fs::directory_iterator(figures)) {
    if (e.path().extension() != ".svg") continue;
    ++svgs;
    fs::path csv = e.path();
    csv.replace_extension(".csv");
    EXPECT_TRUE(fs::exists(csv)) << csv;
    EXPECT_GT(fs::file_size(csv), 10u) << csv;
  }
  EXPECT_EQ(svgs, in_page);
  const std::string parse = "/usr/bin/python3 -c \"import glob, sys, xml.etree.ElementTree as E\n"
                            "files = glob.glob(sys.argv[1] + '/*.svg')\n"
                            "for f in files: assert E.parse(f).getroot().tag == '{http://www.w3.org/2000/svg}svg', f\n"
                            "print(len(files))\" " + figures.string() + " >" + (*dir_ / "py").string() + " 2>&1";
  EXPECT_EQ(test::shell(parse), 0) << test::read_text(*dir_ / "py");
  EXPECT_EQ(test::read_text(*dir_ / "py"), std::to_string(svgs) + "\n");
  // The figures' numbers against numpy on planmill export's observables.csv (every record of the
  // run; the report draws all 220 of each chain): the histogram's bar counts are np.histogram's on
  // the same edges (half-integers for whole-number cut edges, so the edges are exact), and every
  // trace point is the exported value of its chain and record.
  const std::string check =
      "/usr/bin/python3 -c \"import csv, sys, numpy as np\n"
      "obs = list(csv.DictReader(open(sys.argv[1] + '/observables.csv')))\n"
      "x = np.array([float(r['compactness.cut_edges']) for r in obs])\n"
      "bars = [r for r in csv.reader(open(sys.argv[2] + '/histogram-compactness.cut_edges.csv')) if r[0][0] != '#'][1:]\n"
      "edges = [float(b[0]) for b in bars] + [float(bars[-1][1])]\n"
      "counts, _ = np.histogram(x, bins=edges)\n"
      "assert list(counts) == [int(b[2]) for b in bars], (list(counts), bars)\n"
      "value = {(r['chain'], r['record']): float(r['compactness.cut_edges']) for r in obs}\n"
      "trace = list(csv.DictReader(open(sys.argv[2] + '/trace-compactness.cut_edges.csv')))\n"
      "assert len(trace) == 440 and all(value[(t['chain'], t['draw'])] == float(t['value']) for t in trace)\n"
      "print('ok')\" " + (*dir_ / "csv").string() + " " + figures.string() + " >" + (*dir_ / "np").string() + " 2>&1";
  EXPECT_EQ(test::shell(check), 0) << test::read_text(*dir_ / "np");
  // The ordered-district CSV: a header and one row per district (4).
  EXPECT_EQ(count(test::read_text(figures / "ordered-election.gov.sorted_shares.csv"), "\n"), 5u);
}

TEST_F(ReportCli, BadInputIsRefusedAndWritesNothing) {
  const fs::path html = *dir_ / "bad.html";
  EXPECT_EQ(report(run() + " --out " + html.string() + " --paper a5"), 2);
  EXPECT_NE(out().find("--paper"), std::string::npos) << out();
  EXPECT_EQ(report((*dir_ / "no-such-run").string() + " --out " + html.string()), 2);
  EXPECT_NE(out().find("is not a folder"), std::string::npos) << out();
  EXPECT_EQ(report(run() + " --plan " + (*dir_ / "state" / "units.csv").string() + " --out " + html.string()), 2);
  EXPECT_FALSE(fs::exists(html));
}

// A run that passes its (deliberately lax) verdict on two judged observables (2,000 records: cut
// edges' bulk ESS is about 5 per 100 records here, so 400 records sat at the bound of 20 and
// failed for some seeds; seeds 4, 5 and 6 all pass at 2,000): the pass is put as
// no sign of poor mixing on those, with what that cannot show, and only they get traces.
TEST(ReportCliPass, APassingVerdictIsWordedWithoutClaimingMore) {
  const fs::path dir = test::scratch_dir("planmill-report-cli-pass", std::to_string(::getpid()));
  const fs::path job = test::write_synth_job(
      dir,
      "chains = 2\nsteps = 2020\nburn_in = 20\nseed = 4\n[verdict]\nrhat_max = 1.2\ness_min = 20\n"
      "min_records = 100\njudge = [\"compactness.cut_edges\", \"population_deviation\"]\n");
  const std::string bin = PLANMILL_BINARY;
  ASSERT_EQ(test::shell(bin + " run " + job.string() + " --output " + (dir / "run").string() + " --quiet >/dev/null 2>&1"), 0);
  const fs::path html = dir / "p.html";
  ASSERT_EQ(test::shell(bin + " report " + (dir / "run").string() + " --out " + html.string() + " >" +
                        (dir / "out").string() + " 2>&1"),
            0)
      << test::read_text(dir / "out");
  const std::string h = test::read_text(html);
  EXPECT_NE(h.find("No sign of poor mixing on the judged measures: with 2000 records per chain, every judged "
                   "observable has R-hat below 1.2 and bulk and tail ESS above 20"),
            std::string::npos);
  EXPECT_NE(h.find("This cannot show that the chains visited every region of plans"), std::string::npos);
  EXPECT_EQ(h.find("chains mixed"), std::string::npos);
  EXPECT_EQ(h.find("converged"), std::string::npos);
  EXPECT_EQ(count(h, "<b>Trace of "), 2u);
  EXPECT_NE(h.find("<b>Trace of compactness.cut_edges."), std::string::npos);
  EXPECT_NE(h.find("<b>Trace of population_deviation."), std::string::npos);
  fs::remove_all(dir);
}

// A tempered flip run whose energy rewards group share: the ladder's section and the plain
// statement that the ensemble is not a race-blind baseline.
TEST(ReportCliTempered, ShowsTheLadderAndSaysTheRulesReadGroupColumns) {
  const fs::path dir = test::scratch_dir("planmill-report-cli-tempered", std::to_string(::getpid()));
  const fs::path job = test::write_synth_job(
      dir,
      "kernel = \"flip\"\nchains = 2\nsteps = 300\nburn_in = 60\nseed = 8\n"
      "[tempering]\nrungs = 3\nhottest_beta = 0.2\nswap_every = 5\n"
      "[[rules.group_share]]\ngroup = \"grp\"\nthreshold = 0.5\nweight = 0.5\n");
  const std::string bin = PLANMILL_BINARY;
  ASSERT_EQ(test::shell(bin + " run " + job.string() + " --output " + (dir / "run").string() + " --quiet >/dev/null 2>&1"), 0);
  // Without its geometry the report leaves out the maps only, and says why.
  fs::remove(dir / "state" / "units.geojson");
  const fs::path html = dir / "t.html";
  const int status = test::shell(bin + " report " + (dir / "run").string() + " --out " + html.string() + " >" +
                                 (dir / "out").string() + " 2>&1");
  EXPECT_NE(test::read_text(dir / "out").find("planmill: warning: no maps: "), std::string::npos)
      << test::read_text(dir / "out");
  ASSERT_TRUE(status == 0 || status == 3) << test::read_text(dir / "out");
  const std::string h = test::read_text(html);
  expect_sections(h, {"cautions", "run", "mixing", "ladder", "maps"});
  expect_self_contained(h);
  EXPECT_NE(h.find("<h3>Ladder 0</h3>"), std::string::npos);
  EXPECT_NE(h.find("<h3>Ladder 1</h3>"), std::string::npos);
  EXPECT_NE(h.find("Round trips (target to hottest and back)"), std::string::npos);
  // Two pairs of neighbouring rungs per ladder, each with its swaps counted.
  const std::regex swaps("<td>[0-9]+ of [0-9]+</td>");
  EXPECT_EQ(std::distance(std::sregex_iterator(h.begin(), h.end(), swaps), std::sregex_iterator()), 4);
  EXPECT_NE(h.find("This ensemble is NOT a race-blind or party-blind baseline"), std::string::npos);
  EXPECT_NE(h.find("group &#39;grp&#39;"), std::string::npos);
  EXPECT_NE(h.find("No map is drawn: "), std::string::npos);
  EXPECT_NE(h.find("units.geojson"), std::string::npos);
  EXPECT_EQ(h.find("<b>One ensemble plan"), std::string::npos);
  EXPECT_NE(h.find("Boundary flip: a Metropolis-Hastings chain whose target is proportional to exp(-beta E(P))"),
            std::string::npos);
  fs::remove_all(dir);
}

}  // namespace
}  // namespace planmill
