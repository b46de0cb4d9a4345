// The internal-recycle advisor: PI on anoxic nitrate, bounded by ratio and pump limits.
// Behaviour tests; the 0.5-4 ratio range of MLE recycle is common practice.
#include "floc/advisors/recycle.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>

namespace {

using namespace floc::advisors;

recycle_params params() {
    recycle_params p;
    p.target_g_per_m3 = 1.0;
    p.gain_per_g_per_m3 = 0.6;
    p.integral_time_s = 3600.0;
    p.min_ratio = 0.5;
    p.max_ratio = 4.0;
    p.pump_min_m3_per_d = 0.0;
    p.pump_max_m3_per_d = 36000.0;
    p.max_change_per_hour = 0.5;
    p.fallback_ratio = 2.0;
    return p;
}

recycle_inputs inputs(double nitrate, double flow, double now) {
    return {good(nitrate, now), good(flow, now), {}};
}

double run(const recycle_params& p, double nitrate, double hours, recycle_state& s, double& now) {
    double v = 0.0;
    for (int i = 0; i < static_cast<int>(hours * 12); ++i) {
        const recycle_result r = step_recycle(p, inputs(nitrate, 4500.0, now), s, now);
        s = r.state;
        v = r.out.value;
        now += 300.0;
    }
    return v;
}

TEST(Recycle, LowAnoxicNitrateRaisesTheRecycle) {
    recycle_state s;
    double now = 0.0;
    const double v = run(params(), 0.2, 2.0, s, now);
    EXPECT_GT(v, 2.0);
    const recycle_result r = step_recycle(params(), inputs(0.2, 4500.0, now), s, now);
    EXPECT_TRUE(r.out.reasons.has(reason::anoxic_nitrate_below_target));
    EXPECT_NE(r.out.explanation.find("anoxic nitrate 0.2 mg/L below 1 mg/L target"),
              std::string::npos)
        << r.out.explanation;
    ASSERT_TRUE(r.out.figure_value("recycle_flow").has_value());
    EXPECT_NEAR(*r.out.figure_value("recycle_flow"), r.out.value * 4500.0, 1e-9);
}

TEST(Recycle, HighAnoxicNitrateLowersTheRecycle) {
    recycle_state s;
    double now = 0.0;
    EXPECT_LT(run(params(), 3.0, 2.0, s, now), 2.0);
}

TEST(Recycle, PumpLimitsBoundTheRatio) {
    recycle_params p = params();
    p.pump_max_m3_per_d = 9000.0; // 2x at 4500 m3/d
    recycle_state s;
    double now = 0.0;
    EXPECT_NEAR(run(p, 0.0, 12.0, s, now), 2.0, 1e-9);
    const recycle_result r = step_recycle(p, inputs(0.0, 4500.0, now), s, now);
    EXPECT_DOUBLE_EQ(r.out.max, 2.0);
    EXPECT_TRUE(r.out.reasons.has(reason::pump_limit));
}

TEST(Recycle, FlowPacedBoundsWhenPumpAndRatioDisagree) {
    // At a tiny flow the pump's minimum exceeds the largest ratio: the pump decides.
    const ratio_bounds b = flow_paced_bounds(0.5, 4.0, 1000.0, 36000.0, 100.0);
    EXPECT_DOUBLE_EQ(b.lo, 10.0);
    EXPECT_DOUBLE_EQ(b.hi, 10.0);
    EXPECT_TRUE(b.pump_limited);
    const ratio_bounds c = flow_paced_bounds(0.5, 4.0, 0.0, 1000.0, 10000.0);
    EXPECT_DOUBLE_EQ(c.lo, 0.1);
    EXPECT_DOUBLE_EQ(c.hi, 0.1);
}

// An influent flow too small for any ratio to reach the pump's minimum (a stopped inflow, a
// meter reading zero) holds the advice instead of publishing pump_min / flow.
TEST(Recycle, FlowTooLowToPaceHoldsTheAdvice) {
    recycle_params p = params();
    p.pump_min_m3_per_d = 1200.0;  // needs at least 300 m3/d at the 4.0 maximum ratio
    recycle_state s;
    double now = 0.0;
    (void)run(p, 1.0, 1.0, s, now);
    for (const double flow : {0.0, 1e-30, 299.0}) {
        const recycle_result r = step_recycle(p, inputs(1.0, flow, now), s, now);
        EXPECT_EQ(r.out.quality, advice_quality::held) << flow;
        EXPECT_LE(r.out.value, p.max_ratio) << flow;
        EXPECT_GE(r.out.value, p.min_ratio) << flow;
        EXPECT_NE(r.out.explanation.find("too low to pace"), std::string::npos) << r.out.explanation;
    }
    EXPECT_TRUE(flow_can_be_paced(300.0, 4.0, 1200.0));
    EXPECT_FALSE(flow_can_be_paced(299.9, 4.0, 1200.0));
    EXPECT_FALSE(flow_can_be_paced(0.0, 4.0, 0.0));
}

TEST(Recycle, StartsFromTheRecycleFlowInUse) {
    recycle_inputs in = inputs(1.0, 4500.0, 0.0);
    in.recycle_flow = good(13500.0, 0.0);
    const recycle_result r = step_recycle(params(), in, {}, 0.0);
    EXPECT_DOUBLE_EQ(r.out.value, 3.0);
    EXPECT_TRUE(r.out.reasons.has(reason::started_from_operator_value));
}

TEST(Recycle, HoldsThenFallsBack) {
    recycle_state s;
    double now = 0.0;
    const double last = run(params(), 0.2, 1.0, s, now);
    recycle_inputs bad = inputs(0.2, 4500.0, now);
    bad.nitrate.quality = signal_quality::frozen;
    const double good_at = s.out.good_at_s;
    recycle_result r = step_recycle(params(), bad, s, good_at + 1800.0);
    EXPECT_EQ(r.out.quality, advice_quality::held);
    EXPECT_DOUBLE_EQ(r.out.value, last);
    EXPECT_NE(r.out.explanation.find("anoxic nitrate frozen"), std::string::npos)
        << r.out.explanation;
    r = step_recycle(params(), bad, r.state, good_at + 1800.5);
    EXPECT_EQ(r.out.quality, advice_quality::fallback);
    EXPECT_DOUBLE_EQ(r.out.value, 2.0);
}

// A test plant (invented): anoxic nitrate rises once the recycle brings more nitrate than the
// zone can denitrify, NO3 = max(0, 1.5 (R - 1.8)). The PI settles where NO3 meets the target,
// R = 1.8 + 1 / 1.5 = 2.47.
TEST(Recycle, ClosedLoopSettlesAtTheTarget) {
    recycle_state s;
    double nitrate = 0.0;
    double ratio = 0.0;
    for (int i = 0; i < 12 * 48; ++i) {
        const double now = 300.0 * i;
        const recycle_result r = step_recycle(params(), inputs(nitrate, 4500.0, now), s, now);
        s = r.state;
        ratio = r.out.value;
        nitrate = std::max(0.0, 1.5 * (ratio - 1.8));
    }
    EXPECT_NEAR(ratio, 1.8 + 1.0 / 1.5, 0.01);
    EXPECT_NEAR(nitrate, 1.0, 0.02);
}

} // namespace
