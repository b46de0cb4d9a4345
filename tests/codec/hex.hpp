// Hex strings for byte-exact test vectors: "00 01 FF" <-> {0x00, 0x01, 0xFF}.
#pragma once

#include <cstdint>
#include <span>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

namespace floc::modbus::test {

// Bytes from hex pairs; spaces are ignored.
inline std::vector<std::uint8_t> bytes(std::string_view hex) {
    std::vector<std::uint8_t> out;
    int high = -1;
    for (const char c : hex) {
        if (c == ' ') {
            continue;
        }
        int v = 0;
        if (c >= '0' && c <= '9') {
            v = c - '0';
        } else if (c >= 'A' && c <= 'F') {
            v = c - 'A' + 10;
        } else if (c >= 'a' && c <= 'f') {
            v = c - 'a' + 10;
        } else {
            throw std::invalid_argument("not a hex digit in test vector: " + std::string{hex});
        }
        if (high < 0) {
            high = v;
        } else {
            out.push_back(static_cast<std::uint8_t>(high * 16 + v));
            high = -1;
        }
    }
    if (high >= 0) {
        throw std::invalid_argument("odd number of hex digits in test vector: " + std::string{hex});
    }
    return out;
}

// Upper-case hex pairs separated by spaces, the format of bytes().
inline std::string hex(std::span<const std::uint8_t> data) {
    static constexpr std::string_view digits = "0123456789ABCDEF";
    std::string s;
    for (const std::uint8_t b : data) {
        if (!s.empty()) {
            s += ' ';
        }
        s += digits[b >> 4U];
        s += digits[b & 0x0FU];
    }
    return s;
}

} // namespace floc::modbus::test
