// A small JSON writer for machine-readable lines (the advice journal). Keys keep the order they
// were added in; non-finite numbers are written as null.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace floc::store {

class json_object {
public:
    json_object& add(std::string_view key, double value);
    json_object& add(std::string_view key, std::int64_t value);
    json_object& add(std::string_view key, std::uint64_t value);
    json_object& add(std::string_view key, int value) { return add(key, std::int64_t{value}); }
    json_object& add(std::string_view key, bool value);
    json_object& add(std::string_view key, std::string_view value);
    json_object& add(std::string_view key, const char* value) { return add(key, std::string_view{value}); }
    json_object& add(std::string_view key, const json_object& value);
    json_object& add(std::string_view key, const std::vector<json_object>& values);
    json_object& add(std::string_view key, const std::vector<double>& values);
    json_object& add_null(std::string_view key);

    // "{...}" on one line.
    [[nodiscard]] std::string str() const { return "{" + body_ + "}"; }
    [[nodiscard]] bool empty() const { return body_.empty(); }

private:
    void key(std::string_view k);
    std::string body_;
};

// JSON string literal with escapes, e.g. "a\"b".
[[nodiscard]] std::string json_string(std::string_view s);
// Shortest text that reads back as the same double ("null" for NaN and infinities).
[[nodiscard]] std::string json_number(double v);

} // namespace floc::store
