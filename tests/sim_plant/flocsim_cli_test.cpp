// flocsim run as a real process: --help, --version, --check-scenario, headless runs with CSV and
// JSON output, and the exit codes (sysexits, as documented in --help).
#include "process.hpp"
#include "test_files.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <unistd.h>

namespace {

namespace fs = std::filesystem;
using floc::sim::test::slurp;
using floc::test::run_process;

const fs::path source_dir{FLOC_SOURCE_DIR};
const std::string flocsim{FLOCSIM_PATH};

std::string scenario(const std::string& name) { return (source_dir / "sim_plant/scenarios" / (name + ".toml")).string(); }

TEST(FlocsimCli, HelpDocumentsEveryOptionAndTheCautions) {
    const auto r = run_process({flocsim, "--help"});
    EXPECT_EQ(r.exit_code, 0);
    for (const char* option : {"--scenario", "--check-scenario", "--for", "--to-steady-state", "--csv", "--csv-interval",
                               "--json", "--quiet", "--print-registers", "--version", "--serve", "--bind", "--port",
                               "--allow-non-loopback", "--speed", "--fast", "--lockstep", "--status", "--trend",
                               "--trend-interval", "--client-log", "--hmi", "--hmi-config", "--apply-advice",
                               "--show-advice", "--enter-lab"}) {
        EXPECT_NE(r.out.find(option), std::string::npos) << option;
    }
    EXPECT_NE(r.out.find("Never point it"), std::string::npos);
    EXPECT_NE(r.out.find("never a write"), std::string::npos);
    EXPECT_NE(r.out.find("advisory only"), std::string::npos);
    EXPECT_NE(r.out.find("licensed operator"), std::string::npos);
    EXPECT_NE(r.out.find("local"), std::string::npos);
}

TEST(FlocsimCli, VersionAndUsageErrors) {
    const auto v = run_process({flocsim, "--version"});
    EXPECT_EQ(v.exit_code, 0);
    EXPECT_EQ(v.out.rfind("flocsim ", 0), 0U);
    EXPECT_EQ(run_process({flocsim}).exit_code, 64);
    EXPECT_EQ(run_process({flocsim, "--bogus"}).exit_code, 64);
    EXPECT_EQ(run_process({flocsim, "--scenario", scenario("marrowby"), "--for", "ten days"}).exit_code, 64);
    EXPECT_EQ(run_process({flocsim, "--scenario", scenario("marrowby"), "--for", "1d", "--to-steady-state"}).exit_code, 64);
}

TEST(FlocsimCli, CheckScenario) {
    const auto ok = run_process({flocsim, "--check-scenario", scenario("marrowby")});
    EXPECT_EQ(ok.exit_code, 0) << ok.err;
    EXPECT_NE(ok.out.find("scenario OK"), std::string::npos);
    EXPECT_NE(ok.out.find("Marrowby WRW"), std::string::npos);
    const auto missing = run_process({flocsim, "--check-scenario", "/nonexistent/x.toml"});
    EXPECT_EQ(missing.exit_code, 66);
    const std::string broken = (source_dir / "tests/sim_plant/broken/wrong-unit.toml").string();
    const auto bad = run_process({flocsim, "--check-scenario", broken});
    EXPECT_EQ(bad.exit_code, 78);
    EXPECT_NE(bad.err.find(broken + ":40:10: train[0].zone[0].volume: found \"500 m2\""), std::string::npos) << bad.err;
}

TEST(FlocsimCli, HeadlessRunWritesTheTrendAndTheFinalState) {
    const fs::path dir = floc::sim::test::temp_dir("flocsim-test");
    const fs::path csv = dir / "trend.csv";
    const fs::path json = dir / "final.json";
    const auto r = run_process({flocsim, "--scenario", scenario("marrowby"), "--for", "6h", "--csv", csv.string(),
                                "--csv-interval", "1h", "--json", json.string()},
                               std::chrono::seconds{120});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.err.find("Marrowby WRW  day 0.25/0.25"), std::string::npos) << r.err;
    const std::string trend = slurp(csv);
    std::istringstream lines(trend);
    std::string header;
    std::getline(lines, header);
    for (const char* column : {"time[s]", "zone.a_anoxic.S_NO[g/m3]", "zone.b_oxic2.X_BA[g/m3]", "zone.a_oxic1.KLa[1/d]",
                               "clarifier.clarifier_a.layer01.TSS[g/m3]", "clarifier.clarifier_b.layer10.X_ND[g/m3]",
                               "clarifier.clarifier_b.blanket[m]", "effluent.S_NH[g/m3]", "effluent.TN[g/m3]",
                               "energy.aeration_total[kWh]", "sensor.a_oxic1_do[mg/L]", "sensor.b_blanket[m]"}) {
        EXPECT_NE(header.find(column), std::string::npos) << column;
    }
    // A row at 0 h and one per hour: 7 rows, each with as many fields as the header.
    const auto fields = [](const std::string& l) { return std::count(l.begin(), l.end(), ',') + 1; };
    std::string row;
    std::string last;
    std::size_t rows = 0;
    while (std::getline(lines, row)) {
        EXPECT_EQ(fields(row), fields(header));
        last = row;
        ++rows;
    }
    EXPECT_EQ(rows, 7U);
    EXPECT_EQ(last.rfind("21600,", 0), 0U) << last.substr(0, 40);
    const std::string state = slurp(json);
    EXPECT_NE(state.find("\"plant_time_s\": 21600"), std::string::npos);
    EXPECT_NE(state.find("\"clarifier_b\""), std::string::npos);
    EXPECT_NE(state.find("\"aeration_kWh\""), std::string::npos);
    EXPECT_NE(state.find("\"a_oxic2_nh4\""), std::string::npos);
    fs::remove_all(dir);
}

TEST(FlocsimCli, SteadyStateOfTheBenchmark) {
    const fs::path dir = floc::sim::test::temp_dir("flocsim-test");
    const fs::path json = dir / "steady.json";
    const auto r = run_process({flocsim, "--scenario", scenario("bsm1-validation"), "--to-steady-state", "--json",
                                json.string(), "--quiet"},
                               std::chrono::seconds{300});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(r.err.empty()) << r.err;
    const std::string state = slurp(json);
    // Effluent ammonium of the benchmark's open-loop steady state, 1.7333 g N/m3 (Alex et al. 2008;
    // see bsm1_test.cpp for the source and the full comparison).
    EXPECT_NE(state.find("\"S_NH\": 1.733"), std::string::npos) << state.substr(state.find("\"effluent\""), 400);
    fs::remove_all(dir);
}

TEST(FlocsimCli, HeadlessRunWithoutOutputFiles) {
    const auto r = run_process({flocsim, "--scenario", scenario("carrick-fen"), "--for", "3h", "--quiet"},
                               std::chrono::seconds{120});
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_FALSE(r.timed_out);
    EXPECT_NE(r.out.find("plant time 10800 s"), std::string::npos) << r.out;
}

TEST(FlocsimCli, UnwritableOutputExits73) {
    const auto r = run_process({flocsim, "--scenario", scenario("carrick-fen"), "--for", "1h", "--csv", "/nonexistent/dir/t.csv"});
    EXPECT_EQ(r.exit_code, 73);
}

TEST(FlocsimCli, PrintsTheRegisterMapWithTheCautions) {
    const auto r = run_process({flocsim, "--scenario", scenario("marrowby"), "--print-registers"});
    EXPECT_EQ(r.exit_code, 0);
    EXPECT_NE(r.out.find("Never point flocsim at a real plant network"), std::string::npos);
    EXPECT_NE(r.out.find("a_oxic1.do_setpoint"), std::string::npos);
}

} // namespace
