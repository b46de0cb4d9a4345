// flocd's state file: named sections of named values (numbers, texts, lists of numbers), written
// as TOML through atomic_write so that a crash or kill -9 leaves either the old or the new file.
// The daemon maps advisor states and lab entries onto sections; this module only stores them.
#pragma once

#include <map>
#include <string>
#include <string_view>
#include <variant>
#include <vector>

namespace floc::store {

using state_value = std::variant<double, std::string, std::vector<double>>;
using state_section = std::map<std::string, state_value, std::less<>>;

struct state_document {
    std::map<std::string, state_section, std::less<>> sections;

    // The number at section.key, or `fallback` when missing or not a number.
    [[nodiscard]] double number(std::string_view section, std::string_view key, double fallback) const;
    [[nodiscard]] std::string text(std::string_view section, std::string_view key,
                                   std::string fallback = {}) const;
    [[nodiscard]] std::vector<double> numbers(std::string_view section, std::string_view key) const;
    [[nodiscard]] bool has(std::string_view section) const { return sections.count(section) != 0; }
};

inline constexpr int state_format_version = 1;

// TOML text of a document (non-finite numbers are written as nan/inf, which TOML allows).
[[nodiscard]] std::string to_text(const state_document& doc);

// Parses a state file; on failure returns a message with the line and column.
[[nodiscard]] std::variant<state_document, std::string> parse_state(std::string_view text,
                                                                    std::string_view source_name);

} // namespace floc::store
