#pragma once
// Deterministic synthetic draw matrices for the diagnose tests: iid normal, AR(1), shifted chain
// means, heavy tails, discrete values with ties. Seeded per (seed, chain) with planmill's PCG
// streams, so every platform produces the same draws.
#include <cmath>
#include <cstddef>
#include <numbers>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose::testing {

struct Draws {
  std::string name;
  std::size_t draws = 0, chains = 0;
  std::vector<double> values;  // column-major
  [[nodiscard]] DrawMatrix matrix() const { return {values, draws, chains}; }
};

// Standard normal by Box-Muller (portable, unlike std::normal_distribution).
inline double standard_normal(Rng& rng) {
  const double u1 = 1.0 - uniform01(rng), u2 = uniform01(rng);
  return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * std::numbers::pi * u2);
}

// x_t = phi x_{t-1} + e_t, e_t ~ N(0, 1), started from the stationary law N(0, 1/(1 - phi^2)).
// Chain c is shifted by shift * c and scaled by 1 + scale_step * c.
inline Draws ar1(std::string name, std::size_t draws, std::size_t chains, double phi,
                 std::uint64_t seed, double shift = 0.0, double scale_step = 0.0) {
  Draws d{std::move(name), draws, chains, std::vector<double>(draws * chains)};
  for (std::size_t c = 0; c < chains; ++c) {
    Rng rng = make_stream(seed, c);
    double x = standard_normal(rng) / std::sqrt(1.0 - phi * phi);
    const double scale = 1.0 + scale_step * static_cast<double>(c);
    for (std::size_t t = 0; t < draws; ++t) {
      if (t > 0) x = phi * x + standard_normal(rng);
      d.values[c * draws + t] = shift * static_cast<double>(c) + scale * x;
    }
  }
  return d;
}

// Student-t with 1 degree of freedom (Cauchy) iid draws: no mean, no variance.
inline Draws cauchy(std::string name, std::size_t draws, std::size_t chains, std::uint64_t seed) {
  Draws d{std::move(name), draws, chains, std::vector<double>(draws * chains)};
  for (std::size_t c = 0; c < chains; ++c) {
    Rng rng = make_stream(seed, c);
    for (std::size_t t = 0; t < draws; ++t) {
      d.values[c * draws + t] = std::tan(std::numbers::pi * (uniform01(rng) - 0.5));
    }
  }
  return d;
}

// Integer "seat counts": an AR(1) rounded onto a few values, so most draws are tied.
inline Draws seats(std::string name, std::size_t draws, std::size_t chains, double phi,
                   std::uint64_t seed) {
  Draws d = ar1(std::move(name), draws, chains, phi, seed);
  const double sd = 1.0 / std::sqrt(1.0 - phi * phi);
  for (double& v : d.values) v = std::round(7.0 + 1.5 * v / sd);
  return d;
}

}  // namespace planmill::diagnose::testing
