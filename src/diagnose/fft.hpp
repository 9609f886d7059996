#pragma once
// A small in-place radix-2 complex FFT (power-of-two lengths), for autocovariances.
// Real and imaginary parts live in separate arrays so the butterflies stay simple loops.
// No bit-reversal pass: forward() takes points in natural order and leaves the spectrum in
// bit-reversed order (decimation in frequency); inverse() takes a spectrum in bit-reversed order
// and leaves points in natural order (decimation in time). Pointwise products of spectra do not
// care about the order; for pairing bin k with bin n - k see mirror_bin().
// Why our own and not a library: no FFT library is installed beyond Eigen's unsupported FFT
// module (kissfft backend; no FFTW headers or package here). Timed against it on this machine
// (forward + inverse, complex double, g++ -O2; ours includes a rescaling pass): 2^14 points
// 0.87 vs 0.97 ms, 2^17 6.7 vs 16.2 ms, 2^20 71 vs 326 ms. Eigen's FFT also works on
// std::complex arrays in natural order, so ess.cpp would need interleaving copies and a
// bit-reversal per transform, which its bit-reversed spectra avoid.
#include <cstddef>
#include <vector>

namespace planmill::diagnose::detail {

class Fft {
 public:
  explicit Fft(std::size_t n);  // n a power of two, n >= 1

  [[nodiscard]] std::size_t size() const { return n_; }
  // Unnormalised: inverse(forward(x)) == n * x.
  void forward(std::vector<double>& re, std::vector<double>& im) const;
  void inverse(std::vector<double>& re, std::vector<double>& im) const;

 private:
  // Decimation in frequency, stages len = from, from / 2, ..., to on the points [begin, end).
  void dif_stages(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t from,
                  std::size_t to) const;
  // Decimation in time, stages len = from, 2 from, ..., to on the points [begin, end).
  void dit_stages(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t from,
                  std::size_t to) const;
  // Two stages in one pass (len and len / 2, or len and 2 len): each group of four points is
  // loaded once; [begin, end) a multiple of the longer length.
  void dif_pairs(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t len) const;
  void dit_pairs(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t len) const;
  // One stage of length len (>= 2) on [begin, end).
  void dif_single(double* xr, double* xi, std::size_t begin, std::size_t end,
                  std::size_t len) const;
  void dit_single(double* xr, double* xi, std::size_t begin, std::size_t end,
                  std::size_t len) const;

  std::size_t n_;
  // Twiddles e^{-2 pi i j / len} of the stage of length len stored contiguously from offset
  // len / 2 (j < len / 2), so every stage reads them with unit stride.
  std::vector<double> cos_, sin_;
};

[[nodiscard]] std::size_t next_power_of_two(std::size_t n);

// In a spectrum of length n (a power of two) kept in bit-reversed order, the slot holding bin
// n - k when slot i holds bin k: i itself for i < 2, else i with every bit below its top bit
// flipped (negation of k, read backwards). So pairs mirror each other inside [2^j, 2^(j+1)).
[[nodiscard]] inline std::size_t mirror_bin(std::size_t i, std::size_t top) {
  return 3 * top - 1 - i;  // top = the highest power of two <= i, i >= 2
}

}  // namespace planmill::diagnose::detail
