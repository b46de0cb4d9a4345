// The advisory register map and image, for the Marrowby example configs.
#include "floc/config/load.hpp"
#include "floc/plc/decode.hpp"
#include "floc/registers/image.hpp"

#include <gtest/gtest.h>

#include <bit>
#include <cmath>
#include <set>

namespace {

using namespace floc;
namespace advice_offset = registers::advice_offset;

config::plant_config load(const std::string& name) {
    auto r = config::load_file(std::string{FLOC_SOURCE_DIR} + "/config/examples/" + name);
    if (!r.ok()) {
        throw std::runtime_error("example does not load: " + name);
    }
    return std::move(*r.config);
}

float f32_at(const registers::image& img, std::uint16_t address, config::word_order order) {
    return std::bit_cast<float>(plc::join_words(img.at(address), img.at(static_cast<std::uint16_t>(address + 1)), order));
}

TEST(RegisterMap, FieldsDoNotOverlapAndStayInTheirBlocks) {
    const auto cfg = load("marrowby-si.toml");
    const auto map = registers::build(cfg);
    EXPECT_EQ(map.advice.size(), cfg.advisor_count());
    std::set<std::uint32_t> used;
    for (const auto& f : map.fields) {
        bool inside = false;
        for (const auto& b : map.blocks) {
            inside = inside || (f.address >= b.first && f.address + f.width() <= b.end());
        }
        EXPECT_TRUE(inside) << f.name << " at " << f.address;
        for (std::uint32_t a = f.address; a < f.address + f.width(); ++a) {
            EXPECT_TRUE(used.insert(a).second) << f.name << " overlaps at " << a;
        }
    }
    // Only the lab value and sample-age registers are writable.
    const auto ends_with = [](const std::string& s, const std::string& tail) {
        return s.size() >= tail.size() && s.compare(s.size() - tail.size(), tail.size(), tail) == 0;
    };
    std::size_t writable = 0;
    for (const auto& f : map.fields) {
        const bool lab_input = f.name.rfind("lab.", 0) == 0 &&
                               (ends_with(f.name, ".value") || ends_with(f.name, ".value_int16") ||
                                ends_with(f.name, ".sample_minutes_ago"));
        EXPECT_EQ(f.acc == registers::access::lab_write, lab_input) << f.name;
        writable += lab_input ? 1U : 0U;
    }
    EXPECT_EQ(writable, 3 * cfg.lab.size());
}

TEST(RegisterMap, Int16ScalesKeepTheRangeInside) {
    EXPECT_EQ(registers::int16_scale_for(3.0), 1000.0);
    EXPECT_EQ(registers::int16_scale_for(15.0), 1000.0);
    EXPECT_EQ(registers::int16_scale_for(40.0), 100.0);
    EXPECT_EQ(registers::int16_scale_for(12000.0), 1.0);
    EXPECT_EQ(registers::int16_scale_for(1500.0), 10.0);
    EXPECT_EQ(registers::int16_scale_for(100000.0), 0.1);
}

TEST(RegisterImage, AdviceInDisplayUnitsAsInt16AndFloat) {
    const auto cfg = load("marrowby-us.toml");  // US customary: flows in gpm
    const auto map = registers::build(cfg);
    registers::image img{map, cfg};
    // slot of the first RAS advisor: after 4 aeration and 2 recycle slots
    const std::size_t slot = 6;
    ASSERT_EQ(map.advice.at(slot).kind, registers::advisor_kind::ras);
    registers::published_advice a;
    a.value = 0.6;  // RAS ratio
    a.min = 0.3;
    a.max = 1.2;
    a.quality = 0;
    a.reasons = {60, 64, 0, 0};
    a.age_s = 42.0;
    a.figures = {5450.992969 /* m3/d = 1000 gpm */, 10000.0, 0.25, 20.0, 90.0, 0.5};
    img.put_advice(slot, a);
    const std::uint16_t b = map.advice_base(slot);
    EXPECT_FLOAT_EQ(f32_at(img, b + advice_offset::value, cfg.hmi.float_order), 0.6F);
    EXPECT_EQ(map.advice.at(slot).int16_scale, 1000.0);  // ratios up to 1.2
    EXPECT_EQ(static_cast<std::int16_t>(img.at(b + advice_offset::value_int16)), 600);
    EXPECT_EQ(static_cast<std::int16_t>(img.at(b + advice_offset::max_int16)), 1200);
    EXPECT_EQ(img.at(b + advice_offset::reason_1), 60);
    EXPECT_EQ(img.at(b + advice_offset::reason_1 + 1), 64);
    EXPECT_EQ(img.at(b + advice_offset::age_s), 42);
    EXPECT_EQ(img.at(b + advice_offset::kind), 3);
    EXPECT_EQ(static_cast<std::int16_t>(img.at(b + advice_offset::scale_exponent)), 3);
    // figures in display units: RAS flow in gpm, blanket in ft
    EXPECT_NEAR(f32_at(img, b + advice_offset::figures, cfg.hmi.float_order), 1000.0F, 0.01F);
    EXPECT_NEAR(f32_at(img, b + advice_offset::figures + 10, cfg.hmi.float_order), 0.5F / 0.3048F, 1e-4F);
}

TEST(RegisterImage, MissingValuesAreMarked) {
    const auto cfg = load("marrowby-si.toml");
    const auto map = registers::build(cfg);
    const registers::image img{map, cfg};
    const std::uint16_t b = map.advice_base(0);
    EXPECT_EQ(static_cast<std::int16_t>(img.at(b + advice_offset::value_int16)), registers::int16_missing);
    EXPECT_TRUE(std::isnan(f32_at(img, b + advice_offset::value, cfg.hmi.float_order)));
    EXPECT_EQ(img.at(b + advice_offset::quality), 3);  // unavailable
    const std::uint16_t in = map.input_base(1);
    EXPECT_EQ(img.at(in + registers::input_offset::quality), 2);  // bad
    EXPECT_EQ(img.at(in + registers::input_offset::reason), 1);   // no data
}

TEST(RegisterImage, InputsCarryQualityReasonAndAge) {
    const auto cfg = load("marrowby-si.toml");
    const auto map = registers::build(cfg);
    registers::image img{map, cfg};
    conditioning::signal s;
    s.value = 2.25;
    s.raw = 2.3;
    s.q = conditioning::quality::uncertain;
    s.why = conditioning::reason::read_failed;
    s.has_value = true;
    s.last_good_s = 100.0;
    const std::size_t tag = 3;  // a_oxic1_do
    ASSERT_EQ(cfg.tags[tag].name, "a_oxic1_do");
    img.put_input(tag, s, 112.0);
    const std::uint16_t b = map.input_base(tag);
    EXPECT_EQ(static_cast<std::int16_t>(img.at(b)), 2250);  // scale 1000 for 0..15 mg/L
    EXPECT_EQ(img.at(b + 1), 1);
    EXPECT_EQ(img.at(b + 2), 2);
    EXPECT_EQ(img.at(b + 3), 12);
    EXPECT_FLOAT_EQ(f32_at(img, b + 4, cfg.hmi.float_order), 2.25F);
    EXPECT_FLOAT_EQ(f32_at(img, b + 6, cfg.hmi.float_order), 2.3F);
}

TEST(LabWrites, AcceptedFormsDecodeToCanonicalUnits) {
    const auto cfg = load("marrowby-us.toml");
    const auto map = registers::build(cfg);
    const std::uint16_t b = map.lab_base(0);  // a_mlss, mg/L
    const auto words = plc::split_words(std::bit_cast<std::uint32_t>(3200.0F), cfg.hmi.float_order);
    const auto w = registers::decode_lab_write(map, cfg, b, words);
    ASSERT_TRUE(w.has_value());
    EXPECT_EQ(w->entry, 0U);
    EXPECT_DOUBLE_EQ(w->value, 3200.0);
    const std::array<std::uint16_t, 1> i16{3150};
    const auto w2 = registers::decode_lab_write(map, cfg, static_cast<std::uint16_t>(b + 2), i16);
    ASSERT_TRUE(w2.has_value());
    EXPECT_DOUBLE_EQ(w2->value, 3150.0);  // scale 1 for up to 12000 mg/L
    const std::array<std::uint16_t, 1> mins{90};
    const auto w3 = registers::decode_lab_write(map, cfg, static_cast<std::uint16_t>(b + 3), mins);
    ASSERT_TRUE(w3.has_value());
    EXPECT_EQ(w3->kind, registers::lab_write::what::minutes_ago);
    EXPECT_EQ(w3->minutes_ago, 90);
    // Not lab writes: the status register, half a float, an advice register.
    EXPECT_FALSE(registers::decode_lab_write(map, cfg, static_cast<std::uint16_t>(b + 4), mins).has_value());
    EXPECT_FALSE(registers::decode_lab_write(map, cfg, b, mins).has_value());
    EXPECT_FALSE(registers::decode_lab_write(map, cfg, map.advice_base(0), mins).has_value());
}

TEST(RegisterMap, MarkdownCarriesTheCautionAndEveryField) {
    const auto cfg = load("marrowby-si.toml");
    const auto map = registers::build(cfg);
    const std::string md = registers::to_markdown(map, cfg);
    EXPECT_NE(md.find("advisory only"), std::string::npos);
    EXPECT_NE(md.find("licensed operator"), std::string::npos);
    for (const auto& f : map.fields) {
        EXPECT_NE(md.find("`" + f.name + "`"), std::string::npos) << f.name;
    }
    const std::string csv = registers::to_csv(map);
    EXPECT_EQ(static_cast<std::size_t>(std::count(csv.begin(), csv.end(), '\n')), map.fields.size() + 1);
}

} // namespace
