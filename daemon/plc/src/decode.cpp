#include "floc/plc/decode.hpp"

#include <bit>

namespace floc::plc {
namespace {

std::uint16_t swap_bytes(std::uint16_t w) {
    return static_cast<std::uint16_t>(((w & 0xFFU) << 8U) | (w >> 8U));
}

} // namespace

std::uint32_t join_words(std::uint16_t first, std::uint16_t second, config::word_order order) {
    switch (order) {
    case config::word_order::abcd:
        return (std::uint32_t{first} << 16U) | second;
    case config::word_order::cdab:
        return (std::uint32_t{second} << 16U) | first;
    case config::word_order::badc:
        return (std::uint32_t{swap_bytes(first)} << 16U) | swap_bytes(second);
    case config::word_order::dcba:
        return (std::uint32_t{swap_bytes(second)} << 16U) | swap_bytes(first);
    }
    return 0;
}

std::array<std::uint16_t, 2> split_words(std::uint32_t value, config::word_order order) {
    const auto high = static_cast<std::uint16_t>(value >> 16U);
    const auto low = static_cast<std::uint16_t>(value & 0xFFFFU);
    switch (order) {
    case config::word_order::abcd:
        return {high, low};
    case config::word_order::cdab:
        return {low, high};
    case config::word_order::badc:
        return {swap_bytes(high), swap_bytes(low)};
    case config::word_order::dcba:
        return {swap_bytes(low), swap_bytes(high)};
    }
    return {0, 0};
}

double decode_registers(const config::tag& tag, std::span<const std::uint16_t> words) {
    if (tag.bit) {
        return ((static_cast<unsigned>(words[0]) >> *tag.bit) & 1U) != 0U ? 1.0 : 0.0;
    }
    double raw = 0.0;
    switch (tag.type) {
    case config::data_type::int16:
        raw = static_cast<double>(static_cast<std::int16_t>(words[0]));
        break;
    case config::data_type::uint16:
        raw = static_cast<double>(words[0]);
        break;
    case config::data_type::int32:
        raw = static_cast<double>(static_cast<std::int32_t>(join_words(words[0], words[1], tag.order)));
        break;
    case config::data_type::uint32:
        raw = static_cast<double>(join_words(words[0], words[1], tag.order));
        break;
    case config::data_type::float32:
        raw = static_cast<double>(std::bit_cast<float>(join_words(words[0], words[1], tag.order)));
        break;
    case config::data_type::bit:
        raw = static_cast<double>(words[0] & 1U);
        break;
    }
    return to_canonical(tag, raw * tag.scale + tag.offset);
}

double to_canonical(const config::tag& tag, double engineering) {
    return units::to_canonical(engineering, *tag.unit);
}

double decode_bit(bool bit) { return bit ? 1.0 : 0.0; }

} // namespace floc::plc
