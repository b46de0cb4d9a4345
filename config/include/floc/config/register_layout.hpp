// The blocks of the advisory server's register space and their extents. The daemon's register
// map lays out fields inside these blocks; the config loader uses the same extents to refuse
// overlapping blocks.
#pragma once

#include "floc/config/config.hpp"

#include <array>
#include <cstdint>
#include <string_view>

namespace floc::config {

inline constexpr std::uint32_t status_block_registers = 32;  // heartbeat, daemon state, ...
inline constexpr std::uint32_t advice_slot_registers = 32;   // one slot per advisor
inline constexpr std::uint32_t input_slot_registers = 8;     // one slot per conditioned tag
inline constexpr std::uint32_t lab_slot_registers = 8;       // one slot per lab entry
inline constexpr std::uint32_t register_space = 65536;

struct register_block {
    std::string_view name;  // the layout key that places it, e.g. "advice_at"
    std::uint32_t first = 0;
    std::uint32_t count = 0;
    [[nodiscard]] std::uint32_t end() const { return first + count; }  // one past the last
    [[nodiscard]] bool overlaps(const register_block& other) const {
        return count > 0 && other.count > 0 && first < other.end() && other.first < end();
    }
};

[[nodiscard]] inline std::array<register_block, 4> register_blocks(const plant_config& cfg) {
    const register_layout_config& g = cfg.hmi.layout;
    return {{
        {"status_at", g.status_at, status_block_registers},
        {"advice_at", g.advice_at, static_cast<std::uint32_t>(cfg.advisor_count()) * advice_slot_registers},
        {"inputs_at", g.inputs_at, static_cast<std::uint32_t>(cfg.tags.size()) * input_slot_registers},
        {"lab_at", g.lab_at, static_cast<std::uint32_t>(cfg.lab.size()) * lab_slot_registers},
    }};
}

} // namespace floc::config
