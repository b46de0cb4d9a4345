// An in-memory register space: four tables starting at address 0, read-only ranges and an
// optional per-client write guard. The simulator and the tests serve from it.
#pragma once

#include "floc/modbus/register_space.hpp"

#include <cstdint>
#include <functional>
#include <span>
#include <vector>

namespace floc::modbus {

// How many elements each table holds; addresses run from 0 to size - 1 (at most 65536).
struct bank_sizes {
    std::uint32_t coils = 0;
    std::uint32_t discrete_inputs = 0;
    std::uint32_t holding_registers = 0;
    std::uint32_t input_registers = 0;
};

// Asked before every client write that the read-only ranges allow: accept, or refuse with a code.
using write_guard = std::function<refusal(const client_info& client, table in,
                                          std::uint16_t address, std::size_t count)>;

class register_bank final : public register_space {
public:
    explicit register_bank(bank_sizes sizes);
    register_bank(const register_bank&) = delete;
    register_bank& operator=(const register_bank&) = delete;

    // Refuses client writes to coils or holding registers [first, first + count) with `code`.
    // Discrete inputs and input registers are read-only to clients anyway.
    void protect(table in, std::uint16_t first, std::uint32_t count,
                 exception_code code = exception_code::illegal_data_address);
    // Installs the per-client write policy (empty: every client may write the writable ranges).
    void set_write_guard(write_guard guard);

    // The owner's view of a bit table (coils, discrete inputs), one byte 0/1 per bit.
    [[nodiscard]] std::span<std::uint8_t> bits(table in);
    [[nodiscard]] std::span<const std::uint8_t> bits(table in) const;
    // The owner's view of a register table (holding, input registers).
    [[nodiscard]] std::span<std::uint16_t> registers(table in);
    [[nodiscard]] std::span<const std::uint16_t> registers(table in) const;

    // register_space: addresses past the end of a table are refused with exception 02.
    [[nodiscard]] refusal read_bits(table from, std::uint16_t address, std::span<std::uint8_t> out,
                                    const client_info& client) override;
    [[nodiscard]] refusal read_registers(table from, std::uint16_t address,
                                         std::span<std::uint16_t> out,
                                         const client_info& client) override;
    [[nodiscard]] refusal write_coils(std::uint16_t address, std::span<const std::uint8_t> values,
                                      const client_info& client) override;
    [[nodiscard]] refusal write_registers(std::uint16_t address,
                                          std::span<const std::uint16_t> values,
                                          const client_info& client) override;

private:
    [[nodiscard]] refusal check_write(table in, std::uint16_t address, std::size_t count,
                                      const client_info& client) const;

    std::vector<std::uint8_t> coils_;
    std::vector<std::uint8_t> discrete_inputs_;
    std::vector<std::uint16_t> holding_;
    std::vector<std::uint16_t> input_;
    std::vector<std::uint8_t> coil_protection_;    // 0 writable, else the exception code
    std::vector<std::uint8_t> holding_protection_; // 0 writable, else the exception code
    write_guard guard_;
};

} // namespace floc::modbus
