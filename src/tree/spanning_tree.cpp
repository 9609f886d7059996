// Wilson's algorithm with the usual "last exit" bookkeeping: next_[u] holds the step last taken
// from u, so retracing next_ from the start of a walk follows exactly its loop erasure.
#include "planmill/tree/spanning_tree.hpp"

#include <algorithm>
#include <stdexcept>

namespace planmill {

namespace {

bool connected(AdjacencyView graph, std::vector<std::uint8_t>& seen,
               std::vector<std::uint32_t>& queue) {
  const auto n = static_cast<std::uint32_t>(graph.vertex_count());
  seen.assign(n, 0);
  queue.clear();
  queue.push_back(0);
  seen[0] = 1;
  for (std::size_t head = 0; head < queue.size(); ++head) {
    for (const std::uint32_t w : graph.neighbors(queue[head])) {
      if (!seen[w]) {
        seen[w] = 1;
        queue.push_back(w);
      }
    }
  }
  return queue.size() == n;
}

// Index k with probability w[k] / sum(w): one uniform draw scanned against the running sum (the
// last entry takes what rounding leaves over).
std::size_t weighted_pick(std::span<const double> w, Rng& rng) {
  double total = 0.0;
  for (const double x : w) total += x;
  double r = uniform01(rng) * total;
  std::size_t k = 0;
  while (k + 1 < w.size() && r >= w[k]) r -= w[k++];
  return k;
}

}  // namespace

std::uint32_t SpanningTreeSampler::chosen_root(AdjacencyView graph) noexcept {
  std::uint32_t best = 0;
  for (const std::uint32_t w : graph.neighbors(0)) {
    if (graph.degree(w) > graph.degree(best) || (graph.degree(w) == graph.degree(best) && w < best)) best = w;
  }
  return best;
}

void SpanningTreeSampler::sample(const Region& region, Rng& rng) {
  if (region.size() == 0) throw std::invalid_argument("SpanningTreeSampler: empty region");
  sample(region, rng, chosen_root(region.adjacency()));
}

void SpanningTreeSampler::sample(const Region& region, Rng& rng, std::uint32_t root) {
  draw(region.adjacency(), region.populations(), rng, root, region.weights(), region.known_connected());
}

void SpanningTreeSampler::sample(AdjacencyView graph, std::span<const std::int64_t> population,
                                 Rng& rng, std::uint32_t root, std::span<const double> weights) {
  draw(graph, population, rng, root, weights, false);
}

void SpanningTreeSampler::draw(AdjacencyView graph, std::span<const std::int64_t> population, Rng& rng,
                               std::uint32_t root, std::span<const double> weights, bool known_connected) {
  const auto n = static_cast<std::uint32_t>(graph.vertex_count());
  if (population.size() != n)
    throw std::invalid_argument("SpanningTreeSampler: not one population per vertex");
  if (root >= n) throw std::invalid_argument("SpanningTreeSampler: root outside the region");
  if (!weights.empty() && weights.size() != graph.entry_count())
    throw std::invalid_argument("SpanningTreeSampler: not one weight per adjacency entry");
  // A walk on a disconnected region would never end; the check costs one BFS (skipped for a
  // region its builder knows to be connected).
  if (!known_connected && !connected(graph, in_tree_, queue_)) {
    throw std::invalid_argument("SpanningTreeSampler: region is not connected");
  }
  in_tree_.assign(n, 0);
  next_.resize(n);
  parent_.resize(n);
  order_.clear();

  std::uint64_t steps = 0;
  root_ = root;
  in_tree_[root] = 1;
  parent_[root] = kNoParent;
  order_.push_back(root);
  for (std::uint32_t start = 0; start < n; ++start) {
    std::uint32_t u = start;
    while (!in_tree_[u]) {
      const std::span<const std::uint32_t> neighbors = graph.neighbors(u);
      const std::uint32_t step = weights.empty()
          ? neighbors[uniform_below(rng, static_cast<std::uint32_t>(neighbors.size()))]
          : neighbors[weighted_pick(weights.subspan(graph.offsets()[u], neighbors.size()), rng)];
      next_[u] = step;
      u = step;
      ++steps;
    }
    // Attach the loop-erased path; store it reversed so that parents precede children.
    const std::size_t first = order_.size();
    for (u = start; !in_tree_[u]; u = next_[u]) {
      in_tree_[u] = 1;
      parent_[u] = next_[u];
      order_.push_back(u);
    }
    std::reverse(order_.begin() + static_cast<std::ptrdiff_t>(first), order_.end());
  }
  walk_steps_ = steps;

  subtree_.assign(population.begin(), population.end());
  for (std::uint32_t k = n - 1; k > 0; --k) {
    const std::uint32_t v = order_[k];
    subtree_[parent_[v]] += subtree_[v];
  }
  total_ = subtree_[root];
}

std::span<const std::uint32_t> SpanningTreeSampler::balanced_cuts(std::int64_t lo,
                                                                  std::int64_t hi) {
  cuts_.clear();
  const std::uint32_t n = size();
  for (std::uint32_t v = 0; v < n; ++v) {
    if (v == root_) continue;
    const std::int64_t below = subtree_[v], above = total_ - below;
    if (below >= lo && below <= hi && above >= lo && above <= hi) cuts_.push_back(v);
  }
  return cuts_;
}

void SpanningTreeSampler::mark_side(std::uint32_t child,
                                    std::span<std::uint8_t> out) const noexcept {
  out[root_] = child == root_ ? 1 : 0;
  for (std::size_t k = 1; k < order_.size(); ++k) {
    const std::uint32_t v = order_[k];
    out[v] = v == child ? 1 : out[parent_[v]];
  }
}

std::size_t SpanningTreeSampler::capacity_bytes() const noexcept {
  return in_tree_.capacity() +
         (next_.capacity() + parent_.capacity() + order_.capacity() + cuts_.capacity() +
          queue_.capacity()) *
             sizeof(std::uint32_t) +
         subtree_.capacity() * sizeof(std::int64_t);
}

}  // namespace planmill
