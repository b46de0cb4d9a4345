// Which Modbus reads cover a PLC's tags: tags grouped into as few requests as the spec and the
// connection's limits allow. Pure.
#pragma once

#include "floc/config/config.hpp"

#include <cstdint>
#include <vector>

namespace floc::plc {

// Largest read the Modbus Application Protocol Specification V1.1b3 allows: 125 registers
// (§6.3, §6.4) or 2000 bits (§6.1, §6.2) per request.
inline constexpr std::uint16_t max_registers_per_request = 125;
inline constexpr std::uint16_t max_bits_per_request = 2000;

// One read request and the tags it serves.
struct read_request {
    config::read_function function = config::read_function::input_registers;
    std::uint16_t address = 0;   // first register or bit
    std::uint16_t count = 0;     // registers or bits
    double period_s = 0.0;       // how often it is read
    std::vector<std::size_t> tags;  // indices into plant_config::tags
};

// The reads for PLC `plc_index`: tags with the same function and period are merged when the
// gap between them is at most the connection's max_gap_registers and the merged read stays
// within max_registers_per_read (bits: within 2000).
[[nodiscard]] std::vector<read_request> plan_reads(const config::plant_config& cfg,
                                                   std::size_t plc_index);

} // namespace floc::plc
