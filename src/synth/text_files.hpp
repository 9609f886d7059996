#pragma once
// The text of the invented state's files: numbers and unit ids as written, and the files written
// together (text_files.cpp). Private to src/synth.
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <string>
#include <utility>
#include <vector>

namespace planmill::synth {

std::string format_double(double value);
std::string format_km(std::int64_t steps);
std::string format_km2(std::int64_t steps2);

// Writes every file to a temporary name first and renames them only when all are complete.
void write_files_atomically(const std::filesystem::path& dir,
                            const std::vector<std::pair<std::string, std::string>>& files);

std::string unit_id(std::size_t u, std::size_t n);

}  // namespace planmill::synth
