// Files are written whole or not at all: a temporary file in the same folder, flushed, then renamed.
#pragma once

#include <string>

namespace pw {

// Throws std::runtime_error naming the path when the file cannot be written; an existing file at
// `path` is left untouched in that case.
void write_file_atomically(const std::string& path, const std::string& content);

}  // namespace pw
