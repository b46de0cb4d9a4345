// Files that must survive a crash: every write goes to a temporary file in the same directory,
// is flushed to disk, and replaces the old file with one rename, so a reader (or a restart after
// kill -9) sees either the old content or the new, never a torn file.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <system_error>

namespace floc::store {

// Replaces `path` with `content` atomically (write temp, fsync, rename, fsync the directory).
[[nodiscard]] std::error_code atomic_write(const std::filesystem::path& path, std::string_view content);

// The whole file, or nothing (with the reason in `error`).
[[nodiscard]] std::optional<std::string> read_whole(const std::filesystem::path& path,
                                                    std::error_code& error);

// Creates `dir` and its parents when missing.
[[nodiscard]] std::error_code ensure_directory(const std::filesystem::path& dir);

} // namespace floc::store
