// Scenario files: every bundled scenario loads; broken scenarios (tests/sim_plant/broken) are
// refused with exactly the errors their "# expect: LINE:COL PATH | EXPECTED" lines announce.
#include "support.hpp"
#include "test_files.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <regex>
#include <tuple>

namespace {

namespace fs = std::filesystem;
using namespace floc::sim;

const fs::path source_dir{FLOC_SOURCE_DIR};

TEST(Scenarios, EveryBundledScenarioLoads) {
    std::size_t n = 0;
    for (const auto& entry : fs::directory_iterator(source_dir / "sim_plant/scenarios")) {
        if (entry.path().extension() != ".toml") {
            continue;
        }
        ++n;
        const scenario_result r = load_scenario_file(entry.path().string());
        EXPECT_TRUE(r.ok()) << entry.path() << (r.errors.empty() ? "" : "\n" + r.errors.front().message());
    }
    EXPECT_GE(n, 3U);
    EXPECT_TRUE(load_scenario_file((source_dir / "tests/sim_plant/valid/minimal.toml").string()).ok());
}

TEST(Scenarios, MarrowbyMatchesTheExampleConfigsPlant) {
    const scenario s = test::marrowby();
    ASSERT_EQ(s.plant.trains.size(), 2U);
    for (const train_spec& t : s.plant.trains) {
        ASSERT_EQ(t.zones.size(), 3U);
        EXPECT_EQ(t.zones[0].kind, zone_kind::anoxic);
        EXPECT_DOUBLE_EQ(t.zones[0].volume_m3, 700.0);
        EXPECT_DOUBLE_EQ(t.zones[1].volume_m3, 1000.0);
        EXPECT_DOUBLE_EQ(t.zones[2].volume_m3, 1000.0);
        EXPECT_DOUBLE_EQ(t.clarifier.area_m2, 450.0);
        EXPECT_DOUBLE_EQ(t.clarifier.depth_m, 4.0);
        EXPECT_DOUBLE_EQ(t.influent_share, 0.5);
    }
    EXPECT_DOUBLE_EQ(s.influent.mean_flow_m3_per_d, 9000.0);
}

TEST(Scenarios, UsUnitsAreConvertedOnLoad) {
    const scenario s = test::load("carrick-fen");
    // 0.25 MGD and 0.25 MG (NIST SP 811 (2008), B.8: 1 gal = 3.785411784 L).
    EXPECT_NEAR(s.influent.mean_flow_m3_per_d, 946.352946, 1e-6);
    EXPECT_NEAR(s.plant.trains[0].zones[0].volume_m3, 946.352946, 1e-6);
    EXPECT_NEAR(s.plant.trains[0].clarifier.depth_m, 12 * 0.3048, 1e-9);
    EXPECT_NEAR(s.influent.temperature_mean_c, (58.0 - 32.0) / 1.8, 1e-9);
    EXPECT_NEAR(s.influent.temperature_amplitude_c, 5.0, 1e-9);  // 9 degF as a difference
}

struct expectation {
    std::uint32_t line = 0;
    std::uint32_t column = 0;
    std::string path;
    std::string expected;
};

TEST(Scenarios, BrokenScenariosReportTheAnnouncedErrors) {
    static const std::regex expect_line{R"(^# expect: (\d+):(\d+) (\S*) \| (.+)$)"};
    std::size_t files = 0;
    for (const auto& entry : fs::directory_iterator(source_dir / "tests/sim_plant/broken")) {
        if (entry.path().extension() != ".toml") {
            continue;
        }
        ++files;
        std::vector<expectation> want;
        std::ifstream in(entry.path());
        std::string line;
        while (std::getline(in, line)) {
            std::smatch m;
            if (std::regex_match(line, m, expect_line)) {
                want.push_back({static_cast<std::uint32_t>(std::stoul(m[1])), static_cast<std::uint32_t>(std::stoul(m[2])),
                                m[3], m[4]});
            }
        }
        ASSERT_FALSE(want.empty()) << entry.path() << " announces no error";
        const scenario_result r = load_scenario_file(entry.path().string());
        EXPECT_FALSE(r.ok()) << entry.path();
        ASSERT_EQ(r.errors.size(), want.size()) << entry.path() << "\n" << (r.errors.empty() ? "" : r.errors.front().message());
        for (std::size_t i = 0; i < want.size(); ++i) {
            const floc::config::diagnostic& d = r.errors[i];
            EXPECT_EQ(d.at.line, want[i].line) << d.message();
            EXPECT_EQ(d.at.column, want[i].column) << d.message();
            EXPECT_EQ(d.path, want[i].path) << d.message();
            EXPECT_EQ(d.expected, want[i].expected) << d.message();
            EXPECT_EQ(d.message().rfind(entry.path().string() + ":", 0), 0U) << d.message();
        }
    }
    EXPECT_GE(files, 10U);
}

TEST(Scenarios, TheFaultBenchIsMarrowbyWithItsOwnSchedule) {
    const scenario base = test::marrowby();
    const scenario s = test::load("marrowby-faults");
    EXPECT_EQ(s.name, "Marrowby WRW (fault bench)");
    EXPECT_EQ(fs::path{s.based_on}.filename(), "marrowby.toml");
    EXPECT_EQ(s.plant.trains.size(), base.plant.trains.size());
    ASSERT_EQ(s.sensors.size(), base.sensors.size());
    EXPECT_EQ(s.registers.entries.size(), base.registers.entries.size());
    EXPECT_EQ(s.server.port, 15020);
    EXPECT_EQ(s.seed, base.seed);
    // The base's faults are dropped; the three of the bench are in place.
    std::size_t faults = 0;
    for (const sensor_spec& sn : s.sensors) {
        faults += sn.faults.size();
    }
    EXPECT_EQ(faults, 3U);
    ASSERT_EQ(s.find_sensor("a_oxic1_do")->faults.size(), 1U);
    EXPECT_EQ(s.find_sensor("a_oxic1_do")->faults[0].kind, fault_kind::stuck);
    EXPECT_EQ(s.find_sensor("a_oxic1_do")->faults[0].start_s, 600.0);
    EXPECT_EQ(s.find_sensor("a_oxic1_do")->faults[0].end_s, 2400.0);
    EXPECT_NEAR(s.find_sensor("a_anoxic_no3")->faults[0].magnitude, 48.0, 1e-12);
    EXPECT_EQ(s.find_sensor("a_oxic2_nh4")->faults[0].kind, fault_kind::dropout);
    EXPECT_TRUE(s.find_sensor("b_blanket")->faults.empty());
    // The protocol faults, in schedule order.
    ASSERT_EQ(s.events.size(), 5U);
    const std::vector<std::pair<event_kind, double>> schedule{
        {event_kind::link_loss, 3600.0},          {event_kind::slow_replies, 4500.0},
        {event_kind::exception_replies, 5400.0},  {event_kind::wrong_transaction_id, 6300.0},
        {event_kind::dropped_connections, 7200.0}};
    for (std::size_t i = 0; i < schedule.size(); ++i) {
        EXPECT_EQ(s.events[i].kind, schedule[i].first) << i;
        EXPECT_EQ(s.events[i].start_s, schedule[i].second) << i;
        EXPECT_EQ(s.events[i].end_s, schedule[i].second + 300.0) << i;
    }
    EXPECT_EQ(s.events[1].delay_s, 1.5);
    EXPECT_EQ(s.events[2].function, std::optional<std::uint8_t>{4});
    EXPECT_EQ(s.events[2].exception, 4);
}

TEST(Scenarios, MarrowbysLabSheet) {
    const scenario& s = test::marrowby();
    const lab_sheet_spec& sheet = s.lab_sheet;
    EXPECT_EQ(fs::path{sheet.source_file}.filename(), "marrowby.toml");
    EXPECT_TRUE(sheet.at_start);
    ASSERT_EQ(sheet.entries.size(), 8U);
    const std::vector<std::tuple<std::string, lab_figure, std::size_t>> want{
        {"a_mlss", lab_figure::mlss, 0},
        {"b_mlss", lab_figure::mlss, 1},
        {"a_ras_tss", lab_figure::ras_tss, 0},
        {"b_ras_tss", lab_figure::ras_tss, 1},
        {"a_sv30", lab_figure::sv30, 0},
        {"b_sv30", lab_figure::sv30, 1},
        {"effluent_tss", lab_figure::effluent_tss, no_index},
        {"influent_bod", lab_figure::influent_bod5, no_index}};
    for (std::size_t i = 0; i < want.size(); ++i) {
        const lab_sheet_entry& e = sheet.entries[i];
        EXPECT_EQ(e.name, std::get<0>(want[i]));
        EXPECT_EQ(e.figure, std::get<1>(want[i])) << e.name;
        EXPECT_EQ(e.train, std::get<2>(want[i])) << e.name;
        EXPECT_EQ(e.sample_times_s, std::vector<double>{8 * 3600.0}) << e.name;
        EXPECT_GT(e.at.line, 0U) << e.name;
    }
    EXPECT_EQ(sheet.entries[0].entry_delay_s, 7200.0);
    EXPECT_EQ(sheet.entries[0].composite_s, 0.0);
    EXPECT_EQ(sheet.entries[6].composite_s, 86400.0);
    EXPECT_EQ(sheet.entries[7].composite_s, 86400.0);
    EXPECT_EQ(sheet.entries[7].entry_delay_s, 5 * 86400.0); // the BOD5 test's five days
    // The fault bench inherits it, written in its base.
    const scenario bench = test::load("marrowby-faults");
    EXPECT_EQ(bench.lab_sheet.source_file, sheet.source_file);
    EXPECT_EQ(bench.lab_sheet.entries.size(), 8U);
    EXPECT_TRUE(bench.lab_sheet.at_start);
    // Scenarios without one have none.
    EXPECT_TRUE(test::load("carrick-fen").lab_sheet.entries.empty());
}

TEST(Scenarios, LabSheetDefaultsAndOverrides) {
    std::string text = test::slurp(source_dir / "tests/sim_plant/valid/minimal.toml");
    text += "\n[lab_sheet]\nsample_times = [\"16:30\", \"07:45\"]\nentry_delay = \"90 min\"\n"
            "[[lab_sheet.entry]]\nname = \"mlss\"\nsource = \"mlss\"\n"
            "[[lab_sheet.entry]]\nname = \"temp\"\nsource = \"temperature\"\nsample_times = "
            "[\"12:00\"]\n"
            "entry_delay = \"0 s\"\n"
            "[[lab_sheet.entry]]\nname = \"eff\"\nsource = \"effluent_tss\"\ntrain = "
            "\"T\"\ncomposite = \"12 h\"\n";
    const scenario_result r = load_scenario_text(text, "sheet.toml");
    ASSERT_TRUE(r.ok()) << (r.errors.empty() ? "" : r.errors.front().message());
    const lab_sheet_spec& sheet = r.value->lab_sheet;
    EXPECT_FALSE(sheet.at_start);
    ASSERT_EQ(sheet.entries.size(), 3U);
    // Sorted; a one-train plant's train is implied for a train figure.
    EXPECT_EQ(sheet.entries[0].sample_times_s,
              (std::vector<double>{7 * 3600.0 + 45 * 60.0, 16 * 3600.0 + 30 * 60.0}));
    EXPECT_EQ(sheet.entries[0].entry_delay_s, 5400.0);
    EXPECT_EQ(sheet.entries[0].train, 0U);
    EXPECT_EQ(sheet.entries[1].sample_times_s, std::vector<double>{12 * 3600.0});
    EXPECT_EQ(sheet.entries[1].entry_delay_s, 0.0);
    EXPECT_EQ(sheet.entries[1].train, no_index);
    EXPECT_EQ(sheet.entries[2].train, 0U);
    EXPECT_EQ(sheet.entries[2].composite_s, 12 * 3600.0);
    EXPECT_EQ(sheet.source_file, "sheet.toml");
}

TEST(Scenarios, ABaseScenarioMustBeReadableValidAndNotBasedOnAnother) {
    const fs::path dir = test::temp_dir("flocsim-overlay");
    const auto write = [&](const std::string& name, const std::string& text) {
        std::ofstream(dir / name) << text;
        return (dir / name).string();
    };
    const std::string minimal = (source_dir / "tests/sim_plant/valid/minimal.toml").string();
    const std::string first = write("first.toml", "scenario_version = 1\nbased_on = \"" + minimal + "\"\n");
    const scenario_result ok = load_scenario_file(first);
    ASSERT_TRUE(ok.ok()) << (ok.errors.empty() ? "" : ok.errors.front().message());
    EXPECT_EQ(ok.value->based_on, minimal);

    // A chain of bases, or a file based on itself, is refused in the base it reaches.
    const std::string second_path = write("second.toml", "scenario_version = 1\nbased_on = \"first.toml\"\n");
    const scenario_result second = load_scenario_file(second_path);
    ASSERT_EQ(second.errors.size(), 2U);
    EXPECT_EQ(second.errors[0].file, first);
    EXPECT_EQ(second.errors[0].path, "based_on");
    EXPECT_EQ(second.errors[0].expected, "a base scenario that is not based on another");
    EXPECT_EQ(second.errors[1].file, second_path);
    EXPECT_EQ(second.errors[1].expected, "a valid base scenario (its errors are listed above)");
    const scenario_result itself = load_scenario_file(
        write("itself.toml", "scenario_version = 1\nbased_on = \"itself.toml\"\n[[fault]]\nsensor = \"x\"\n"));
    ASSERT_EQ(itself.errors.size(), 2U);  // and the [[fault]] it could not read is not reported
    EXPECT_EQ(itself.errors[0].expected, "a base scenario that is not based on another");

    const scenario_result missing = load_scenario_file(write("missing.toml", "scenario_version = 1\nbased_on = \"nope.toml\"\n"));
    ASSERT_EQ(missing.errors.size(), 1U);
    EXPECT_EQ(missing.errors[0].expected, "the path of a readable scenario file, relative to this one");

    // A broken base: its own errors (in its own file) come first, then the overlay's.
    const std::string broken = (source_dir / "tests/sim_plant/broken/wrong-unit.toml").string();
    const scenario_result bad = load_scenario_file(write("bad.toml", "scenario_version = 1\nbased_on = \"" + broken + "\"\n"));
    ASSERT_GE(bad.errors.size(), 2U);
    EXPECT_EQ(bad.errors.front().file, broken);
    EXPECT_EQ(bad.errors.back().expected, "a valid base scenario (its errors are listed above)");
    fs::remove_all(dir);
}

TEST(Scenarios, AMissingFileIsUnreadable) {
    const scenario_result r = load_scenario_file("/nonexistent/plant.toml");
    EXPECT_TRUE(r.unreadable);
    EXPECT_FALSE(r.ok());
}

} // namespace
