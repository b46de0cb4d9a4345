#include "floc/modbus/protocol.hpp"

namespace floc::modbus {

bool is_write_function(std::uint8_t function) {
    switch (static_cast<function_code>(function)) {
    case function_code::write_single_coil:
    case function_code::write_single_register:
    case function_code::write_multiple_coils:
    case function_code::write_multiple_registers:
    case function_code::mask_write_register:
    case function_code::read_write_multiple_registers:
        return true;
    default:
        return false;
    }
}

bool is_exception_code(std::uint8_t code) {
    switch (static_cast<exception_code>(code)) {
    case exception_code::illegal_function:
    case exception_code::illegal_data_address:
    case exception_code::illegal_data_value:
    case exception_code::server_device_failure:
    case exception_code::acknowledge:
    case exception_code::server_device_busy:
    case exception_code::memory_parity_error:
    case exception_code::gateway_path_unavailable:
    case exception_code::gateway_target_failed:
        return true;
    }
    return false;
}

std::string_view function_name(std::uint8_t function) {
    switch (static_cast<function_code>(function)) {
    case function_code::read_coils:
        return "read coils";
    case function_code::read_discrete_inputs:
        return "read discrete inputs";
    case function_code::read_holding_registers:
        return "read holding registers";
    case function_code::read_input_registers:
        return "read input registers";
    case function_code::write_single_coil:
        return "write single coil";
    case function_code::write_single_register:
        return "write single register";
    case function_code::write_multiple_coils:
        return "write multiple coils";
    case function_code::write_multiple_registers:
        return "write multiple registers";
    case function_code::mask_write_register:
        return "mask write register";
    case function_code::read_write_multiple_registers:
        return "read/write multiple registers";
    case function_code::encapsulated_interface:
        return "encapsulated interface transport";
    }
    return "unknown function";
}

std::string_view to_string(exception_code code) {
    switch (code) {
    case exception_code::illegal_function:
        return "illegal function";
    case exception_code::illegal_data_address:
        return "illegal data address";
    case exception_code::illegal_data_value:
        return "illegal data value";
    case exception_code::server_device_failure:
        return "server device failure";
    case exception_code::acknowledge:
        return "acknowledge";
    case exception_code::server_device_busy:
        return "server device busy";
    case exception_code::memory_parity_error:
        return "memory parity error";
    case exception_code::gateway_path_unavailable:
        return "gateway path unavailable";
    case exception_code::gateway_target_failed:
        return "gateway target device failed to respond";
    }
    return "unknown exception";
}

} // namespace floc::modbus
