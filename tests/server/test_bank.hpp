// Test support: the value pattern the server tests and modbus_test_server serve, so that every
// peer knows what to expect without being told.
#pragma once

#include "floc/modbus/register_bank.hpp"

namespace floc::modbus::test {

// Input register i holds 1000 + i; discrete input i is on when i % 3 == 0.
inline void fill_test_pattern(register_bank& bank) {
    auto ir = bank.registers(table::input_registers);
    for (std::size_t i = 0; i < ir.size(); ++i) {
        ir[i] = static_cast<std::uint16_t>(1000 + i);
    }
    auto di = bank.bits(table::discrete_inputs);
    for (std::size_t i = 0; i < di.size(); ++i) {
        di[i] = i % 3 == 0 ? 1 : 0;
    }
}

} // namespace floc::modbus::test
