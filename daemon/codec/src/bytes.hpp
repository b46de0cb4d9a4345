// Big-endian field access for the codec (AppSpec §4.2: every multi-byte field is big-endian).
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>

namespace floc::modbus::detail {

[[nodiscard]] inline std::uint16_t get_u16(std::span<const std::uint8_t> bytes, std::size_t at) {
    return static_cast<std::uint16_t>((bytes[at] << 8U) | bytes[at + 1]);
}

inline void put_u16(std::span<std::uint8_t> bytes, std::size_t at, std::uint16_t value) {
    bytes[at] = static_cast<std::uint8_t>(value >> 8U);
    bytes[at + 1] = static_cast<std::uint8_t>(value & 0xFFU);
}

} // namespace floc::modbus::detail
