#pragma once
// The steps every diagnostic is composed of, following Vehtari, Gelman, Simpson, Carpenter and
// Buerkner (2021), "Rank-normalization, folding, and localization", Bayesian Analysis 16(2), and
// the conventions of the R package posterior 1.4.0 so that results agree with it numerically.
// Equation numbers in comments are those of the published paper [from memory].
// Internal to src/diagnose.
#include <cstddef>
#include <cstdint>
#include <span>
#include <string_view>
#include <vector>

#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose::detail {

// An owned column-major matrix: split chains, normal scores, indicators.
struct Matrix {
  std::vector<double> values;
  std::size_t draws = 0;
  std::size_t chains = 0;
  [[nodiscard]] DrawMatrix view() const { return {values, draws, chains}; }
};

// Step 0, check: a reason why no diagnostic can be computed (bad shape, fewer than 4 draws per
// chain, a non-finite draw, all draws equal), or empty when the draws are usable.
[[nodiscard]] std::string_view unusable_reason(DrawMatrix x);

// Every step that builds a matrix comes in two forms: returning a fresh one, or filling `out`
// (reusing its storage, so a caller that keeps its matrices allocates nothing per observable).

// Step 1, split: chain m becomes chains 2m (first half) and 2m+1 (second half); for an odd number
// of draws the middle draw is dropped, as posterior does.
[[nodiscard]] Matrix split_chains(DrawMatrix x);
void split_chains(DrawMatrix x, Matrix& out);

// The draws sorted once and shared by every rank-based step: all draws ascending (for order
// statistics), and the draws kept by the split, ascending, with their split positions.
struct SortedDraws {
  static constexpr std::size_t kMaxDraws = 0xFFFFFFFFU;  // positions are 32-bit
  std::vector<double> values;
  std::vector<double> split_values;
  std::vector<std::uint32_t> split_pos;
  std::size_t split_draws = 0, split_chains = 0;
};
[[nodiscard]] SortedDraws sort_draws(DrawMatrix x);
void sort_draws(DrawMatrix x, SortedDraws& out);

// Step 2, rank-normalise (section 4.1): normal scores z = Phi^-1((r - 3/8) / (S + 1/4)) of the
// pooled average ranks r of the split draws, S their number, laid out as split_chains(x).
[[nodiscard]] Matrix bulk_scores(const SortedDraws& sorted);
void bulk_scores(const SortedDraws& sorted, Matrix& out);
// The same for the folded draws |x - median(x)| (median over all draws, before the split).
[[nodiscard]] Matrix folded_scores(const SortedDraws& sorted);
void folded_scores(const SortedDraws& sorted, Matrix& out);
// I{x <= q}, q the type-7 prob-quantile of all draws, laid out as split_chains(x); the second
// form takes split_chains(x) itself.
[[nodiscard]] Matrix indicator_at_quantile(DrawMatrix x, const SortedDraws& sorted, double prob);
void indicator_at_quantile(const Matrix& split, const SortedDraws& sorted, double prob,
                           Matrix& out);

// Order statistics with R's conventions: type-7 quantile, median as mean of the middle two.
[[nodiscard]] double quantile_type7(std::span<const double> ascending, double prob);
[[nodiscard]] double median(std::span<const double> ascending);

// Step 3: R-hat of a (split) matrix, eq. (1)-(4). NaN with a reason if constant.
[[nodiscard]] Estimate rhat_of(const Matrix& x);
// Step 3': ESS of a (split) matrix, eq. (5)-(11), with Geyer's initial monotone sequence.
[[nodiscard]] Estimate ess_of(const Matrix& x);
// mcse of the prob-quantile from its ESS and the sorted draws (posterior's .mcse_quantile).
[[nodiscard]] Estimate mcse_quantile_from(const SortedDraws& sorted, Estimate ess, double prob);

// Per-chain sums in double with eight partial sums (they overlap and vectorise; for these
// lengths the rounding stays far below the 1e-6 agreement with posterior).
[[nodiscard]] double sum_of(const double* v, std::size_t n);
[[nodiscard]] double squares_about(const double* v, std::size_t n, double mu);  // sum (v - mu)^2

// Mean and sample sd (n - 1) of all draws, accumulated in long double as R does.
[[nodiscard]] double pooled_mean(std::span<const double> v);
[[nodiscard]] double pooled_sd(std::span<const double> v);

}  // namespace planmill::diagnose::detail
