// The config loader: the example configs load, the SI and US variants describe the same plant,
// and every broken config under tests/config/broken/ is refused with the errors it announces.
//
// A broken config states what it expects in comment lines at its top:
//   # expect: LINE:COL KEY.PATH | text the message must contain
// The test requires exactly those errors, no more, no fewer.
#include "floc/config/load.hpp"
#include "floc/config/register_layout.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>

namespace {

namespace fs = std::filesystem;
using floc::config::load_file;
using floc::config::load_result;
using floc::config::load_text;

const fs::path source_dir{FLOC_SOURCE_DIR};

std::string read_text(const fs::path& p) {
    std::ifstream in(p);
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

std::string all_messages(const load_result& r) {
    std::string out;
    for (const auto& e : r.errors) {
        out += e.message() + "\n";
    }
    return out;
}

// --- examples ----------------------------------------------------------------------------------

TEST(Examples, EveryExampleLoads) {
    std::size_t n = 0;
    for (const auto& entry : fs::directory_iterator(source_dir / "config" / "examples")) {
        if (entry.path().extension() != ".toml") {
            continue;
        }
        ++n;
        const load_result r = load_file(entry.path().string());
        EXPECT_TRUE(r.ok()) << entry.path() << "\n" << all_messages(r);
    }
    EXPECT_GE(n, 2U);
}

TEST(Examples, MinimalTestConfigLoads) {
    const load_result r = load_file((source_dir / "tests/config/valid/minimal.toml").string());
    ASSERT_TRUE(r.ok()) << all_messages(r);
    const auto& cfg = *r.config;
    EXPECT_EQ(cfg.tags.size(), 4U);
    EXPECT_EQ(cfg.aeration.size(), 1U);
    // int16 with scale 0.1; a plain range is in the tag's unit
    EXPECT_DOUBLE_EQ(cfg.tags[3].scale, 0.1);
    EXPECT_DOUBLE_EQ(cfg.tags[3].valid_max, 35.0);
    // defaults
    EXPECT_EQ(cfg.plcs[0].unit_id, 1);
    EXPECT_EQ(cfg.hmi.port, 1502);
    EXPECT_EQ(cfg.display.system, floc::units::unit_system::si);
}

// The two Marrowby variants describe one plant; every geometry and advisor value must agree
// after conversion to SI (the US file rounds to 3-4 digits, hence 0.5 %).
TEST(Examples, SiAndUsVariantsDescribeTheSamePlant) {
    const load_result si = load_file((source_dir / "config/examples/marrowby-si.toml").string());
    const load_result us = load_file((source_dir / "config/examples/marrowby-us.toml").string());
    ASSERT_TRUE(si.ok()) << all_messages(si);
    ASSERT_TRUE(us.ok()) << all_messages(us);
    const auto& a = *si.config;
    const auto& b = *us.config;
    const auto near = [](double x, double y) { return std::abs(x - y) <= 0.005 * std::max(std::abs(x), 1e-9); };

    ASSERT_EQ(a.zones.size(), b.zones.size());
    for (std::size_t i = 0; i < a.zones.size(); ++i) {
        EXPECT_EQ(a.zones[i].name, b.zones[i].name);
        EXPECT_TRUE(near(a.zones[i].volume_m3, b.zones[i].volume_m3))
            << a.zones[i].name << ": " << a.zones[i].volume_m3 << " vs " << b.zones[i].volume_m3;
    }
    ASSERT_EQ(a.clarifiers.size(), b.clarifiers.size());
    for (std::size_t i = 0; i < a.clarifiers.size(); ++i) {
        EXPECT_TRUE(near(a.clarifiers[i].area_m2, b.clarifiers[i].area_m2));
        EXPECT_TRUE(near(a.clarifiers[i].side_water_depth_m, b.clarifiers[i].side_water_depth_m));
    }
    ASSERT_EQ(a.ras.size(), b.ras.size());
    for (std::size_t i = 0; i < a.ras.size(); ++i) {
        EXPECT_TRUE(near(a.ras[i].params.pump_max_m3_per_d, b.ras[i].params.pump_max_m3_per_d))
            << a.ras[i].params.pump_max_m3_per_d << " vs " << b.ras[i].params.pump_max_m3_per_d;
        EXPECT_TRUE(near(a.ras[i].params.blanket_high_m, b.ras[i].params.blanket_high_m));
    }
    ASSERT_EQ(a.waste.size(), b.waste.size());
    for (std::size_t i = 0; i < a.waste.size(); ++i) {
        EXPECT_TRUE(near(a.waste[i].params.max_waste_m3_per_d, b.waste[i].params.max_waste_m3_per_d));
        EXPECT_TRUE(near(a.waste[i].params.fallback_m3_per_d, b.waste[i].params.fallback_m3_per_d));
    }
    // Tag ranges in degF are held in degC: 32..95 degF = 0..35 degC.
    const auto* t = b.find_tag("a_temperature");
    ASSERT_NE(t, nullptr);
    EXPECT_NEAR(t->valid_min, 0.0, 1e-9);
    EXPECT_NEAR(t->valid_max, 35.0, 1e-9);
    // A spike limit is a difference: 0.9 degF per minute = 0.5 degC per minute, not -17.2.
    ASSERT_TRUE(t->max_change_per_minute.has_value());
    EXPECT_NEAR(*t->max_change_per_minute, 0.5, 1e-9);
    EXPECT_EQ(b.display.unit_for(floc::units::quantity::flow).symbol, "gpm");
    EXPECT_EQ(b.display.unit_for(floc::units::quantity::volume).symbol, "gal");
    EXPECT_EQ(b.display.unit_for(floc::units::quantity::length).symbol, "ft");
}

TEST(Examples, ReferencesResolveToTheRightThings) {
    const load_result r = load_file((source_dir / "config/examples/marrowby-si.toml").string());
    ASSERT_TRUE(r.ok()) << all_messages(r);
    const auto& cfg = *r.config;
    const auto& ras = cfg.ras.at(0);
    EXPECT_TRUE(ras.mlss.is_lab);
    EXPECT_EQ(cfg.lab.at(ras.mlss.index).name, "a_mlss");
    EXPECT_FALSE(ras.blanket.is_lab);
    EXPECT_EQ(cfg.tags.at(ras.blanket.index).name, "a_blanket");
    EXPECT_EQ(cfg.clock.source, floc::config::clock_source::plc_tag);
    EXPECT_EQ(cfg.tags.at(cfg.clock.tag.index).name, "plant_time");
    EXPECT_EQ(cfg.waste.at(0).params.compute_at_minute, 7U * 60U + 30U);
    EXPECT_DOUBLE_EQ(cfg.waste.at(0).params.target_srt_s, 12.0 * 86400.0);
    // 1500 m3/h pump limit held as m3/d
    EXPECT_DOUBLE_EQ(cfg.recycle.at(0).params.pump_max_m3_per_d, 36000.0);
    // The register blocks do not overlap and fit.
    const auto blocks = floc::config::register_blocks(cfg);
    for (std::size_t i = 0; i < blocks.size(); ++i) {
        for (std::size_t j = i + 1; j < blocks.size(); ++j) {
            EXPECT_FALSE(blocks.at(i).overlaps(blocks.at(j)));
        }
    }
}

// Check entries (`checks`, `check_tolerance`, `check_relative_tolerance`) resolve to their tag,
// in both examples alike.
TEST(Examples, CheckEntriesNameTheirProbeAndTolerance) {
    for (const char* file : {"config/examples/marrowby-si.toml", "config/examples/marrowby-us.toml"}) {
        const load_result r = load_file((source_dir / file).string());
        ASSERT_TRUE(r.ok()) << all_messages(r);
        const auto& cfg = *r.config;
        const auto* no3 = cfg.find_lab("a_anoxic_no3_check");
        ASSERT_NE(no3, nullptr) << file;
        ASSERT_TRUE(no3->check.has_value());
        EXPECT_EQ(cfg.tags.at(no3->check->tag.index).name, "a_anoxic_no3");
        EXPECT_FALSE(no3->check->tag.is_lab);
        EXPECT_DOUBLE_EQ(no3->check->tolerance, 1.0);
        EXPECT_DOUBLE_EQ(no3->check->relative_tolerance, 0.0);
        const auto* oxygen = cfg.find_lab("a_oxic1_do_check");
        ASSERT_NE(oxygen, nullptr) << file;
        ASSERT_TRUE(oxygen->check.has_value());
        EXPECT_EQ(cfg.tags.at(oxygen->check->tag.index).name, "a_oxic1_do");
        EXPECT_DOUBLE_EQ(oxygen->check->tolerance, 0.2);
        EXPECT_DOUBLE_EQ(oxygen->check->relative_tolerance, 0.05);  // "5 %"
        // The other lab entries check nothing.
        EXPECT_FALSE(cfg.find_lab("a_mlss")->check.has_value());
    }
}

TEST(LoadText, ACheckToleranceIsADifferenceInTheEntrysQuantity) {
    const std::string text = read_text(source_dir / "tests/config/valid/minimal.toml") + R"(
[[lab_entry]]
name = "temp_check"
quantity = "temperature"
range = ["32 degF", "95 degF"]
checks = "temp"
check_tolerance = "0.9 degF"
check_relative_tolerance = 0.02
)";
    const load_result r = load_text(text, "check.toml");
    ASSERT_TRUE(r.ok()) << all_messages(r);
    const auto& e = r.config->lab.back();
    ASSERT_TRUE(e.check.has_value());
    EXPECT_NEAR(e.check->tolerance, 0.5, 1e-12);  // 0.9 degF as a difference is 0.5 K
    EXPECT_DOUBLE_EQ(e.check->relative_tolerance, 0.02);
    EXPECT_EQ(r.config->tags.at(e.check->tag.index).name, "temp");
}

// The advisors' parameters are complete after loading: the plant geometry they need, the hold
// time and the text units are filled in from the rest of the file.
TEST(Examples, AdvisorParametersCarryThePlantGeometry) {
    const load_result si = load_file((source_dir / "config/examples/marrowby-si.toml").string());
    const load_result us = load_file((source_dir / "config/examples/marrowby-us.toml").string());
    ASSERT_TRUE(si.ok()) << all_messages(si);
    ASSERT_TRUE(us.ok()) << all_messages(us);
    const auto& cfg = *si.config;
    const auto& ras = cfg.ras.at(0).params;
    EXPECT_DOUBLE_EQ(ras.clarifier_area_m2, 450.0);
    EXPECT_DOUBLE_EQ(ras.max_solids_loading_kg_per_m2_d, 8.0 * 24.0);
    EXPECT_EQ(ras.correlation, floc::advisors::svi_correlation::daigger_1995);
    const auto& waste = cfg.waste.at(0).params;
    EXPECT_DOUBLE_EQ(waste.system_volume_m3, 2700.0);  // 700 anoxic + 2 x 1000 aerobic
    EXPECT_DOUBLE_EQ(waste.aerobic_volume_m3, 2000.0);
    EXPECT_DOUBLE_EQ(waste.clarifier_volume_m3, 450.0 * 4.0);
    EXPECT_EQ(waste.averaging_days, 7U);
    EXPECT_DOUBLE_EQ(waste.hold_for_s, 2.0 * 86400.0);
    EXPECT_DOUBLE_EQ(cfg.waste.at(0).common.period_s, 900.0);
    EXPECT_DOUBLE_EQ(waste.nitrifiers.safety_factor, 1.5);
    const auto& aeration = cfg.aeration.at(0).params;
    EXPECT_EQ(aeration.mode, floc::advisors::aeration_mode::automatic);
    EXPECT_DOUBLE_EQ(aeration.hold_for_s, 1800.0);
    EXPECT_DOUBLE_EQ(aeration.cold_minimum_g_per_m3, 1.0);
    EXPECT_DOUBLE_EQ(aeration.ammonia_loop.integral_time_s, 2400.0);
    EXPECT_EQ(cfg.aeration.at(2).params.mode, floc::advisors::aeration_mode::rules);
    EXPECT_EQ(aeration.text_units, floc::units::unit_system::si);
    EXPECT_EQ(us.config->aeration.at(0).params.text_units, floc::units::unit_system::us_customary);
    // The US file says the same in its own units.
    const auto near = [](double x, double y) { return std::abs(x - y) <= 0.005 * std::max(std::abs(x), 1e-9); };
    EXPECT_TRUE(near(us.config->aeration.at(0).params.cold_below_degC, aeration.cold_below_degC));
    EXPECT_TRUE(near(us.config->ras.at(0).params.max_solids_loading_kg_per_m2_d, ras.max_solids_loading_kg_per_m2_d));
    EXPECT_TRUE(near(us.config->ras.at(0).params.clarifier_area_m2, ras.clarifier_area_m2));
    EXPECT_TRUE(near(us.config->waste.at(0).params.system_volume_m3, waste.system_volume_m3));
    EXPECT_TRUE(near(us.config->recycle.at(0).params.pump_max_m3_per_d, cfg.recycle.at(0).params.pump_max_m3_per_d));
}

// --- broken configs ----------------------------------------------------------------------------

struct expectation {
    std::uint32_t line = 0;
    std::uint32_t column = 0;
    std::string path;
    std::string text;
};

std::vector<expectation> expectations_of(const std::string& text) {
    static const std::regex pattern{R"(^# expect: (\d+):(\d+) (\S*) \| (.+)$)"};
    std::vector<expectation> out;
    std::istringstream in(text);
    std::string line;
    while (std::getline(in, line)) {
        std::smatch m;
        if (std::regex_match(line, m, pattern)) {
            out.push_back({static_cast<std::uint32_t>(std::stoul(m[1])),
                           static_cast<std::uint32_t>(std::stoul(m[2])),
                           m[3] == "-" ? std::string{} : std::string{m[3]}, m[4]});
        }
    }
    return out;
}

std::vector<fs::path> broken_files() {
    std::vector<fs::path> out;
    for (const auto& entry : fs::directory_iterator(source_dir / "tests/config/broken")) {
        if (entry.path().extension() == ".toml") {
            out.push_back(entry.path());
        }
    }
    std::sort(out.begin(), out.end());
    return out;
}

class BrokenConfig : public testing::TestWithParam<fs::path> {};

TEST_P(BrokenConfig, IsRefusedWithTheAnnouncedErrors) {
    const fs::path& file = GetParam();
    const std::string text = read_text(file);
    const std::vector<expectation> wanted = expectations_of(text);
    ASSERT_FALSE(wanted.empty()) << file << " announces no '# expect:' line";

    const load_result r = load_text(text, file.filename().string());
    EXPECT_FALSE(r.ok());
    EXPECT_FALSE(r.config.has_value());
    EXPECT_EQ(r.errors.size(), wanted.size()) << all_messages(r);
    for (const expectation& w : wanted) {
        const bool found = std::any_of(r.errors.begin(), r.errors.end(), [&](const auto& e) {
            return e.at.line == w.line && e.at.column == w.column && e.path == w.path &&
                   e.message().find(w.text) != std::string::npos;
        });
        EXPECT_TRUE(found) << "expected " << w.line << ":" << w.column << " " << w.path << " | "
                           << w.text << "\ngot:\n" << all_messages(r);
    }
    // Every message names the file and the line:column, then the key path.
    for (const auto& e : r.errors) {
        const std::string prefix = file.filename().string() + ":" + std::to_string(e.at.line) + ":" +
                                   std::to_string(e.at.column) + ": ";
        EXPECT_EQ(e.message().rfind(prefix, 0), 0U) << e.message();
        EXPECT_GT(e.at.line, 0U) << e.message();
    }
}

INSTANTIATE_TEST_SUITE_P(All, BrokenConfig, testing::ValuesIn(broken_files()),
                         [](const testing::TestParamInfo<fs::path>& param) {
                             std::string name = param.param.stem().string();
                             std::replace(name.begin(), name.end(), '-', '_');
                             return name;
                         });

TEST(BrokenConfigs, AtLeastTwelveDistinctMistakes) { EXPECT_GE(broken_files().size(), 12U); }

TEST(BrokenConfigs, ErrorsComeInFileOrder) {
    const load_result r = load_file((source_dir / "tests/config/broken/several-errors.toml").string());
    ASSERT_GE(r.errors.size(), 4U);
    for (std::size_t i = 1; i < r.errors.size(); ++i) {
        EXPECT_LE(r.errors[i - 1].at.line, r.errors[i].at.line);
    }
}

TEST(LoadFile, MissingFileIsUnreadable) {
    const load_result r = load_file("/nonexistent/floc.toml");
    EXPECT_TRUE(r.unreadable);
    ASSERT_EQ(r.errors.size(), 1U);
    EXPECT_NE(r.errors[0].message().find("cannot be opened"), std::string::npos);
}

TEST(LoadText, EmptyDocumentNamesTheRequiredKeys) {
    const load_result r = load_text("", "empty.toml");
    EXPECT_FALSE(r.ok());
    const std::string all = all_messages(r);
    EXPECT_NE(all.find("config_version"), std::string::npos) << all;
    EXPECT_NE(all.find("site"), std::string::npos) << all;
}

} // namespace
