// Modbus constants: function codes, exception codes and the size limits of the MODBUS Application
// Protocol Specification V1.1b3 (AppSpec) and the MODBUS Messaging on TCP/IP Implementation
// Guide V1.0b (TCP guide). Pure: no I/O.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string_view>

namespace floc::modbus {

// --- Sizes (AppSpec §4.1, TCP guide §3.1.3)
// -------------------------------------------------------
inline constexpr std::size_t max_pdu_size = 253; // function code + data
inline constexpr std::size_t mbap_size = 7;      // transaction, protocol, length, unit id
inline constexpr std::size_t max_adu_size = mbap_size + max_pdu_size; // 260 bytes
inline constexpr std::uint16_t min_mbap_length = 2;                   // unit id + function code
inline constexpr std::uint16_t max_mbap_length = 254;                 // unit id + a 253-byte PDU

// --- Quantity limits per request (AppSpec §6)
// -----------------------------------------------------
inline constexpr std::uint16_t max_read_bits = 2000;           // FC 01, 02 (§6.1, §6.2)
inline constexpr std::uint16_t max_read_registers = 125;       // FC 03, 04, read part of 23
inline constexpr std::uint16_t max_write_bits = 1968;          // FC 15 (§6.11)
inline constexpr std::uint16_t max_write_registers = 123;      // FC 16 (§6.12)
inline constexpr std::uint16_t max_read_write_registers = 121; // write part of FC 23 (§6.17)

// The function codes this library serves. Every other code is answered with exception 01.
enum class function_code : std::uint8_t {
    read_coils = 0x01,
    read_discrete_inputs = 0x02,
    read_holding_registers = 0x03,
    read_input_registers = 0x04,
    write_single_coil = 0x05,
    write_single_register = 0x06,
    write_multiple_coils = 0x0F,
    write_multiple_registers = 0x10,
    mask_write_register = 0x16,
    read_write_multiple_registers = 0x17,
    encapsulated_interface = 0x2B, // with MEI type 0x0E: read device identification
};

inline constexpr std::uint8_t mei_device_identification = 0x0E; // AppSpec §6.21
inline constexpr std::uint8_t exception_flag = 0x80; // added to the function code of an exception

// Exception codes (AppSpec §7).
enum class exception_code : std::uint8_t {
    illegal_function = 0x01,
    illegal_data_address = 0x02,
    illegal_data_value = 0x03,
    server_device_failure = 0x04,
    acknowledge = 0x05,
    server_device_busy = 0x06,
    memory_parity_error = 0x08,
    gateway_path_unavailable = 0x0A,
    gateway_target_failed = 0x0B,
};

// True for the function codes that change a coil or a register (05, 06, 15, 16, 22, 23).
[[nodiscard]] bool is_write_function(std::uint8_t function);

// True for a byte that is one of the exception codes above.
[[nodiscard]] bool is_exception_code(std::uint8_t code);

// The spec's name of a function code ("read holding registers"), or "unknown function".
[[nodiscard]] std::string_view function_name(std::uint8_t function);

// The spec's name of an exception code ("illegal data address"), or "unknown exception".
[[nodiscard]] std::string_view to_string(exception_code code);

} // namespace floc::modbus
