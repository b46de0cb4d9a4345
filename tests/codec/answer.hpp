// Test helpers: answer a request PDU or a whole ADU from a register space, as hex.
#pragma once

#include "hex.hpp"

#include "floc/modbus/frame.hpp"
#include "floc/modbus/respond.hpp"

#include <array>
#include <string>
#include <string_view>

namespace floc::modbus::test {

inline const client_info loopback_client{0x7F000001U, 50000, 0xFF, 1};

// The response PDU to `request_pdu_hex`, as hex.
inline std::string answer(register_space& space, std::string_view request_pdu_hex,
                          const device_identity& identity = {},
                          const client_info& client = loopback_client) {
    const std::vector<std::uint8_t> pdu = bytes(request_pdu_hex);
    std::array<std::uint8_t, max_pdu_size> out{};
    const std::size_t n = respond(pdu, space, client, identity, out);
    return hex(std::span{out}.first(n));
}

// The response ADU to the request ADU `adu_hex`, as hex: what a server puts on the wire.
// Empty when the frame is not answered.
inline std::string answer_adu(register_space& space, std::string_view adu_hex,
                              const device_identity& identity = {}) {
    const std::vector<std::uint8_t> adu = bytes(adu_hex);
    const decoded_frame f = decode_frame(adu);
    if (f.status != decode_status::complete) {
        return {};
    }
    std::array<std::uint8_t, max_pdu_size> pdu{};
    client_info client = loopback_client;
    client.unit_id = f.header.unit_id;
    const std::size_t n = respond(f.pdu, space, client, identity, pdu);
    std::array<std::uint8_t, max_adu_size> out{};
    const std::size_t m =
        encode_frame(f.header.transaction_id, f.header.unit_id, std::span{pdu}.first(n), out);
    return hex(std::span{out}.first(m));
}

} // namespace floc::modbus::test
