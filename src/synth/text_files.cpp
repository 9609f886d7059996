// Numbers and unit ids as the invented state's files write them, and the files written
// together: every one to a temporary name, renamed only when all are complete.
#include "synth/text_files.hpp"

#include <algorithm>
#include <charconv>
#include <fstream>
#include <stdexcept>
#include <system_error>

#include "planmill/base/error.hpp"
#include "synth/geometry.hpp"

namespace planmill::synth {

std::string format_double(double value) {
  char buffer[64];
  const auto [end, ec] =
      std::to_chars(buffer, buffer + sizeof buffer, value, std::chars_format::fixed);
  if (ec != std::errc()) throw std::logic_error("synth: number formatting failed");
  return std::string(buffer, end);
}

std::string format_km(std::int64_t steps) {
  return format_double(static_cast<double>(steps) * synth::kKmPerStep);
}

std::string format_km2(std::int64_t steps2) {
  return format_double(static_cast<double>(steps2) * synth::kKmPerStep * synth::kKmPerStep);
}

void write_files_atomically(const std::filesystem::path& dir,
                            const std::vector<std::pair<std::string, std::string>>& files) {
  namespace fs = std::filesystem;
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec || !fs::is_directory(dir)) {
    throw InputError({dir.string(), 0, "--out"}, "cannot create the output folder",
                     "choose a folder you can write to");
  }
  std::vector<fs::path> temps;
  const auto discard = [&] {
    for (const fs::path& t : temps) fs::remove(t, ec);
  };
  for (const auto& [name, text] : files) {
    const fs::path temp = dir / ("." + name + ".synth-tmp");
    temps.push_back(temp);
    std::ofstream out(temp, std::ios::binary | std::ios::trunc);
    out.write(text.data(), static_cast<std::streamsize>(text.size()));
    out.close();
    if (!out) {
      discard();
      throw InputError({(dir / name).string(), 0, "--out"}, "cannot write the file",
                       "choose a folder you can write to, with free space");
    }
  }
  for (std::size_t i = 0; i < files.size(); ++i) {
    fs::rename(temps[i], dir / files[i].first, ec);
    if (ec) {
      discard();
      throw InputError({(dir / files[i].first).string(), 0, "--out"},
                       "cannot move the finished file into place: " + ec.message(),
                       "choose a folder you can write to");
    }
  }
}

std::string unit_id(std::size_t u, std::size_t n) {
  std::string digits = std::to_string(u + 1);
  const std::size_t width = std::max<std::size_t>(5, std::to_string(n).size());
  return "u" + std::string(width - digits.size(), '0') + digits;
}

}  // namespace planmill::synth
