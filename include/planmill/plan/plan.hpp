#pragma once
// Plan: the district of every unit, with district tallies (population, every count column, area,
// perimeter) and the cut-edge count kept up to date as units move. No I/O here (plan files: seed/plan_csv).
// It also keeps a bounded list of the units moved since clear_changes() (changes()).
#include <cstdint>
#include <span>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/plan/plan_changes.hpp"

namespace planmill {

// One connected piece of a district (District pieces: Plan::pieces).
struct DistrictPiece {
  std::size_t units = 0;
  std::int64_t population = 0;
};

class Plan {
 public:
  // district[u] in 0..k-1 for every unit. Throws std::invalid_argument on a wrong size or label or
  // a null graph.
  Plan(GraphHandle graph, std::size_t district_count, std::vector<DistrictIndex> district);

  // Copies and moves carry the labels and tallies; the change list of the result is overflowed
  // (its labels came from elsewhere, so no earlier copy of them can be trusted to be close).
  Plan(const Plan& other);
  Plan& operator=(const Plan&);  // graph must be the same
  Plan(Plan&& other) noexcept;
  Plan& operator=(Plan&& other) noexcept;

  [[nodiscard]] const UnitGraph& graph() const noexcept { return *graph_; }
  [[nodiscard]] const GraphHandle& graph_handle() const noexcept { return graph_; }
  [[nodiscard]] std::size_t district_count() const noexcept { return k_; }
  [[nodiscard]] std::size_t unit_count() const noexcept { return district_.size(); }
  [[nodiscard]] DistrictIndex district_of(UnitIndex u) const noexcept { return district_[u]; }
  [[nodiscard]] std::span<const DistrictIndex> assignment() const noexcept { return district_; }

  [[nodiscard]] std::int64_t population(DistrictIndex d) const noexcept { return population_[d]; }
  [[nodiscard]] double count(DistrictIndex d, std::size_t column) const noexcept {
    return counts_[static_cast<std::size_t>(d) * columns_ + column];
  }
  [[nodiscard]] std::size_t unit_count(DistrictIndex d) const noexcept { return size_[d]; }
  [[nodiscard]] double area(DistrictIndex d) const noexcept { return area_[d]; }          // 0 if unknown
  [[nodiscard]] double perimeter(DistrictIndex d) const noexcept { return perimeter_[d]; }  // 0 if unknown
  [[nodiscard]] std::size_t cut_edge_count() const noexcept { return cut_edges_; }

  [[nodiscard]] double ideal_population() const noexcept;
  // max over districts of |pop - ideal| / ideal.
  [[nodiscard]] double max_population_deviation() const noexcept;

  // Moves u to district `to`, updating every tally in O(degree(u) + count columns).
  void move(UnitIndex u, DistrictIndex to) noexcept;
  // Relabels every unit at once (e.g. after a recombination), recomputing tallies of the districts
  // touched; `units` lists the units whose label may change.
  void assign(std::span<const UnitIndex> units, std::span<const DistrictIndex> to) noexcept;

  // Units moved by move()/assign() since the last clear_changes(), at most change_capacity() of
  // them; overflowed when more moves happened, and from construction, copy or move until the first
  // clear_changes(). Recording the list costs no allocation.
  [[nodiscard]] PlanChanges changes() const noexcept {
    return {std::span<const UnitIndex>(changes_), changes_overflowed_};
  }
  void clear_changes() noexcept {
    changes_.clear();
    changes_overflowed_ = false;
  }
  [[nodiscard]] std::size_t change_capacity() const noexcept { return changes_.capacity(); }

  // Contiguity by breadth-first search inside the district; scratch buffers are reused.
  [[nodiscard]] bool is_connected(DistrictIndex d) const;
  // The same answer after unit `left` has just moved out of d, provided d was connected with it:
  // searches d from a neighbour of `left` and stops once every neighbour of `left` in d is reached
  // (each unit of d reached `left` through one of them), so it never scans the map for a start.
  [[nodiscard]] bool is_connected_without(DistrictIndex d, UnitIndex left) const;
  [[nodiscard]] bool all_connected() const;
  // The connected pieces of district d, the largest first (by population, then units): one piece
  // when d is contiguous, none when it is empty. Says why is_connected(d) is false; allocates.
  [[nodiscard]] std::vector<DistrictPiece> pieces(DistrictIndex d) const;

  // Recomputes every tally from scratch and compares (for tests and heavy assertions).
  [[nodiscard]] bool tallies_consistent() const;

  friend bool operator==(const Plan& a, const Plan& b) noexcept { return a.district_ == b.district_; }

 private:
  void recompute();
  void add_unit(UnitIndex u, DistrictIndex d, double sign) noexcept;
  void reserve_changes();

  GraphHandle graph_;
  std::size_t k_;
  std::size_t columns_;
  std::vector<DistrictIndex> district_;
  std::vector<std::int64_t> population_;
  std::vector<std::size_t> size_;
  std::vector<double> counts_;
  std::vector<double> area_;
  std::vector<double> perimeter_;
  std::size_t cut_edges_ = 0;
  // Change list: capacity fixed at construction, so that push_back never allocates.
  std::vector<UnitIndex> changes_;
  bool changes_overflowed_ = true;
  // BFS scratch, kept so that contiguity checks do not allocate after the first call.
  mutable std::vector<std::uint32_t> seen_;
  mutable std::uint32_t seen_epoch_ = 0;
  mutable std::vector<UnitIndex> queue_;
};

}  // namespace planmill
