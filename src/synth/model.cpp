// Places and clusters of the density model (synth/model.hpp), drawn from their own streams.
// Only + - * / and sqrt touch the random draws (no exp, log or trig), so the output is the same
// on every IEEE-754 machine, not just on this one.
#include "synth/model.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <tuple>
#include <utility>

namespace planmill::synth {
namespace {

// A random point inside a random outline cell.
// Rejection from the bounding grid, bounded: after width * height misses, the j-th inside cell for
// a uniform j (still uniform over inside cells; the outline has at least one).
std::pair<double, double> random_inland_point(const synth::Outline& outline, Rng& rng) {
  const std::size_t cells = outline.width * outline.height;
  std::size_t cell = cells;
  for (std::size_t miss = 0; miss < cells && cell == cells; ++miss) {
    const std::uint32_t x = uniform_below(rng, static_cast<std::uint32_t>(outline.width));
    const std::uint32_t y = uniform_below(rng, static_cast<std::uint32_t>(outline.height));
    if (outline.inside[y * outline.width + x]) cell = y * outline.width + x;
  }
  if (cell == cells) {
    std::uint32_t j = uniform_below(rng, static_cast<std::uint32_t>(outline.cell_count));
    for (cell = 0; cell + 1 < cells; ++cell)
      if (outline.inside[cell] && j-- == 0) break;
  }
  const std::size_t x = cell % outline.width, y = cell / outline.width;
  return {(static_cast<double>(x) + 0.1 + 0.8 * uniform01(rng)) * synth::kCellKm,
          (static_cast<double>(y) + 0.1 + 0.8 * uniform01(rng)) * synth::kCellKm};
}

}  // namespace

double standard_normal(Rng& rng) {
  double sum = 0.0;
  for (int i = 0; i < 12; ++i) sum += uniform01(rng);
  return sum - 6.0;
}

std::vector<Place> make_places(const synth::Outline& outline, std::size_t units, std::size_t cities,
                               std::uint64_t seed) {
  const double people = kPeoplePerUnit * static_cast<double>(units);
  const double span = std::sqrt(static_cast<double>(outline.cell_count)) * synth::kCellKm;
  std::vector<Place> places;
  // Cities: a few, of Zipf-like sizes with noise, spread apart.
  Rng rng = make_stream(seed, kCityStream);
  const std::size_t city_count =
      cities != 0 ? cities : std::min<std::size_t>(kMaxCities, 3 + units / 3000);
  std::vector<double> weight(city_count);
  double weight_sum = 0.0;
  for (std::size_t i = 0; i < city_count; ++i) {
    weight[i] = (0.75 + 0.5 * uniform01(rng)) / static_cast<double>(i + 1);
    weight_sum += weight[i];
  }
  for (std::size_t i = 0; i < city_count; ++i) {
    Place city;
    city.city = true;
    double min_gap = 0.35 * span;
    // Finite: the gap shrinks by a fifth every 50 attempts and reaches 0 (underflow) within a few
    // hundred thousand, and every point is then far enough.
    for (int attempt = 0;; ++attempt) {
      if (attempt % 50 == 49) min_gap *= 0.8;
      std::tie(city.x, city.y) = random_inland_point(outline, rng);
      bool far = true;
      for (const Place& other : places) {
        far = far && distance_squared(city.x, city.y, other.x, other.y) >= min_gap * min_gap;
      }
      if (far) break;
    }
    const double mass = 0.72 * people * weight[i] / weight_sum;
    city.core_peak = 2500.0 + 3000.0 * uniform01(rng);
    city.core_radius = std::sqrt(0.6 * mass / (std::numbers::pi * city.core_peak));
    city.suburb_radius = (3.0 + 1.5 * uniform01(rng)) * city.core_radius;
    city.suburb_peak = 0.4 * mass / (std::numbers::pi * city.suburb_radius * city.suburb_radius);
    city.limit_radius = 1.5 * city.core_radius;
    places.push_back(city);
  }
  // Towns: many small places in the countryside and the outer suburbs.
  rng = make_stream(seed, kTownStream);
  const std::size_t town_count = std::max<std::size_t>(2, units / 160);
  const double town_people = 0.10 * people / static_cast<double>(town_count);
  for (std::size_t i = 0; i < town_count; ++i) {
    Place town;
    town.core_peak = 1200.0 + 800.0 * uniform01(rng);
    town.core_radius =
        std::sqrt(town_people * (0.4 + 1.2 * uniform01(rng)) / (std::numbers::pi * town.core_peak));
    town.limit_radius = 1.8 * town.core_radius;
    for (int attempt = 0; attempt < 200; ++attempt) {
      std::tie(town.x, town.y) = random_inland_point(outline, rng);
      bool clear = true;
      for (const Place& other : places) {
        const double gap =
            other.city ? 1.3 * other.limit_radius : 2.5 * (other.limit_radius + town.limit_radius);
        clear = clear && distance_squared(town.x, town.y, other.x, other.y) >= gap * gap;
      }
      if (clear) break;
    }
    places.push_back(town);
  }
  return places;
}

std::vector<Cluster> make_clusters(const std::vector<Place>& places, std::uint64_t seed) {
  Rng rng = make_stream(seed, kGroupStream);
  std::vector<Cluster> clusters;
  for (const Place& city : places) {
    if (!city.city) continue;
    const int count = uniform01(rng) < 0.6 ? 2 : 1;
    for (int i = 0; i < count; ++i) {
      // A point of the unit disc by rejection (each round hits with chance pi/4); bounded at 64
      // rounds, after which the centre is used (chance about 1e-43).
      double dx = 0.0, dy = 0.0;
      for (int round = 0; round < 64; ++round) {
        dx = 2.0 * uniform01(rng) - 1.0;
        dy = 2.0 * uniform01(rng) - 1.0;
        if (dx * dx + dy * dy <= 1.0) break;
        dx = dy = 0.0;
      }
      const double reach = 0.9 * city.core_radius;
      clusters.push_back({city.x + reach * dx, city.y + reach * dy,
                          (0.5 + 0.5 * uniform01(rng)) * city.core_radius,
                          0.55 + 0.3 * uniform01(rng)});
    }
  }
  return clusters;
}

}  // namespace planmill::synth
