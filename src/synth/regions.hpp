#pragma once
// Counties and municipalities of the invented state, and their invented names (regions.cpp).
// Private to src/synth.
#include <cstddef>
#include <cstdint>
#include <set>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "synth/geometry.hpp"
#include "synth/model.hpp"

namespace planmill::synth {

// Invented one-word names; a set keeps them unique (only looked up, never iterated for output).
class NameMaker {
 public:
  explicit NameMaker(Rng& rng) : rng_(rng) {}
  std::string make(bool town) {
    static const char* const kHeads[] = {"Ash", "Bel", "Cor", "Dun", "El",  "Fen", "Gar", "Hal",
                                         "Ir",  "Kel", "Lor", "Mar", "Nor", "Or",  "Pel", "Quin",
                                         "Ros", "Sal", "Tor", "Ul",  "Val", "Wen", "Yar", "Zel"};
    static const char* const kMiddles[] = {"", "a", "e", "i", "o", "en", "ar", "is"};
    static const char* const kCountyTails[] = {"ford",  "ton",  "by",    "dale", "mere",  "wick",
                                               "stead", "holm", "ridge", "moor", "field", "crest"};
    static const char* const kTownTails[] = {"haven",  "burg",  "port", "minster",
                                             "bridge", "mouth", "gate", "vale"};
    // Finite: from attempt 41 on the name ends in the number of names so far, which no earlier
    // name can end in, so that attempt succeeds.
    for (int attempt = 0;; ++attempt) {
      std::string name = kHeads[uniform_below(rng_, 24)];
      name += kMiddles[uniform_below(rng_, 8)];
      name += town ? kTownTails[uniform_below(rng_, 8)] : kCountyTails[uniform_below(rng_, 12)];
      if (attempt > 40) name += std::to_string(used_.size());
      if (used_.insert(name).second) return name;
    }
  }

 private:
  Rng& rng_;
  std::set<std::string> used_;
};

// Neighbour lists from the shared edges (each unit's list in increasing order).
std::vector<std::vector<std::uint32_t>> neighbour_lists(std::size_t n,
                                                        const std::vector<synth::SharedEdge>& e);

// Counties: seeds spread evenly over the units, then grown in turn (the county furthest below
// its target size takes the frontier unit nearest its seed), so each county is contiguous.
std::vector<std::uint32_t> make_counties(const std::vector<Rect>& rects,
                                         const std::vector<std::vector<std::uint32_t>>& nbrs,
                                         std::uint64_t seed, std::size_t* county_count);

// Municipality of each unit (index into places, or -1): units whose centre lies within a place's
// limit, nearest place relative to its limit, kept only if connected to the unit at its centre.
std::vector<int> make_municipalities(const std::vector<Rect>& rects,
                                     const std::vector<std::vector<std::uint32_t>>& nbrs,
                                     const std::vector<Place>& places);

}  // namespace planmill::synth
