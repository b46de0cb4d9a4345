// Reason codes are part of the register map: stable numbers, each with a name and a text.
#include "floc/advisors/advice.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>

namespace {

using namespace floc::advisors;

TEST(Reasons, NumbersAreStable) {
    // These numbers are published to HMIs; changing one breaks every screen that maps it.
    EXPECT_EQ(static_cast<int>(reason::input_bad), 1);
    EXPECT_EQ(static_cast<int>(reason::holding_last_good), 2);
    EXPECT_EQ(static_cast<int>(reason::fallback_value), 3);
    EXPECT_EQ(static_cast<int>(reason::ammonia_above_target), 20);
    EXPECT_EQ(static_cast<int>(reason::rules_instead_of_ammonia), 24);
    EXPECT_EQ(static_cast<int>(reason::anoxic_nitrate_below_target), 40);
    EXPECT_EQ(static_cast<int>(reason::mass_balance), 60);
    EXPECT_EQ(static_cast<int>(reason::thickening_overloaded), 65);
    EXPECT_EQ(static_cast<int>(reason::clarification_overloaded), 66);
    EXPECT_EQ(static_cast<int>(reason::srt_mass_balance), 80);
    EXPECT_EQ(static_cast<int>(reason::target_srt_unsafe), 82);
    EXPECT_EQ(static_cast<int>(advice_quality::good), 0);
    EXPECT_EQ(static_cast<int>(advice_quality::held), 1);
    EXPECT_EQ(static_cast<int>(advice_quality::fallback), 2);
    EXPECT_EQ(static_cast<int>(advice_quality::unavailable), 3);
}

TEST(Reasons, EveryCodeHasAUniqueNameAndAText) {
    std::set<int> codes;
    std::set<std::string> names;
    int previous = -1;
    for (const reason_info& r : all_reasons()) {
        const int code = static_cast<int>(r.code);
        EXPECT_GT(code, previous) << r.name; // listed in code order
        previous = code;
        EXPECT_TRUE(codes.insert(code).second) << code;
        EXPECT_TRUE(names.insert(std::string{r.name}).second) << r.name;
        EXPECT_FALSE(r.text.empty()) << r.name;
        EXPECT_LE(code, 0xFFFF);
        EXPECT_EQ(describe(r.code).name, r.name);
    }
    EXPECT_GE(codes.size(), 50U);
}

TEST(Reasons, ListKeepsOrderIgnoresDuplicatesAndIsBounded) {
    reason_list l;
    l.add(reason::mass_balance);
    l.add(reason::rate_limited);
    l.add(reason::mass_balance);
    l.add(reason::none);
    ASSERT_EQ(l.size(), 2U);
    EXPECT_EQ(l[0], reason::mass_balance);
    EXPECT_EQ(l[1], reason::rate_limited);
    for (const reason_info& r : all_reasons()) {
        l.add(r.code);
    }
    EXPECT_EQ(l.size(), max_reasons);
}

// README.md's reason table ("How each advice is computed") lists every code with its name.
TEST(Reasons, ReadmeTableListsEveryCode) {
    std::ifstream in(std::filesystem::path{FLOC_SOURCE_DIR} / "README.md");
    ASSERT_TRUE(in.good());
    std::ostringstream text;
    text << in.rdbuf();
    for (const reason_info& r : all_reasons()) {
        if (r.code == reason::none) {
            continue;
        }
        const std::string row = "| " + std::to_string(static_cast<int>(r.code)) + " | `" +
                                std::string{r.name} + "` | " + std::string{r.text} + " |";
        EXPECT_NE(text.str().find(row), std::string::npos) << "README.md lacks: " << row;
    }
}

} // namespace
