#include "floc/modbus/register_bank.hpp"

#include <algorithm>
#include <utility>

namespace floc::modbus {

namespace {

constexpr std::uint32_t table_limit = 0x10000;

std::size_t clamp_size(std::uint32_t n) {
    return std::min(n, table_limit);
}

bool inside(std::size_t table_size, std::uint16_t address, std::size_t count) {
    return static_cast<std::size_t>(address) + count <= table_size;
}

} // namespace

register_bank::register_bank(bank_sizes sizes)
    : coils_(clamp_size(sizes.coils)), discrete_inputs_(clamp_size(sizes.discrete_inputs)),
      holding_(clamp_size(sizes.holding_registers)), input_(clamp_size(sizes.input_registers)),
      coil_protection_(coils_.size()), holding_protection_(holding_.size()) {}

void register_bank::protect(table in, std::uint16_t first, std::uint32_t count,
                            exception_code code) {
    std::vector<std::uint8_t>* marks = nullptr;
    if (in == table::coils) {
        marks = &coil_protection_;
    } else if (in == table::holding_registers) {
        marks = &holding_protection_;
    } else {
        return;
    }
    const std::size_t begin = std::min<std::size_t>(first, marks->size());
    const std::size_t end = std::min<std::size_t>(begin + count, marks->size());
    std::fill(marks->begin() + static_cast<std::ptrdiff_t>(begin),
              marks->begin() + static_cast<std::ptrdiff_t>(end), static_cast<std::uint8_t>(code));
}

void register_bank::set_write_guard(write_guard guard) {
    guard_ = std::move(guard);
}

std::span<std::uint8_t> register_bank::bits(table in) {
    return in == table::coils ? std::span{coils_} : std::span{discrete_inputs_};
}

std::span<const std::uint8_t> register_bank::bits(table in) const {
    return in == table::coils ? std::span{coils_} : std::span{discrete_inputs_};
}

std::span<std::uint16_t> register_bank::registers(table in) {
    return in == table::holding_registers ? std::span{holding_} : std::span{input_};
}

std::span<const std::uint16_t> register_bank::registers(table in) const {
    return in == table::holding_registers ? std::span{holding_} : std::span{input_};
}

refusal register_bank::read_bits(table from, std::uint16_t address, std::span<std::uint8_t> out,
                                 const client_info& /*client*/) {
    const std::span<const std::uint8_t> source = std::as_const(*this).bits(from);
    if ((from != table::coils && from != table::discrete_inputs) ||
        !inside(source.size(), address, out.size())) {
        return exception_code::illegal_data_address;
    }
    std::copy_n(source.begin() + address, out.size(), out.begin());
    return accepted;
}

refusal register_bank::read_registers(table from, std::uint16_t address,
                                      std::span<std::uint16_t> out, const client_info& /*client*/) {
    const std::span<const std::uint16_t> source = std::as_const(*this).registers(from);
    if ((from != table::holding_registers && from != table::input_registers) ||
        !inside(source.size(), address, out.size())) {
        return exception_code::illegal_data_address;
    }
    std::copy_n(source.begin() + address, out.size(), out.begin());
    return accepted;
}

refusal register_bank::check_write(table in, std::uint16_t address, std::size_t count,
                                   const client_info& client) const {
    const std::vector<std::uint8_t>& marks =
        in == table::coils ? coil_protection_ : holding_protection_;
    if (!inside(marks.size(), address, count)) {
        return exception_code::illegal_data_address;
    }
    const auto first = marks.begin() + address;
    const auto protected_at = std::find_if(first, first + static_cast<std::ptrdiff_t>(count),
                                           [](std::uint8_t m) { return m != 0; });
    if (protected_at != first + static_cast<std::ptrdiff_t>(count)) {
        return static_cast<exception_code>(*protected_at);
    }
    if (guard_) {
        return guard_(client, in, address, count);
    }
    return accepted;
}

refusal register_bank::write_coils(std::uint16_t address, std::span<const std::uint8_t> values,
                                   const client_info& client) {
    if (const refusal no = check_write(table::coils, address, values.size(), client)) {
        return no;
    }
    std::transform(values.begin(), values.end(), coils_.begin() + address,
                   [](std::uint8_t v) { return static_cast<std::uint8_t>(v != 0 ? 1 : 0); });
    return accepted;
}

refusal register_bank::write_registers(std::uint16_t address, std::span<const std::uint16_t> values,
                                       const client_info& client) {
    if (const refusal no = check_write(table::holding_registers, address, values.size(), client)) {
        return no;
    }
    std::copy(values.begin(), values.end(), holding_.begin() + address);
    return accepted;
}

} // namespace floc::modbus
