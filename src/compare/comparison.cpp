#include "planmill/compare/comparison.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "planmill/diagnose/ess_mean.hpp"
#include "planmill/diagnose/ess_tail.hpp"
#include "planmill/diagnose/mcse_quantile.hpp"

namespace planmill::compare {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

double mcse_of_share(double share, double ess) {
  return std::sqrt(share * (1.0 - share) / ess);
}

// Finite draws kept by chain, so that the MCSE sees the chains; NaN draws are dropped (a chain
// then becomes shorter, and the matrix is cut to the shortest chain's count).
diagnose::DrawMatrix finite_matrix(const ScalarTable& t, std::vector<double>& buffer) {
  std::size_t shortest = t.draws;
  for (std::size_t c = 0; c < t.chains; ++c) {
    std::size_t n = 0;
    for (std::size_t d = 0; d < t.draws; ++d) n += std::isnan(t.values[c * t.draws + d]) ? 0 : 1;
    shortest = std::min(shortest, n);
  }
  buffer.clear();
  buffer.reserve(shortest * t.chains);
  for (std::size_t c = 0; c < t.chains; ++c) {
    std::size_t n = 0;
    for (std::size_t d = 0; d < t.draws && n < shortest; ++d) {
      const double v = t.values[c * t.draws + d];
      if (std::isnan(v)) continue;
      buffer.push_back(v);
      ++n;
    }
  }
  return {buffer, shortest, t.chains};
}

}  // namespace

Percentiles percentiles_type7(std::span<double> values) {
  Percentiles out;
  out.fill(kNaN);
  const std::size_t n = values.size();
  if (n == 0) return out;
  // The probabilities rise, so each order statistic is found in what is left above the last one.
  std::size_t done = 0;  // values[0, done) are all <= values[done, n)
  for (std::size_t i = 0; i < kPercentileProbs.size(); ++i) {
    const double h = static_cast<double>(n - 1) * kPercentileProbs[i];
    const auto lo = static_cast<std::size_t>(std::floor(h));
    std::nth_element(values.begin() + static_cast<std::ptrdiff_t>(done),
                     values.begin() + static_cast<std::ptrdiff_t>(lo), values.end());
    const double x_lo = values[lo];
    double x_hi = x_lo;
    if (lo + 1 < n && h > static_cast<double>(lo))
      x_hi = *std::min_element(values.begin() + static_cast<std::ptrdiff_t>(lo) + 1, values.end());
    out[i] = x_lo + (h - static_cast<double>(lo)) * (x_hi - x_lo);
    done = lo;
  }
  return out;
}

double sum_squared_departure(std::span<const double> x, std::span<const double> mean) noexcept {
  double sum = 0.0;
  for (std::size_t j = 0; j < x.size(); ++j) {
    const double d = x[j] - mean[j];
    sum += d * d;
  }
  return sum;
}

ScalarComparison compare_scalar(const ScalarTable& t, double plan) {
  if (t.values.size() != t.draws * t.chains)
    throw std::invalid_argument("compare_scalar: " + t.name + ": values are not draws x chains");
  ScalarComparison r;
  r.name = t.name;
  r.plan = plan;
  std::size_t below = 0, equal = 0, above = 0;
  for (const double v : t.values) {
    if (std::isnan(v)) {
      ++r.missing;
    } else if (v < plan) {
      ++below;
    } else if (v == plan) {
      ++equal;
    } else {
      ++above;
    }
  }
  r.finite = below + equal + above;
  r.percentile_mcse.fill(kNaN);
  if (r.finite == 0 || std::isnan(plan)) {
    r.below = r.equal = r.above = r.beyond = r.ess = kNaN;
    r.mcse_below = r.mcse_equal = r.mcse_above = r.mcse_beyond = r.bound = kNaN;
    r.ess_source = r.finite == 0 ? "no draw is a number" : "the plan's value is not a number";
    r.percentiles.fill(kNaN);
    if (r.finite > 0) {
      std::vector<double> finite;
      for (const double v : t.values)
        if (!std::isnan(v)) finite.push_back(v);
      r.percentiles = percentiles_type7(finite);
    }
    return r;
  }
  const double n = static_cast<double>(r.finite);
  r.below = static_cast<double>(below) / n;
  r.equal = static_cast<double>(equal) / n;
  r.above = static_cast<double>(above) / n;
  r.tail = above <= below ? Tail::upper : Tail::lower;
  r.beyond = r.equal + (r.tail == Tail::upper ? r.above : r.below);

  // The indicator "at or beyond the plan's value" per chain, NaN draws counted as not beyond.
  std::vector<double> indicator(t.values.size());
  for (std::size_t i = 0; i < t.values.size(); ++i) {
    const double v = t.values[i];
    indicator[i] = !std::isnan(v) && (r.tail == Tail::upper ? v >= plan : v <= plan) ? 1.0 : 0.0;
  }
  const diagnose::Estimate ess = diagnose::ess_mean({indicator, t.draws, t.chains});
  std::vector<double> buffer;
  const diagnose::DrawMatrix finite = finite_matrix(t, buffer);
  r.beyond_every_draw = r.beyond == 0.0;
  if (ess.ok()) {
    r.ess = ess.value;
    r.ess_source = "indicator";
  } else if (r.beyond_every_draw) {
    // A constant indicator has no ESS of its own: the draws' tail ESS (posterior::ess_tail) stands in.
    const diagnose::Estimate tail = diagnose::ess_tail(finite);
    r.ess = tail.value;
    r.ess_source = tail.ok() ? "tail ESS of the draws (no draw at or beyond the plan)" : tail.reason;
  } else {
    r.ess = kNaN;
    r.ess_source = ess.reason;
  }
  r.mcse_below = mcse_of_share(r.below, r.ess);
  r.mcse_equal = mcse_of_share(r.equal, r.ess);
  r.mcse_above = mcse_of_share(r.above, r.ess);
  r.mcse_beyond = r.beyond_every_draw ? kNaN : mcse_of_share(r.beyond, r.ess);
  // The rule of three: with no event in ESS independent draws, the event's probability is below
  // about 3 / ESS at 95% confidence (Hanley and Lippman-Hand 1983, JAMA 249(13)).
  r.bound = r.beyond_every_draw && r.ess > 0.0 ? std::min(1.0, 3.0 / r.ess) : kNaN;

  std::vector<double> sorted(buffer);
  if (finite.draws * finite.chains < r.finite) {  // NaN cut some chains shorter: use every number
    sorted.clear();
    for (const double v : t.values)
      if (!std::isnan(v)) sorted.push_back(v);
  }
  r.percentiles = percentiles_type7(sorted);
  for (std::size_t i = 0; i < kPercentileProbs.size(); ++i)
    r.percentile_mcse[i] = diagnose::mcse_quantile(finite, kPercentileProbs[i]).value;
  return r;
}

VectorComparison compare_vector(const VectorTable& t, std::span<const double> plan) {
  const std::size_t k = t.positions, rows = t.draws * t.chains;
  if (t.values.size() != rows * k || plan.size() != k)
    throw std::invalid_argument("compare_vector: " + t.name + ": values are not draws x chains x positions");
  VectorComparison r;
  r.name = t.name;
  r.mean.assign(k, 0.0);
  std::vector<char> whole(rows, 1);  // rows without NaN
  std::size_t whole_rows = 0;
  for (std::size_t row = 0; row < rows; ++row) {
    const double* x = &t.values[row * k];
    for (std::size_t j = 0; j < k; ++j)
      if (std::isnan(x[j])) whole[row] = 0;
    if (!whole[row]) continue;
    ++whole_rows;
    for (std::size_t j = 0; j < k; ++j) r.mean[j] += x[j];
  }
  for (double& m : r.mean) m = whole_rows > 0 ? m / static_cast<double>(whole_rows) : kNaN;

  r.positions.resize(k);
  std::vector<double> column;
  column.reserve(rows);
  for (std::size_t j = 0; j < k; ++j) {
    PositionComparison& p = r.positions[j];
    p.plan = plan[j];
    column.clear();
    std::size_t below = 0, above = 0;
    for (std::size_t row = 0; row < rows; ++row) {
      const double v = t.values[row * k + j];
      if (std::isnan(v)) continue;
      column.push_back(v);
      below += v < p.plan ? 1 : 0;
      above += v > p.plan ? 1 : 0;
    }
    const double n = static_cast<double>(column.size());
    p.below = column.empty() ? kNaN : static_cast<double>(below) / n;
    p.above = column.empty() ? kNaN : static_cast<double>(above) / n;
    p.percentiles = percentiles_type7(column);
    p.outside95 = p.plan < p.percentiles[1] || p.plan > p.percentiles[5];
    p.outside99 = p.plan < p.percentiles[0] || p.plan > p.percentiles[6];
  }

  ScalarTable overall{r.name + ".sum_squared_departure", std::vector<double>(rows), t.draws, t.chains};
  for (std::size_t row = 0; row < rows; ++row) {
    overall.values[row] = whole[row] ? sum_squared_departure({&t.values[row * k], k}, r.mean) : kNaN;
  }
  r.overall = compare_scalar(overall, sum_squared_departure(plan, r.mean));
  return r;
}

}  // namespace planmill::compare
