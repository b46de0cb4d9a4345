#include "floc/modbus/respond.hpp"

#include "bytes.hpp"

#include <algorithm>
#include <array>
#include <string_view>

namespace floc::modbus {

using detail::get_u16;
using detail::put_u16;

namespace {

constexpr std::uint32_t address_space = 0x10000; // PDU addresses 0..65535 (AppSpec §4.4)

// AppSpec §6.x: the start address and start + quantity must both be inside the table; a span
// that would run past address 65535 is outside every table.
bool fits(std::uint16_t address, std::size_t count) {
    return static_cast<std::uint32_t>(address) + count <= address_space;
}

// Reply builder over the caller's buffer (at least max_pdu_size bytes).
class reply {
public:
    reply(function_code function, std::span<std::uint8_t> out)
        : function_(static_cast<std::uint8_t>(function)), out_(out) {}

    [[nodiscard]] std::size_t exception(exception_code code) const {
        return encode_exception(function_, code, out_);
    }
    [[nodiscard]] std::span<std::uint8_t> out() const { return out_; }
    [[nodiscard]] std::uint8_t function() const { return function_; }

private:
    std::uint8_t function_;
    std::span<std::uint8_t> out_;
};

// Normal response of FC 01, 02: byte count, then the bits packed LSB first, the last byte padded
// with zeros (AppSpec §6.1).
std::size_t encode_bits(const reply& rep, std::span<const std::uint8_t> bits) {
    const std::span<std::uint8_t> out = rep.out();
    const std::size_t byte_count = (bits.size() + 7U) / 8U;
    out[0] = rep.function();
    out[1] = static_cast<std::uint8_t>(byte_count);
    std::fill_n(out.begin() + 2, byte_count, std::uint8_t{0});
    for (std::size_t i = 0; i < bits.size(); ++i) {
        if (bits[i] != 0) {
            out[2 + i / 8] = static_cast<std::uint8_t>(out[2 + i / 8] | (1U << (i % 8)));
        }
    }
    return 2 + byte_count;
}

// Normal response of FC 03, 04, 23: byte count, then the registers big-endian (AppSpec §6.3).
std::size_t encode_registers(const reply& rep, std::span<const std::uint16_t> values) {
    const std::span<std::uint8_t> out = rep.out();
    out[0] = rep.function();
    out[1] = static_cast<std::uint8_t>(2 * values.size());
    for (std::size_t i = 0; i < values.size(); ++i) {
        put_u16(out, 2 + 2 * i, values[i]);
    }
    return 2 + 2 * values.size();
}

// Response of a write: the exception, or function, address and a second field (the value for
// FC 05 and 06, the quantity for FC 15 and 16) (AppSpec §6.5, §6.6, §6.11, §6.12).
std::size_t answer_write(const reply& rep, refusal outcome, std::uint16_t address,
                         std::uint16_t second) {
    if (outcome) {
        return rep.exception(*outcome);
    }
    const std::span<std::uint8_t> out = rep.out();
    out[0] = rep.function();
    put_u16(out, 1, address);
    put_u16(out, 3, second);
    return 5;
}

// Big-endian register bytes to values.
std::span<const std::uint16_t> unpack_registers(std::span<const std::uint8_t> bytes,
                                                std::span<std::uint16_t> into) {
    const std::size_t n = bytes.size() / 2;
    for (std::size_t i = 0; i < n; ++i) {
        into[i] = get_u16(bytes, 2 * i);
    }
    return into.first(n);
}

// Packed coil bytes (first coil in the lowest bit) to one byte per coil.
std::span<const std::uint8_t> unpack_bits(std::span<const std::uint8_t> packed, std::size_t count,
                                          std::span<std::uint8_t> into) {
    for (std::size_t i = 0; i < count; ++i) {
        into[i] = static_cast<std::uint8_t>((static_cast<unsigned>(packed[i / 8]) >> (i % 8)) & 1U);
    }
    return into.first(count);
}

std::size_t read_bits(const read_bits_request& q, register_space& space, const client_info& who,
                      std::span<std::uint8_t> out) {
    const reply rep{q.from == table::coils ? function_code::read_coils
                                           : function_code::read_discrete_inputs,
                    out};
    if (!fits(q.address, q.count)) {
        return rep.exception(exception_code::illegal_data_address);
    }
    std::array<std::uint8_t, max_read_bits> bits{};
    const std::span<std::uint8_t> view{bits.data(), q.count};
    if (const refusal no = space.read_bits(q.from, q.address, view, who)) {
        return rep.exception(*no);
    }
    return encode_bits(rep, view);
}

std::size_t read_registers(const read_registers_request& q, register_space& space,
                           const client_info& who, std::span<std::uint8_t> out) {
    const reply rep{q.from == table::holding_registers ? function_code::read_holding_registers
                                                       : function_code::read_input_registers,
                    out};
    if (!fits(q.address, q.count)) {
        return rep.exception(exception_code::illegal_data_address);
    }
    std::array<std::uint16_t, max_read_registers> values{};
    const std::span<std::uint16_t> view{values.data(), q.count};
    if (const refusal no = space.read_registers(q.from, q.address, view, who)) {
        return rep.exception(*no);
    }
    return encode_registers(rep, view);
}

std::size_t write_coil(const write_coil_request& q, register_space& space, const client_info& who,
                       std::span<std::uint8_t> out) {
    const reply rep{function_code::write_single_coil, out};
    const std::array<std::uint8_t, 1> value{static_cast<std::uint8_t>(q.on ? 1 : 0)};
    return answer_write(rep, space.write_coils(q.address, value, who), q.address,
                        q.on ? 0xFF00 : 0x0000);
}

std::size_t write_register(const write_register_request& q, register_space& space,
                           const client_info& who, std::span<std::uint8_t> out) {
    const reply rep{function_code::write_single_register, out};
    const std::array<std::uint16_t, 1> value{q.value};
    return answer_write(rep, space.write_registers(q.address, value, who), q.address, q.value);
}

std::size_t write_coils(const write_coils_request& q, register_space& space, const client_info& who,
                        std::span<std::uint8_t> out) {
    const reply rep{function_code::write_multiple_coils, out};
    if (!fits(q.address, q.count)) {
        return rep.exception(exception_code::illegal_data_address);
    }
    std::array<std::uint8_t, max_write_bits> bits{};
    return answer_write(rep,
                        space.write_coils(q.address, unpack_bits(q.packed, q.count, bits), who),
                        q.address, q.count);
}

std::size_t write_registers(const write_registers_request& q, register_space& space,
                            const client_info& who, std::span<std::uint8_t> out) {
    const reply rep{function_code::write_multiple_registers, out};
    if (!fits(q.address, q.count)) {
        return rep.exception(exception_code::illegal_data_address);
    }
    std::array<std::uint16_t, max_write_registers> values{};
    return answer_write(rep,
                        space.write_registers(q.address, unpack_registers(q.values, values), who),
                        q.address, q.count);
}

// FC 22 (AppSpec §6.16): read the register, combine, write it back; the response echoes the
// request.
std::size_t mask_write(const mask_write_request& q, register_space& space, const client_info& who,
                       std::span<std::uint8_t> out) {
    const reply rep{function_code::mask_write_register, out};
    std::array<std::uint16_t, 1> value{};
    if (const refusal no = space.read_registers(table::holding_registers, q.address, value, who)) {
        return rep.exception(*no);
    }
    value[0] = static_cast<std::uint16_t>((value[0] & q.and_mask) |
                                          (q.or_mask & static_cast<std::uint16_t>(~q.and_mask)));
    if (const refusal no = space.write_registers(q.address, value, who)) {
        return rep.exception(*no);
    }
    out[0] = rep.function();
    put_u16(out, 1, q.address);
    put_u16(out, 3, q.and_mask);
    put_u16(out, 5, q.or_mask);
    return 7;
}

// FC 23 (AppSpec §6.17): both ranges are checked before anything is written. A trial read proves
// the read range, the write proves its own, then the read returns the state after the write.
std::size_t read_write(const read_write_registers_request& q, register_space& space,
                       const client_info& who, std::span<std::uint8_t> out) {
    const reply rep{function_code::read_write_multiple_registers, out};
    if (!fits(q.read_address, q.read_count) || !fits(q.write_address, q.write_count)) {
        return rep.exception(exception_code::illegal_data_address);
    }
    std::array<std::uint16_t, max_read_registers> read_values{};
    const std::span<std::uint16_t> read_view{read_values.data(), q.read_count};
    if (const refusal no =
            space.read_registers(table::holding_registers, q.read_address, read_view, who)) {
        return rep.exception(*no);
    }
    std::array<std::uint16_t, max_read_write_registers> write_values{};
    if (const refusal no =
            space.write_registers(q.write_address, unpack_registers(q.values, write_values), who)) {
        return rep.exception(*no);
    }
    if (const refusal no =
            space.read_registers(table::holding_registers, q.read_address, read_view, who)) {
        return rep.exception(*no);
    }
    return encode_registers(rep, read_view);
}

// --- Read device identification (AppSpec §6.21) ------------------------------------------------

constexpr std::uint8_t last_basic_object = 0x02;
constexpr std::uint8_t last_regular_object = 0x06;
constexpr std::size_t device_id_header = 7; // 2B 0E code conformity more_follows next count

std::string_view object_value(const device_identity& id, std::uint8_t object) {
    switch (object) {
    case 0x00:
        return id.vendor_name;
    case 0x01:
        return id.product_code;
    case 0x02:
        return id.revision;
    case 0x03:
        return id.vendor_url;
    case 0x04:
        return id.product_name;
    case 0x05:
        return id.model_name;
    case 0x06:
        return id.application_name;
    default:
        return {};
    }
}

// Basic objects always exist; regular ones when they have a value; there are no extended ones.
bool object_exists(const device_identity& id, std::uint8_t object) {
    return object <= last_basic_object ||
           (object <= last_regular_object && !object_value(id, object).empty());
}

bool has_regular_objects(const device_identity& id) {
    for (std::uint8_t o = last_basic_object + 1; o <= last_regular_object; ++o) {
        if (object_exists(id, o)) {
            return true;
        }
    }
    return false;
}

std::size_t read_device_id(const device_id_request& q, const device_identity& id,
                           const reply& rep) {
    const bool regular = has_regular_objects(id);
    // 0x81 basic, 0x82 regular; the 0x80 bit says that individual access is supported too.
    const std::uint8_t conformity = regular ? 0x82 : 0x81;
    const std::uint8_t last = regular ? last_regular_object : last_basic_object;

    std::uint8_t first = q.object_id;
    std::uint8_t stop = q.object_id; // last object id the request may return
    if (q.access == device_id_access::individual) {
        if (!object_exists(id, q.object_id)) {
            return rep.exception(exception_code::illegal_data_address);
        }
    } else {
        // A stream asks for a category; a category above the device's level is served at the
        // device's level. An object id outside the category, or unknown, restarts at 0.
        stop = q.access == device_id_access::basic ? last_basic_object : last;
        if (first > stop || !object_exists(id, first)) {
            first = 0;
        }
    }

    const std::span<std::uint8_t> out = rep.out();
    out[0] = rep.function();
    out[1] = mei_device_identification;
    out[2] = static_cast<std::uint8_t>(q.access);
    out[3] = conformity;
    std::size_t at = device_id_header;
    std::uint8_t objects = 0;
    std::uint8_t more_follows = 0x00;
    std::uint8_t next_object = 0x00;
    for (unsigned o = first; o <= stop; ++o) {
        const auto object = static_cast<std::uint8_t>(o);
        if (!object_exists(id, object)) {
            continue;
        }
        const std::string_view value = object_value(id, object).substr(0, max_identity_object_size);
        if (at + 2 + value.size() > max_pdu_size) {
            // An object is never split: the client asks again from next_object (§6.21).
            more_follows = 0xFF;
            next_object = object;
            break;
        }
        out[at] = object;
        out[at + 1] = static_cast<std::uint8_t>(value.size());
        std::copy(value.begin(), value.end(), out.begin() + static_cast<std::ptrdiff_t>(at + 2));
        at += 2 + value.size();
        ++objects;
    }
    out[4] = more_follows;
    out[5] = next_object;
    out[6] = objects;
    return at;
}

} // namespace

std::size_t encode_exception(std::uint8_t function, exception_code code,
                             std::span<std::uint8_t> out) {
    if (out.size() < 2) {
        return 0;
    }
    out[0] = static_cast<std::uint8_t>(function | exception_flag);
    out[1] = static_cast<std::uint8_t>(code);
    return 2;
}

std::size_t handle_request(const request& r, register_space& space, const client_info& who,
                           const device_identity& identity, std::span<std::uint8_t> out) {
    if (out.size() < max_pdu_size) {
        return 0;
    }
    struct visitor {
        register_space& space;
        const client_info& who;
        const device_identity& identity;
        std::span<std::uint8_t> out;

        std::size_t operator()(const read_bits_request& q) const {
            return read_bits(q, space, who, out);
        }
        std::size_t operator()(const read_registers_request& q) const {
            return read_registers(q, space, who, out);
        }
        std::size_t operator()(const write_coil_request& q) const {
            return write_coil(q, space, who, out);
        }
        std::size_t operator()(const write_register_request& q) const {
            return write_register(q, space, who, out);
        }
        std::size_t operator()(const write_coils_request& q) const {
            return write_coils(q, space, who, out);
        }
        std::size_t operator()(const write_registers_request& q) const {
            return write_registers(q, space, who, out);
        }
        std::size_t operator()(const mask_write_request& q) const {
            return mask_write(q, space, who, out);
        }
        std::size_t operator()(const read_write_registers_request& q) const {
            return read_write(q, space, who, out);
        }
        std::size_t operator()(const device_id_request& q) const {
            return read_device_id(q, identity, reply{function_code::encapsulated_interface, out});
        }
    };
    return std::visit(visitor{space, who, identity, out}, r);
}

std::size_t respond(std::span<const std::uint8_t> pdu, register_space& space,
                    const client_info& client, const device_identity& identity,
                    std::span<std::uint8_t> out) {
    if (out.size() < max_pdu_size) {
        return 0;
    }
    const parse_result parsed = parse_request(pdu);
    if (!parsed.ok()) {
        return encode_exception(pdu.empty() ? 0 : pdu[0], *parsed.error, out);
    }
    return handle_request(parsed.value, space, client, identity, out);
}

} // namespace floc::modbus
