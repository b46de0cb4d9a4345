// Modbus requests as values, and the parser that turns a request PDU into one of them or into
// the exception the spec asks for (AppSpec V1.1b3 §6, §7). Pure: no I/O.
#pragma once

#include "floc/modbus/protocol.hpp"

#include <array>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <variant>

namespace floc::modbus {

// The four tables of the Modbus data model (AppSpec §4.3).
enum class table : std::uint8_t { coils, discrete_inputs, holding_registers, input_registers };

// FC 01 (coils) and FC 02 (discrete inputs).
struct read_bits_request {
    table from = table::coils;
    std::uint16_t address = 0;
    std::uint16_t count = 0; // 1..2000
};

// FC 03 (holding registers) and FC 04 (input registers).
struct read_registers_request {
    table from = table::holding_registers;
    std::uint16_t address = 0;
    std::uint16_t count = 0; // 1..125
};

// FC 05.
struct write_coil_request {
    std::uint16_t address = 0;
    bool on = false; // wire value 0xFF00 (on) or 0x0000 (off)
};

// FC 06.
struct write_register_request {
    std::uint16_t address = 0;
    std::uint16_t value = 0;
};

// FC 15: `packed` holds ceil(count / 8) bytes, the first coil in the lowest bit of the first byte.
struct write_coils_request {
    std::uint16_t address = 0;
    std::uint16_t count = 0; // 1..1968
    std::span<const std::uint8_t> packed;
};

// FC 16: `values` holds 2 * count bytes, each register big-endian.
struct write_registers_request {
    std::uint16_t address = 0;
    std::uint16_t count = 0; // 1..123
    std::span<const std::uint8_t> values;
};

// FC 22: register := (register AND and_mask) OR (or_mask AND NOT and_mask) (AppSpec §6.16).
struct mask_write_request {
    std::uint16_t address = 0;
    std::uint16_t and_mask = 0;
    std::uint16_t or_mask = 0;
};

// FC 23: the write is done before the read (AppSpec §6.17).
struct read_write_registers_request {
    std::uint16_t read_address = 0;
    std::uint16_t read_count = 0; // 1..125
    std::uint16_t write_address = 0;
    std::uint16_t write_count = 0;        // 1..121
    std::span<const std::uint8_t> values; // 2 * write_count bytes, big-endian
};

// FC 43 / MEI 14, read device identification (AppSpec §6.21).
enum class device_id_access : std::uint8_t { basic = 1, regular = 2, extended = 3, individual = 4 };

struct device_id_request {
    device_id_access access = device_id_access::basic;
    std::uint8_t object_id = 0; // first object (stream access) or the one object (individual)
};

// One request of any function code served.
using request = std::variant<read_bits_request, read_registers_request, write_coil_request,
                             write_register_request, write_coils_request, write_registers_request,
                             mask_write_request, read_write_registers_request, device_id_request>;

// A parsed request, or the exception its bytes call for. Spans point into the parsed PDU.
struct parse_result {
    request value;                       // meaningful when ok()
    std::optional<exception_code> error; // 01 unknown function, 03 bad quantity, length or value
    [[nodiscard]] bool ok() const { return !error.has_value(); }
};

// Parses a request PDU (function code + data). Checks what the bytes alone can show, in the
// order of the spec's state diagrams: function code (01), then quantity, byte count, implied
// length and coil value (03). Address checks (02) need the register space: see respond().
[[nodiscard]] parse_result parse_request(std::span<const std::uint8_t> pdu);

// The addresses a request touches, for fault rules and logs. Device identification has none.
struct address_span {
    table in = table::holding_registers;
    std::uint16_t address = 0;
    std::uint16_t count = 0;
};

// Up to two spans (FC 23 touches two); `count` says how many are used.
struct request_spans {
    std::array<address_span, 2> spans{};
    std::size_t count = 0;
};

// The tables and addresses `r` touches; FC 23 lists its write span first.
[[nodiscard]] request_spans spans_of(const request& r);

} // namespace floc::modbus
