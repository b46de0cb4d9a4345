// Scenario files: every bundled scenario loads; broken scenarios (tests/sim_plant/broken) are
// refused with exactly the errors their "# expect: LINE:COL PATH | EXPECTED" lines announce.
#include "support.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <regex>

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

TEST(Scenarios, AMissingFileIsUnreadable) {
    const scenario_result r = load_scenario_file("/nonexistent/plant.toml");
    EXPECT_TRUE(r.unreadable);
    EXPECT_FALSE(r.ok());
}

} // namespace
