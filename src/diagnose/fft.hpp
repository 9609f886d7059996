#pragma once
// A small in-place radix-2 complex FFT (power-of-two lengths), for autocovariances.
// Real and imaginary parts live in separate arrays so the butterflies stay simple loops.
#include <cstddef>
#include <cstdint>
#include <vector>

namespace planmill::diagnose::detail {

class Fft {
 public:
  explicit Fft(std::size_t n);  // n a power of two, n >= 1

  [[nodiscard]] std::size_t size() const { return n_; }
  // Unnormalised: inverse(forward(x)) == n * x.
  void forward(std::vector<double>& re, std::vector<double>& im) const { run(re, im, false); }
  void inverse(std::vector<double>& re, std::vector<double>& im) const { run(re, im, true); }

 private:
  void run(std::vector<double>& re, std::vector<double>& im, bool inverse) const;
  // Stages of lengths from, 2 from, ..., to on the points [begin, end), a multiple of to.
  void stages(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t from,
              std::size_t to, double sign) const;
  // Stages len and 2 len in one pass; [begin, end) a multiple of 2 len.
  void butterfly_pairs(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t len,
                       double sign) const;
  // One stage of length len (>= 4) on the points [begin, end), a multiple of len.
  void butterflies(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t len,
                   double sign) const;

  std::size_t n_;
  // Twiddles e^{-2 pi i j / len} of the stage of length len stored contiguously from offset
  // len / 2 (j < len / 2), so every stage reads them with unit stride.
  std::vector<double> cos_, sin_;
  std::vector<std::uint32_t> bit_reversed_;
};

[[nodiscard]] std::size_t next_power_of_two(std::size_t n);

}  // namespace planmill::diagnose::detail
