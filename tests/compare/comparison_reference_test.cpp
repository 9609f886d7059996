// Reference checks of the comparison core on random autocorrelated draws with ties:
//  - shares below / equal / above and the type-7 percentiles against numpy (Debian python3-numpy
//    via /usr/bin/python3): np.percentile(x, q, method="linear"), numpy's default, which is R's
//    quantile type 7 (Hyndman and Fan 1996);
//  - the ESS of the indicator "draw at or beyond the plan" and the percentile MCSE against the R
//    package posterior (Debian r-cran-posterior): posterior::ess_mean of the 0/1 indicator matrix
//    and posterior::mcse_quantile of the draws; the share MCSE is sqrt(s (1 - s) / ESS), the
//    binomial standard error with ESS in place of n (common practice).
#include <gtest/gtest.h>
#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "planmill/compare/comparison.hpp"

namespace planmill::compare {
namespace {

namespace fs = std::filesystem;

const char* const kNumpy = R"PY(
import sys
import numpy as np
x = np.loadtxt(sys.argv[1], delimiter=",", skiprows=1).ravel()
plan = float(sys.argv[2])
q = np.percentile(x, [0.5, 2.5, 25, 50, 75, 97.5, 99.5], method="linear")
n = x.size
shares = [(x < plan).sum() / n, (x == plan).sum() / n, (x > plan).sum() / n]
print(",".join("%.17g" % v for v in list(shares) + list(q)))
)PY";

const char* const kPosterior = R"R(
suppressPackageStartupMessages(library(posterior))
args <- commandArgs(trailingOnly = TRUE)
x <- as.matrix(read.csv(args[1]))
plan <- as.numeric(args[2])
upper <- sum(x > plan) <= sum(x < plan)
ind <- if (upper) (x >= plan) * 1.0 else (x <= plan) * 1.0
v <- c(ess_mean(ind), mcse_quantile(x, probs = c(0.005, 0.025, 0.25, 0.5, 0.75, 0.975, 0.995)))
cat(paste(sprintf("%.17g", v), collapse = ","), "\n")
)R";

struct Case {
  ScalarTable table;
  double plan;
};

// AR(1) chains rounded to 0.05 so that ties occur.
ScalarTable ar1_draws(std::uint64_t seed, std::size_t draws, std::size_t chains, double rho) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> z;
  ScalarTable t{"x", std::vector<double>(draws * chains), draws, chains};
  for (std::size_t c = 0; c < chains; ++c) {
    double v = z(rng);
    for (std::size_t d = 0; d < draws; ++d) {
      v = rho * v + std::sqrt(1 - rho * rho) * z(rng);
      t.values[c * draws + d] = std::round(v * 20.0) / 20.0;
    }
  }
  return t;
}

std::vector<double> run_script(const fs::path& dir, const std::string& program, const char* script,
                               const char* suffix, const std::string& draws_csv, double plan) {
  const fs::path file = dir / (std::string("script") + suffix);
  std::ofstream(file) << script;
  char value[40];
  std::snprintf(value, sizeof value, "%.17g", plan);
  const std::string command = program + " '" + file.string() + "' '" + draws_csv + "' " + value;
  FILE* pipe = ::popen(command.c_str(), "r");
  std::string out;
  char buffer[4096];
  while (pipe && std::fgets(buffer, sizeof buffer, pipe)) out += buffer;
  const int status = pipe ? ::pclose(pipe) : -1;
  EXPECT_EQ(status, 0) << command;
  std::vector<double> values;
  std::stringstream s(out);
  for (std::string cell; std::getline(s, cell, ',');) values.push_back(std::strtod(cell.c_str(), nullptr));
  return values;
}

TEST(ComparisonReference, SharesPercentilesAndMcseMatchNumpyAndPosterior) {
  const fs::path dir = fs::temp_directory_path() / ("planmill_compare_ref_" + std::to_string(::getpid()));
  fs::create_directories(dir);
  std::vector<Case> cases;
  cases.push_back({ar1_draws(1, 500, 4, 0.8), 1.2});    // upper tail
  cases.push_back({ar1_draws(2, 300, 3, 0.5), -0.85});  // lower tail
  cases.push_back({ar1_draws(3, 1000, 4, 0.95), 0.0});  // the middle, on a tie
  cases.push_back({ar1_draws(4, 201, 2, 0.2), 2.1});    // far in the upper tail
  for (std::size_t i = 0; i < cases.size(); ++i) {
    const Case& k = cases[i];
    const fs::path csv = dir / ("draws" + std::to_string(i) + ".csv");
    {
      std::ofstream out(csv);
      for (std::size_t c = 0; c < k.table.chains; ++c) out << (c ? "," : "") << "c" << c + 1;
      out << "\n";
      char number[40];
      for (std::size_t d = 0; d < k.table.draws; ++d) {
        for (std::size_t c = 0; c < k.table.chains; ++c) {
          std::snprintf(number, sizeof number, "%.17g", k.table.values[c * k.table.draws + d]);
          out << (c ? "," : "") << number;
        }
        out << "\n";
      }
    }
    const ScalarComparison ours = compare_scalar(k.table, k.plan);
    const auto numpy = run_script(dir, "/usr/bin/python3", kNumpy, ".py", csv.string(), k.plan);
    const auto posterior = run_script(dir, "Rscript", kPosterior, ".R", csv.string(), k.plan);
    ASSERT_EQ(numpy.size(), 10u) << "case " << i;
    ASSERT_EQ(posterior.size(), 8u) << "case " << i;
    EXPECT_DOUBLE_EQ(ours.below, numpy[0]) << "case " << i;
    EXPECT_DOUBLE_EQ(ours.equal, numpy[1]) << "case " << i;
    EXPECT_DOUBLE_EQ(ours.above, numpy[2]) << "case " << i;
    EXPECT_GT(ours.equal + (i == 3 ? 1.0 : 0.0), 0.0) << "case " << i << " should sit on a tie";
    for (std::size_t p = 0; p < kPercentileProbs.size(); ++p) {
      EXPECT_NEAR(ours.percentiles[p], numpy[3 + p], 1e-12) << "case " << i << " percentile " << p;
      EXPECT_NEAR(ours.percentile_mcse[p], posterior[1 + p], 1e-9 * (1 + std::abs(posterior[1 + p])))
          << "case " << i << " mcse_quantile " << p;
    }
    EXPECT_EQ(ours.ess_source, "indicator") << "case " << i;
    EXPECT_NEAR(ours.ess, posterior[0], 1e-9 * posterior[0]) << "case " << i;
    EXPECT_NEAR(ours.mcse_beyond, std::sqrt(ours.beyond * (1 - ours.beyond) / posterior[0]), 1e-12)
        << "case " << i;
  }
  fs::remove_all(dir);
}

}  // namespace
}  // namespace planmill::compare
