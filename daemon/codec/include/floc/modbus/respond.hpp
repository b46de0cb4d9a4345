// The server's step from a request PDU to a response PDU: parse, check the addresses, ask the
// register space, encode the normal or the exception response (AppSpec V1.1b3 §6, §7 and the
// order of checks of its state diagrams: function 01, quantity/value 03, address 02, then the
// register space's own answer). Pure: the register space is the only thing it touches.
#pragma once

#include "floc/modbus/device_identity.hpp"
#include "floc/modbus/protocol.hpp"
#include "floc/modbus/register_space.hpp"
#include "floc/modbus/request.hpp"

#include <cstddef>
#include <cstdint>
#include <span>

namespace floc::modbus {

// Answers a parsed request into `out` (at least max_pdu_size bytes); returns the PDU size.
[[nodiscard]] std::size_t handle_request(const request& r, register_space& space,
                                         const client_info& client, const device_identity& identity,
                                         std::span<std::uint8_t> out);

// Parses `pdu` and answers it into `out` (at least max_pdu_size bytes); returns the PDU size.
// Malformed or unknown requests get their exception response.
[[nodiscard]] std::size_t respond(std::span<const std::uint8_t> pdu, register_space& space,
                                  const client_info& client, const device_identity& identity,
                                  std::span<std::uint8_t> out);

// Writes the exception response `function | 0x80, code` into `out`; returns 2 (0 if too small).
[[nodiscard]] std::size_t encode_exception(std::uint8_t function, exception_code code,
                                           std::span<std::uint8_t> out);

} // namespace floc::modbus
