#pragma once
// The density model of the invented state (model.cpp): the random streams of its parts, the
// places (cities and towns) and the group's clusters, and the density and group share they give.
// Private to src/synth.
#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "synth/geometry.hpp"

namespace planmill::synth {

// One stream per part of the model, so a change in one part leaves the others' draws alone.
enum StreamKey : std::uint64_t {
  kOutlineStream = 1,
  kCityStream,
  kTownStream,
  kRuralStream,
  kPopulationStream,
  kCountyStream,
  kGroupStream,
  kVoteStream,
  kNameStream,
  kGroupNoiseStream,
};

inline constexpr double kPeoplePerUnit = 1000.0;  // the state's mean population per unit
inline constexpr std::size_t kMaxCities = 6;      // the default state has 3 to 6

// Approximately standard normal: sum of 12 uniforms minus 6 (Irwin-Hall), common practice.
double standard_normal(Rng& rng);

// Rational bump: 1 at the centre, 1/4 at distance s, integrates to pi s^2 over the plane.
inline double bump(double dx, double dy, double s) {
  const double q = 1.0 + (dx * dx + dy * dy) / (s * s);
  return 1.0 / (q * q);
}

inline double distance_squared(double ax, double ay, double bx, double by) {
  return (ax - bx) * (ax - bx) + (ay - by) * (ay - by);
}

struct Place {
  double x = 0.0, y = 0.0;  // km
  double core_peak = 0.0, core_radius = 0.0;
  double suburb_peak = 0.0, suburb_radius = 0.0;
  double limit_radius = 0.0;  // units whose centre is closer belong to the municipality
  bool city = false;
  std::string name;
};

struct Cluster {
  double x = 0.0, y = 0.0, radius = 0.0, strength = 0.0;
};

std::vector<Place> make_places(const synth::Outline& outline, std::size_t units, std::size_t cities,
                               std::uint64_t seed);

struct StateModel {
  std::vector<Place> places;
  std::vector<Cluster> clusters;
  double rural_density = 0.0;  // people per km^2 before the rural noise
  synth::ValueNoise rural_noise;

  [[nodiscard]] double density(double x, double y) const {
    const double farm = rural_noise.at(x, y);
    double d = rural_density * (0.2 + 2.4 * farm * farm);
    for (const Place& p : places) {
      d += p.core_peak * bump(x - p.x, y - p.y, p.core_radius);
      if (p.suburb_radius > 0.0) d += p.suburb_peak * bump(x - p.x, y - p.y, p.suburb_radius);
    }
    return d;
  }
  [[nodiscard]] double group_share(double x, double y) const {
    double share = 0.025;
    for (const Cluster& c : clusters) share += c.strength * bump(x - c.x, y - c.y, c.radius);
    return std::min(share, 0.9);
  }
};

std::vector<Cluster> make_clusters(const std::vector<Place>& places, std::uint64_t seed);

}  // namespace planmill::synth
