#pragma once
// Writing a file so that readers see either the old content or the new, never half of it.
#include <string>
#include <string_view>

namespace planmill {

// Writes `content` to a temporary file in the same folder, flushes it to disk, then renames it
// over `path`. On any failure the old file is left as it was, the temporary file is removed, and
// an OutputError naming `path` is thrown.
void write_file_atomically(const std::string& path, std::string_view content);

}  // namespace planmill
