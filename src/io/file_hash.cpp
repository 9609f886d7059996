#include "planmill/io/file_hash.hpp"

#include <openssl/evp.h>

#include <array>
#include <fstream>
#include <memory>
#include <stdexcept>

#include "planmill/base/error.hpp"

namespace planmill {
namespace {

struct DigestContext {
  std::unique_ptr<EVP_MD_CTX, decltype(&EVP_MD_CTX_free)> ctx{EVP_MD_CTX_new(), &EVP_MD_CTX_free};
  DigestContext() {
    if (!ctx || EVP_DigestInit_ex(ctx.get(), EVP_sha256(), nullptr) != 1) {
      throw std::runtime_error("OpenSSL could not start a SHA-256 digest");
    }
  }
  void add(const void* data, std::size_t size) {
    if (EVP_DigestUpdate(ctx.get(), data, size) != 1) {
      throw std::runtime_error("OpenSSL SHA-256 update failed");
    }
  }
  std::string hex() {
    std::array<unsigned char, EVP_MAX_MD_SIZE> digest{};
    unsigned int size = 0;
    if (EVP_DigestFinal_ex(ctx.get(), digest.data(), &size) != 1) {
      throw std::runtime_error("OpenSSL SHA-256 final failed");
    }
    static constexpr char kHex[] = "0123456789abcdef";
    std::string out;
    out.reserve(2 * size);
    for (unsigned int i = 0; i < size; ++i) {
      out.push_back(kHex[digest[i] >> 4]);
      out.push_back(kHex[digest[i] & 15]);
    }
    return out;
  }
};

}  // namespace

std::string sha256_hex(std::string_view bytes) {
  DigestContext digest;
  digest.add(bytes.data(), bytes.size());
  return digest.hex();
}

std::string sha256_file_hex(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError({path, 0, ""}, "cannot be read", "check that the file exists");
  DigestContext digest;
  std::array<char, 1 << 16> buffer{};
  while (in) {
    in.read(buffer.data(), buffer.size());
    digest.add(buffer.data(), static_cast<std::size_t>(in.gcount()));
  }
  if (in.bad()) throw InputError({path, 0, ""}, "could not be read to the end", "check the disk");
  return digest.hex();
}

}  // namespace planmill
