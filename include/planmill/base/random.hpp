#pragma once
// Randomness: one PCG stream per (run seed, stream key). Results depend only on the seed and the
// key (a chain or ladder index), never on ranks or threads. Draws are unbiased and portable
// (no std::uniform_*_distribution, whose output differs between standard libraries).
#include <cstdint>
#include <pcg_random.hpp>

namespace planmill {

using Rng = pcg32;

// Stream for chain `key` of a run. Distinct keys give distinct PCG increments.
[[nodiscard]] inline Rng make_stream(std::uint64_t run_seed, std::uint64_t key) {
  // splitmix64 of the seed spreads nearby seeds apart.
  std::uint64_t z = run_seed + 0x9E3779B97F4A7C15ULL;
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  z ^= z >> 31;
  return Rng(z, key);
}

// Uniform integer in [0, n), n >= 1 (Lemire's multiply-and-reject, unbiased).
[[nodiscard]] inline std::uint32_t uniform_below(Rng& rng, std::uint32_t n) {
  std::uint64_t m = static_cast<std::uint64_t>(rng()) * n;
  auto low = static_cast<std::uint32_t>(m);
  if (low < n) {
    const std::uint32_t threshold = (0U - n) % n;
    while (low < threshold) {
      m = static_cast<std::uint64_t>(rng()) * n;
      low = static_cast<std::uint32_t>(m);
    }
  }
  return static_cast<std::uint32_t>(m >> 32);
}

// Uniform double in [0, 1) with 53 random bits.
[[nodiscard]] inline double uniform01(Rng& rng) {
  const std::uint64_t hi = rng() >> 5, lo = rng() >> 6;  // 27 + 26 bits
  return static_cast<double>((hi << 26) | lo) * (1.0 / 9007199254740992.0);
}

}  // namespace planmill
