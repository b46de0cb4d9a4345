// flocd against flocsim, both real processes on free loopback ports: the advice reaches the
// registers, independent clients read the same values, writes other than lab entries are
// refused, lab entries survive a restart, kill -9 never leaves an unreadable state file, a
// config reload is atomic, a PLC that is down at start is picked up, and flocd never writes to
// the PLC over a long accelerated run.
#include "harness.hpp"

#include "floc/config/load.hpp"
#include "floc/registers/register_map.hpp"
#include "floc/store/files.hpp"
#include "floc/store/state_file.hpp"

#include <gtest/gtest.h>

#include <csignal>
#include <fstream>
#include <random>
#include <regex>
#include <thread>

namespace {

using namespace floc;
using namespace std::chrono_literals;
using test::advisory_daemon;
using test::modbus_client;
using test::scratch_dir;
using test::simulated_plant;

registers::register_map map_of(const std::string& config_path) {
    auto r = config::load_file(config_path);
    if (!r.ok()) {
        throw std::runtime_error("test config does not load: " + r.errors.at(0).message());
    }
    return registers::build(*r.config);
}

// The first advice slot's quality (3 = unavailable) as flocd publishes it.
std::optional<std::uint16_t> advice_quality(std::uint16_t hmi_port, const registers::register_map& map, std::size_t slot) {
    modbus_client c{hmi_port};
    const auto w = c.holding(map.advice_base(slot), 2);
    if (w.size() != 2) {
        return std::nullopt;
    }
    return w[1];
}

struct bench {
    explicit bench(const std::string& name, std::vector<std::string> sim_options = {"--speed", "600"},
                   const std::string& example = "marrowby-si.toml")
        : dir(name), plant(dir, "marrowby.toml", sim_options), hmi_port(test::free_port()),
          config(test::write_flocd_config(dir, example, plant.port(), hmi_port)), map(map_of(config)),
          daemon(std::make_unique<advisory_daemon>(dir, config, hmi_port)) {}

    scratch_dir dir;
    simulated_plant plant;
    std::uint16_t hmi_port;
    std::string config;
    registers::register_map map;
    std::unique_ptr<advisory_daemon> daemon;

    bool advice_published(std::chrono::milliseconds limit = 30s) {
        return test::wait_for(
            [&] {
                for (std::size_t i = 0; i < map.advice.size(); ++i) {
                    const auto q = advice_quality(hmi_port, map, i);
                    if (!q || *q == 3) {
                        return false;
                    }
                }
                return true;
            },
            limit, 200ms);
    }
};

TEST(Integration, AdviceAndInputsReachTheRegisters) {
    bench b{"advice"};
    ASSERT_TRUE(b.daemon->wait_ready()) << b.daemon->log();
    ASSERT_TRUE(b.advice_published()) << b.daemon->log();

    modbus_client hmi{b.hmi_port};
    ASSERT_TRUE(hmi.connected());
    const auto status = hmi.holding(0, 32);
    ASSERT_EQ(status.size(), 32U);
    EXPECT_TRUE(status[1] == 1 || status[1] == 2) << "daemon state " << status[1];
    EXPECT_EQ(status[registers::status_offset::plc_link], 1);  // PLC 0 connected
    EXPECT_EQ(status[registers::status_offset::advisors], b.map.advice.size());
    EXPECT_EQ(status[registers::status_offset::layout], registers::layout_version);

    // Every advice: inside its bounds, the int16 and the float agree, function 04 = function 03.
    for (std::size_t i = 0; i < b.map.advice.size(); ++i) {
        const std::uint16_t base = b.map.advice_base(i);
        const auto w = hmi.holding(base, 32);
        const auto w4 = hmi.input(base, 32);
        ASSERT_EQ(w.size(), 32U);
        ASSERT_EQ(w4.size(), 32U);
        EXPECT_EQ(w[registers::advice_offset::kind], w4[registers::advice_offset::kind]);
        const float value = test::f32(w, registers::advice_offset::value);
        const float lo = test::f32(w, registers::advice_offset::min);
        const float hi = test::f32(w, registers::advice_offset::max);
        EXPECT_TRUE(std::isfinite(value)) << "slot " << i;
        EXPECT_GE(value, lo - 1e-4F) << "slot " << i;
        EXPECT_LE(value, hi + 1e-4F) << "slot " << i;
        const auto scaled = static_cast<std::int16_t>(w[registers::advice_offset::value_int16]);
        EXPECT_NEAR(scaled / b.map.advice[i].int16_scale, value, 1.0 / b.map.advice[i].int16_scale + 1e-3)
            << "slot " << i;
        EXPECT_LE(w[registers::advice_offset::quality], 3);
    }

    // The DO input of zone a_oxic1 equals what the simulated PLC serves (float32 at input
    // registers 6-7 of the Marrowby map), within what 10 plant minutes can change.
    const std::size_t tag = 3;
    const auto in = hmi.holding(b.map.input_base(tag), 8);
    ASSERT_EQ(in.size(), 8U);
    EXPECT_EQ(in[registers::input_offset::quality], 0);
    modbus_client plc{b.plant.port()};
    const auto raw = plc.input(6, 2);
    ASSERT_EQ(raw.size(), 2U);
    EXPECT_NEAR(test::f32(in, registers::input_offset::value), test::f32(raw, 0), 0.5);

    // The heartbeat counts.
    const std::uint16_t beat = hmi.holding(0, 1).at(0);
    EXPECT_TRUE(test::wait_for([&] { return hmi.holding(0, 1).at(0) != beat; }, 3s));
}

TEST(Integration, PymodbusReadsTheSameRegistersAsLibmodbus) {
    bench b{"pymodbus"};
    ASSERT_TRUE(b.daemon->wait_ready()) << b.daemon->log();
    ASSERT_TRUE(b.advice_published()) << b.daemon->log();
    // Fields that do not change between two reads: kinds, quantity codes, scales and bounds.
    const std::uint16_t base = b.map.advice_base(0);
    modbus_client hmi{b.hmi_port};
    const auto ours = hmi.holding(base + registers::advice_offset::min, 10);
    ASSERT_EQ(ours.size(), 10U);
    const std::string script =
        "import sys\n"
        "from pymodbus.client import ModbusTcpClient\n"
        "c = ModbusTcpClient('127.0.0.1', port=int(sys.argv[1]))\n"
        "assert c.connect()\n"
        "r = c.read_holding_registers(int(sys.argv[2]), 10, slave=1)\n"
        "assert not r.isError(), r\n"
        "i = c.read_input_registers(int(sys.argv[2]), 10, slave=0)\n"
        "assert not i.isError(), i\n"
        "print(' '.join(str(x) for x in r.registers))\n"
        "print(' '.join(str(x) for x in i.registers))\n";
    const auto r = test::run_process({"/usr/bin/python3", "-c", script, std::to_string(b.hmi_port),
                                      std::to_string(base + registers::advice_offset::min)},
                                     20s);
    ASSERT_EQ(r.exit_code, 0) << r.err;
    std::string expected;
    for (std::size_t i = 0; i < ours.size(); ++i) {
        expected += (i == 0 ? "" : " ") + std::to_string(ours[i]);
    }
    EXPECT_EQ(r.out, expected + "\n" + expected + "\n");
}

TEST(Integration, OnlyLabEntriesAreWritableAndTheyPersist) {
    bench b{"writes"};
    ASSERT_TRUE(b.daemon->wait_ready()) << b.daemon->log();
    modbus_client hmi{b.hmi_port};
    // Advice, status and input registers refuse writes with exception 02.
    EXPECT_EQ(hmi.write_register(b.map.advice_base(0), 1), 2);
    EXPECT_EQ(hmi.write_register(0, 1), 2);
    EXPECT_EQ(hmi.write_registers(b.map.input_base(0), {1, 2}), 2);
    // A lab entry is accepted and acknowledged; an out-of-range one is answered but not taken.
    const std::uint16_t lab = b.map.lab_base(0);  // a_mlss, 300..12000 mg/L
    EXPECT_EQ(hmi.write_registers(lab + registers::lab_offset::value, test::words_of(3150.0F)), 0);
    EXPECT_EQ(hmi.holding(lab + registers::lab_offset::status, 1).at(0), 1);
    EXPECT_EQ(hmi.write_registers(lab + registers::lab_offset::value, test::words_of(99999.0F)), 0);
    EXPECT_EQ(hmi.holding(lab + registers::lab_offset::status, 1).at(0), 2);
    EXPECT_FLOAT_EQ(test::f32(hmi.holding(lab, 2), 0), 3150.0F);
    // The int16 form: a_sv30 (20..1000 mL/L, so the int16 holds tenths: 2800 = 280 mL/L)
    const std::uint16_t sv30 = b.map.lab_base(4);
    ASSERT_EQ(b.map.find(sv30 + registers::lab_offset::value_int16)->int16_scale, 10.0);
    EXPECT_EQ(hmi.write_register(sv30 + registers::lab_offset::value_int16, 2800), 0);
    EXPECT_EQ(hmi.holding(sv30 + registers::lab_offset::status, 1).at(0), 1);

    // A restart keeps them.
    EXPECT_EQ(b.daemon->stop(), 0);
    b.daemon = std::make_unique<advisory_daemon>(b.dir, b.config, b.hmi_port);
    ASSERT_TRUE(b.daemon->wait_ready()) << b.daemon->log();
    modbus_client again{b.hmi_port};
    EXPECT_FLOAT_EQ(test::f32(again.holding(lab, 2), 0), 3150.0F);
    EXPECT_FLOAT_EQ(test::f32(again.holding(sv30, 2), 0), 280.0F);
    EXPECT_EQ(again.holding(lab + registers::lab_offset::entries, 1).at(0), 1);

    // The journal recorded both entries, the refused one too.
    std::error_code ec;
    const std::string journal = store::read_whole(b.dir.file("journal.jsonl"), ec).value_or("");
    EXPECT_NE(journal.find("\"event\":\"lab_entry\",\"entry\":\"a_mlss\",\"value\":3150"), std::string::npos) << journal;
    EXPECT_NE(journal.find("\"status\":\"out_of_range\""), std::string::npos);
}

TEST(Integration, LabWritesFromOutsideLabWritersAreRefused) {
    scratch_dir dir{"writers"};
    simulated_plant plant{dir, "marrowby.toml", {"--speed", "600"}};
    const std::uint16_t hmi_port = test::free_port();
    const std::string config =
        test::write_flocd_config(dir, "marrowby-si.toml", plant.port(), hmi_port, [](std::string& t) {
            const std::string from = "lab_writers = [\"127.0.0.1\"]";
            t.replace(t.find(from), from.size(), "lab_writers = [\"127.0.0.9\"]");
        });
    const auto map = map_of(config);
    advisory_daemon d{dir, config, hmi_port};
    ASSERT_TRUE(d.wait_ready()) << d.log();
    modbus_client hmi{hmi_port};
    EXPECT_EQ(hmi.write_registers(map.lab_base(0), test::words_of(3000.0F)), 1);
    EXPECT_EQ(hmi.holding(map.lab_base(0) + registers::lab_offset::status, 1).at(0), 3);
}

// kill -9 at random moments while flocd saves state (every accepted lab entry is saved at
// once): the state file always loads.
TEST(Integration, KillNineNeverLeavesAnUnreadableStateFile) {
    scratch_dir dir{"kill9"};
    simulated_plant plant{dir, "marrowby.toml", {"--speed", "600"}};
    const std::uint16_t hmi_port = test::free_port();
    const std::string config = test::write_flocd_config(dir, "marrowby-si.toml", plant.port(), hmi_port);
    const auto map = map_of(config);
    std::mt19937 rng{20261202U};
    std::uniform_int_distribution<int> pause_ms{0, 30};
    const std::string state = dir.file("state/flocd-state.toml");
    for (int round = 0; round < 12; ++round) {
        advisory_daemon d{dir, config, hmi_port};
        ASSERT_TRUE(d.wait_ready()) << "round " << round << "\n" << d.log();
        modbus_client hmi{hmi_port};
        for (int i = 0; i < 5; ++i) {
            (void)hmi.write_registers(map.lab_base(0), test::words_of(static_cast<float>(2000 + 100 * round + i)));
        }
        std::this_thread::sleep_for(std::chrono::milliseconds{pause_ms(rng)});
        d.process().signal(SIGKILL);
        ASSERT_TRUE(d.process().wait(10s).has_value());
        std::error_code ec;
        const auto text = store::read_whole(state, ec);
        ASSERT_TRUE(text.has_value()) << "round " << round;
        const auto parsed = store::parse_state(*text, state);
        ASSERT_TRUE(std::holds_alternative<store::state_document>(parsed))
            << "round " << round << ": " << std::get<std::string>(parsed);
        EXPECT_GE(std::get<store::state_document>(parsed).number("lab.a_mlss", "value", 0.0), 2000.0);
    }
    advisory_daemon last{dir, config, hmi_port};
    ASSERT_TRUE(last.wait_ready());
    EXPECT_EQ(last.log().find("unreadable"), std::string::npos) << last.log();
}

TEST(Integration, ReloadTakesAValidConfigAndRefusesABrokenOne) {
    bench b{"reload"};
    ASSERT_TRUE(b.daemon->wait_ready()) << b.daemon->log();
    modbus_client hmi{b.hmi_port};
    const auto generation = [&] { return hmi.holding(registers::status_offset::config_generation, 1).at(0); };
    EXPECT_EQ(generation(), 0);
    // A valid change: a narrower DO range on the first aeration advisor.
    std::error_code ec;
    std::string text = store::read_whole(b.config, ec).value_or("");
    const std::string from = "limits = [\"0.5 mg/L\", \"3.0 mg/L\"]";
    text.replace(text.find(from), from.size(), "limits = [\"0.5 mg/L\", \"2.6 mg/L\"]");
    ASSERT_FALSE(store::atomic_write(b.config, text));
    b.daemon->process().signal(SIGHUP);
    ASSERT_TRUE(test::wait_for([&] { return generation() == 1; }, 10s)) << b.daemon->log();
    EXPECT_TRUE(test::wait_for([&] {
        const auto w = hmi.holding(b.map.advice_base(0) + registers::advice_offset::max, 2);
        return w.size() == 2 && std::abs(test::f32(w, 0) - 2.6F) < 1e-4F;
    }, 10s));
    // A broken one is refused; the running config stays.
    ASSERT_FALSE(store::atomic_write(b.config, text + "\nnot_a_key = 1\n"));
    b.daemon->process().signal(SIGHUP);
    EXPECT_TRUE(test::wait_for([&] { return b.daemon->log().find("config reload refused") != std::string::npos; }, 10s));
    EXPECT_EQ(generation(), 1);
    EXPECT_TRUE(b.daemon->process().running());
}

TEST(Integration, PlcDownAtStartIsPickedUpWhenItComesUp) {
    scratch_dir dir{"plcdown"};
    const std::uint16_t plc_port = test::free_port();
    const std::uint16_t hmi_port = test::free_port();
    const std::string config = test::write_flocd_config(dir, "marrowby-si.toml", plc_port, hmi_port, [](std::string& t) {
        const std::string from = "reconnect_max = \"1 min\"";
        t.replace(t.find(from), from.size(), "reconnect_max = \"2 s\"");
    });
    const auto map = map_of(config);
    advisory_daemon d{dir, config, hmi_port};
    ASSERT_TRUE(d.wait_ready()) << d.log();
    modbus_client hmi{hmi_port};
    EXPECT_TRUE(test::wait_for([&] { return hmi.holding(1, 1).at(0) == 3; }, 5s));  // PLC down
    const auto in = hmi.holding(map.input_base(3), 3);
    EXPECT_EQ(in.at(registers::input_offset::quality), 2);
    const std::uint16_t why = in.at(registers::input_offset::reason);
    EXPECT_TRUE(why == 1 || why == 2) << why;  // no data / read failed

    simulated_plant plant{dir, "marrowby.toml", {"--speed", "600"}, plc_port};
    EXPECT_TRUE(test::wait_for([&] { return hmi.holding(map.input_base(3) + registers::input_offset::quality, 1).at(0) == 0; }, 15s))
        << d.log();
    EXPECT_TRUE(test::wait_for([&] { return hmi.holding(registers::status_offset::plc_link, 1).at(0) == 1; }, 3s));
}

// The never-writes proof: over a day of accelerated plant time the simulated PLC records every
// request flocd sent; none has a write function code.
TEST(Integration, FlocdNeverWritesToThePlc) {
    bench b{"neverwrites", {"--speed", "7200"}};
    ASSERT_TRUE(b.daemon->wait_ready()) << b.daemon->log();
    ASSERT_TRUE(b.advice_published()) << b.daemon->log();
    modbus_client hmi{b.hmi_port};
    const auto plant_time = [&] {
        const auto w = hmi.holding(registers::status_offset::plant_time_s, 2);
        return w.size() == 2 ? (std::uint32_t{w[0]} << 16U | w[1]) : 0U;
    };
    const std::uint32_t start = plant_time();
    ASSERT_TRUE(test::wait_for([&] { return plant_time() >= start + 24 * 3600; }, 60s))
        << "plant time " << plant_time() << " from " << start;
    EXPECT_EQ(b.daemon->stop(), 0);
    EXPECT_EQ(b.plant.stop(), 0);
    std::error_code ec;
    const std::string log = store::read_whole(b.plant.client_log(), ec).value_or("");
    ASSERT_FALSE(log.empty()) << b.plant.client_log();
    static const std::regex writes{R"("writes"\s*:\s*(\d+))"};
    static const std::regex requests{R"("requests"\s*:\s*(\d+))"};
    std::smatch m;
    ASSERT_TRUE(std::regex_search(log, m, requests)) << log;
    EXPECT_GE(std::stoul(m[1]), 30U) << log;  // three reads a poll, a poll a second, over 12 s
    for (auto it = std::sregex_iterator(log.begin(), log.end(), writes); it != std::sregex_iterator(); ++it) {
        EXPECT_EQ((*it)[1], "0") << log;
    }
    for (const char* fc : {"\"5\"", "\"6\"", "\"15\"", "\"16\"", "\"22\"", "\"23\""}) {
        EXPECT_EQ(log.find(fc), std::string::npos) << fc << " in " << log;
    }
}

} // namespace
