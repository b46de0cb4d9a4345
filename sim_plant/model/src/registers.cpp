#include "floc/sim/registers.hpp"

#include <algorithm>
#include <bit>
#include <cmath>
#include <limits>

namespace floc::sim {
namespace {

const double nan = std::numeric_limits<double>::quiet_NaN();

double to_engineering(const register_entry& e, double canonical) {
    return e.unit != nullptr ? units::from_canonical(canonical, *e.unit) : canonical;
}

double to_canonical(const register_entry& e, double engineering) {
    return e.unit != nullptr ? units::to_canonical(engineering, *e.unit) : engineering;
}

std::array<std::uint16_t, 2> split(std::uint32_t v, register_word_order o) {
    const auto hi = static_cast<std::uint16_t>(v >> 16U);
    const auto lo = static_cast<std::uint16_t>(v & 0xFFFFU);
    const auto swap = [](std::uint16_t w) { return static_cast<std::uint16_t>((w << 8U) | (w >> 8U)); };
    switch (o) {
    case register_word_order::abcd: return {hi, lo};
    case register_word_order::badc: return {swap(hi), swap(lo)};
    case register_word_order::cdab: return {lo, hi};
    case register_word_order::dcba: return {swap(lo), swap(hi)};
    }
    return {hi, lo};
}

std::uint32_t join(std::uint16_t w0, std::uint16_t w1, register_word_order o) {
    const auto swap = [](std::uint16_t w) { return static_cast<std::uint16_t>((w << 8U) | (w >> 8U)); };
    std::uint16_t hi = w0;
    std::uint16_t lo = w1;
    switch (o) {
    case register_word_order::abcd: break;
    case register_word_order::badc: hi = swap(w0); lo = swap(w1); break;
    case register_word_order::cdab: hi = w1; lo = w0; break;
    case register_word_order::dcba: hi = swap(w1); lo = swap(w0); break;
    }
    return (std::uint32_t{hi} << 16U) | lo;
}

double setpoint_value(const register_entry& e, const plant_controls& u) {
    if (e.train >= u.trains.size()) {
        return nan;
    }
    const train_controls& t = u.trains[e.train];
    switch (e.setpoint) {
    case setpoint_kind::do_setpoint:
        return e.zone < t.zones.size() ? t.zones[e.zone].do_setpoint_g_per_m3 : nan;
    case setpoint_kind::kla:
        return e.zone < t.zones.size() ? t.zones[e.zone].kla_per_d : nan;
    case setpoint_kind::ras_flow: return t.ras_flow_m3_per_d;
    case setpoint_kind::ras_ratio: return t.ras_ratio;
    case setpoint_kind::was_flow: return t.was_flow_m3_per_d;
    case setpoint_kind::recycle_flow: return t.recycle_flow_m3_per_d;
    case setpoint_kind::nitrate_setpoint: return t.nitrate_setpoint_g_per_m3;
    }
    return nan;
}

} // namespace

void store_setpoint(plant_controls& u, setpoint_kind kind, std::size_t train, std::size_t zone, double v) {
    train_controls& t = u.trains.at(train);
    switch (kind) {
    case setpoint_kind::do_setpoint: t.zones.at(zone).do_setpoint_g_per_m3 = v; break;
    case setpoint_kind::kla: t.zones.at(zone).kla_per_d = v; break;
    case setpoint_kind::ras_flow: t.ras_flow_m3_per_d = v; break;
    case setpoint_kind::ras_ratio: t.ras_ratio = v; break;
    case setpoint_kind::was_flow: t.was_flow_m3_per_d = v; break;
    case setpoint_kind::recycle_flow: t.recycle_flow_m3_per_d = v; break;
    case setpoint_kind::nitrate_setpoint: t.nitrate_setpoint_g_per_m3 = v; break;
    }
}

register_map default_register_map(const plant_spec& plant, const std::vector<sensor_spec>& sensors) {
    register_map map;
    register_entry time;
    time.label = "plant_time";
    time.type = register_type::uint32;
    time.source = register_source::plant_time;
    map.entries.push_back(time);
    std::uint16_t at = 2;
    for (std::size_t i = 0; i < sensors.size() && at < 998; ++i, at = static_cast<std::uint16_t>(at + 2)) {
        register_entry e;
        e.label = sensors[i].name;
        e.address = at;
        e.source = register_source::sensor;
        e.sensor = i;
        map.entries.push_back(e);
    }
    register_entry power;
    power.label = "power_failure";
    power.table = register_table::discrete_inputs;
    power.type = register_type::bit;
    power.source = register_source::power_failure;
    map.entries.push_back(power);
    for (std::size_t t = 0; t < plant.trains.size() && t < 16; ++t) {
        register_entry b;
        b.label = plant.trains[t].name + ".blower_running";
        b.table = register_table::holding_registers;
        b.address = 100;
        b.type = register_type::uint16;
        b.bit = static_cast<std::uint8_t>(t);
        b.source = register_source::blower_running;
        b.train = t;
        map.entries.push_back(b);
    }
    const auto setpoint = [&](std::size_t t, std::size_t offset, setpoint_kind k, std::size_t zone,
                              std::string label, double max) {
        register_entry e;
        e.label = std::move(label);
        e.table = register_table::holding_registers;
        e.address = static_cast<std::uint16_t>(1000 + 32 * t + offset);
        e.source = register_source::setpoint;
        e.setpoint = k;
        e.train = t;
        e.zone = zone;
        e.writable = true;
        e.write_min = 0.0;
        e.write_max = max;
        map.entries.push_back(std::move(e));
    };
    for (std::size_t t = 0; t < plant.trains.size() && t < 32; ++t) {
        const train_spec& tr = plant.trains[t];
        setpoint(t, 0, setpoint_kind::ras_flow, 0, tr.name + ".ras_flow", 1e6);
        setpoint(t, 2, setpoint_kind::was_flow, 0, tr.name + ".was_flow", 1e5);
        setpoint(t, 4, setpoint_kind::recycle_flow, 0, tr.name + ".recycle_flow", 1e6);
        setpoint(t, 6, setpoint_kind::nitrate_setpoint, 0, tr.name + ".nitrate_setpoint", 20.0);
        for (std::size_t z = 0; z < tr.zones.size() && z < 12; ++z) {
            setpoint(t, 8 + 2 * z, setpoint_kind::do_setpoint, z, tr.zones[z].name + ".do_setpoint", 8.0);
        }
    }
    return map;
}

std::vector<std::pair<std::size_t, std::size_t>> overlapping_entries(const register_map& map) {
    std::vector<std::pair<std::size_t, std::size_t>> out;
    const auto& e = map.entries;
    for (std::size_t i = 0; i < e.size(); ++i) {
        for (std::size_t j = i + 1; j < e.size(); ++j) {
            if (e[i].table != e[j].table) {
                continue;
            }
            const unsigned a0 = e[i].address;
            const unsigned a1 = a0 + e[i].width();
            const unsigned b0 = e[j].address;
            const unsigned b1 = b0 + e[j].width();
            if (a0 >= b1 || b0 >= a1) {
                continue;
            }
            const bool flags = e[i].bit && e[j].bit && a0 == b0 && e[i].width() == 1 && e[j].width() == 1;
            if (flags && *e[i].bit != *e[j].bit) {
                continue;
            }
            out.emplace_back(i, j);
        }
    }
    return out;
}

register_image::register_image() {
    for (std::size_t t = 0; t < register_table_count; ++t) {
        words_[t].assign(register_space, 0);
        mapped_[t].assign(register_space, false);
    }
}

bool register_image::mapped(register_table t, std::uint16_t address) const {
    return mapped_[index(t)][address];
}

bool register_image::readable(register_table t, std::uint16_t first, std::uint16_t count) const {
    if (count == 0 || std::size_t{first} + count > register_space) {
        return false;
    }
    const auto& m = mapped_[index(t)];
    for (std::size_t a = first; a < std::size_t{first} + count; ++a) {
        if (!m[a]) {
            return false;
        }
    }
    return true;
}

std::uint16_t register_image::value(register_table t, std::uint16_t address) const {
    return words_[index(t)][address];
}

void register_image::map(register_table t, std::uint16_t address) { mapped_[index(t)][address] = true; }

void register_image::set(register_table t, std::uint16_t address, std::uint16_t v) {
    words_[index(t)][address] = v;
}

std::vector<std::uint16_t> encode_value(const register_entry& e, double canonical) {
    const double eng = to_engineering(e, canonical);
    const double raw = eng / e.scale;
    const bool bad = !std::isfinite(raw);
    const auto integer = [&](double lo, double hi) {
        return bad ? hi : std::clamp(std::round(raw), lo, hi);
    };
    switch (e.type) {
    case register_type::bit:
        return {static_cast<std::uint16_t>(!bad && raw != 0.0 ? 1 : 0)};
    case register_type::uint16:
        return {static_cast<std::uint16_t>(integer(0.0, 65535.0))};
    case register_type::int16:
        return {static_cast<std::uint16_t>(static_cast<std::int16_t>(integer(-32768.0, 32767.0)))};
    case register_type::uint32: {
        const auto v = static_cast<std::uint32_t>(integer(0.0, 4294967295.0));
        const auto w = split(v, e.order);
        return {w[0], w[1]};
    }
    case register_type::int32: {
        const auto v = static_cast<std::uint32_t>(static_cast<std::int32_t>(integer(-2147483648.0, 2147483647.0)));
        const auto w = split(v, e.order);
        return {w[0], w[1]};
    }
    case register_type::float32: {
        const float f = bad ? std::numeric_limits<float>::quiet_NaN() : static_cast<float>(raw);
        const auto w = split(std::bit_cast<std::uint32_t>(f), e.order);
        return {w[0], w[1]};
    }
    }
    return {0};
}

double decode_value(const register_entry& e, std::span<const std::uint16_t> w) {
    double raw = 0.0;
    switch (e.type) {
    case register_type::bit: raw = w[0] != 0 ? 1.0 : 0.0; break;
    case register_type::uint16: raw = w[0]; break;
    case register_type::int16: raw = static_cast<std::int16_t>(w[0]); break;
    case register_type::uint32: raw = join(w[0], w[1], e.order); break;
    case register_type::int32: raw = static_cast<std::int32_t>(join(w[0], w[1], e.order)); break;
    case register_type::float32: raw = std::bit_cast<float>(join(w[0], w[1], e.order)); break;
    }
    return to_canonical(e, raw * e.scale);
}

void encode_into(const register_map& map, const register_inputs& in, register_image& image) {
    for (const register_entry& e : map.entries) {
        double v = 0.0;
        switch (e.source) {
        case register_source::plant_time: v = std::floor(in.plant_time_s); break;
        case register_source::sensor:
            v = in.sensors != nullptr && e.sensor < in.sensors->size() ? (*in.sensors)[e.sensor].reading() : nan;
            break;
        case register_source::setpoint:
            v = in.controls != nullptr ? setpoint_value(e, *in.controls) : nan;
            break;
        case register_source::blower_running:
            v = in.outputs != nullptr && e.train < in.outputs->trains.size() &&
                        in.outputs->trains[e.train].blowers_running
                    ? 1.0
                    : 0.0;
            break;
        case register_source::power_failure: v = in.power_failed ? 1.0 : 0.0; break;
        case register_source::spare: v = 0.0; break;
        }
        if (e.bit) {
            // A flag inside a 16-bit register: set or clear one bit.
            image.map(e.table, e.address);
            auto word = image.value(e.table, e.address);
            const auto mask = static_cast<std::uint16_t>(1U << *e.bit);
            word = static_cast<std::uint16_t>(v != 0.0 && std::isfinite(v) ? (word | mask) : (word & ~mask));
            image.set(e.table, e.address, word);
            continue;
        }
        const std::vector<std::uint16_t> words = encode_value(e, v);
        for (std::size_t i = 0; i < words.size(); ++i) {
            const auto a = static_cast<std::uint16_t>(e.address + i);
            image.map(e.table, a);
            image.set(e.table, a, words[i]);
        }
    }
}

register_image encode(const register_map& map, const register_inputs& in) {
    register_image image;
    encode_into(map, in, image);
    return image;
}

write_result apply_write(const register_map& map, std::uint16_t first, std::span<const std::uint16_t> words,
                         plant_controls& u) {
    const std::size_t last = std::size_t{first} + words.size();  // one past
    plant_controls next = u;
    std::vector<bool> covered(words.size(), false);
    std::vector<std::string> clamped;
    for (const register_entry& e : map.entries) {
        if (e.table != register_table::holding_registers) {
            continue;
        }
        const std::size_t a0 = e.address;
        const std::size_t a1 = a0 + e.width();
        if (a1 <= first || a0 >= last) {
            continue;
        }
        if (!e.writable || e.bit) {
            return {write_status::illegal_address,
                    "holding register " + std::to_string(a0) + " (" + e.label + ") is read only", {}};
        }
        if (a0 < first || a1 > last) {
            return {write_status::illegal_address,
                    "the write covers only part of the 32-bit value at holding register " + std::to_string(a0) + " (" +
                        e.label + ")",
                    {}};
        }
        const double v = decode_value(e, words.subspan(a0 - first, e.width()));
        if (!std::isfinite(v)) {
            return {write_status::not_a_number, "the value for " + e.label + " is not a number", {}};
        }
        const double in_force = std::clamp(v, e.write_min, e.write_max);
        if (in_force != v) {
            clamped.push_back(e.label);
        }
        store_setpoint(next, e.setpoint, e.train, e.zone, in_force);
        for (std::size_t a = a0; a < a1; ++a) {
            covered[a - first] = true;
        }
    }
    for (std::size_t i = 0; i < covered.size(); ++i) {
        if (!covered[i]) {
            return {write_status::illegal_address, "no writable register at holding register " + std::to_string(first + i),
                    {}};
        }
    }
    u = std::move(next);
    return {write_status::ok, {}, std::move(clamped)};
}

const register_entry* find_setpoint(const register_map& map, setpoint_kind kind, std::size_t train, std::size_t zone) {
    const bool per_zone = kind == setpoint_kind::do_setpoint || kind == setpoint_kind::kla;
    for (const register_entry& e : map.entries) {
        if (e.source == register_source::setpoint && e.writable && e.setpoint == kind && e.train == train &&
            (!per_zone || e.zone == zone)) {
            return &e;
        }
    }
    return nullptr;
}

bool touches_plant_time(const register_map& map, register_table t, std::uint16_t first, std::uint16_t count) {
    const std::size_t last = std::size_t{first} + count;  // one past
    return std::any_of(map.entries.begin(), map.entries.end(), [&](const register_entry& e) {
        return e.source == register_source::plant_time && e.table == t && e.address < last &&
               std::size_t{e.address} + e.width() > first;
    });
}

} // namespace floc::sim
