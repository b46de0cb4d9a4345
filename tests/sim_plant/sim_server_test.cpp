// The simulated PLC's register space, its write path and fault rules, and the operator stand-in
// (floc's advisory registers decoded, the acceptance delay, the set points it keys in, the advice
// table), in process and without sockets. The function and exception codes are those of the
// MODBUS Application Protocol Specification V1.1b3 (§6, §7).
#include "advisory_support.hpp"
#include "support.hpp"

#include "floc/config/load.hpp"
#include "floc/registers/image.hpp"
#include "floc/sim/hmi_operator.hpp"
#include "floc/sim/plc_host.hpp"

#include <gtest/gtest.h>

#include <array>
#include <bit>
#include <cmath>
#include <limits>

namespace {

using namespace floc;
using namespace floc::sim;
using modbus::exception_code;
using modbus::table;

const modbus::client_info bench{0x7F000001U, 40000, 1, 1};

config::plant_config marrowby_si() {
    auto r = config::load_file(std::string{FLOC_SOURCE_DIR} + "/config/examples/marrowby-si.toml");
    EXPECT_TRUE(r.ok());
    return std::move(*r.config);
}

std::array<std::uint16_t, 2> float_words(float v) {
    const auto u = std::bit_cast<std::uint32_t>(v);
    return {static_cast<std::uint16_t>(u >> 16U), static_cast<std::uint16_t>(u & 0xFFFFU)};
}

float float_of(std::uint16_t hi, std::uint16_t lo) {
    return std::bit_cast<float>((std::uint32_t{hi} << 16U) | lo);
}

// The words a reader gets for `reads` from an advisory image.
std::vector<std::vector<std::uint16_t>> words_for(const std::vector<register_read>& reads,
                                                  const registers::image& img) {
    std::vector<std::vector<std::uint16_t>> out;
    for (const register_read& r : reads) {
        const auto w = img.words(r.address, r.count);
        out.emplace_back(w.begin(), w.end());
    }
    return out;
}

TEST(PlcSpace, ReadsTheImageAndRefusesUnmappedAddresses) {
    const scenario& s = test::marrowby();
    plc_host host{s, test::marrowby_steady_state()};
    std::size_t time_reads = 0;
    plc_space space{host, {nullptr, [&] { ++time_reads; }, nullptr}};
    std::array<std::uint16_t, 40> in{};
    ASSERT_EQ(space.read_registers(table::input_registers, 0, in, bench), modbus::accepted);
    EXPECT_EQ(time_reads, 1U);
    for (std::size_t a = 0; a < in.size(); ++a) {
        EXPECT_EQ(in[a], host.image().value(register_table::input_registers,
                                            static_cast<std::uint16_t>(a)))
            << a;
    }
    // The a_oxic1 DO probe at 6-7, float32 abcd, as the sensor reads; its first reading is there
    // before the first step.
    EXPECT_TRUE(host.sim().sensors()[2].has_reading());
    EXPECT_EQ(float_of(in[6], in[7]), static_cast<float>(host.sim().sensors()[2].reading()));
    EXPECT_NEAR(float_of(in[6], in[7]), 2.0, 0.2); // the zone's set point, with noise
    // Sensors only: no plant time read.
    std::array<std::uint16_t, 38> sensors{};
    ASSERT_EQ(space.read_registers(table::input_registers, 2, sensors, bench), modbus::accepted);
    EXPECT_EQ(time_reads, 1U);
    // Address + count past the map (input registers 40, 220) and a table not mapped there:
    // exception 02 (AppSpec §7).
    std::array<std::uint16_t, 2> two{};
    EXPECT_EQ(space.read_registers(table::input_registers, 39, two, bench),
              exception_code::illegal_data_address);
    EXPECT_EQ(space.read_registers(table::input_registers, 219, two, bench),
              exception_code::illegal_data_address);
    EXPECT_EQ(space.read_registers(table::holding_registers, 0, two, bench),
              exception_code::illegal_data_address);
    std::array<std::uint8_t, 1> bit{};
    EXPECT_EQ(space.read_bits(table::discrete_inputs, 0, bit, bench), modbus::accepted);
    EXPECT_EQ(bit[0], 0); // no power failure
    EXPECT_EQ(space.read_bits(table::coils, 0, bit, bench), exception_code::illegal_data_address);
    EXPECT_EQ(space.write_coils(0, bit, bench), exception_code::illegal_data_address);
}

TEST(PlcSpace, BenchWritesChangeTheControlsClampedToTheLimits) {
    const scenario& s = test::marrowby();
    plc_host host{s, test::marrowby_steady_state()};
    std::size_t written = 0;
    std::optional<modbus::refusal> last;
    plc_space space{host, {nullptr, nullptr, [&](const modbus::client_info&, modbus::refusal r) {
                               ++written;
                               last = r;
                           }}};
    // a_oxic1's DO set point at holding 1000 (mg/L, limits 0.2-6).
    ASSERT_EQ(space.write_registers(1000, float_words(3.5F), bench), modbus::accepted);
    EXPECT_EQ(host.sim().controls().trains[0].zones[1].do_setpoint_g_per_m3, 3.5);
    std::array<std::uint16_t, 2> back{};
    ASSERT_EQ(space.read_registers(table::holding_registers, 1000, back, bench), modbus::accepted);
    EXPECT_EQ(float_of(back[0], back[1]), 3.5F);
    // Above the limits: clamped, and the register shows the value in force.
    ASSERT_EQ(space.write_registers(1000, float_words(9.0F), bench), modbus::accepted);
    ASSERT_EQ(space.read_registers(table::holding_registers, 1000, back, bench), modbus::accepted);
    EXPECT_EQ(float_of(back[0], back[1]), 6.0F);
    EXPECT_NE(host.last_write().find("clamped"), std::string::npos);
    // Not a number: 04; half a float, the read-only blower flags, an unmapped register: 02.
    EXPECT_EQ(
        space.write_registers(1000, float_words(std::numeric_limits<float>::quiet_NaN()), bench),
        exception_code::server_device_failure);
    const std::array<std::uint16_t, 1> one{7};
    EXPECT_EQ(space.write_registers(1001, one, bench), exception_code::illegal_data_address);
    EXPECT_EQ(space.write_registers(100, one, bench), exception_code::illegal_data_address);
    EXPECT_EQ(space.write_registers(1008, one, bench), exception_code::illegal_data_address);
    EXPECT_EQ(host.sim().controls().trains[0].zones[1].do_setpoint_g_per_m3, 6.0);
    EXPECT_EQ(written, 6U);
    ASSERT_TRUE(last.has_value());
    EXPECT_EQ(*last, exception_code::illegal_data_address);
}

TEST(PlcSpace, AccessFirstLetsTheOwnerCatchUp) {
    const scenario& s = test::marrowby();
    plc_host host{s, test::marrowby_steady_state()};
    // The hook runs before the image is read, so a step it takes is what the read sees.
    plc_space space{host,
                    {[&] {
                         if (host.time_s() < 60.0) {
                             ASSERT_TRUE(host.advance_to(60.0));
                         }
                     },
                     nullptr, nullptr}};
    std::array<std::uint16_t, 2> t{};
    ASSERT_EQ(space.read_registers(table::input_registers, 0, t, bench), modbus::accepted);
    EXPECT_EQ(t[0], 0);
    EXPECT_EQ(t[1], 60);
}

TEST(FaultRules, TheFaultBenchScheduleBecomesTheLibrarysRules) {
    const scenario s = test::load("marrowby-faults");
    const std::vector<std::size_t> all{1, 2, 3, 4};
    const std::vector<modbus::fault_rule> rules = fault_rules(s.events, all);
    ASSERT_EQ(rules.size(), 4U);
    EXPECT_EQ(rules[0].kind, modbus::fault_kind::delay_reply);
    EXPECT_EQ(rules[0].delay, std::chrono::milliseconds{1500});
    EXPECT_EQ(rules[1].kind, modbus::fault_kind::exception_reply);
    EXPECT_EQ(rules[1].function, std::optional<std::uint8_t>{4});
    EXPECT_EQ(rules[1].exception, exception_code::server_device_failure);
    EXPECT_EQ(rules[2].kind, modbus::fault_kind::wrong_transaction_id);
    EXPECT_EQ(rules[3].kind, modbus::fault_kind::drop_connection);
    EXPECT_EQ(rules[3].first_address, 0);
    EXPECT_EQ(rules[3].last_address, 0xFFFF);
    EXPECT_EQ(rules[3].times, 0U); // for the whole window
    // A link loss is no rule: the server is closed for it.
    EXPECT_TRUE(fault_rules(s.events, {0}).empty());
}

// --- the operator stand-in -------------------------------------------------------------------

// Marrowby's advisory registers with advice in a few slots: 0 aeration a_oxic1, 2 aeration
// b_oxic1, 4 recycle A, 6 RAS A, 8 waste A (the order of config/examples/marrowby-si.toml).
struct advisory_fixture {
    config::plant_config cfg = marrowby_si();
    registers::register_map map = registers::build(cfg);
    registers::image img{map, cfg};

    advisory_fixture() {
        registers::status_info st;
        st.heartbeat = 42;
        st.state = registers::daemon_state::running;
        st.plant_time_s = 3600.0;
        img.put_status(st);
    }
    void advise(std::size_t slot, double value, std::uint16_t quality, std::uint16_t reason) {
        img.put_advice(slot, test::published(value, quality, reason, 12.0));
    }
    [[nodiscard]] advisory_seen read() const {
        const std::vector<register_read> reads = advisory_reads(map);
        return decode_advisory(map, cfg, reads, words_for(reads, img));
    }
};

TEST(OperatorStandin, ReadsTheStatusBlockAndEveryAdviceSlot) {
    advisory_fixture f;
    const std::vector<register_read> reads = advisory_reads(f.map);
    // The status block, then the ten slots of 32 registers three at a time (125 at most).
    ASSERT_EQ(reads.size(), 5U);
    EXPECT_EQ(reads[0].function, 3);
    EXPECT_EQ(reads[0].address, 0);
    EXPECT_EQ(reads[0].count, 32);
    EXPECT_EQ(reads[1].address, 100);
    EXPECT_EQ(reads[1].count, 96);
    EXPECT_EQ(reads[4].address, 100 + 9 * 32);
    EXPECT_EQ(reads[4].count, 32);
    for (const register_read& r : reads) {
        EXPECT_LE(r.count, 125);
    }
    f.advise(0, 2.6, 0, 20);
    f.advise(8, 120.0, 0, 80); // m3/d; published in m3/h
    const advisory_seen seen = f.read();
    EXPECT_TRUE(seen.error.empty()) << seen.error;
    EXPECT_EQ(seen.heartbeat, 42);
    EXPECT_EQ(seen.state, 1);
    EXPECT_EQ(seen.plant_time_s, 3600.0);
    ASSERT_EQ(seen.advice.size(), 10U);
    EXPECT_EQ(seen.advice[0].subject, "a_oxic1");
    EXPECT_NEAR(seen.advice[0].value, 2.6, 1e-6);
    EXPECT_EQ(seen.advice[0].quality, 0);
    EXPECT_EQ(seen.advice[0].reasons[0], 20);
    EXPECT_EQ(seen.advice[0].age_s, 12);
    EXPECT_EQ(seen.advice[8].kind, registers::advisor_kind::waste);
    EXPECT_NEAR(seen.advice[8].value, 120.0, 1e-3);
    EXPECT_EQ(seen.advice[1].quality, 3); // nothing published yet
}

TEST(OperatorStandin, RefusesRegistersOfAnotherLayout) {
    advisory_fixture f;
    f.advise(0, 2.6, 0, 20);
    std::vector<register_read> reads = advisory_reads(f.map);
    std::vector<std::vector<std::uint16_t>> words = words_for(reads, f.img);
    words[0][registers::status_offset::layout] = 99;
    const advisory_seen seen = decode_advisory(f.map, f.cfg, reads, words);
    EXPECT_NE(seen.error.find("layout 99"), std::string::npos) << seen.error;
    EXPECT_EQ(seen.advice[0].quality, 3); // not taken
}

TEST(OperatorStandin, AppliesGoodAdviceAfterTheDelay) {
    advisory_fixture f;
    const scenario& s = test::marrowby();
    f.advise(0, 2.6, 0, 20);   // a_oxic1 DO, good
    f.advise(2, 2.9, 1, 2);    // b_oxic1 DO, held: not applied
    f.advise(4, 3.0, 0, 40);   // recycle A, ratio 3
    f.advise(6, 0.8, 0, 60);   // RAS A, ratio 0.8
    f.advise(8, 120.0, 0, 80); // waste A, 120 m3/d
    operator_standin op{s, f.map, f.cfg, 1800.0};
    op.observe(f.read(), 100.0);
    EXPECT_EQ(op.next_due_s(), 1900.0);
    plant_output out;
    out.trains.resize(2);
    out.trains[0].influent.flow_m3_per_d = 4000.0;
    plant_controls u = initial_controls(s.plant);
    const plant_controls before = u;
    EXPECT_TRUE(op.apply_due(1899.0, out, u).empty());
    EXPECT_NE(op.action(0).find("due day 0 00:31:40"), std::string::npos) << op.action(0);
    // Seen again unchanged: nothing new is queued.
    op.observe(f.read(), 1000.0);
    const std::vector<std::string> changes = op.apply_due(1900.0, out, u);
    EXPECT_EQ(changes.size(), 4U);
    EXPECT_NEAR(u.trains[0].zones[1].do_setpoint_g_per_m3, 2.6, 1e-6);
    EXPECT_EQ(u.trains[1].zones[1].do_setpoint_g_per_m3,
              before.trains[1].zones[1].do_setpoint_g_per_m3);
    EXPECT_NEAR(u.trains[0].recycle_flow_m3_per_d, 12000.0, 1e-3); // 3 x 4000 m3/d
    EXPECT_NEAR(u.trains[0].ras_flow_m3_per_d, 3200.0, 1e-3);      // 0.8 x 4000 m3/d
    EXPECT_NEAR(u.trains[0].was_flow_m3_per_d, 120.0, 1e-3);
    EXPECT_EQ(op.action(0), "applied 2.60 mg/L at day 0 00:31:40");
    EXPECT_EQ(op.action(2), "not applied yet");
    EXPECT_TRUE(op.apply_due(5000.0, out, u).empty());
    // A new value is applied after its own delay; the PLC's limits bound what is keyed in
    // (recycle A at holding 1018: 0-1500 m3/h = 36000 m3/d).
    f.advise(4, 4.0, 0, 40);
    out.trains[0].influent.flow_m3_per_d = 12000.0;
    op.observe(f.read(), 6000.0);
    ASSERT_EQ(op.apply_due(7800.0, out, u).size(), 1U);
    EXPECT_NEAR(u.trains[0].recycle_flow_m3_per_d, 36000.0, 1e-6);
}

TEST(OperatorStandin, WithoutADelayNothingIsApplied) {
    advisory_fixture f;
    f.advise(0, 2.6, 0, 20);
    operator_standin op{test::marrowby(), f.map, f.cfg, std::nullopt};
    op.observe(f.read(), 0.0);
    EXPECT_FALSE(op.applies());
    EXPECT_EQ(op.next_due_s(), std::numeric_limits<double>::infinity());
    EXPECT_EQ(op.action(0), "-");
}

TEST(OperatorStandin, AdviceForPartsTheScenarioDoesNotHave) {
    advisory_fixture f;
    const scenario s = test::load("carrick-fen"); // one train, other names
    operator_standin op{s, f.map, f.cfg, 60.0};
    EXPECT_EQ(op.action(0), "no zone a_oxic1 in this scenario");
    EXPECT_EQ(op.action(4), "no train A in this scenario");
}

TEST(OperatorStandin, TheAdviceTable) {
    advisory_fixture f;
    f.advise(0, 2.6, 0, 20);
    f.advise(2, 2.9, 1, 2);
    f.advise(8, 120.0, 0, 80);
    operator_standin op{test::marrowby(), f.map, f.cfg, 1800.0};
    op.observe(f.read(), 0.0);
    table_context ctx;
    ctx.source = "127.0.0.1:15021";
    ctx.connected = true;
    ctx.serving = "127.0.0.1:15020";
    ctx.plant_time_s = 90061.0;
    ctx.clock = "x600";
    const std::string t = render_advice_table(f.map, f.cfg, op, ctx);
    EXPECT_NE(t.find("floc advice for Marrowby WRW from 127.0.0.1:15021: flocd running, heartbeat "
                     "42, advice at plant day 0 01:00:00"),
              std::string::npos)
        << t;
    EXPECT_NE(t.find("flocsim on 127.0.0.1:15020: plant day 1 01:01:01 (x600)"), std::string::npos)
        << t;
    const auto row = [&](const std::string& start) {
        const auto at = t.find("\n" + start);
        return at == std::string::npos ? std::string{}
                                       : t.substr(at + 1, t.find('\n', at + 1) - at - 1);
    };
    const std::string a = row("aeration a_oxic1");
    EXPECT_NE(a.find("2.60 mg/L"), std::string::npos) << a;
    EXPECT_NE(a.find("good"), std::string::npos) << a;
    EXPECT_NE(a.find("ammonia_above_target"), std::string::npos) << a;
    EXPECT_NE(a.find("12 s"), std::string::npos) << a;
    EXPECT_NE(a.find("due day 0 00:30:00"), std::string::npos) << a;
    const std::string b = row("aeration b_oxic1");
    EXPECT_NE(b.find("held"), std::string::npos) << b;
    EXPECT_NE(b.find("holding_last_good"), std::string::npos) << b;
    EXPECT_NE(row("waste A").find("5.00 m3/h"), std::string::npos)
        << row("waste A"); // display unit m3/h
    EXPECT_NE(row("ras B").find("unavailable"), std::string::npos) << row("ras B");
    EXPECT_NE(t.find("\nadvisory only: a licensed operator decides\n"), std::string::npos);
    // Not connected: the header says so, the rows are empty.
    ctx.connected = false;
    ctx.error = "connection refused";
    const std::string w = render_advice_table(f.map, f.cfg, op, ctx);
    EXPECT_NE(w.find("waiting for flocd (connection refused)"), std::string::npos) << w;
    EXPECT_EQ(w.find("2.60 mg/L"), std::string::npos) << w;
}

TEST(OperatorStandin, PlantClockText) {
    EXPECT_EQ(plant_clock_text(0.0), "day 0 00:00:00");
    EXPECT_EQ(plant_clock_text(86400.0 * 3 + 7 * 3600 + 35 * 60 + 9), "day 3 07:35:09");
    EXPECT_EQ(plant_clock_text(-5.0), "day 0 00:00:00");
}

} // namespace
