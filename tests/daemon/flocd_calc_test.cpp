// `flocd calc` as a real process: help, errors and exit codes, and the figures it prints for
// the published examples the advisors' unit tests check (sources named there and here).
#include "process.hpp"

#include <gtest/gtest.h>

#include <regex>
#include <string>
#include <vector>

namespace {

using floc::test::run_process;

const std::string flocd{FLOCD_PATH};

floc::test::process_result calc(std::vector<std::string> args) {
    args.insert(args.begin(), {flocd, "calc"});
    return run_process(args);
}

// The number after `label` on its output line ("  limiting_flux   127.3 kg/m2/d" -> 127.3).
double number_after(const std::string& out, const std::string& label) {
    const std::regex line{"(^|\\n)\\s*" + label + "\\s+(-?[0-9.]+(e[-+]?[0-9]+)?)"};
    std::smatch m;
    if (!std::regex_search(out, m, line)) {
        ADD_FAILURE() << "no '" << label << "' in\n" << out;
        return -1.0;
    }
    return std::stod(m[2]);
}

TEST(FlocdCalc, HelpListsTheAdvisorsAndTheCautions) {
    const auto r = calc({"--help"});
    EXPECT_EQ(r.exit_code, 0);
    for (const char* name : {"do", "recycle", "ras", "state-point", "was", "min-srt"}) {
        EXPECT_NE(r.out.find(std::string{"  "} + name + " "), std::string::npos) << name << "\n"
                                                                                 << r.out;
    }
    EXPECT_NE(r.out.find("advisory only"), std::string::npos);
    EXPECT_NE(r.out.find("licensed operator"), std::string::npos);
    EXPECT_NE(r.out.find("local permits"), std::string::npos);
    const auto top = run_process({flocd, "--help"});
    EXPECT_NE(top.out.find("flocd calc"), std::string::npos) << top.out;
}

TEST(FlocdCalc, AdvisorHelpListsKeysWithUnits) {
    const auto r = calc({"state-point", "--help"});
    EXPECT_EQ(r.exit_code, 0);
    EXPECT_NE(r.out.find("flow"), std::string::npos);
    EXPECT_NE(r.out.find("required"), std::string::npos);
    EXPECT_NE(r.out.find("[m3/d, m3/h"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("daigger_1995|wahlberg_keinath_1988"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("default 8kg/m2/h"), std::string::npos) << r.out;
}

TEST(FlocdCalc, UsageErrorsExit64) {
    EXPECT_EQ(calc({}).exit_code, 64);
    const auto unknown = calc({"blower"});
    EXPECT_EQ(unknown.exit_code, 64);
    EXPECT_NE(unknown.err.find("unknown advisor 'blower'"), std::string::npos) << unknown.err;
    const auto key = calc({"ras", "flw=4500m3/d", "mlss=3000mg/L", "sv30=300"});
    EXPECT_EQ(key.exit_code, 64);
    EXPECT_NE(key.err.find("unknown key 'flw'; did you mean 'flow'?"), std::string::npos)
        << key.err;
    const auto missing = calc({"ras", "mlss=3000mg/L", "sv30=300"});
    EXPECT_EQ(missing.exit_code, 64);
    EXPECT_NE(missing.err.find("missing key 'flow'"), std::string::npos) << missing.err;
    EXPECT_EQ(calc({"ras", "flow"}).exit_code, 64);
    EXPECT_EQ(calc({"--units", "imperial", "min-srt", "temperature=12degC"}).exit_code, 64);
    EXPECT_EQ(calc({"min-srt", "temperature=12degC", "temperature=14degC"}).exit_code, 64);
}

TEST(FlocdCalc, BadValuesExit65NamingKeyFoundAndExpected) {
    const auto bare = calc({"ras", "flow=4500", "mlss=3000mg/L", "sv30=300"});
    EXPECT_EQ(bare.exit_code, 65);
    EXPECT_NE(
        bare.err.find("flow=4500: found the plain number 4500; expected a flow with its unit"),
        std::string::npos)
        << bare.err;
    const auto wrong = calc({"ras", "flow=450m2", "mlss=3000mg/L", "sv30=300"});
    EXPECT_EQ(wrong.exit_code, 65);
    EXPECT_NE(wrong.err.find("found \"450m2\", an area; expected a flow"), std::string::npos)
        << wrong.err;
    const auto range = calc({"ras", "flow=4500m3/d", "mlss=3000mg/L", "sv30=1200"});
    EXPECT_EQ(range.exit_code, 65);
    EXPECT_NE(
        range.err.find("sv30=1200: found 1200 mL/L; expected a value from 0 mL/L to 1000 mL/L"),
        std::string::npos)
        << range.err;
    const auto unit = calc({"min-srt", "temperature=12 kelvins"});
    EXPECT_EQ(unit.exit_code, 65);
    EXPECT_NE(unit.err.find("unknown unit \"kelvins\""), std::string::npos) << unit.err;
    const auto word = calc({"state-point", "flow=1m3/d", "ras_flow=1m3/d", "mlss=1mg/L", "svi=100",
                            "area=1m2", "correlation=pitman"});
    EXPECT_EQ(word.exit_code, 65);
    EXPECT_NE(word.err.find("expected one of daigger_1995|wahlberg_keinath_1988"),
              std::string::npos)
        << word.err;
}

// The state-point worked example computed from solids flux theory with Daigger (1995) at SVI 150
// (advisors' settling_test): GL = 127.3 kg/(m2 d) at 9.35 g/L, thickening margin 29.3 %.
TEST(FlocdCalc, StatePointWorkedExample) {
    const auto r = calc({"state-point", "flow=20000m3/d", "ras_flow=10000m3/d", "mlss=3g/L",
                         "svi=150", "area=1000m2"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NEAR(number_after(r.out, "limiting_flux"), 127.3, 0.1) << r.out;
    EXPECT_NEAR(number_after(r.out, "solids_loading"), 90.0, 0.01);
    EXPECT_NE(r.out.find("state point inside"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("margin 29.3 %"), std::string::npos) << r.out;
}

// Daigger (1995) intercept, 21.3 ft/h, in US customary output.
TEST(FlocdCalc, StatePointInUsCustomaryUnits) {
    const auto r = calc({"--units", "us", "state-point", "flow=5.28MGD", "ras_flow=2.64MGD",
                         "mlss=3000mg/L", "svi=150", "area=10764ft2"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NEAR(number_after(r.out, "v0"), 21.3, 0.05) << r.out;
    EXPECT_NE(r.out.find("lb/ft2/d"), std::string::npos) << r.out;
}

// Metcalf & Eddy 4th-ed. set (values from memory), Example 8-3 conditions: 8.5 d, design 12.7 d
// (computed from the formula).
TEST(FlocdCalc, MinimumAerobicSrt) {
    const auto r =
        calc({"min-srt", "temperature=12degC", "kinetics=metcalf_eddy_4th", "ammonia=0.5mg/L"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NEAR(number_after(r.out, "minimum"), 8.48, 0.02) << r.out;
    EXPECT_NEAR(number_after(r.out, "design"), 12.7, 0.05) << r.out;
    const auto fahrenheit =
        calc({"min-srt", "temperature=53.6degF", "kinetics=metcalf_eddy_4th", "ammonia=0.5mg/L"});
    EXPECT_NEAR(number_after(fahrenheit.out, "minimum"), 8.48, 0.02) << fahrenheit.out;
}

// SRT mass balance, operator-formulas.md 1f (computed): Qw = 111 m3/d; and 1e in US units:
// 0.0341 MGD = 34 100 gpd.
TEST(FlocdCalc, WasteVolumeSiAndUs) {
    const auto si = calc({"was", "volume=4000m3", "mlss=3000mg/L", "target_srt=10d",
                          "flow=20000m3/d", "effluent_tss=10mg/L", "was_solids=9000mg/L"});
    ASSERT_EQ(si.exit_code, 0) << si.err;
    EXPECT_NEAR(number_after(si.out, "waste flow:"), 111.1, 0.2) << si.out;
    EXPECT_NE(si.out.find("srt_at_advice"), std::string::npos);
    const auto us = calc({"--units", "us", "was", "volume=1MG", "mlss=2500mg/L", "target_srt=8d",
                          "flow=4MGD", "effluent_tss=10mg/L", "was_solids=8000mg/L"});
    ASSERT_EQ(us.exit_code, 0) << us.err;
    EXPECT_NEAR(number_after(us.out, "waste flow:"), 34100.0, 0.005 * 34100.0) << us.out;
    EXPECT_NE(us.out.find("gpd"), std::string::npos);
}

TEST(FlocdCalc, WasteGuardSaysWhenTheTargetIsUnsafe) {
    const auto r =
        calc({"was", "volume=2700m3", "aerobic_volume=2000m3", "mlss=3000mg/L",
              "was_solids=9000mg/L", "flow=4500m3/d", "temperature=10degC", "target_srt=6d"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("82 target_srt_unsafe"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("below the safe minimum"), std::string::npos) << r.out;
}

TEST(FlocdCalc, RasMassBalanceAndState) {
    const auto r = calc({"ras", "flow=4500m3/d", "mlss=3000mg/L", "ras_solids=9000mg/L",
                         "ras_flow=2250m3/d", "sv30=330", "area=450m2", "blanket=0.6m", "for=2h"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NEAR(number_after(r.out, "RAS ratio:"), 0.5, 1e-9) << r.out;
    EXPECT_NE(r.out.find("60 mass_balance"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("state point inside"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("max_ras_flow_clarifier"), std::string::npos) << r.out;
}

TEST(FlocdCalc, DoCascadeExplainsItself) {
    const auto r = calc({"do", "ammonia=2.4mg/L", "flow=9000m3/d", "current=1.6mg/L", "for=40min"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("ammonia 2.4 mg/L above 1 mg/L target for 40 min"), std::string::npos)
        << r.out;
    EXPECT_NE(r.out.find("1.6 mg/L -> "), std::string::npos) << r.out;
    EXPECT_GT(number_after(r.out, "DO set point:"), 1.6);
    const auto rules = calc({"do", "mode=rules", "flow=9000m3/d", "do=1.8mg/L"});
    EXPECT_EQ(rules.exit_code, 64); // the rules need nitrate
    EXPECT_NE(rules.err.find("nitrate"), std::string::npos) << rules.err;
}

TEST(FlocdCalc, RecycleFollowsAnoxicNitrate) {
    const auto r = calc({"recycle", "nitrate=0.3mg/L", "flow=4500m3/d", "recycle_flow=9000m3/d"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_GT(number_after(r.out, "recycle ratio:"), 2.0) << r.out;
    EXPECT_NE(r.out.find("40 anoxic_nitrate_below_target"), std::string::npos) << r.out;
}

} // namespace
