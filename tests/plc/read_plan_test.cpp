// Read planning: tags grouped into as few reads as the Modbus limits allow.
#include "floc/config/load.hpp"
#include "floc/plc/read_plan.hpp"

#include <gtest/gtest.h>

namespace {

using namespace floc;

config::plant_config load(const std::string& name) {
    auto r = config::load_file(std::string{FLOC_SOURCE_DIR} + "/config/examples/" + name);
    if (!r.ok()) {
        throw std::runtime_error("example does not load: " + name);
    }
    return std::move(*r.config);
}

TEST(ReadPlan, MarrowbyNeedsThreeReads) {
    const auto cfg = load("marrowby-si.toml");
    const auto plan = plc::plan_reads(cfg, 0);
    ASSERT_EQ(plan.size(), 3U);
    // discrete input 0 (power failure), holding register 100 (two flags), input registers 0..39
    EXPECT_EQ(plan[0].function, config::read_function::discrete_inputs);
    EXPECT_EQ(plan[0].count, 1);
    EXPECT_EQ(plan[1].function, config::read_function::holding_registers);
    EXPECT_EQ(plan[1].address, 100);
    EXPECT_EQ(plan[1].count, 1);
    EXPECT_EQ(plan[1].tags.size(), 2U);
    EXPECT_EQ(plan[2].function, config::read_function::input_registers);
    EXPECT_EQ(plan[2].address, 0);
    EXPECT_EQ(plan[2].count, 40);
    EXPECT_EQ(plan[2].tags.size(), 20U);
}

config::plant_config synthetic(std::uint16_t max_per_read, std::uint16_t max_gap) {
    config::plant_config cfg;
    config::plc_connection p;
    p.name = "p";
    p.max_registers_per_read = max_per_read;
    p.max_gap_registers = max_gap;
    cfg.plcs.push_back(p);
    const auto add = [&](std::uint16_t address, config::data_type type) {
        config::tag t;
        t.name = "t" + std::to_string(cfg.tags.size());
        t.function = config::read_function::holding_registers;
        t.address = address;
        t.type = type;
        t.unit = units::find_unit("mg/L");
        cfg.tags.push_back(t);
    };
    add(0, config::data_type::float32);
    add(2, config::data_type::float32);
    add(20, config::data_type::uint16);   // gap of 16 after register 3
    add(120, config::data_type::float32); // needs 122 registers from 0
    add(124, config::data_type::float32); // 0..125 would be 126 > 125
    return cfg;
}

TEST(ReadPlan, GapsAndTheRegisterLimitSplitReads) {
    const auto plan = plc::plan_reads(synthetic(125, 8), 0);
    ASSERT_EQ(plan.size(), 3U);
    EXPECT_EQ(plan[0].address, 0);
    EXPECT_EQ(plan[0].count, 4);
    EXPECT_EQ(plan[1].address, 20);
    EXPECT_EQ(plan[1].count, 1);
    EXPECT_EQ(plan[2].address, 120);
    EXPECT_EQ(plan[2].count, 6);
}

TEST(ReadPlan, LargeGapsAreSpannedUpToTheLimit) {
    // With a gap allowance of 124 everything fits in 0..121, then 124..125 starts a new read
    // because 0..125 would need 126 registers (Modbus Application Protocol V1.1b3 §6.3: 1..125).
    const auto plan = plc::plan_reads(synthetic(125, 124), 0);
    ASSERT_EQ(plan.size(), 2U);
    EXPECT_EQ(plan[0].address, 0);
    EXPECT_EQ(plan[0].count, 122);
    EXPECT_EQ(plan[1].address, 124);
    EXPECT_EQ(plan[1].count, 2);
    for (const auto& r : plan) {
        EXPECT_LE(r.count, plc::max_registers_per_request);
    }
}

TEST(ReadPlan, TagsWithTheirOwnPeriodAreReadApart) {
    auto cfg = synthetic(125, 8);
    cfg.tags[1].poll_period_s = 60.0;
    const auto plan = plc::plan_reads(cfg, 0);
    std::size_t slow = 0;
    for (const auto& r : plan) {
        slow += r.period_s == 60.0 ? 1U : 0U;
        for (const std::size_t i : r.tags) {
            EXPECT_EQ(cfg.tags[i].poll_period_s.value_or(cfg.plcs[0].poll_period_s), r.period_s);
        }
    }
    EXPECT_EQ(slow, 1U);
}

} // namespace
