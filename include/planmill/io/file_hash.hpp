#pragma once
// SHA-256 digests (FIPS 180-4) as lower-case hex, for the run state and the manifest.
#include <string>
#include <string_view>

namespace planmill {

[[nodiscard]] std::string sha256_hex(std::string_view bytes);
// Throws InputError naming `path` when it cannot be read.
[[nodiscard]] std::string sha256_file_hex(const std::string& path);

}  // namespace planmill
