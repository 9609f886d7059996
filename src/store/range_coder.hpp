#pragma once
// Binary range coder of graph records: adaptive 11-bit probabilities of a 0 bit (adaptation
// shift 5) and fixed-probability "direct" bits, in the well-known byte-wise form with carry
// propagation (docs/format.md spells out the decoder).
// Promises: encoder and decoder share one interface, code(p, bit) and direct(bit), each returning
// the bit (given by the encoder, read by the decoder) and adapting p the same way, so one model
// template drives both sides. The encoder only appends to its vector (after finish(), 5 bytes
// flush the state; the first byte is always 0). The decoder never reads out of bounds: past the
// end it reads zeros and clears ok; finished_exactly() says every byte was used, no more.
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace planmill::codec {

inline constexpr std::uint32_t kProbabilityOne = 1u << 11;
inline constexpr int kAdaptShift = 5;
inline constexpr std::uint32_t kRangeTop = 1u << 24;

class RangeEncoder {
 public:
  explicit RangeEncoder(std::vector<std::uint8_t>& out) : out_(out) {}
  int code(std::uint16_t& p, int bit) {
    const std::uint32_t bound = (range_ >> 11) * p;
    if (bit == 0) {
      range_ = bound;
      p = static_cast<std::uint16_t>(p + ((kProbabilityOne - p) >> kAdaptShift));
    } else {
      low_ += bound;
      range_ -= bound;
      p = static_cast<std::uint16_t>(p - (p >> kAdaptShift));
    }
    normalize();
    return bit;
  }
  int direct(int bit) {
    range_ >>= 1;
    if (bit) low_ += range_;
    normalize();
    return bit;
  }
  void finish() {
    for (int i = 0; i < 5; ++i) shift_low();
  }

 private:
  void normalize() {
    while (range_ < kRangeTop) {
      range_ <<= 8;
      shift_low();
    }
  }
  void shift_low() {
    if (static_cast<std::uint32_t>(low_) < 0xFF000000u || (low_ >> 32) != 0) {
      const auto carry = static_cast<std::uint8_t>(low_ >> 32);
      std::uint8_t pending = cache_;
      do {
        out_.push_back(static_cast<std::uint8_t>(pending + carry));
        pending = 0xFF;
      } while (--cache_size_ != 0);
      cache_ = static_cast<std::uint8_t>(low_ >> 24);
    }
    ++cache_size_;
    low_ = (low_ & 0x00FFFFFFu) << 8;
  }

  std::vector<std::uint8_t>& out_;
  std::uint64_t low_ = 0;
  std::uint32_t range_ = 0xFFFFFFFFu;
  std::uint8_t cache_ = 0;
  std::uint64_t cache_size_ = 1;
};

class RangeDecoder {
 public:
  explicit RangeDecoder(std::span<const std::uint8_t> bytes) : bytes_(bytes) {
    ok = bytes.size() >= 5 && bytes[0] == 0;
    for (int i = 0; i < 5; ++i) code_ = (code_ << 8) | next_byte();
  }
  int code(std::uint16_t& p, int /*bit*/) {
    const std::uint32_t bound = (range_ >> 11) * p;
    int bit;
    if (code_ < bound) {
      range_ = bound;
      p = static_cast<std::uint16_t>(p + ((kProbabilityOne - p) >> kAdaptShift));
      bit = 0;
    } else {
      code_ -= bound;
      range_ -= bound;
      p = static_cast<std::uint16_t>(p - (p >> kAdaptShift));
      bit = 1;
    }
    normalize();
    return bit;
  }
  int direct(int /*bit*/) {
    range_ >>= 1;
    const int bit = code_ >= range_ ? 1 : 0;
    if (bit) code_ -= range_;
    normalize();
    return bit;
  }
  [[nodiscard]] bool finished_exactly() const noexcept { return ok && at_ == bytes_.size(); }
  bool ok = true;

 private:
  void normalize() {
    while (range_ < kRangeTop) {
      range_ <<= 8;
      code_ = (code_ << 8) | next_byte();
    }
  }
  std::uint32_t next_byte() {
    if (at_ < bytes_.size()) return bytes_[at_++];
    ok = false;
    return 0;
  }

  std::span<const std::uint8_t> bytes_;
  std::size_t at_ = 0;
  std::uint32_t range_ = 0xFFFFFFFFu;
  std::uint32_t code_ = 0;
};

}  // namespace planmill::codec
