// The operator stand-in's lab round end to end: flocsim (--lockstep, --enter-lab) and the real
// flocd as processes on free loopback ports. flocsim types the scenario's lab sheet into flocd's
// lab entries as an HMI would; flocd's own registers (read here with libmodbus, function 03, the
// register map of config/examples/marrowby-si.toml) then hold the model's values within float32
// and int16 scaling, dated at their sampling time, acknowledged as accepted; the RAS advice
// leaves its fallback for lack of lab inputs; and flocd still never writes to the simulated PLC.
// Every wait is bounded; both processes are stopped by PID.
#include "harness.hpp"
#include "support.hpp"
#include "test_files.hpp"

#include "floc/config/load.hpp"
#include "floc/registers/register_map.hpp"
#include "floc/sim/lab.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <functional>
#include <regex>
#include <sstream>

namespace {

using namespace floc;
using namespace std::chrono_literals;
using floc::sim::test::slurp;

#ifdef FLOC_SIM_TESTS_SANITIZED
constexpr auto limit = 300s; // the steady state and both programs run slower under sanitizers
#else
constexpr auto limit = 120s;
#endif

std::size_t count_of(const std::string& text, const std::string& what) {
    std::size_t n = 0;
    for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) {
        ++n;
    }
    return n;
}

// One accepted lab entry as flocd journals it: its plant time then, and the sample's.
struct journalled {
    double plant_time_s = 0.0;
    double sample_time_s = 0.0;
};

std::vector<journalled> accepted_entries(const std::string& journal, const std::string& entry) {
    static const std::regex line{
        R"re("plant_time_s":([-0-9.e+]+),.*"event":"lab_entry","entry":"([a-z0-9_]+)".*"status":"accepted","sample_time_s":([-0-9.e+]+))re"};
    std::vector<journalled> out;
    std::istringstream in(journal);
    std::string text;
    while (std::getline(in, text)) {
        std::smatch m;
        if (std::regex_search(text, m, line) && m[2] == entry) {
            out.push_back({std::stod(m[1]), std::stod(m[3])});
        }
    }
    return out;
}

TEST(FlocsimLabEntries, TheStandinTypesTheLabSheetIntoFlocdAsAnHmiWould) {
    const test::scratch_dir dir{"lab-entries"};
    // Marrowby with its morning round at 00:10, typed in 20 minutes later, so that a short run
    // sees the start sheet and one round; the BOD5 (typed in after five days) only at the start.
    std::string text = slurp(test::source_dir() / "sim_plant/scenarios/marrowby.toml");
    const std::string round = "sample_times = [\"08:00\"]\nentry_delay = \"2 h\"";
    ASSERT_NE(text.find(round), std::string::npos);
    text.replace(text.find(round), round.size(),
                 "sample_times = [\"00:10\"]\nentry_delay = \"20 min\"");
    const std::string scenario_path = dir.file("marrowby-lab.toml");
    std::ofstream(scenario_path) << text;
    const std::uint16_t plc_port = test::free_port();
    const std::uint16_t hmi_port = test::free_port();
    const std::string config =
        test::write_flocd_config(dir, "marrowby-si.toml", plc_port, hmi_port);
    auto loaded = config::load_file(config);
    ASSERT_TRUE(loaded.ok());
    const config::plant_config& cfg = *loaded.config;
    const registers::register_map map = registers::build(cfg);

    // The model's values at the start and at 00:10, in process: the same plant, the same start.
    const sim::scenario& s = sim::test::marrowby();
    const std::vector<double>& x0 = sim::test::marrowby_steady_state();
    const sim::plant_output at_start = sim::plant_model{s.plant, s.influent}.outputs(
        x0.data(), 0.0, sim::initial_controls(s.plant));
    sim::simulation run = sim::make_simulation(s, x0);
    ASSERT_TRUE(run.advance_to(600.0));
    const sim::plant_output at_round = run.outputs();

    // A lockstep of 2 min: flocd polls every second; the round's 00:10 falls inside a step.
    constexpr double step_s = 120.0;
    constexpr double lag_s = 3 * step_s; // how late a sample may be dated, see below
    test::simulated_plant plant{dir,
                                scenario_path,
                                {"--lockstep", "2min", "--hmi",
                                 "127.0.0.1:" + std::to_string(hmi_port), "--hmi-config", config,
                                 "--enter-lab"},
                                plc_port};
    test::advisory_daemon flocd{dir, config, hmi_port};
    ASSERT_TRUE(flocd.wait_ready(limit)) << flocd.log();
    const std::string err = dir.file("flocsim.err");
    const bool typed = test::wait_for(
        [&] {
            const std::string e = slurp(err);
            return count_of(e, "sampled day 0 00:00:00: accepted") == 8 &&
                   count_of(e, "sampled day 0 00:10:00: accepted") == 7;
        },
        limit, 200ms);
    ASSERT_TRUE(typed) << slurp(err) << flocd.log();
    EXPECT_EQ(count_of(slurp(err), "refused"), 0U) << slurp(err);
    EXPECT_NE(slurp(err).find("flocsim: operator at day 0 00:3"), std::string::npos) << slurp(err);

    // flocd's lab block: the value (float32 and scaled int16), the status, the entries, the age.
    test::modbus_client hmi{hmi_port};
    ASSERT_TRUE(hmi.connected());
    const auto flocd_time_s = [&] {
        const auto status = hmi.holding(map.status_base(), 6);
        EXPECT_EQ(status.size(), 6U);
        namespace so = registers::status_offset;
        return status.size() == 6
                   ? static_cast<double>((std::uint32_t{status[so::plant_time_s]} << 16U) |
                                         status[so::plant_time_s + 1])
                   : 0.0;
    };
    const double before_s = flocd_time_s();
    std::vector<std::vector<std::uint16_t>> slots;
    for (std::size_t i = 0; i < cfg.lab.size(); ++i) {
        slots.push_back(hmi.holding(map.lab_base(i), static_cast<int>(config::lab_slot_registers)));
    }
    const double after_s = flocd_time_s();
    for (std::size_t i = 0; i < cfg.lab.size(); ++i) {
        const config::lab_entry& l = cfg.lab[i];
        if (l.check) {
            continue; // probe check entries are not on the lab sheet
        }
        const sim::lab_sheet_entry* e = nullptr;
        for (const sim::lab_sheet_entry& candidate : s.lab_sheet.entries) {
            e = candidate.name == l.name ? &candidate : e;
        }
        ASSERT_NE(e, nullptr) << l.name;
        // The BOD5 is the start sheet's; the round's effluent composite ending at 00:10 holds
        // the one aliquot of 00:00; the rest are the round's grab samples.
        const bool from_start = e->figure == sim::lab_figure::influent_bod5;
        const bool one_aliquot = e->figure == sim::lab_figure::effluent_tss;
        const double sampled_s = from_start ? 0.0 : 600.0;
        const double want = sim::lab_value(s.plant, from_start || one_aliquot ? at_start : at_round,
                                           e->figure, e->train);
        const std::uint16_t base = map.lab_base(i);
        const std::vector<std::uint16_t>& slot = slots[i];
        ASSERT_EQ(slot.size(), config::lab_slot_registers) << l.name;
        namespace lo = registers::lab_offset;
        EXPECT_NEAR(test::f32(slot, lo::value), want, 1e-4 * want)
            << l.name; // mg/L, mL/L: SI display
        const registers::field* f = map.find(static_cast<std::uint16_t>(base + lo::value_int16));
        ASSERT_NE(f, nullptr);
        EXPECT_NEAR(static_cast<std::int16_t>(slot[lo::value_int16]) / f->int16_scale, want,
                    0.5 / f->int16_scale + 1e-4 * want)
            << l.name;
        EXPECT_EQ(slot[lo::status], static_cast<std::uint16_t>(registers::lab_status::accepted))
            << l.name;
        EXPECT_EQ(slot[lo::entries], from_start ? 1 : 2) << l.name;
        EXPECT_EQ(slot[lo::quantity], static_cast<std::uint16_t>(l.kind)) << l.name;
        // Dated at the sampling time on flocd's clock, in whole minutes; flocd's plant time read
        // before and after the slots. The stand-in counts the minutes on the plant time flocd's
        // status block shows as it last read it: the block trails flocd's clock by up to a
        // second (flocd's tick), the reading by up to another (the reader's period), so a sample
        // may be dated up to two polls (two steps) late, a third on a loaded machine; never early.
        EXPECT_GE(slot[lo::age_min], (before_s - sampled_s - lag_s) / 60.0 - 1.0) << l.name;
        EXPECT_LE(slot[lo::age_min], (after_s - sampled_s) / 60.0 + 1.0) << l.name;
    }

    // flocd journals each entry with its sample time: the start sheet at 0, the round at 00:10,
    // entered 20 minutes after it was taken (flocd's clock trails flocsim's by up to a step).
    const std::vector<journalled> mlss =
        accepted_entries(slurp(dir.file("journal.jsonl")), "a_mlss");
    ASSERT_EQ(mlss.size(), 2U);
    for (const auto& [entry, sampled_s] : {std::pair{mlss[0], 0.0}, std::pair{mlss[1], 600.0}}) {
        EXPECT_GE(entry.sample_time_s, sampled_s - 30.0);
        EXPECT_LE(entry.sample_time_s, sampled_s + lag_s + 30.0);
    }
    // Typed in at 00:30 (flocsim's clock), when flocd had read 00:28 or later.
    EXPECT_GE(mlss[1].plant_time_s, 1800.0 - step_s);

    // With its lab inputs the RAS advice of both trains is good, no input bad.
    for (std::size_t i = 0; i < map.advice.size(); ++i) {
        if (map.advice[i].kind != registers::advisor_kind::ras) {
            continue;
        }
        std::vector<std::uint16_t> a;
        const bool good = test::wait_for(
            [&] {
                a = hmi.holding(map.advice_base(i), 6);
                return a.size() == 6 && a[registers::advice_offset::quality] == 0;
            },
            60s, 200ms);
        ASSERT_TRUE(good) << "ras " << map.advice[i].subject;
        for (std::uint16_t r = registers::advice_offset::reason_1;
             r <= registers::advice_offset::reason_4; ++r) {
            EXPECT_NE(a[r], 1) << "ras " << map.advice[i].subject << ": input_bad";
        }
    }

    // The lab entries went to flocd; flocd sent the simulated PLC reads only.
    EXPECT_EQ(flocd.stop(), 0);
    EXPECT_EQ(plant.stop(), 0);
    const std::string clients = slurp(plant.client_log());
    EXPECT_NE(clients.find("\"writes\":0"), std::string::npos) << clients;
    EXPECT_EQ(clients.find("\"16\""), std::string::npos) << clients;
}

// flocsim and flocd on free ports, the flocd config edited by `edit`; flocsim types in the start
// sheet of Marrowby's lab sheet.
struct lab_bench {
    explicit lab_bench(const std::string& name, const std::function<void(std::string&)>& edit)
        : dir(name), plc_port(test::free_port()), hmi_port(test::free_port()),
          config(test::write_flocd_config(dir, "marrowby-si.toml", plc_port, hmi_port, edit)),
          plant(dir, "marrowby.toml",
                {"--lockstep", "1min", "--hmi", "127.0.0.1:" + std::to_string(hmi_port),
                 "--hmi-config", config, "--enter-lab"},
                plc_port),
          flocd(dir, config, hmi_port) {}

    [[nodiscard]] std::string err() const { return slurp(dir.file("flocsim.err")); }

    test::scratch_dir dir;
    std::uint16_t plc_port;
    std::uint16_t hmi_port;
    std::string config;
    test::simulated_plant plant;
    test::advisory_daemon flocd;
};

TEST(FlocsimLabEntries, FlocdsRefusalsAreReportedOnceAndNeverTypedAgain) {
    {
        // MLSS above the range flocd's config allows: refused as out of range; the rest accepted.
        lab_bench b{"lab-out-of-range", [](std::string& text) {
                        const std::string range =
                            "range = [\"300 mg/L\", \"12000 mg/L\"]\nmax_age = \"36 h\"";
                        ASSERT_NE(text.find(range), std::string::npos);
                        text.replace(text.find(range), range.size(),
                                     "range = [\"300 mg/L\", \"1000 mg/L\"]");
                    }};
        ASSERT_TRUE(b.flocd.wait_ready(limit)) << b.flocd.log();
        ASSERT_TRUE(
            test::wait_for([&] { return count_of(b.err(), ": accepted") == 7; }, limit, 200ms))
            << b.err();
        EXPECT_EQ(count_of(b.err(), "lab entry a_mlss "), 1U) << b.err();
        EXPECT_NE(b.err().find("sampled day 0 00:00:00: refused: out of range"), std::string::npos)
            << b.err();
        // Ten more plant minutes (ten polls of flocd): nothing is typed again.
        test::modbus_client hmi{b.hmi_port};
        const auto flocd_time_s = [&] {
            const auto w =
                hmi.holding(registers::status_offset::plant_time_s, 2); // status block at 0
            return w.size() == 2 ? (std::uint32_t{w[0]} << 16U) | w[1] : 0U;
        };
        const std::uint32_t then = flocd_time_s();
        EXPECT_TRUE(test::wait_for([&] { return flocd_time_s() >= then + 600; }, limit, 200ms));
        EXPECT_EQ(count_of(b.err(), "lab entry a_mlss "), 1U) << b.err();
        EXPECT_EQ(count_of(slurp(b.dir.file("journal.jsonl")), "\"status\":\"out_of_range\""), 1U);
    }
    {
        // flocsim types from 127.0.0.1, which flocd does not let write lab entries: exception 01 to
        // the first write, and the slot says why.
        lab_bench b{"lab-not-allowed", [](std::string& text) {
                        const std::string writers = "lab_writers = [\"127.0.0.1\"]";
                        ASSERT_NE(text.find(writers), std::string::npos);
                        text.replace(text.find(writers), writers.size(),
                                     "lab_writers = [\"127.0.0.2\"]");
                    }};
        ASSERT_TRUE(b.flocd.wait_ready(limit)) << b.flocd.log();
        const std::string refused = "refused: exception 1 (illegal function) to the sample age "
                                    "write; flocd shows refused: not "
                                    "allowed from this address";
        ASSERT_TRUE(test::wait_for([&] { return count_of(b.err(), refused) == 8; }, limit, 200ms))
            << b.err();
        EXPECT_EQ(count_of(b.err(), "accepted"), 0U) << b.err();
    }
}

} // namespace
