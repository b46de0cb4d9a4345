// Schema-driven access to one TOML table: every getter records the key as known, checks type
// and range, converts units, and reports problems to a shared diagnostics list with the
// file:line:column of the offending node. toml++ types stay inside table_reader.cpp.
//
// Used by the floc config loader and by the simulator's scenario loader: one reader, one
// shape of error message for every file the project reads.
#pragma once

#include "floc/config/load.hpp"
#include "floc/units.hpp"

#include <cstdint>
#include <functional>
#include <initializer_list>
#include <optional>
#include <set>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace floc::config {

class diagnostics {
public:
    explicit diagnostics(std::string file) : file_(std::move(file)) {}

    void error(source_pos at, std::string path, std::string found, std::string expected);
    [[nodiscard]] bool any() const { return !list_.empty(); }
    [[nodiscard]] std::vector<diagnostic> take_sorted();
    [[nodiscard]] const std::string& file() const { return file_; }

private:
    std::string file_;
    std::vector<diagnostic> list_;
};

enum class need : std::uint8_t { optional, required };
// Whether a quantity is a value (a temperature) or a difference of values (a tolerance, a step).
enum class measure : std::uint8_t { absolute, difference };

class table_reader {
public:
    // `table` is a const toml::table*; kept opaque so that toml++ stays inside table_reader.cpp.
    table_reader(const void* table, std::string path, diagnostics& diags);

    table_reader(const table_reader&) = delete;
    table_reader& operator=(const table_reader&) = delete;
    table_reader(table_reader&&) = default;
    table_reader& operator=(table_reader&&) = delete;
    ~table_reader() = default;

    [[nodiscard]] bool has(std::string_view key) const;
    [[nodiscard]] source_pos pos() const;
    [[nodiscard]] source_pos pos_of(std::string_view key) const;  // the value's position
    [[nodiscard]] std::string path_of(std::string_view key) const;
    [[nodiscard]] const std::string& path() const { return path_; }

    std::optional<std::string> string(std::string_view key, need n);
    // A name: 1..64 characters of [A-Za-z0-9_.-], starting with a letter.
    std::optional<std::string> name(std::string_view key, need n);
    std::optional<std::int64_t> integer(std::string_view key, std::int64_t min, std::int64_t max, need n);
    std::optional<double> number(std::string_view key, double min, double max, need n);
    std::optional<bool> boolean(std::string_view key, need n);

    // A quantity written as "<number> <unit>", e.g. "3.5 mg/L"; returned in the canonical unit.
    // `bare_unit`, when given, is the unit of a plain number (e.g. the tag's own unit).
    std::optional<double> quantity(std::string_view key, units::quantity kind, double min,
                                   double max, need n, const units::unit* bare_unit = nullptr,
                                   measure m = measure::absolute);
    // [low, high] of quantities, low <= high.
    std::optional<std::pair<double, double>> quantity_range(std::string_view key,
                                                            units::quantity kind, need n,
                                                            const units::unit* bare_unit = nullptr);
    // A unit symbol of the given quantity, or of any quantity when `kind` is empty.
    const units::unit* unit_symbol(std::string_view key, std::optional<units::quantity> kind, need n);

    // One of a fixed set of words.
    template <class E>
    std::optional<E> choice(std::string_view key,
                            std::initializer_list<std::pair<std::string_view, E>> options, need n) {
        std::vector<std::string_view> words;
        for (const auto& option : options) {
            words.push_back(option.first);
        }
        const std::optional<std::size_t> i = choice_index(key, words, n);
        if (!i) {
            return std::nullopt;
        }
        return (options.begin() + static_cast<std::ptrdiff_t>(*i))->second;
    }

    std::optional<std::vector<std::string>> string_list(std::string_view key, need n);
    // Positions of the list's elements, in order (for messages about one element).
    [[nodiscard]] std::vector<source_pos> list_positions(std::string_view key) const;

    // A sub-table; calls `read` with a reader for it when present.
    void table(std::string_view key, need n, const std::function<void(table_reader&)>& read);
    // An array of tables ([[key]]); calls `read` for each element with its index.
    void each_table(std::string_view key, const std::function<void(table_reader&, std::size_t)>& read);

    // Marks keys as known without reading them (when an earlier error makes them unreadable,
    // e.g. a range whose unit is unknown), so that they are not also reported as unknown.
    void skip(std::initializer_list<std::string_view> keys);

    // Reports every key of this table that no getter asked for. Call after all getters.
    void finish();

    [[nodiscard]] diagnostics& diags() { return diags_; }

private:
    std::optional<std::size_t> choice_index(std::string_view key,
                                            const std::vector<std::string_view>& words, need n);
    void missing(std::string_view key, std::string expected);
    [[nodiscard]] const void* node(std::string_view key);

    const void* table_;
    std::string path_;
    diagnostics& diags_;
    std::set<std::string, std::less<>> known_;
};

// Parses TOML text and hands the root table to `read`. Returns false (with a diagnostic) on a
// syntax error.
bool read_document(std::string_view text, diagnostics& diags,
                   const std::function<void(table_reader&)>& read);

[[nodiscard]] std::string quote(std::string_view s);
// "a flow unit", "an area unit"
[[nodiscard]] std::string with_article(std::string_view noun);
[[nodiscard]] std::string describe_quantity_example(units::quantity kind);

} // namespace floc::config
