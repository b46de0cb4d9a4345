// Loading and validating a floc config file.
#pragma once

#include "floc/config/config.hpp"

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace floc::config {

// One problem found in a config file.
struct diagnostic {
    std::string file;
    source_pos at;
    std::string path;      // key path, e.g. "tag[3].unit"
    std::string found;     // what the file says
    std::string expected;  // what would be valid

    // "plant.toml:14:8: tag[3].unit: found \"mg/L\" (a concentration unit); expected a flow unit (...)"
    [[nodiscard]] std::string message() const;
};

struct load_result {
    std::optional<plant_config> config;  // set only when `errors` is empty
    std::vector<diagnostic> errors;      // every problem found, in file order
    bool unreadable = false;             // the file could not be opened or read

    [[nodiscard]] bool ok() const { return config.has_value(); }
};

// Reads and validates a file. Never throws for bad content; all problems are in `errors`.
[[nodiscard]] load_result load_file(const std::string& path);

// Same, for text already in memory; `source_name` is used in messages.
[[nodiscard]] load_result load_text(std::string_view text, std::string_view source_name);

} // namespace floc::config
