// The simulated PLC's register map and its encoding. The Marrowby map must serve exactly what
// flocd's example configs read (config/examples/marrowby-si.toml and marrowby-us.toml): every tag
// decoded as flocd would decode it gives the simulator's sensor reading. Float32 layout per
// IEEE 754; word order "abcd" = the MODBUS convention of big-endian registers (MODBUS Application
// Protocol Specification V1.1b3, section 4.2: big-endian addresses and data).
#include "support.hpp"

#include "floc/config/load.hpp"

#include <gtest/gtest.h>

#include <bit>
#include <cmath>

namespace {

using namespace floc::sim;
namespace cfg = floc::config;

register_table table_of(cfg::read_function f) {
    switch (f) {
    case cfg::read_function::coils: return register_table::coils;
    case cfg::read_function::discrete_inputs: return register_table::discrete_inputs;
    case cfg::read_function::holding_registers: return register_table::holding_registers;
    case cfg::read_function::input_registers: return register_table::input_registers;
    }
    return register_table::input_registers;
}

// Decodes a tag the way its config describes it (written here from the config's definitions).
double decode_tag(const cfg::tag& t, const register_image& img) {
    const register_table tb = table_of(t.function);
    const std::uint16_t w0 = img.value(tb, t.address);
    const std::uint16_t w1 = t.width() == 2 ? img.value(tb, static_cast<std::uint16_t>(t.address + 1)) : 0;
    double raw = 0.0;
    switch (t.type) {
    case cfg::data_type::bit: raw = w0 != 0 ? 1.0 : 0.0; break;
    case cfg::data_type::uint16: raw = t.bit ? ((w0 >> *t.bit) & 1U) : w0; break;
    case cfg::data_type::int16: raw = static_cast<std::int16_t>(w0); break;
    case cfg::data_type::uint32: raw = (std::uint32_t{w0} << 16U) | w1; break;
    case cfg::data_type::int32: raw = static_cast<std::int32_t>((std::uint32_t{w0} << 16U) | w1); break;
    case cfg::data_type::float32: raw = std::bit_cast<float>((std::uint32_t{w0} << 16U) | w1); break;
    }
    const double eng = raw * t.scale + t.offset;
    return t.unit != nullptr ? floc::units::to_canonical(eng, *t.unit) : eng;
}

struct bench {
    scenario s = test::marrowby();
    simulation sim = make_simulation(s, test::marrowby_steady_state());
    register_image image;
    bench() {
        EXPECT_TRUE(sim.advance_to(120.0));
        const plant_output out = sim.outputs();
        image = encode(s.registers, {sim.time_s(), &sim.sensors(), &sim.controls(), &out, false});
    }
};

void check_config_against_map(const std::string& file) {
    const cfg::load_result r = cfg::load_file(std::string{FLOC_SOURCE_DIR} + "/config/examples/" + file);
    ASSERT_TRUE(r.ok()) << file;
    const bench b;
    std::size_t checked = 0;
    for (const cfg::tag& t : r.config->tags) {
        const register_table tb = table_of(t.function);
        ASSERT_TRUE(b.image.readable(tb, t.address, t.width())) << file << ": " << t.name << " at " << t.address;
        const double v = decode_tag(t, b.image);
        if (t.name == "plant_time") {
            EXPECT_EQ(v, 120.0) << file;
        } else if (t.name == "a_blower_running" || t.name == "b_blower_running") {
            EXPECT_EQ(v, 1.0) << file << ": " << t.name;
        } else if (t.name == "power_fail") {
            EXPECT_EQ(v, 0.0) << file;
        } else {
            const sensor_spec* spec = b.s.find_sensor(t.name);
            ASSERT_NE(spec, nullptr) << file << ": no sensor for tag " << t.name;
            const std::size_t i = static_cast<std::size_t>(spec - b.s.sensors.data());
            const double reading = b.sim.sensors()[i].reading();
            // One step of the tag's integer resolution, converted to the canonical unit.
            const double step = t.type == cfg::data_type::float32
                                    ? 1e-6 * std::max(1.0, std::abs(reading))
                                    : std::abs(floc::units::convert(t.scale, *t.unit, floc::units::canonical_unit(t.unit->kind)) -
                                               floc::units::convert(0.0, *t.unit, floc::units::canonical_unit(t.unit->kind)));
            EXPECT_NEAR(v, reading, step) << file << ": " << t.name;
        }
        ++checked;
    }
    EXPECT_GE(checked, 20U);
}

TEST(MarrowbyRegisters, ServeWhatTheSiConfigReads) { check_config_against_map("marrowby-si.toml"); }
TEST(MarrowbyRegisters, ServeWhatTheUsConfigReads) { check_config_against_map("marrowby-us.toml"); }

TEST(MarrowbyRegisters, TheBlocksAreContiguous) {
    const bench b;
    EXPECT_TRUE(b.image.readable(register_table::input_registers, 0, 40));
    EXPECT_TRUE(b.image.readable(register_table::input_registers, 200, 20));
    EXPECT_FALSE(b.image.readable(register_table::input_registers, 40, 1));
    EXPECT_FALSE(b.image.readable(register_table::input_registers, 220, 1));
    EXPECT_EQ(b.image.value(register_table::input_registers, 214), 0);  // the spare
}

TEST(Registers, EncodingOfEachType) {
    register_entry e;
    e.type = register_type::float32;
    const auto w = encode_value(e, 1.5);
    EXPECT_EQ(w, (std::vector<std::uint16_t>{0x3FC0, 0x0000}));  // IEEE 754: 1.5 = 0x3FC00000
    e.order = register_word_order::cdab;
    EXPECT_EQ(encode_value(e, 1.5), (std::vector<std::uint16_t>{0x0000, 0x3FC0}));
    e.order = register_word_order::badc;
    EXPECT_EQ(encode_value(e, 1.5), (std::vector<std::uint16_t>{0xC03F, 0x0000}));
    e.order = register_word_order::abcd;
    EXPECT_TRUE(std::isnan(decode_value(e, encode_value(e, std::nan("")))));

    register_entry t;  // 12.3 degC as int16 degF x 0.1 = 541 (54.14 degF)
    t.type = register_type::int16;
    t.unit = floc::units::find_unit("degF");
    t.scale = 0.1;
    EXPECT_EQ(encode_value(t, 12.3), std::vector<std::uint16_t>{541});
    EXPECT_EQ(encode_value(t, -20.0), std::vector<std::uint16_t>{static_cast<std::uint16_t>(-40)});
    EXPECT_EQ(encode_value(t, std::nan("")), std::vector<std::uint16_t>{32767});  // missing reading
    register_entry u;
    u.type = register_type::uint16;
    u.scale = 0.01;
    EXPECT_EQ(encode_value(u, 2.345), std::vector<std::uint16_t>{235});  // rounded
    EXPECT_EQ(encode_value(u, -1.0), std::vector<std::uint16_t>{0});     // clamped
    EXPECT_EQ(encode_value(u, std::nan("")), std::vector<std::uint16_t>{65535});
    register_entry l;
    l.type = register_type::uint32;
    EXPECT_EQ(encode_value(l, 86400.0 * 3.0), (std::vector<std::uint16_t>{0x0003, 0xF480}));
}

TEST(Registers, HoldingWritesChangeSetPointsAllOrNothing) {
    const scenario& s = test::marrowby();
    plant_controls u = initial_controls(s.plant);
    register_entry f;
    f.type = register_type::float32;
    const auto w25 = encode_value(f, 2.5);
    // DO set point of a_oxic1 at 1000 (mg/L).
    write_result r = apply_write(s.registers, 1000, w25, u);
    EXPECT_EQ(r.status, write_status::ok) << r.reason;
    EXPECT_EQ(u.trains[0].zones[1].do_setpoint_g_per_m3, 2.5);
    // RAS of train B at 1012 in m3/h: 200 m3/h = 4800 m3/d.
    const auto w200 = encode_value(f, 200.0);
    r = apply_write(s.registers, 1012, w200, u);
    EXPECT_EQ(r.status, write_status::ok) << r.reason;
    EXPECT_NEAR(u.trains[1].ras_flow_m3_per_d, 4800.0, 1e-3);
    // Outside the limits (0.2..6 mg/L): clamped to them, as a PLC's limit block does.
    r = apply_write(s.registers, 1002, encode_value(f, 9.0), u);
    EXPECT_EQ(r.status, write_status::ok) << r.reason;
    EXPECT_EQ(u.trains[0].zones[2].do_setpoint_g_per_m3, 6.0);
    EXPECT_EQ(r.clamped, std::vector<std::string>{"a_oxic2.do_setpoint"});
    r = apply_write(s.registers, 1002, encode_value(f, 0.05), u);
    EXPECT_EQ(u.trains[0].zones[2].do_setpoint_g_per_m3, 0.2);
    // Not a number, half a float, read-only, unmapped, and a write spanning a good and a bad
    // register: refused, nothing changed.
    const plant_controls before = u;
    EXPECT_EQ(apply_write(s.registers, 1006, encode_value(f, std::nan("")), u).status, write_status::not_a_number);
    EXPECT_EQ(apply_write(s.registers, 1001, std::vector<std::uint16_t>{0}, u).status, write_status::illegal_address);
    EXPECT_EQ(apply_write(s.registers, 100, std::vector<std::uint16_t>{3}, u).status, write_status::illegal_address);
    EXPECT_EQ(apply_write(s.registers, 5000, std::vector<std::uint16_t>{1}, u).status, write_status::illegal_address);
    std::vector<std::uint16_t> both = w25;
    both.push_back(0);
    both.push_back(0);
    EXPECT_EQ(apply_write(s.registers, 1006, both, u).status, write_status::illegal_address);
    EXPECT_EQ(u.trains[1].zones[2].do_setpoint_g_per_m3, before.trains[1].zones[2].do_setpoint_g_per_m3);
    EXPECT_EQ(u.trains[0].zones[2].do_setpoint_g_per_m3, 0.2);
}

TEST(Registers, SetPointEntriesAndPlantTimeReads) {
    const scenario& s = test::marrowby();
    const register_entry* ras_b = find_setpoint(s.registers, setpoint_kind::ras_flow, 1);
    ASSERT_NE(ras_b, nullptr);
    EXPECT_EQ(ras_b->address, 1012);
    const register_entry* do_b2 = find_setpoint(s.registers, setpoint_kind::do_setpoint, 1, 2);
    ASSERT_NE(do_b2, nullptr);
    EXPECT_EQ(do_b2->address, 1006);
    EXPECT_EQ(find_setpoint(s.registers, setpoint_kind::kla, 0, 1), nullptr);  // not in Marrowby's map
    // Plant time at input registers 0-1.
    EXPECT_TRUE(touches_plant_time(s.registers, register_table::input_registers, 0, 40));
    EXPECT_TRUE(touches_plant_time(s.registers, register_table::input_registers, 1, 1));
    EXPECT_FALSE(touches_plant_time(s.registers, register_table::input_registers, 2, 38));
    EXPECT_FALSE(touches_plant_time(s.registers, register_table::holding_registers, 0, 2));
}

TEST(Registers, DefaultMapAsDocumented) {
    const scenario s = test::load("carrick-fen");
    ASSERT_TRUE(s.default_registers);
    const register_map& m = s.registers;
    EXPECT_TRUE(overlapping_entries(m).empty());
    ASSERT_GE(m.entries.size(), 2U);
    EXPECT_EQ(m.entries[0].source, register_source::plant_time);
    EXPECT_EQ(m.entries[0].address, 0);
    EXPECT_EQ(m.entries[1].source, register_source::sensor);
    EXPECT_EQ(m.entries[1].address, 2);
    bool do_setpoint = false;
    for (const register_entry& e : m.entries) {
        if (e.source == register_source::setpoint && e.setpoint == setpoint_kind::do_setpoint) {
            EXPECT_EQ(e.address, 1008);  // train 0, zone 0
            EXPECT_TRUE(e.writable);
            do_setpoint = true;
        }
    }
    EXPECT_TRUE(do_setpoint);
}

TEST(Registers, PowerFailureAndBlowersFollowThePlant) {
    scenario s = test::marrowby();
    s.events = {test::scheduled(event_kind::power_failure, 60.0, 600.0, no_index, 0.0)};
    simulation sim = make_simulation(s, test::marrowby_steady_state());
    ASSERT_TRUE(sim.advance_to(120.0));
    const plant_output out = sim.outputs();
    const register_image img =
        encode(s.registers, {sim.time_s(), &sim.sensors(), &sim.controls(), &out, power_failed_at(s.events, sim.time_s())});
    EXPECT_EQ(img.value(register_table::discrete_inputs, 0), 1);
    EXPECT_EQ(img.value(register_table::holding_registers, 100), 0);  // both trains' blowers stopped
    EXPECT_EQ(out.trains[0].ras_m3_per_d, 0.0);
}

} // namespace
