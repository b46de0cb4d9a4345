// The register space a Modbus server answers from. The server decodes and validates a request,
// then asks its register space to read or write; the space decides policy: which addresses
// exist, which may be written, and by which client. Pure interface: no I/O.
#pragma once

#include "floc/modbus/protocol.hpp"
#include "floc/modbus/request.hpp"

#include <cstdint>
#include <optional>
#include <span>

namespace floc::modbus {

// Who is asking: the peer of the TCP connection and the unit id of the request.
struct client_info {
    std::uint32_t address_v4 = 0; // IPv4 address in host order, 127.0.0.1 = 0x7F000001
    std::uint16_t port = 0;       // the client's TCP port
    std::uint8_t unit_id = 0;     // unit id of the request being answered
    std::uint64_t connection = 0; // the server's number for the connection, from 1
};

// The outcome of a read or write: accepted (no value), or refused with the exception to send.
using refusal = std::optional<exception_code>;
inline constexpr refusal accepted = std::nullopt;

// What a server reads and writes. Every call names one table, a start address and a count;
// the server has already checked the quantity limits and that address + count <= 65536.
// Bits are passed one per byte (0 or 1). Calls come from one thread, one at a time.
class register_space {
public:
    virtual ~register_space() = default;

    // Fills `out` with the coils or discrete inputs from `address` on (FC 01, 02).
    [[nodiscard]] virtual refusal read_bits(table from, std::uint16_t address,
                                            std::span<std::uint8_t> out,
                                            const client_info& client) = 0;
    // Fills `out` with the holding or input registers from `address` on (FC 03, 04, 22, 23).
    [[nodiscard]] virtual refusal read_registers(table from, std::uint16_t address,
                                                 std::span<std::uint16_t> out,
                                                 const client_info& client) = 0;
    // Writes coils from `address` on (FC 05, 15); all of them or none.
    [[nodiscard]] virtual refusal write_coils(std::uint16_t address,
                                              std::span<const std::uint8_t> values,
                                              const client_info& client) = 0;
    // Writes holding registers from `address` on (FC 06, 16, 22, 23); all of them or none.
    [[nodiscard]] virtual refusal write_registers(std::uint16_t address,
                                                  std::span<const std::uint16_t> values,
                                                  const client_info& client) = 0;

protected:
    register_space() = default;
    register_space(const register_space&) = default;
    register_space& operator=(const register_space&) = default;
};

} // namespace floc::modbus
