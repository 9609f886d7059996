#include "planmill/measures/measures.hpp"

#include <algorithm>
#include <bit>
#include <cassert>
#include <charconv>
#include <cmath>
#include <limits>
#include <numbers>
#include <set>
#include <stdexcept>
#include <utility>

#include "planmill/io/number_text.hpp"

namespace planmill {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

bool ends_in_nan(std::span<const double> sorted) noexcept {
  return !sorted.empty() && std::isnan(sorted.back());
}

// The numbers before the NaNs sorted last (NaN is in no band and above no threshold).
std::span<const double> without_nan(std::span<const double> sorted) noexcept {
  std::size_t n = sorted.size();
  while (n > 0 && std::isnan(sorted[n - 1])) --n;
  return sorted.first(n);
}

double mean_of(std::span<const double> values) noexcept {
  double sum = 0.0;
  for (const double v : values) sum += v;
  return sum / static_cast<double>(values.size());
}

// First position whose share is above `x` / at least `x`.
std::size_t first_above(std::span<const double> sorted, double x) noexcept {
  return static_cast<std::size_t>(std::upper_bound(sorted.begin(), sorted.end(), x) - sorted.begin());
}
std::size_t first_at_least(std::span<const double> sorted, double x) noexcept {
  return static_cast<std::size_t>(std::lower_bound(sorted.begin(), sorted.end(), x) - sorted.begin());
}

bool same_bits(double x, double y) noexcept {
  return std::bit_cast<std::uint64_t>(x) == std::bit_cast<std::uint64_t>(y);
}

// A chain step changes few districts (recombination two): when at most this many shares differ
// from the last plan's, the sorted vector is mended in place instead of sorted again.
constexpr std::size_t kMendLimit = 8;

// `sorted` holds the values of `last` in ascending order, NaN last. Makes it hold those of `fresh`
// (and `last` a copy of `fresh`): by moving each changed value when few changed, else by sorting.
void update_sorted(std::span<double> sorted, std::span<double> last, std::span<const double> fresh,
                   bool have_last, ShareSorter& sorter) noexcept {
  const std::size_t k = sorted.size();
  std::size_t changed = 0;
  if (have_last)
    for (std::size_t d = 0; d < k && changed <= kMendLimit; ++d) changed += !same_bits(last[d], fresh[d]);
  if (!have_last || changed > kMendLimit) {
    std::copy(fresh.begin(), fresh.end(), sorted.begin());
    sorter.sort(sorted);
  } else {
    for (std::size_t d = 0; d < k; ++d) {
      if (same_bits(last[d], fresh[d])) continue;
      std::size_t numbers = without_nan(sorted).size();
      // Take the old value out (it is there: `sorted` holds the values of `last`)...
      const std::size_t from =
          std::isnan(last[d]) ? k - 1 : first_at_least(sorted.first(numbers), last[d]);
      std::copy(sorted.begin() + static_cast<std::ptrdiff_t>(from) + 1, sorted.end(),
                sorted.begin() + static_cast<std::ptrdiff_t>(from));
      if (!std::isnan(last[d])) --numbers;
      // ...and put the new one in its place among the k - 1 left.
      const std::size_t to =
          std::isnan(fresh[d]) ? k - 1 : first_above(sorted.first(numbers), fresh[d]);
      std::copy_backward(sorted.begin() + static_cast<std::ptrdiff_t>(to), sorted.end() - 1, sorted.end());
      sorted[to] = fresh[d];
    }
  }
  std::copy(fresh.begin(), fresh.end(), last.begin());
}

}  // namespace

Seats seats(std::span<const double> votes_a, std::span<const double> votes_b) noexcept {
  Seats s;
  for (std::size_t d = 0; d < votes_a.size(); ++d) {
    if (votes_a[d] > votes_b[d]) ++s.a;
    if (votes_b[d] > votes_a[d]) ++s.b;
  }
  return s;
}

double efficiency_gap(std::span<const double> votes_a, std::span<const double> votes_b) noexcept {
  double wasted_a = 0.0, wasted_b = 0.0, total = 0.0;
  for (std::size_t d = 0; d < votes_a.size(); ++d) {
    const double a = votes_a[d], b = votes_b[d], half = 0.5 * (a + b);
    total += a + b;
    if (a > b) {
      wasted_a += a - half;
      wasted_b += b;
    } else if (b > a) {
      wasted_a += a;
      wasted_b += b - half;
    } else {
      wasted_a += half;
      wasted_b += half;
    }
  }
  return total > 0.0 ? (wasted_b - wasted_a) / total : kNaN;
}

double vote_shares(std::span<const double> votes_a, std::span<const double> votes_b,
                   std::span<double> shares) noexcept {
  double sum_a = 0.0, sum = 0.0;
  for (std::size_t d = 0; d < votes_a.size(); ++d) {
    const double total = votes_a[d] + votes_b[d];
    shares[d] = total > 0.0 ? votes_a[d] / total : kNaN;
    sum_a += votes_a[d];
    sum += total;
  }
  return sum > 0.0 ? sum_a / sum : kNaN;
}

ShareSorter::ShareSorter(std::size_t capacity) : scratch_(capacity) {
  std::size_t buckets = 16;
  while (buckets < 2 * capacity) buckets *= 2;
  bucket_.assign(buckets + 1, 0);  // the last one for NaN
}

void ShareSorter::sort(std::span<double> shares) noexcept {
  assert(shares.size() <= scratch_.size());
  // Comparison sorts spent most of the evaluator's time on mispredicted comparisons. Shares lie in
  // [0, 1]: a counting pass over about 2 buckets per share puts them nearly in order, and an
  // insertion pass (few and predictable moves, exact for any input) finishes.
  const std::size_t buckets = bucket_.size() - 1;
  const auto scale = static_cast<double>(buckets);
  const auto bucket_of = [buckets, scale](double x) -> std::size_t {
    if (std::isnan(x)) return buckets;
    if (x >= 1.0) return buckets - 1;
    return x > 0.0 ? static_cast<std::size_t>(x * scale) : 0;
  };
  std::fill(bucket_.begin(), bucket_.end(), 0U);
  for (const double x : shares) ++bucket_[bucket_of(x)];
  std::uint32_t start = 0;
  for (std::uint32_t& b : bucket_) start += std::exchange(b, start);
  for (const double x : shares) scratch_[bucket_[bucket_of(x)]++] = x;
  const std::size_t numbers = shares.size() - (bucket_[buckets] - bucket_[buckets - 1]);
  for (std::size_t i = 0; i < shares.size(); ++i) {
    const double x = scratch_[i];
    std::size_t j = i;
    if (i < numbers)
      for (; j > 0 && shares[j - 1] > x; --j) shares[j] = shares[j - 1];
    shares[j] = x;
  }
}

double mean_median(std::span<const double> sorted) noexcept {
  if (sorted.empty() || ends_in_nan(sorted)) return kNaN;
  const std::size_t k = sorted.size();
  const double median = k % 2 == 1 ? sorted[k / 2] : 0.5 * (sorted[k / 2 - 1] + sorted[k / 2]);
  return median - mean_of(sorted);
}

double partisan_bias(std::span<const double> sorted, double statewide_share) noexcept {
  if (sorted.empty() || ends_in_nan(sorted) || std::isnan(statewide_share)) return kNaN;
  // After the swing s -> s + (1/2 - V), A holds the districts with s > V; s = V is a tie.
  const std::size_t above = sorted.size() - first_above(sorted, statewide_share);
  const std::size_t equal = first_above(sorted, statewide_share) - first_at_least(sorted, statewide_share);
  const double seats = static_cast<double>(above) + 0.5 * static_cast<double>(equal);
  return seats / static_cast<double>(sorted.size()) - 0.5;
}

double declination(std::span<const double> sorted) noexcept {
  if (ends_in_nan(sorted)) return kNaN;
  const std::size_t k_b = first_above(sorted, 0.5);  // shares <= 1/2: won by B
  const std::size_t k_a = sorted.size() - k_b;
  if (k_a == 0 || k_b == 0) return kNaN;
  const double k = static_cast<double>(sorted.size());
  const double mean_b = mean_of(sorted.first(k_b)), mean_a = mean_of(sorted.last(k_a));
  const double theta_a = std::atan((2.0 * mean_a - 1.0) * k / static_cast<double>(k_a));
  const double theta_b = std::atan((1.0 - 2.0 * mean_b) * k / static_cast<double>(k_b));
  return 2.0 * (theta_b - theta_a) / std::numbers::pi;
}

std::size_t count_within(std::span<const double> sorted, double low, double high) noexcept {
  sorted = without_nan(sorted);
  const std::size_t begin = first_at_least(sorted, low), end = first_above(sorted, high);
  return end > begin ? end - begin : 0;
}

std::size_t count_above(std::span<const double> sorted, double threshold) noexcept {
  sorted = without_nan(sorted);
  return sorted.size() - first_above(sorted, threshold);
}

double polsby_popper(double area, double perimeter) noexcept {
  return perimeter > 0.0 ? 4.0 * std::numbers::pi * area / (perimeter * perimeter) : kNaN;
}

MeasureSpec default_measure_spec(const UnitGraph& graph) {
  MeasureSpec spec;
  for (const Election& e : graph.elections())
    if (e.columns.size() == 2)
      spec.elections.push_back({e.name, e.parties[0], e.parties[1], e.columns[0], e.columns[1]});
  for (const std::size_t column : graph.group_columns())
    spec.groups.push_back({graph.count_column_name(column), column, std::nullopt, {0.5}});
  spec.county_splits = graph.has_counties();
  spec.municipality_splits = graph.has_municipalities();
  return spec;
}

MeasureEvaluator::MeasureEvaluator(GraphHandle graph, std::size_t district_count, MeasureSpec spec)
    : graph_(std::move(graph)), spec_(std::move(spec)), k_(district_count) {
  if (!graph_) throw std::invalid_argument("measures: no map");
  const UnitGraph& g = *graph_;
  if (k_ == 0) throw std::invalid_argument("measures: no districts");
  const auto check_column = [&g](std::size_t column, const std::string& what) {
    if (column >= g.count_column_count())
      throw std::invalid_argument("measures: " + what + " names count column " +
                                  std::to_string(column) + ", the map has " +
                                  std::to_string(g.count_column_count()));
  };
  if (!(spec_.competitive_low <= spec_.competitive_high))
    throw std::invalid_argument("measures: the competitive band [" + number_text(spec_.competitive_low) +
                                ", " + number_text(spec_.competitive_high) + "] is empty");
  for (const ElectionMeasureSpec& e : spec_.elections) {
    check_column(e.votes_a, "election " + e.name);
    check_column(e.votes_b, "election " + e.name);
    const std::string head = "election." + e.name + ".";
    scalar_names_.push_back(head + "seats." + e.party_a);
    scalar_names_.push_back(head + "seats." + e.party_b);
    for (const char* name :
         {"efficiency_gap", "mean_median", "partisan_bias", "declination", "competitive_districts"})
      scalar_names_.push_back(head + name);
    vector_names_.push_back(head + "sorted_shares");
  }
  for (const GroupMeasureSpec& group : spec_.groups) {
    check_column(group.column, "group " + group.name);
    if (group.denominator) check_column(*group.denominator, "group " + group.name + "'s denominator");
    for (const double t : group.thresholds) {
      if (std::isnan(t)) throw std::invalid_argument("measures: group " + group.name + " has a threshold that is not a number");
      scalar_names_.push_back("group." + group.name + ".districts_above_" + number_text(t));
    }
    vector_names_.push_back("group." + group.name + ".sorted_shares");
  }
  scalar_names_.insert(scalar_names_.end(), {"compactness.cut_edges", "compactness.polsby_popper_min",
                                             "compactness.polsby_popper_mean", "population.max_deviation",
                                             "population.overall_range"});
  if (spec_.county_splits) {
    if (!g.has_counties()) throw std::invalid_argument("measures: county splits asked for, the map has no counties");
    scalar_names_.insert(scalar_names_.end(), {"splits.counties_split", "splits.county_pieces"});
    own_counties_ = SplitTally(graph_, k_, g.counties());
  }
  if (spec_.municipality_splits) {
    if (!g.has_municipalities())
      throw std::invalid_argument("measures: municipality splits asked for, the map has no municipalities");
    scalar_names_.insert(scalar_names_.end(), {"splits.municipalities_split", "splits.municipality_pieces"});
    own_municipalities_ = SplitTally(graph_, k_, g.municipalities());
  }
  std::set<std::string> seen;
  for (const auto* names : {&scalar_names_, &vector_names_})
    for (const std::string& name : *names)
      if (!seen.insert(name).second)
        throw std::invalid_argument("measures: the output " + name + " is named twice; give each election and group its own name");
  has_geometry_ = g.has_areas() && g.has_outer_boundary() && g.has_edge_lengths();
  scalars_.assign(scalar_names_.size(), kNaN);
  vectors_.assign(vector_names_.size() * k_, kNaN);
  last_.assign(vectors_.size(), kNaN);
  fresh_.assign(k_, kNaN);
  votes_a_.assign(k_, 0.0);
  votes_b_.assign(k_, 0.0);
  sorter_ = ShareSorter(k_);
}

void MeasureEvaluator::evaluate(const Plan& plan, SplitSources splits) noexcept {
  assert(&plan.graph() == graph_.get() && plan.district_count() == k_);
  const auto k = static_cast<DistrictIndex>(k_);
  double* out = scalars_.data();
  std::size_t v = 0;
  for (const ElectionMeasureSpec& e : spec_.elections) {
    for (DistrictIndex d = 0; d < k; ++d) {
      votes_a_[d] = plan.count(d, e.votes_a);
      votes_b_[d] = plan.count(d, e.votes_b);
    }
    const std::span<double> shares(vectors_.data() + v * k_, k_);
    const double statewide = vote_shares(votes_a_, votes_b_, fresh_);
    update_sorted(shares, std::span<double>(last_.data() + v++ * k_, k_), fresh_, have_last_, sorter_);
    const Seats won = seats(votes_a_, votes_b_);
    *out++ = static_cast<double>(won.a);
    *out++ = static_cast<double>(won.b);
    *out++ = efficiency_gap(votes_a_, votes_b_);
    *out++ = mean_median(shares);
    *out++ = partisan_bias(shares, statewide);
    *out++ = declination(shares);
    *out++ = ends_in_nan(shares)
                 ? kNaN
                 : static_cast<double>(count_within(shares, spec_.competitive_low, spec_.competitive_high));
  }
  for (const GroupMeasureSpec& group : spec_.groups) {
    const std::span<double> shares(vectors_.data() + v * k_, k_);
    for (DistrictIndex d = 0; d < k; ++d) {
      const double of = group.denominator ? plan.count(d, *group.denominator)
                                          : static_cast<double>(plan.population(d));
      fresh_[d] = of > 0.0 ? plan.count(d, group.column) / of : kNaN;
    }
    update_sorted(shares, std::span<double>(last_.data() + v++ * k_, k_), fresh_, have_last_, sorter_);
    for (const double t : group.thresholds) *out++ = static_cast<double>(count_above(shares, t));
  }
  *out++ = static_cast<double>(plan.cut_edge_count());
  double pp_min = kNaN, pp_mean = kNaN;
  if (has_geometry_) {
    double sum = 0.0;
    pp_min = std::numeric_limits<double>::infinity();
    for (DistrictIndex d = 0; d < k; ++d) {
      const double pp = polsby_popper(plan.area(d), plan.perimeter(d));
      sum += pp;
      pp_min = std::min(pp_min, pp);  // NaN (an empty district) leaves the minimum alone...
    }
    pp_mean = sum / static_cast<double>(k_);
    if (std::isnan(pp_mean)) pp_min = kNaN;  // ...but not the plan's measures
  }
  *out++ = pp_min;
  *out++ = pp_mean;
  // Both over the ideal total / k: max |pop - ideal| and (largest - smallest).
  std::int64_t low = plan.population(0), high = low;
  for (DistrictIndex d = 1; d < k; ++d) {
    low = std::min(low, plan.population(d));
    high = std::max(high, plan.population(d));
  }
  const double ideal = plan.ideal_population();
  *out++ = plan.max_population_deviation();
  *out++ = ideal > 0 ? static_cast<double>(high - low) / ideal : kNaN;
  const auto put_splits = [&out, &plan](const SplitTally* given, SplitTally& own) {
    const SplitTally* tally = given;
    if (tally == nullptr || !tally->tracking()) {
      own.reset(plan);
      tally = &own;
    }
    *out++ = static_cast<double>(tally->split());
    *out++ = static_cast<double>(tally->pieces());
  };
  if (spec_.county_splits) put_splits(splits.counties, own_counties_);
  if (spec_.municipality_splits) put_splits(splits.municipalities, own_municipalities_);
  assert(out == scalars_.data() + scalars_.size());
  have_last_ = true;
}

}  // namespace planmill
