// The advice journal: an append-only file of JSON lines, one per advice change, flushed to disk
// line by line and rotated by size (journal.jsonl -> journal.jsonl.1 -> ... -> .N).
#pragma once

#include "floc/store/json.hpp"

#include <cstdint>
#include <filesystem>
#include <system_error>

namespace floc::store {

class journal {
public:
    // `max_bytes`: rotate before a line would take the file past it; `keep`: rotated files kept.
    journal(std::filesystem::path path, std::uint64_t max_bytes = 64ULL << 20U, unsigned keep = 8);
    ~journal();

    journal(const journal&) = delete;
    journal& operator=(const journal&) = delete;
    journal(journal&&) = delete;
    journal& operator=(journal&&) = delete;

    // Appends one line and flushes it to disk.
    [[nodiscard]] std::error_code append(const json_object& line);

    [[nodiscard]] const std::filesystem::path& path() const { return path_; }

private:
    std::error_code open();
    std::error_code rotate();

    std::filesystem::path path_;
    std::uint64_t max_bytes_;
    unsigned keep_;
    int fd_ = -1;
    std::uint64_t size_ = 0;
};

} // namespace floc::store
