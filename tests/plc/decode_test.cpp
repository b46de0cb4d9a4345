// Decoding register words. Word orders are checked against libmodbus 3.1.6's float getters
// (modbus_get_float_abcd/badc/cdab/dcba), a general-purpose reference implementation whose
// getters are correct in Debian 12 (its setters are not; we never use them).
#include "floc/plc/decode.hpp"

#include <gtest/gtest.h>
#include <modbus/modbus.h>

#include <bit>
#include <cmath>

namespace {

using namespace floc;

config::tag float_tag(config::word_order order, const char* unit = "mg/L") {
    config::tag t;
    t.type = config::data_type::float32;
    t.order = order;
    t.unit = units::find_unit(unit);
    return t;
}

TEST(Decode, WordOrdersAgreeWithLibmodbusGetters) {
    // 123456.0f = 0x47F12000 (IEEE 754 binary32)
    const std::uint32_t pattern = std::bit_cast<std::uint32_t>(123456.0f);
    ASSERT_EQ(pattern, 0x47F12000U);
    struct row {
        config::word_order order;
        float (*getter)(const std::uint16_t*);
    };
    for (const row r : {row{config::word_order::abcd, modbus_get_float_abcd},
                        row{config::word_order::badc, modbus_get_float_badc},
                        row{config::word_order::cdab, modbus_get_float_cdab},
                        row{config::word_order::dcba, modbus_get_float_dcba}}) {
        const auto words = plc::split_words(pattern, r.order);
        EXPECT_EQ(r.getter(words.data()), 123456.0f) << config::to_string(r.order);
        EXPECT_EQ(plc::join_words(words[0], words[1], r.order), pattern);
        EXPECT_DOUBLE_EQ(plc::decode_registers(float_tag(r.order), words), 123456.0);
    }
    // The spelled-out patterns (modbus-facts notes, libmodbus 3.1.6 tests):
    EXPECT_EQ(plc::split_words(pattern, config::word_order::abcd), (std::array<std::uint16_t, 2>{0x47F1, 0x2000}));
    EXPECT_EQ(plc::split_words(pattern, config::word_order::badc), (std::array<std::uint16_t, 2>{0xF147, 0x0020}));
    EXPECT_EQ(plc::split_words(pattern, config::word_order::cdab), (std::array<std::uint16_t, 2>{0x2000, 0x47F1}));
    EXPECT_EQ(plc::split_words(pattern, config::word_order::dcba), (std::array<std::uint16_t, 2>{0x0020, 0xF147}));
}

TEST(Decode, IntegersWithScaleOffsetAndUnits) {
    config::tag t;
    t.type = config::data_type::int16;
    t.scale = 0.1;
    t.unit = units::find_unit("degF");
    const std::uint16_t minus_40_0 = static_cast<std::uint16_t>(-400);
    const std::array<std::uint16_t, 1> w{minus_40_0};
    EXPECT_NEAR(plc::decode_registers(t, w), -40.0, 1e-9);  // -40 degF = -40 degC

    config::tag u;
    u.type = config::data_type::uint16;
    u.unit = units::find_unit("gpm");
    const std::array<std::uint16_t, 1> g{1000};
    EXPECT_NEAR(plc::decode_registers(u, g), 1000.0 * 5.450992969, 1e-6);  // m3/d

    config::tag i32;
    i32.type = config::data_type::int32;
    i32.order = config::word_order::cdab;
    i32.unit = units::find_unit("L/s");
    i32.offset = 1.0;
    const auto words = plc::split_words(static_cast<std::uint32_t>(-5), config::word_order::cdab);
    EXPECT_NEAR(plc::decode_registers(i32, words), (-5.0 + 1.0) * 86.4, 1e-9);

    config::tag u32;
    u32.type = config::data_type::uint32;
    u32.unit = units::find_unit("s");
    const auto big = plc::split_words(4000000000U, config::word_order::abcd);
    EXPECT_DOUBLE_EQ(plc::decode_registers(u32, big), 4e9);
}

TEST(Decode, BitInWord) {
    config::tag t;
    t.type = config::data_type::uint16;
    t.unit = &units::canonical_unit(units::quantity::state);
    const std::array<std::uint16_t, 1> w{0b0000'0000'0000'0110};
    t.bit = 0;
    EXPECT_EQ(plc::decode_registers(t, w), 0.0);
    t.bit = 1;
    EXPECT_EQ(plc::decode_registers(t, w), 1.0);
    t.bit = 2;
    EXPECT_EQ(plc::decode_registers(t, w), 1.0);
    t.bit = 15;
    EXPECT_EQ(plc::decode_registers(t, w), 0.0);
}

TEST(Decode, NotANumberPatternsStayNotANumber) {
    for (const std::uint32_t p : {0x7FC00000U, 0xFFFFFFFFU, 0x7F800001U}) {
        const auto words = plc::split_words(p, config::word_order::abcd);
        EXPECT_TRUE(std::isnan(plc::decode_registers(float_tag(config::word_order::abcd), words)));
    }
    const auto inf = plc::split_words(0x7F800000U, config::word_order::abcd);
    EXPECT_TRUE(std::isinf(plc::decode_registers(float_tag(config::word_order::abcd), inf)));
}

} // namespace
