#include "floc/modbus/request.hpp"

#include "bytes.hpp"

namespace floc::modbus {

using detail::get_u16;

namespace {

constexpr std::uint16_t coil_on = 0xFF00;
constexpr std::uint16_t coil_off = 0x0000;

parse_result refuse(exception_code code) {
    parse_result r;
    r.error = code;
    return r;
}

parse_result accept(request value) {
    parse_result r;
    r.value = value;
    return r;
}

bool in_range(std::uint16_t count, std::uint16_t max) {
    return count >= 1 && count <= max;
}

std::size_t packed_size(std::uint16_t bits) {
    return (static_cast<std::size_t>(bits) + 7U) / 8U;
}

// FC 01, 02, 03, 04: address(2) quantity(2), exactly (AppSpec §6.1-§6.4).
parse_result parse_read(std::span<const std::uint8_t> pdu, function_code fc) {
    if (pdu.size() != 5) {
        return refuse(exception_code::illegal_data_value); // implied length is wrong (§7)
    }
    const std::uint16_t address = get_u16(pdu, 1);
    const std::uint16_t count = get_u16(pdu, 3);
    switch (fc) {
    case function_code::read_coils:
    case function_code::read_discrete_inputs:
        if (!in_range(count, max_read_bits)) {
            return refuse(exception_code::illegal_data_value);
        }
        return accept(read_bits_request{fc == function_code::read_coils ? table::coils
                                                                        : table::discrete_inputs,
                                        address, count});
    default:
        if (!in_range(count, max_read_registers)) {
            return refuse(exception_code::illegal_data_value);
        }
        return accept(read_registers_request{fc == function_code::read_holding_registers
                                                 ? table::holding_registers
                                                 : table::input_registers,
                                             address, count});
    }
}

// FC 05: address(2) value(2), value 0xFF00 or 0x0000 (§6.5).
parse_result parse_write_coil(std::span<const std::uint8_t> pdu) {
    if (pdu.size() != 5) {
        return refuse(exception_code::illegal_data_value);
    }
    const std::uint16_t value = get_u16(pdu, 3);
    if (value != coil_on && value != coil_off) {
        return refuse(exception_code::illegal_data_value);
    }
    return accept(write_coil_request{get_u16(pdu, 1), value == coil_on});
}

// FC 06: address(2) value(2) (§6.6).
parse_result parse_write_register(std::span<const std::uint8_t> pdu) {
    if (pdu.size() != 5) {
        return refuse(exception_code::illegal_data_value);
    }
    return accept(write_register_request{get_u16(pdu, 1), get_u16(pdu, 3)});
}

// FC 15: address(2) quantity(2) byte count(1) packed bits (§6.11).
parse_result parse_write_coils(std::span<const std::uint8_t> pdu) {
    if (pdu.size() < 6) {
        return refuse(exception_code::illegal_data_value);
    }
    const std::uint16_t count = get_u16(pdu, 3);
    const std::size_t byte_count = pdu[5];
    if (!in_range(count, max_write_bits) || byte_count != packed_size(count) ||
        pdu.size() != 6 + byte_count) {
        return refuse(exception_code::illegal_data_value);
    }
    return accept(write_coils_request{get_u16(pdu, 1), count, pdu.subspan(6, byte_count)});
}

// FC 16: address(2) quantity(2) byte count(1) registers (§6.12).
parse_result parse_write_registers(std::span<const std::uint8_t> pdu) {
    if (pdu.size() < 6) {
        return refuse(exception_code::illegal_data_value);
    }
    const std::uint16_t count = get_u16(pdu, 3);
    const std::size_t byte_count = pdu[5];
    if (!in_range(count, max_write_registers) ||
        byte_count != 2 * static_cast<std::size_t>(count) || pdu.size() != 6 + byte_count) {
        return refuse(exception_code::illegal_data_value);
    }
    return accept(write_registers_request{get_u16(pdu, 1), count, pdu.subspan(6, byte_count)});
}

// FC 22: address(2) and mask(2) or mask(2) (§6.16).
parse_result parse_mask_write(std::span<const std::uint8_t> pdu) {
    if (pdu.size() != 7) {
        return refuse(exception_code::illegal_data_value);
    }
    return accept(mask_write_request{get_u16(pdu, 1), get_u16(pdu, 3), get_u16(pdu, 5)});
}

// FC 23: read address(2) read quantity(2) write address(2) write quantity(2) byte count(1)
// registers (§6.17).
parse_result parse_read_write(std::span<const std::uint8_t> pdu) {
    if (pdu.size() < 10) {
        return refuse(exception_code::illegal_data_value);
    }
    const std::uint16_t read_count = get_u16(pdu, 3);
    const std::uint16_t write_count = get_u16(pdu, 7);
    const std::size_t byte_count = pdu[9];
    if (!in_range(read_count, max_read_registers) ||
        !in_range(write_count, max_read_write_registers) ||
        byte_count != 2 * static_cast<std::size_t>(write_count) || pdu.size() != 10 + byte_count) {
        return refuse(exception_code::illegal_data_value);
    }
    return accept(read_write_registers_request{get_u16(pdu, 1), read_count, get_u16(pdu, 5),
                                               write_count, pdu.subspan(10, byte_count)});
}

// FC 43: MEI type(1); with MEI 14, read device id code(1) object id(1) (§6.19, §6.21).
parse_result parse_encapsulated(std::span<const std::uint8_t> pdu) {
    if (pdu.size() < 2) {
        return refuse(exception_code::illegal_data_value);
    }
    if (pdu[1] != mei_device_identification) {
        // MEI 13 (CANopen) is not served; the other MEI types are reserved (AppSpec Annex A).
        return refuse(exception_code::illegal_function);
    }
    if (pdu.size() != 4) {
        return refuse(exception_code::illegal_data_value);
    }
    const std::uint8_t code = pdu[2];
    if (code < 1 || code > 4) {
        return refuse(exception_code::illegal_data_value); // §6.21: illegal read device id code
    }
    return accept(device_id_request{static_cast<device_id_access>(code), pdu[3]});
}

} // namespace

parse_result parse_request(std::span<const std::uint8_t> pdu) {
    if (pdu.empty()) {
        return refuse(exception_code::illegal_function);
    }
    const auto fc = static_cast<function_code>(pdu[0]);
    switch (fc) {
    case function_code::read_coils:
    case function_code::read_discrete_inputs:
    case function_code::read_holding_registers:
    case function_code::read_input_registers:
        return parse_read(pdu, fc);
    case function_code::write_single_coil:
        return parse_write_coil(pdu);
    case function_code::write_single_register:
        return parse_write_register(pdu);
    case function_code::write_multiple_coils:
        return parse_write_coils(pdu);
    case function_code::write_multiple_registers:
        return parse_write_registers(pdu);
    case function_code::mask_write_register:
        return parse_mask_write(pdu);
    case function_code::read_write_multiple_registers:
        return parse_read_write(pdu);
    case function_code::encapsulated_interface:
        return parse_encapsulated(pdu);
    }
    return refuse(exception_code::illegal_function);
}

request_spans spans_of(const request& r) {
    struct visitor {
        request_spans operator()(const read_bits_request& q) const {
            return one(q.from, q.address, q.count);
        }
        request_spans operator()(const read_registers_request& q) const {
            return one(q.from, q.address, q.count);
        }
        request_spans operator()(const write_coil_request& q) const {
            return one(table::coils, q.address, 1);
        }
        request_spans operator()(const write_register_request& q) const {
            return one(table::holding_registers, q.address, 1);
        }
        request_spans operator()(const write_coils_request& q) const {
            return one(table::coils, q.address, q.count);
        }
        request_spans operator()(const write_registers_request& q) const {
            return one(table::holding_registers, q.address, q.count);
        }
        request_spans operator()(const mask_write_request& q) const {
            return one(table::holding_registers, q.address, 1);
        }
        request_spans operator()(const read_write_registers_request& q) const {
            request_spans s = one(table::holding_registers, q.write_address, q.write_count);
            s.spans[1] = address_span{table::holding_registers, q.read_address, q.read_count};
            s.count = 2;
            return s;
        }
        request_spans operator()(const device_id_request& /*q*/) const { return {}; }

        static request_spans one(table in, std::uint16_t address, std::uint16_t count) {
            request_spans s;
            s.spans[0] = address_span{in, address, count};
            s.count = 1;
            return s;
        }
    };
    return std::visit(visitor{}, r);
}

} // namespace floc::modbus
