// Counties grown from spread seeds, and municipalities as the connected units near a place
// (synth/regions.hpp).
#include "synth/regions.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
#include <queue>
#include <utility>

namespace planmill::synth {

std::vector<std::vector<std::uint32_t>> neighbour_lists(std::size_t n,
                                                        const std::vector<synth::SharedEdge>& e) {
  std::vector<std::vector<std::uint32_t>> nbrs(n);
  for (const auto& edge : e) {
    nbrs[edge.a].push_back(edge.b);
    nbrs[edge.b].push_back(edge.a);
  }
  for (auto& list : nbrs) std::sort(list.begin(), list.end());
  return nbrs;
}

std::vector<std::uint32_t> make_counties(const std::vector<Rect>& rects,
                                         const std::vector<std::vector<std::uint32_t>>& nbrs,
                                         std::uint64_t seed, std::size_t* county_count) {
  const std::size_t n = rects.size();
  Rng rng = make_stream(seed, kCountyStream);
  const std::size_t count = std::max<std::size_t>(1, (n + 50) / 100);
  std::vector<double> target(count);
  double target_sum = 0.0;
  for (double& t : target) target_sum += (t = 60.0 + 90.0 * uniform01(rng));
  for (double& t : target) t *= static_cast<double>(n) / target_sum;

  // Best-candidate seeds; distance counted in unit widths so dense cities get more seeds.
  std::vector<std::uint32_t> seeds;
  std::vector<double> nearest(n, 1e300);
  for (std::size_t c = 0; c < count; ++c) {
    std::uint32_t best = 0;
    double best_score = -1.0;
    for (int candidate = 0; candidate < 12; ++candidate) {
      const std::uint32_t u = uniform_below(rng, static_cast<std::uint32_t>(n));
      const double score = nearest[u];
      if (score > best_score && std::find(seeds.begin(), seeds.end(), u) == seeds.end()) {
        best = u, best_score = score;
      }
    }
    if (best_score < 0.0) {  // every candidate was already a seed: take the first free unit
      while (std::find(seeds.begin(), seeds.end(), best) != seeds.end()) ++best;
    }
    seeds.push_back(best);
    const double sx = rects[best].centre_x_km(), sy = rects[best].centre_y_km();
    for (std::size_t u = 0; u < n; ++u) {
      const double width = std::sqrt(static_cast<double>(rects[u].area())) * synth::kKmPerStep;
      const double d = distance_squared(sx, sy, rects[u].centre_x_km(), rects[u].centre_y_km());
      nearest[u] = std::min(nearest[u], d / (width * width));
    }
  }

  constexpr std::uint32_t kUnassigned = 0xFFFFFFFFU;
  std::vector<std::uint32_t> county(n, kUnassigned);
  using Candidate = std::pair<double, std::uint32_t>;  // (distance^2 to seed, unit)
  std::vector<std::priority_queue<Candidate, std::vector<Candidate>, std::greater<>>> frontier(
      count);
  std::vector<std::size_t> size(count, 0);
  using Turn = std::pair<double, std::uint32_t>;  // (size / target, county)
  std::priority_queue<Turn, std::vector<Turn>, std::greater<>> turns;
  const auto offer = [&](std::uint32_t c, std::uint32_t u) {
    const Rect& s = rects[seeds[c]];
    frontier[c].push({distance_squared(s.centre_x_km(), s.centre_y_km(), rects[u].centre_x_km(),
                                       rects[u].centre_y_km()),
                      u});
  };
  const auto assign = [&](std::uint32_t c, std::uint32_t u) {
    county[u] = c;
    ++size[c];
    for (std::uint32_t v : nbrs[u]) {
      if (county[v] == kUnassigned) offer(c, v);
    }
  };
  for (std::uint32_t c = 0; c < count; ++c) assign(c, seeds[c]);
  for (std::uint32_t c = 0; c < count; ++c) turns.push({1.0 / target[c], c});
  while (!turns.empty()) {
    const std::uint32_t c = turns.top().second;
    turns.pop();
    while (!frontier[c].empty() && county[frontier[c].top().second] != kUnassigned) {
      frontier[c].pop();
    }
    if (frontier[c].empty()) continue;  // surrounded: this county is finished
    const std::uint32_t u = frontier[c].top().second;
    frontier[c].pop();
    assign(c, u);
    turns.push({static_cast<double>(size[c]) / target[c], c});
  }
  *county_count = count;
  return county;
}

std::vector<int> make_municipalities(const std::vector<Rect>& rects,
                                     const std::vector<std::vector<std::uint32_t>>& nbrs,
                                     const std::vector<Place>& places) {
  const std::size_t n = rects.size();
  std::vector<int> claim(n, -1);
  std::vector<double> closeness(n, 1.0);
  for (std::size_t p = 0; p < places.size(); ++p) {
    const double limit2 = places[p].limit_radius * places[p].limit_radius;
    for (std::size_t u = 0; u < n; ++u) {
      const double relative = distance_squared(places[p].x, places[p].y, rects[u].centre_x_km(),
                                               rects[u].centre_y_km()) /
                              limit2;
      if (relative < closeness[u]) closeness[u] = relative, claim[u] = static_cast<int>(p);
    }
  }
  std::vector<int> result(n, -1);
  std::vector<std::uint32_t> stack;
  for (std::size_t p = 0; p < places.size(); ++p) {
    const auto px = static_cast<std::int64_t>(places[p].x / synth::kKmPerStep);
    const auto py = static_cast<std::int64_t>(places[p].y / synth::kKmPerStep);
    std::uint32_t centre = 0;
    bool found = false;
    for (std::uint32_t u = 0; u < n && !found; ++u) {
      const Rect& r = rects[u];
      if (r.x0 <= px && px < r.x1 && r.y0 <= py && py < r.y1) centre = u, found = true;
    }
    if (!found || (claim[centre] != -1 && claim[centre] != static_cast<int>(p))) continue;
    const int label = static_cast<int>(p);
    result[centre] = label;
    stack.assign(1, centre);
    while (!stack.empty()) {
      const std::uint32_t u = stack.back();
      stack.pop_back();
      for (std::uint32_t v : nbrs[u]) {
        if (claim[v] == label && result[v] == -1) result[v] = label, stack.push_back(v);
      }
    }
  }
  return result;
}

}  // namespace planmill::synth
