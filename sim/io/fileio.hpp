// Output files are written atomically: to a temporary file beside the target, flushed, then renamed over it,
// so an interrupted run never leaves a half-written file that looks complete.
#pragma once

#include <string>
#include <vector>

namespace wayward {

// Writes `content` to `path` atomically. Throws std::runtime_error naming the path on failure.
void write_file_atomic(const std::string& path, const std::string& content);
// A temporary name beside `path` (same directory, so rename is atomic), unique to this process.
std::string temporary_path_for(const std::string& path);
// Renames `from` onto `to` (atomic on one filesystem); removes `from` and throws on failure.
void commit_file(const std::string& from, const std::string& to);

// The cells of one line of a plain CSV table (our tables quote nothing, so a comma always separates).
std::vector<std::string> split_csv_line(const std::string& line);

}  // namespace wayward
