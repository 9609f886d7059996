#pragma once
// Counts every allocation of a test program by replacing the global operator new, for tests of
// the promise that hot loops allocate nothing. Include it in exactly ONE file of a test program
// (the replacement is program-wide) and compare planmill::test::allocations() before and after.
#include <atomic>
#include <cstdlib>
#include <new>

namespace planmill::test {
inline std::atomic<std::size_t> g_allocations{0};
[[nodiscard]] inline std::size_t allocations() {
  return g_allocations.load(std::memory_order_relaxed);
}
}  // namespace planmill::test

void* operator new(std::size_t size) {
  planmill::test::g_allocations.fetch_add(1, std::memory_order_relaxed);
  if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
  throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }
