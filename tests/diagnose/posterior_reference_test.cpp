// Pins every diagnostic to the R package posterior (Debian r-cran-posterior; the version is
// printed): the same matrices are written to a CSV, posterior computes rhat, ess_bulk, ess_tail,
// mcse_mean, mcse_quantile(0.05, 0.95), ess_mean and ess_quantile on them, and we require
// agreement to 1e-6 relative for R-hat and 1e-3 relative for ESS and MCSE.
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include "planmill/diagnose/ess_bulk.hpp"
#include "planmill/diagnose/ess_mean.hpp"
#include "planmill/diagnose/ess_quantile.hpp"
#include "planmill/diagnose/ess_tail.hpp"
#include "planmill/diagnose/mcse_mean.hpp"
#include "planmill/diagnose/mcse_quantile.hpp"
#include "planmill/diagnose/observable_diagnostics.hpp"
#include "planmill/diagnose/rhat.hpp"
#include "planmill/diagnose/rhat_bulk.hpp"
#include "planmill/diagnose/rhat_folded.hpp"
#include "synthetic_draws.hpp"

namespace planmill::diagnose {
namespace {

using testing::Draws;

Draws scaled(Draws d, double factor) {
  for (double& v : d.values) v *= factor;
  return d;
}

std::vector<Draws> reference_cases() {
  return {
      // Tiny values that vary: squares underflow a double, ranks do not.
      scaled(testing::ar1("tiny_1e-170", 1000, 4, 0.3, 28), 1e-170),
      testing::ar1("iid_normal", 1000, 4, 0.0, 11),
      testing::ar1("ar1_phi050", 1000, 4, 0.5, 12),
      testing::ar1("ar1_phi090", 2000, 4, 0.9, 13),
      testing::ar1("ar1_phi099", 4000, 4, 0.99, 14),  // long Geyer sequence: the FFT path
      testing::ar1("shifted_means", 500, 4, 0.3, 15, 0.4),
      testing::ar1("scale_differs", 500, 4, 0.0, 16, 0.0, 1.0),  // what folding is for
      testing::cauchy("heavy_tails", 800, 4, 17),
      testing::seats("seat_counts", 1000, 4, 0.7, 18),  // ties everywhere
      testing::seats("seat_counts_sticky", 600, 3, 0.97, 19),
      testing::ar1("odd_length_101", 101, 4, 0.2, 20),
      testing::ar1("odd_length_1001", 1001, 2, 0.6, 21),
      testing::ar1("one_chain", 500, 1, 0.4, 22),
      testing::ar1("short_6", 6, 4, 0.0, 23),
      testing::ar1("short_7", 7, 3, 0.0, 24),
      testing::ar1("many_chains", 200, 16, 0.5, 25),
      // Long Geyer sequences on split chains of 1,200 draws: some ESS here fit the shorter FFT
      // padding (2,048 points, lags up to 848), others run past it and are redone with the full
      // padding (4,096 points), so both paths meet posterior.
      testing::ar1("one_chain_phi095", 2400, 1, 0.95, 26),
      testing::ar1("one_chain_phi0999", 2400, 1, 0.999, 27),
  };
}

struct Reference {
  std::string version;
  std::map<std::string, std::map<std::string, double>> values;  // case -> column -> value
};

double parse_r_number(const std::string& cell) {
  if (cell == "NA" || cell == "NaN") return std::nan("");
  return std::strtod(cell.c_str(), nullptr);
}

Reference run_posterior(const std::vector<Draws>& cases) {
  const auto dir = std::filesystem::temp_directory_path() /
                   ("planmill_posterior_ref_" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  const auto in = dir / "draws.csv", out = dir / "posterior.csv";
  {
    std::ofstream csv(in);
    csv << "case,chain,draw,value\n";
    char number[40];
    for (const auto& d : cases) {
      for (std::size_t c = 0; c < d.chains; ++c) {
        for (std::size_t t = 0; t < d.draws; ++t) {
          std::snprintf(number, sizeof number, "%.17g", d.values[c * d.draws + t]);
          csv << d.name << ',' << c + 1 << ',' << t + 1 << ',' << number << '\n';
        }
      }
    }
  }
  const std::string script =
      std::string(PLANMILL_SOURCE_DIR) + "/tests/diagnose/posterior_reference.R";
  const std::string command =
      "Rscript '" + script + "' '" + in.string() + "' '" + out.string() + "'";
  const int status = std::system(command.c_str());
  Reference ref;
  if (status != 0) {
    ADD_FAILURE() << "Rscript with library(posterior) failed (" << status << "): " << command;
    return ref;
  }
  std::ifstream result(out);
  std::string line;
  std::getline(result, line);
  ref.version = line.substr(2);
  std::getline(result, line);
  std::vector<std::string> header;
  {
    std::stringstream s(line);
    for (std::string cell; std::getline(s, cell, ',');) header.push_back(cell);
  }
  while (std::getline(result, line)) {
    std::stringstream s(line);
    std::vector<std::string> cells;
    for (std::string cell; std::getline(s, cell, ',');) cells.push_back(cell);
    for (std::size_t i = 1; i < cells.size() && i < header.size(); ++i) {
      ref.values[cells[0]][header[i]] = parse_r_number(cells[i]);
    }
  }
  std::filesystem::remove_all(dir);
  return ref;
}

// posterior 1.4.0 returns NA from ess_tail, ess_quantile and mcse_quantile when the raw draws
// span less than .Machine$double.eps (its should_return_NA -> is_constant(x, tol), checked with
// Rscript -e 'posterior:::should_return_NA'), so draws near 1e-170 that vary get NA. The
// quantile indicators are 0/1 whatever the scale, and we compute them: for that case these
// values must be numbers equal to ours on the same draws at scale 1 (MCSE scaled back).
const char* const kTinyCase = "tiny_1e-170";
bool defined_here_only(const std::string& name, const std::string& what) {
  if (name != kTinyCase) return false;
  for (const char* k : {"ess_tail", "ess_q05", "ess_q95", "mcse_q05", "mcse_q95", "table ess_tail",
                        "table mcse_q05", "table mcse_q95"})
    if (what == k) return true;
  return false;
}

void expect_close(double ours, double theirs, double rel, const std::string& what) {
  if (std::isnan(theirs)) {
    EXPECT_TRUE(std::isnan(ours)) << what << ": posterior gives NA, we give " << ours;
    return;
  }
  ASSERT_FALSE(std::isnan(ours)) << what << ": we give NaN, posterior " << theirs;
  EXPECT_LE(std::abs(ours - theirs), rel * std::abs(theirs))
      << what << ": ours " << ours << " posterior " << theirs;
}

TEST(PosteriorReference, AllDiagnosticsAgreeWithPosterior) {
  const auto cases = reference_cases();
  const Reference ref = run_posterior(cases);
  ASSERT_EQ(ref.values.size(), cases.size());
  std::cout << "reference: R package " << ref.version << "\n";
  constexpr double kRhatTol = 1e-6, kEssTol = 1e-3;
  for (const auto& d : cases) {
    SCOPED_TRACE(d.name);
    auto r = ref.values.at(d.name);
    const DrawMatrix x = d.matrix();
    if (d.name == kTinyCase) {
      const Draws unit = testing::ar1("unit", 1000, 4, 0.3, 28);
      const DrawMatrix u = unit.matrix();
      for (const auto& [key, value] : std::map<std::string, double>{
               {"ess_tail", ess_tail(u).value}, {"ess_q05", ess_quantile(u, 0.05).value},
               {"ess_q95", ess_quantile(u, 0.95).value},
               {"mcse_q05", mcse_quantile(u, 0.05).value * 1e-170},
               {"mcse_q95", mcse_quantile(u, 0.95).value * 1e-170}}) {
        ASSERT_TRUE(defined_here_only(d.name, key));
        EXPECT_TRUE(std::isnan(r.at(key))) << key << ": posterior now defines it; drop the special case";
        r[key] = value;
      }
    }
    expect_close(rhat(x).value, r.at("rhat"), kRhatTol, "rhat");
    expect_close(rhat_bulk(x).value, r.at("rhat_bulk"), kRhatTol, "rhat_bulk");
    expect_close(rhat_folded(x).value, r.at("rhat_folded"), kRhatTol, "rhat_folded");
    expect_close(ess_bulk(x).value, r.at("ess_bulk"), kEssTol, "ess_bulk");
    expect_close(ess_tail(x).value, r.at("ess_tail"), kEssTol, "ess_tail");
    expect_close(ess_mean(x).value, r.at("ess_mean"), kEssTol, "ess_mean");
    expect_close(ess_quantile(x, 0.05).value, r.at("ess_q05"), kEssTol, "ess_q05");
    expect_close(ess_quantile(x, 0.95).value, r.at("ess_q95"), kEssTol, "ess_q95");
    expect_close(mcse_mean(x).value, r.at("mcse_mean"), kEssTol, "mcse_mean");
    expect_close(mcse_quantile(x, 0.05).value, r.at("mcse_q05"), kEssTol, "mcse_q05");
    expect_close(mcse_quantile(x, 0.95).value, r.at("mcse_q95"), kEssTol, "mcse_q95");

    // The one-pass table row must give the same numbers as the single functions.
    const ObservableDiagnostics q = diagnose_observable(d.name, x);
    expect_close(q.rhat, r.at("rhat"), kRhatTol, "table rhat");
    expect_close(q.ess_bulk, r.at("ess_bulk"), kEssTol, "table ess_bulk");
    expect_close(q.ess_tail, r.at("ess_tail"), kEssTol, "table ess_tail");
    expect_close(q.mcse_mean, r.at("mcse_mean"), kEssTol, "table mcse_mean");
    expect_close(q.mcse_q05, r.at("mcse_q05"), kEssTol, "table mcse_q05");
    expect_close(q.mcse_q95, r.at("mcse_q95"), kEssTol, "table mcse_q95");
  }
}

}  // namespace
}  // namespace planmill::diagnose
