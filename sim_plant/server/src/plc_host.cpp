#include "floc/sim/plc_host.hpp"

#include <algorithm>

namespace floc::sim {
namespace {

// The simulator's tables are numbered by their read function code, like the library's order.
register_table table_of(modbus::table t) {
    switch (t) {
    case modbus::table::coils:
        return register_table::coils;
    case modbus::table::discrete_inputs:
        return register_table::discrete_inputs;
    case modbus::table::holding_registers:
        return register_table::holding_registers;
    case modbus::table::input_registers:
        return register_table::input_registers;
    }
    return register_table::input_registers;
}

} // namespace

plc_host::plc_host(const scenario& s, std::vector<double> x0)
    : scenario_(s), sim_(make_simulation(s, std::move(x0))) {
    sim_.sample_due();
    refresh();
}

bool plc_host::advance_to(double t_s) {
    const bool ok = sim_.advance_to(t_s);
    refresh();
    return ok;
}

modbus::refusal plc_host::write_holding(std::uint16_t first, std::span<const std::uint16_t> words) {
    plant_controls u = sim_.controls();
    const write_result r = apply_write(scenario_.registers, first, words, u);
    switch (r.status) {
    case write_status::illegal_address:
        last_write_ = "refused: " + r.reason;
        return modbus::exception_code::illegal_data_address;
    case write_status::not_a_number:
        last_write_ = "refused: " + r.reason;
        return modbus::exception_code::server_device_failure;
    case write_status::ok:
        break;
    }
    last_write_ = "holding registers " + std::to_string(first) + "-" +
                  std::to_string(first + words.size() - 1) + " written";
    for (const std::string& label : r.clamped) {
        last_write_ += "; " + label + " clamped to its limits";
    }
    set_controls(u);
    return modbus::accepted;
}

void plc_host::set_controls(const plant_controls& u) {
    sim_.set_controls(u);
    refresh();
}

void plc_host::refresh() {
    register_inputs in;
    in.plant_time_s = sim_.time_s();
    in.sensors = &sim_.sensors();
    in.controls = &sim_.controls();
    const plant_output out = sim_.outputs();
    in.outputs = &out;
    in.power_failed = power_failed_at(sim_.events(), sim_.time_s());
    encode_into(scenario_.registers, in, image_);
}

plc_space::plc_space(plc_host& host, hooks h) : host_(host), hooks_(std::move(h)) {}

modbus::refusal plc_space::read(modbus::table from, std::uint16_t address, std::size_t count,
                                const std::function<void(std::size_t, std::uint16_t)>& put) {
    if (hooks_.before_access) {
        hooks_.before_access();
    }
    const register_table t = table_of(from);
    const auto n = static_cast<std::uint16_t>(count);
    if (!host_.image().readable(t, address, n)) {
        return modbus::exception_code::illegal_data_address;
    }
    for (std::size_t i = 0; i < count; ++i) {
        put(i, host_.image().value(t, static_cast<std::uint16_t>(address + i)));
    }
    if (hooks_.plant_time_read && touches_plant_time(host_.spec().registers, t, address, n)) {
        hooks_.plant_time_read();
    }
    return modbus::accepted;
}

modbus::refusal plc_space::read_bits(modbus::table from, std::uint16_t address,
                                     std::span<std::uint8_t> out, const modbus::client_info&) {
    return read(from, address, out.size(), [&](std::size_t i, std::uint16_t v) {
        out[i] = static_cast<std::uint8_t>(v != 0 ? 1 : 0);
    });
}

modbus::refusal plc_space::read_registers(modbus::table from, std::uint16_t address,
                                          std::span<std::uint16_t> out,
                                          const modbus::client_info&) {
    return read(from, address, out.size(), [&](std::size_t i, std::uint16_t v) { out[i] = v; });
}

modbus::refusal plc_space::write_coils(std::uint16_t, std::span<const std::uint8_t>,
                                       const modbus::client_info&) {
    if (hooks_.before_access) {
        hooks_.before_access();
    }
    return modbus::exception_code::illegal_data_address;
}

modbus::refusal plc_space::write_registers(std::uint16_t address,
                                           std::span<const std::uint16_t> values,
                                           const modbus::client_info& client) {
    if (hooks_.before_access) {
        hooks_.before_access();
    }
    const modbus::refusal r = host_.write_holding(address, values);
    if (hooks_.written) {
        hooks_.written(client, r);
    }
    return r;
}

std::vector<modbus::fault_rule> fault_rules(const std::vector<plant_event>& events,
                                            const std::vector<std::size_t>& active) {
    std::vector<modbus::fault_rule> rules;
    for (const std::size_t i : active) {
        const plant_event& e = events.at(i);
        modbus::fault_rule r;
        switch (e.kind) {
        case event_kind::slow_replies:
            r.kind = modbus::fault_kind::delay_reply;
            r.delay =
                std::chrono::milliseconds{static_cast<std::int64_t>(e.delay_s * 1000.0 + 0.5)};
            break;
        case event_kind::dropped_connections:
            r.kind = modbus::fault_kind::drop_connection;
            break;
        case event_kind::exception_replies:
            r.kind = modbus::fault_kind::exception_reply;
            r.exception = static_cast<modbus::exception_code>(e.exception);
            break;
        case event_kind::wrong_transaction_id:
            r.kind = modbus::fault_kind::wrong_transaction_id;
            break;
        case event_kind::link_loss:
        case event_kind::blower_trip:
        case event_kind::power_failure:
            continue;
        }
        r.function = e.function;
        r.first_address = e.first_address;
        r.last_address = e.last_address;
        rules.push_back(r);
    }
    return rules;
}

} // namespace floc::sim
