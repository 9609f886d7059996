#include "diagnose/steps.hpp"

#include <algorithm>
#include <array>
#include <bit>
#include <boost/math/distributions/normal.hpp>
#include <boost/math/special_functions/beta.hpp>
#include <cfloat>
#include <cmath>
#include <cstring>
#include <limits>
#include <numeric>
#include <utility>

namespace planmill::diagnose::detail {
namespace {

using NoPromotion = boost::math::policies::policy<boost::math::policies::promote_double<false>>;

double normal_quantile(double p) {
  static const boost::math::normal_distribution<double, NoPromotion> standard;
  return boost::math::quantile(standard, p);
}

// posterior's should_return_NA on an intermediate matrix: non-finite, or range below DBL_EPSILON.
bool nearly_constant_or_nonfinite(std::span<const double> v) {
  double lo = v[0], hi = v[0];
  for (double x : v) {
    if (!std::isfinite(x)) return true;
    lo = std::min(lo, x);
    hi = std::max(hi, x);
  }
  return std::abs(hi - lo) < DBL_EPSILON;
}

// Sortable unsigned key of a finite double (-0 and +0 map to the same key: R ranks them as ties).
std::uint64_t sort_key(double x) {
  if (x == 0.0) x = 0.0;
  const auto bits = std::bit_cast<std::uint64_t>(x);
  return (bits >> 63) != 0U ? ~bits : bits | (std::uint64_t{1} << 63);
}

double value_of_key(std::uint64_t key) {
  return std::bit_cast<double>((key >> 63) != 0U ? key & ~(std::uint64_t{1} << 63) : ~key);
}

// Sorts key ascending, carrying payload along: LSD radix sort on 11-bit digits, all six digit
// histograms counted in one pass, digits that all keys share skipped. key2 and payload2 are
// scratch of the same size.
void radix_sort(std::vector<std::uint64_t>& key, std::vector<std::uint32_t>& payload,
                std::vector<std::uint64_t>& key2, std::vector<std::uint32_t>& payload2) {
  constexpr unsigned kBits = 8, kDigits = 8;  // 8 x 8 = 64
  constexpr std::size_t kBuckets = std::size_t{1} << kBits;
  const std::size_t n = key.size();
  if (n == 0) return;
  thread_local std::vector<std::uint32_t> count(kDigits * kBuckets);  // n < 2^32
  std::fill(count.begin(), count.end(), 0U);
  for (std::size_t i = 0; i < n; ++i) {
    const std::uint64_t k = key[i];
    for (unsigned d = 0; d < kDigits; ++d)
      ++count[d * kBuckets + ((k >> (d * kBits)) & (kBuckets - 1))];
  }
  for (unsigned d = 0; d < kDigits; ++d) {
    const unsigned shift = d * kBits;
    std::uint32_t* c = count.data() + d * kBuckets;
    if (c[(key[0] >> shift) & (kBuckets - 1)] == n) continue;
    std::uint32_t offset = 0;
    for (std::size_t b = 0; b < kBuckets; ++b) offset += std::exchange(c[b], offset);
    for (std::size_t i = 0; i < n; ++i) {
      const std::uint32_t slot = c[(key[i] >> shift) & (kBuckets - 1)]++;
      key2[slot] = key[i];
      payload2[slot] = payload[i];
    }
    key.swap(key2);
    payload.swap(payload2);
  }
}

// The normal score of a whole rank r depends only on r and S: a table per S, filled on first use
// of each rank and kept per thread (S doubles), serves every observable with the same draw count.
class ScoreTable {
 public:
  void reset(std::size_t s, double denominator) {
    if (s == size_) return;
    size_ = s;
    denominator_ = denominator;
    score_.assign(s, std::numeric_limits<double>::quiet_NaN());
  }
  double of_whole_rank(std::size_t i) {  // score of rank i + 1
    double& z = score_[i];
    if (std::isnan(z)) z = normal_quantile((static_cast<double>(i) + 1.0 - 0.375) / denominator_);
    return z;
  }

 private:
  std::size_t size_ = 0;
  double denominator_ = 0.0;
  std::vector<double> score_;
};

// Normal scores of values given in ascending order; ties share their average rank.
void scores_of_ascending(std::span<const double> ascending, std::span<const std::uint32_t> pos,
                         std::size_t draws, std::size_t chains, Matrix& z) {
  z.values.resize(draws * chains);
  z.draws = draws;
  z.chains = chains;
  const std::size_t s = ascending.size();
  const double denominator = static_cast<double>(s) - 2.0 * 0.375 + 1.0;  // S + 1/4
  thread_local ScoreTable table;
  table.reset(s, denominator);
  for (std::size_t i = 0; i < s;) {
    std::size_t j = i;
    while (j + 1 < s && ascending[j + 1] == ascending[i]) ++j;
    if (j == i) {
      z.values[pos[i]] = table.of_whole_rank(i);
      ++i;
      continue;
    }
    const double rank = 0.5 * static_cast<double>(i + j) + 1.0;  // average of ranks i+1..j+1
    const double score = normal_quantile((rank - 0.375) / denominator);
    for (std::size_t k = i; k <= j; ++k) z.values[pos[k]] = score;
    i = j + 1;
  }
}

// R's mean(): long double sum, then one refinement pass.
long double r_mean(std::span<const double> v) {
  const auto n = static_cast<long double>(v.size());
  long double s0 = 0.0L, s1 = 0.0L;
  std::size_t i = 0;
  for (; i + 2 <= v.size(); i += 2) {
    s0 += v[i];
    s1 += v[i + 1];
  }
  if (i < v.size()) s0 += v[i];
  const long double mean = (s0 + s1) / n;
  long double t0 = 0.0L, t1 = 0.0L;
  for (i = 0; i + 2 <= v.size(); i += 2) {
    t0 += v[i] - mean;
    t1 += v[i + 1] - mean;
  }
  if (i < v.size()) t0 += v[i] - mean;
  return mean + (t0 + t1) / n;
}

}  // namespace

std::string_view unusable_reason(DrawMatrix x) {
  if (!x.shape_matches()) return "draw matrix shape does not match its values";
  if (x.chains == 0) return "no chains";
  if (x.draws < 4) return "fewer than 4 draws per chain";
  if (x.values.size() >= SortedDraws::kMaxDraws) return "too many draws";
  bool all_equal = true;
  for (double v : x.values) {
    if (!std::isfinite(v)) return "a draw is not finite";
    all_equal = all_equal && v == x.values[0];
  }
  if (all_equal) return "all draws are equal";
  return {};
}

double sum_of(const double* v, std::size_t n) {
  constexpr std::size_t kParts = 8;
  std::array<double, kParts> part{};
  std::size_t i = 0;
  for (; i + kParts <= n; i += kParts) {
    for (std::size_t k = 0; k < kParts; ++k) part[k] += v[i + k];
  }
  double tail = 0.0;
  for (; i < n; ++i) tail += v[i];
  return ((part[0] + part[1]) + (part[2] + part[3])) + ((part[4] + part[5]) + (part[6] + part[7])) +
         tail;
}

double squares_about(const double* v, std::size_t n, double mu) {
  constexpr std::size_t kParts = 8;
  std::array<double, kParts> part{};
  std::size_t i = 0;
  for (; i + kParts <= n; i += kParts) {
    for (std::size_t k = 0; k < kParts; ++k) part[k] += (v[i + k] - mu) * (v[i + k] - mu);
  }
  double tail = 0.0;
  for (; i < n; ++i) tail += (v[i] - mu) * (v[i] - mu);
  return ((part[0] + part[1]) + (part[2] + part[3])) + ((part[4] + part[5]) + (part[6] + part[7])) +
         tail;
}

void split_chains(DrawMatrix x, Matrix& out) {
  const std::size_t half = x.draws / 2;
  out.values.resize(2 * half * x.chains);
  out.draws = half;
  out.chains = 2 * x.chains;
  for (std::size_t c = 0; c < x.chains; ++c) {
    const auto chain = x.chain(c);
    std::copy_n(chain.begin(), half,
                out.values.begin() + static_cast<std::ptrdiff_t>(2 * c * half));
    std::copy_n(chain.end() - static_cast<std::ptrdiff_t>(half), half,
                out.values.begin() + static_cast<std::ptrdiff_t>((2 * c + 1) * half));
  }
}

Matrix split_chains(DrawMatrix x) {
  Matrix out;
  split_chains(x, out);
  return out;
}

void sort_draws(DrawMatrix x, SortedDraws& s) {
  const std::size_t n = x.values.size(), half = x.draws / 2;
  s.split_draws = half;
  s.split_chains = 2 * x.chains;
  // Keys carry the draw's position in split_chains(x) (kDropped for a dropped middle draw), so
  // the sorted keys give values and positions without looking the draws up again.
  constexpr std::uint32_t kDropped = 0xFFFFFFFFU;
  thread_local std::vector<std::uint64_t> key, key2;
  thread_local std::vector<std::uint32_t> pos, pos2;
  key.resize(n);
  key2.resize(n);
  pos.resize(n);
  pos2.resize(n);
  for (std::size_t i = 0; i < n; ++i) key[i] = sort_key(x.values[i]);
  for (std::size_t c = 0; c < x.chains; ++c) {
    std::uint32_t* p = pos.data() + c * x.draws;
    const auto first = static_cast<std::uint32_t>(2 * c * half);
    const auto second = static_cast<std::uint32_t>((2 * c + 1) * half);
    for (std::size_t d = 0; d < half; ++d) p[d] = first + static_cast<std::uint32_t>(d);
    if (x.draws % 2 == 1) p[half] = kDropped;
    for (std::size_t d = 0; d < half; ++d) {
      p[x.draws - half + d] = second + static_cast<std::uint32_t>(d);
    }
  }
  radix_sort(key, pos, key2, pos2);
  s.values.resize(n);
  for (std::size_t i = 0; i < n; ++i) s.values[i] = value_of_key(key[i]);
  s.split_values.resize(half * s.split_chains);
  s.split_pos.resize(half * s.split_chains);
  for (std::size_t i = 0, k = 0; i < n; ++i) {
    if (pos[i] == kDropped) continue;
    s.split_values[k] = s.values[i];
    s.split_pos[k] = pos[i];
    ++k;
  }
}

SortedDraws sort_draws(DrawMatrix x) {
  SortedDraws s;
  sort_draws(x, s);
  return s;
}

void bulk_scores(const SortedDraws& sorted, Matrix& out) {
  scores_of_ascending(sorted.split_values, sorted.split_pos, sorted.split_draws,
                      sorted.split_chains, out);
}

Matrix bulk_scores(const SortedDraws& sorted) {
  Matrix out;
  bulk_scores(sorted, out);
  return out;
}

void folded_scores(const SortedDraws& sorted, Matrix& out) {
  // |x - m| falls to the left of the median and rises to its right, so merging the two sides
  // outward from m sorts the folded draws without a second sort.
  const double m = median(sorted.values);
  const auto& v = sorted.split_values;
  const std::size_t s = v.size();
  thread_local std::vector<double> folded;
  thread_local std::vector<std::uint32_t> pos;
  folded.resize(s);
  pos.resize(s);
  std::size_t right = static_cast<std::size_t>(std::lower_bound(v.begin(), v.end(), m) - v.begin());
  std::size_t left = right;  // next on the left is left - 1
  for (std::size_t k = 0; k < s; ++k) {
    const bool take_left =
        right == s || (left > 0 && std::abs(v[left - 1] - m) <= std::abs(v[right] - m));
    const std::size_t i = take_left ? --left : right++;
    folded[k] = std::abs(v[i] - m);
    pos[k] = sorted.split_pos[i];
  }
  scores_of_ascending(folded, pos, sorted.split_draws, sorted.split_chains, out);
}

Matrix folded_scores(const SortedDraws& sorted) {
  Matrix out;
  folded_scores(sorted, out);
  return out;
}

void indicator_at_quantile(const Matrix& split, const SortedDraws& sorted, double prob,
                           Matrix& out) {
  const std::size_t n = sorted.values.size();
  if (prob == 1.0) prob = (static_cast<double>(n) - 0.5) / static_cast<double>(n);  // posterior
  const double q = quantile_type7(sorted.values, prob);
  out.values.resize(split.values.size());
  out.draws = split.draws;
  out.chains = split.chains;
  for (std::size_t i = 0; i < split.values.size(); ++i) out.values[i] = split.values[i] <= q;
}

Matrix indicator_at_quantile(DrawMatrix x, const SortedDraws& sorted, double prob) {
  Matrix out;
  indicator_at_quantile(split_chains(x), sorted, prob, out);
  return out;
}

double quantile_type7(std::span<const double> ascending, double prob) {
  // R's quantile(type = 7): interpolate only between order statistics that differ.
  const std::size_t n = ascending.size();
  const double index = 1.0 + static_cast<double>(n - 1) * prob;
  const auto lo = static_cast<std::size_t>(std::floor(index));
  const auto hi = static_cast<std::size_t>(std::ceil(index));
  double q = ascending[lo - 1];
  if (index > static_cast<double>(lo) && ascending[hi - 1] != q) {
    const double h = index - static_cast<double>(lo);
    q = (1.0 - h) * q + h * ascending[hi - 1];
  }
  return q;
}

double median(std::span<const double> ascending) {
  const std::size_t n = ascending.size();
  if (n % 2 == 1) return ascending[n / 2];
  const std::array<double, 2> middle{ascending[n / 2 - 1], ascending[n / 2]};
  return static_cast<double>(r_mean(middle));
}

Estimate rhat_of(const Matrix& x) {
  if (nearly_constant_or_nonfinite(x.values)) return Estimate::nan("constant after transform");
  const std::size_t n = x.draws, m = x.chains;
  std::vector<double> chain_mean(m), chain_var(m);
  for (std::size_t c = 0; c < m; ++c) {
    const auto chain = x.view().chain(c);
    chain_mean[c] = sum_of(chain.data(), n) / static_cast<double>(n);
    chain_var[c] = squares_about(chain.data(), n, chain_mean[c]) /
                   static_cast<double>(n - 1);  // s_m^2, eq. (2)
  }
  const double grand = static_cast<double>(r_mean(chain_mean));
  long double between = 0.0L;
  for (double mu : chain_mean) between += (mu - grand) * (mu - grand);
  // B = n/(M-1) sum_m (mean_m - mean)^2, eq. (1); W = mean_m s_m^2, eq. (2).
  const double var_between = static_cast<double>(n) * static_cast<double>(between / (m - 1));
  const double var_within = static_cast<double>(r_mean(chain_var));
  // R-hat = sqrt(var+ / W), var+ = (n-1)/n W + B/n, eqs. (3)-(4), in posterior's arrangement.
  const double r =
      std::sqrt((var_between / var_within + static_cast<double>(n) - 1.0) / static_cast<double>(n));
  if (std::isnan(r)) return Estimate::nan("no variation within chains");
  return {r, {}};
}

Estimate mcse_quantile_from(const SortedDraws& sorted, Estimate ess, double prob) {
  if (!ess.ok()) return ess;
  // Beta(ess*p + 1, ess*(1-p) + 1) quantiles at Phi(-1), Phi(1), as posterior rounds them.
  const double alpha = ess.value * prob + 1.0, beta = ess.value * (1.0 - prob) + 1.0;
  double a1 = 0.0, a2 = 0.0;
  try {
    a1 = boost::math::ibeta_inv(alpha, beta, 0.1586553);
    a2 = boost::math::ibeta_inv(alpha, beta, 0.8413447);
  } catch (const std::exception&) {
    return Estimate::nan("beta quantile failed");
  }
  const std::size_t s = sorted.values.size();
  const auto i1 = std::max<std::size_t>(static_cast<std::size_t>(std::floor(a1 * double(s))), 1);
  const auto i2 = std::min<std::size_t>(static_cast<std::size_t>(std::ceil(a2 * double(s))), s);
  return {(sorted.values[i2 - 1] - sorted.values[i1 - 1]) / 2.0, {}};
}

double pooled_mean(std::span<const double> v) { return static_cast<double>(r_mean(v)); }

double pooled_sd(std::span<const double> v) {
  const long double mu = r_mean(v);
  long double s0 = 0.0L, s1 = 0.0L;
  std::size_t i = 0;
  for (; i + 2 <= v.size(); i += 2) {
    s0 += (v[i] - mu) * (v[i] - mu);
    s1 += (v[i + 1] - mu) * (v[i + 1] - mu);
  }
  if (i < v.size()) s0 += (v[i] - mu) * (v[i] - mu);
  const long double squares = s0 + s1;
  // The root in long double: squares of values near 1e-170 underflow a double to 0.
  return static_cast<double>(std::sqrt(squares / static_cast<long double>(v.size() - 1)));
}

}  // namespace planmill::diagnose::detail
