#include "floc/store/json.hpp"

#include <array>
#include <charconv>
#include <cmath>

namespace floc::store {

std::string json_string(std::string_view s) {
    std::string out = "\"";
    for (const char c : s) {
        switch (c) {
        case '"': out += "\\\""; break;
        case '\\': out += "\\\\"; break;
        case '\n': out += "\\n"; break;
        case '\r': out += "\\r"; break;
        case '\t': out += "\\t"; break;
        default:
            if (static_cast<unsigned char>(c) < 0x20) {
                static constexpr std::string_view hex = "0123456789abcdef";
                out += "\\u00";
                out += hex[static_cast<unsigned char>(c) >> 4U];
                out += hex[static_cast<unsigned char>(c) & 0xFU];
            } else {
                out += c;
            }
        }
    }
    out += '"';
    return out;
}

std::string json_number(double v) {
    if (!std::isfinite(v)) {
        return "null";
    }
    std::array<char, 32> buf{};
    const auto r = std::to_chars(buf.data(), buf.data() + buf.size(), v);
    return std::string{buf.data(), r.ptr};
}

void json_object::key(std::string_view k) {
    if (!body_.empty()) {
        body_ += ',';
    }
    body_ += json_string(k);
    body_ += ':';
}

json_object& json_object::add(std::string_view k, double value) {
    key(k);
    body_ += json_number(value);
    return *this;
}

json_object& json_object::add(std::string_view k, std::int64_t value) {
    key(k);
    body_ += std::to_string(value);
    return *this;
}

json_object& json_object::add(std::string_view k, std::uint64_t value) {
    key(k);
    body_ += std::to_string(value);
    return *this;
}

json_object& json_object::add(std::string_view k, bool value) {
    key(k);
    body_ += value ? "true" : "false";
    return *this;
}

json_object& json_object::add(std::string_view k, std::string_view value) {
    key(k);
    body_ += json_string(value);
    return *this;
}

json_object& json_object::add(std::string_view k, const json_object& value) {
    key(k);
    body_ += value.str();
    return *this;
}

json_object& json_object::add(std::string_view k, const std::vector<json_object>& values) {
    key(k);
    body_ += '[';
    for (std::size_t i = 0; i < values.size(); ++i) {
        body_ += (i == 0 ? "" : ",") + values[i].str();
    }
    body_ += ']';
    return *this;
}

json_object& json_object::add(std::string_view k, const std::vector<double>& values) {
    key(k);
    body_ += '[';
    for (std::size_t i = 0; i < values.size(); ++i) {
        body_ += (i == 0 ? "" : ",") + json_number(values[i]);
    }
    body_ += ']';
    return *this;
}

json_object& json_object::add_null(std::string_view k) {
    key(k);
    body_ += "null";
    return *this;
}

} // namespace floc::store
