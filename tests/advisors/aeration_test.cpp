// The DO advisor: ammonia cascade (ammonia-based aeration control after Rieger, Jones, Dold &
// Bott 2014, Water Environment Research 86(1) 63-73), nitrate/DO rules, mode switching, hold and
// fallback, cold-weather minimum. Behaviour tests; limits 0.5-3.0 mg/L are common practice.
#include "floc/advisors/aeration.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>

namespace {

using namespace floc::advisors;

aeration_params cascade_params() {
    aeration_params p;
    p.mode = aeration_mode::ammonia;
    p.min_g_per_m3 = 0.5;
    p.max_g_per_m3 = 3.0;
    p.max_change_per_hour_g_per_m3 = 0.6;
    p.fallback_g_per_m3 = 2.0;
    p.hold_for_s = 1800.0;
    p.ammonia_loop = {1.0, 0.5, 2400.0, 0.5};
    return p;
}

aeration_inputs inputs(double ammonia, double flow, double now) {
    aeration_inputs in;
    in.ammonia = good(ammonia, now);
    in.flow = good(flow, now);
    in.dissolved_oxygen = good(1.5, now);
    return in;
}

TEST(AerationCascade, StartsBumplesslyFromTheOperatorSetPoint) {
    aeration_inputs in = inputs(2.4, 9000.0, 0.0);
    in.setpoint = good(1.6, 0.0);
    const aeration_result r = step_aeration(cascade_params(), in, {}, 0.0);
    EXPECT_EQ(r.out.quality, advice_quality::good);
    EXPECT_DOUBLE_EQ(r.out.value, 1.6);
    EXPECT_TRUE(r.out.reasons.has(reason::started_from_operator_value));
}

TEST(AerationCascade, StartsFromTheFallbackWithoutAnOperatorValue) {
    const aeration_result r = step_aeration(cascade_params(), inputs(2.4, 9000.0, 0.0), {}, 0.0);
    EXPECT_DOUBLE_EQ(r.out.value, 2.0);
    EXPECT_TRUE(r.out.reasons.has(reason::started_from_fallback));
}

TEST(AerationCascade, AmmoniaAboveTargetRaisesDoAndSaysWhy) {
    const aeration_params p = cascade_params();
    aeration_inputs in = inputs(2.4, 9000.0, 0.0);
    in.setpoint = good(1.6, 0.0);
    aeration_state s = step_aeration(p, in, {}, 0.0).state;
    aeration_result r{};
    for (int i = 1; i <= 40; ++i) {
        r = step_aeration(p, inputs(2.4, 9000.0, 60.0 * i), s, 60.0 * i);
        s = r.state;
    }
    EXPECT_GT(r.out.value, 1.6);
    EXPECT_TRUE(r.out.reasons.has(reason::ammonia_above_target));
    EXPECT_NE(r.out.explanation.find("ammonia 2.4 mg/L above 1 mg/L target for 40 min"),
              std::string::npos)
        << r.out.explanation;
    EXPECT_NE(r.out.explanation.find("DO advice raised"), std::string::npos) << r.out.explanation;
}

TEST(AerationCascade, RateLimitHolds) {
    const aeration_params p = cascade_params();
    aeration_state s = step_aeration(p, inputs(1.0, 9000.0, 0.0), {}, 0.0).state;
    double last = s.out.value;
    for (int i = 1; i <= 60; ++i) {
        const double now = 300.0 * i;
        const aeration_result r = step_aeration(p, inputs(10.0, 9000.0, now), s, now);
        EXPECT_LE(std::abs(r.out.value - last), 0.6 * 300.0 / 3600.0 + 1e-9);
        last = r.out.value;
        s = r.state;
    }
    EXPECT_DOUBLE_EQ(last, 3.0); // it gets there, at the allowed rate
}

// A test plant (invented, first order): ammonia rises with the load and falls with the DO.
// dN/dt = (load - rate_max * DO / (0.5 + DO) * N / (0.5 + N)) / tau. The cascade must bring
// ammonia to its target without a steady offset (integral action).
TEST(AerationCascade, ClosedLoopReachesTheAmmoniaTarget) {
    const aeration_params p = cascade_params();
    aeration_state s;
    double n = 4.0;
    double dox = 1.0;
    for (int i = 0; i < 24 * 60 * 2; ++i) { // two days, 1-min steps
        const double now = 60.0 * i;
        const aeration_result r = step_aeration(p, inputs(n, 9000.0, now), s, now);
        s = r.state;
        dox = r.out.value;
        const double load = 3.0; // mg/L per hour
        const double removal = 6.0 * dox / (0.5 + dox) * n / (0.5 + n);
        n = std::max(0.0, n + (load - removal) / 60.0);
    }
    EXPECT_NEAR(n, 1.0, 0.05);
    EXPECT_GT(dox, 0.5);
    EXPECT_LT(dox, 3.0);
}

TEST(AerationCascade, FlowAboveItsDailyMeanAddsFeedforward) {
    const aeration_params p = cascade_params();
    aeration_state s;
    for (int i = 0; i < 24 * 12; ++i) { // a day at 9000 m3/d
        s = step_aeration(p, inputs(1.0, 9000.0, 300.0 * i), s, 300.0 * i).state;
    }
    const double now = 24 * 3600.0;
    const aeration_result steady = step_aeration(p, inputs(1.0, 9000.0, now), s, now);
    const aeration_result peak = step_aeration(p, inputs(1.0, 13500.0, now), s, now);
    EXPECT_GT(peak.out.value, steady.out.value);
    EXPECT_TRUE(peak.out.reasons.has(reason::flow_above_daily_mean));
    ASSERT_TRUE(peak.out.figure_value("flow_ratio").has_value());
    EXPECT_NEAR(*peak.out.figure_value("flow_ratio"), 1.5, 0.02);
}

TEST(AerationHold, HoldsThenFallsBackAtTheConfiguredTimes) {
    const aeration_params p = cascade_params();
    aeration_state s;
    for (int i = 0; i <= 20; ++i) {
        s = step_aeration(p, inputs(3.0, 9000.0, 60.0 * i), s, 60.0 * i).state;
    }
    const double last_good = s.out.value;
    const double t0 = 20 * 60.0;
    aeration_inputs bad = inputs(3.0, 9000.0, t0);
    bad.ammonia.quality = signal_quality::stale;
    aeration_result r = step_aeration(p, bad, s, t0 + 1800.0);
    EXPECT_EQ(r.out.quality, advice_quality::held);
    EXPECT_DOUBLE_EQ(r.out.value, last_good);
    EXPECT_TRUE(r.out.reasons.has(reason::input_bad));
    EXPECT_TRUE(r.out.reasons.has(reason::holding_last_good));
    EXPECT_NE(r.out.explanation.find("ammonia stale"), std::string::npos) << r.out.explanation;
    r = step_aeration(p, bad, r.state, t0 + 1801.0);
    EXPECT_EQ(r.out.quality, advice_quality::fallback);
    EXPECT_DOUBLE_EQ(r.out.value, 2.0);
    EXPECT_TRUE(r.out.reasons.has(reason::fallback_value));
    // Recovery is bumpless: from the fallback, at most the rate limit away.
    const aeration_result back =
        step_aeration(p, inputs(3.0, 9000.0, t0 + 1860.0), r.state, t0 + 1860.0);
    EXPECT_EQ(back.out.quality, advice_quality::good);
    EXPECT_LE(std::abs(back.out.value - 2.0), 0.6 * 59.0 / 3600.0 + 1e-9);
}

TEST(AerationCold, ColdMixedLiquorRaisesTheMinimum) {
    aeration_params p = cascade_params();
    p.cold_below_degC = 12.0;
    p.cold_minimum_g_per_m3 = 1.2;
    aeration_inputs in = inputs(0.0, 9000.0, 0.0); // no ammonia: the loop wants the minimum
    in.temperature = good(8.0, 0.0);
    in.setpoint = good(0.6, 0.0);
    const aeration_result r = step_aeration(p, in, {}, 0.0);
    EXPECT_DOUBLE_EQ(r.out.min, 1.2);
    EXPECT_DOUBLE_EQ(r.out.value, 1.2);
    EXPECT_TRUE(r.out.reasons.has(reason::cold_weather_minimum));
    in.temperature = good(11.0, 0.0); // half-way down the 2 degC ramp
    EXPECT_NEAR(step_aeration(p, in, {}, 0.0).out.min, 0.85, 1e-9);
    in.temperature = good(15.0, 0.0);
    EXPECT_DOUBLE_EQ(step_aeration(p, in, {}, 0.0).out.min, 0.5);
}

// --- rules ---------------------------------------------------------------------------------------

aeration_params rules_params() {
    aeration_params p = cascade_params();
    p.mode = aeration_mode::rules;
    p.rules = {3600.0, 0.3, 1.2, 0.8, 2.5, 0.1, 1800.0};
    return p;
}

aeration_inputs rules_inputs(double dox, double nitrate, double flow, double now) {
    aeration_inputs in;
    in.dissolved_oxygen = good(dox, now);
    in.nitrate = good(nitrate, now);
    in.flow = good(flow, now);
    return in;
}

// A day of steady flow and nitrate, so that the daily mean and the trend are known.
aeration_state settled_day(const aeration_params& p, double dox) {
    aeration_state s;
    for (int i = 0; i < 24 * 12; ++i) {
        const double now = 300.0 * i;
        aeration_inputs in = rules_inputs(dox, 6.0, 9000.0, now);
        in.setpoint = good(1.8, now);
        s = step_aeration(p, in, s, now).state;
    }
    return s;
}

TEST(AerationRules, R1RaisesAfterTheHysteresis) {
    const aeration_params p = rules_params();
    aeration_state s = settled_day(p, 1.8);
    const double before = s.out.value;
    const double t0 = 24 * 3600.0;
    bool pending_seen = false;
    double raised_at = -1.0;
    aeration_result r{};
    for (int i = 0; i < 36; ++i) { // 3 h of nitrate falling 1 mg/L/h at 1.5x flow
        const double now = t0 + 300.0 * i;
        r = step_aeration(p, rules_inputs(1.8, 6.0 - 1.0 * (now - t0) / 3600.0, 13500.0, now), s,
                          now);
        s = r.state;
        pending_seen = pending_seen || r.out.reasons.has(reason::rule_pending);
        if (raised_at < 0.0 && r.out.value > before + 1e-9) {
            raised_at = now - t0;
            EXPECT_TRUE(r.out.reasons.has(reason::rule_raise_nitrification));
            EXPECT_NE(r.out.explanation.find("R1 nitrate falling"), std::string::npos)
                << r.out.explanation;
        }
    }
    EXPECT_TRUE(pending_seen);
    ASSERT_GT(raised_at, 0.0);
    EXPECT_GE(raised_at, 1800.0); // not before the condition held for the hysteresis
    // 3 h of the condition: at most one step per hysteresis period.
    EXPECT_LE(s.out.value - before, 0.1 * 6 + 1e-9);
    EXPECT_GT(s.out.value - before, 0.1 * 2);
}

TEST(AerationRules, R2LowersAHighResidualWithStableNitrate) {
    const aeration_params p = rules_params();
    aeration_state s = settled_day(p, 1.8);
    const double t0 = 24 * 3600.0;
    const double before = s.out.value;
    aeration_result r{};
    for (int i = 0; i <= 9; ++i) { // the residual rises to 3 mg/L for 45 min
        const double now = t0 + 300.0 * i;
        r = step_aeration(p, rules_inputs(3.0, 6.0, 9000.0, now), s, now);
        s = r.state;
    }
    EXPECT_NEAR(s.out.value, before - 0.1, 1e-9); // one step after the 30-min hysteresis,
                                                  // reached at the rate limit
    EXPECT_TRUE(r.out.reasons.has(reason::rule_lower_residual));
}

TEST(AerationRules, R3LowersAtLightLoad) {
    const aeration_params p = rules_params();
    aeration_state s = settled_day(p, 1.8);
    const double t0 = 24 * 3600.0;
    const double before = s.out.value;
    for (int i = 0; i <= 12; ++i) {
        const double now = t0 + 300.0 * i;
        s = step_aeration(p, rules_inputs(1.8, 6.0, 6000.0, now), s, now).state;
    }
    EXPECT_LT(s.out.value, before);
}

TEST(AerationRules, NothingHappensWithoutATrend) {
    const aeration_params p = rules_params();
    aeration_inputs in = rules_inputs(3.0, 6.0, 9000.0, 0.0);
    in.setpoint = good(1.8, 0.0);
    const aeration_result r = step_aeration(p, in, {}, 0.0);
    EXPECT_DOUBLE_EQ(r.out.value, 1.8);
    EXPECT_TRUE(r.out.reasons.has(reason::nitrate_trend_unknown));
}

TEST(AerationAuto, FallsBackToRulesBumplesslyWhenAmmoniaGoesBad) {
    aeration_params p = rules_params();
    p.mode = aeration_mode::automatic;
    aeration_state s;
    for (int i = 0; i < 24 * 12; ++i) {
        const double now = 300.0 * i;
        aeration_inputs in = rules_inputs(1.8, 6.0, 9000.0, now);
        in.ammonia = good(2.0, now);
        s = step_aeration(p, in, s, now).state;
    }
    EXPECT_EQ(s.last_mode, 1);
    const double before = s.out.value;
    const double now = 24 * 3600.0;
    aeration_inputs in = rules_inputs(1.8, 6.0, 9000.0, now);
    in.ammonia.quality = signal_quality::bad;
    const aeration_result r = step_aeration(p, in, s, now);
    EXPECT_EQ(r.out.quality, advice_quality::good);
    EXPECT_TRUE(r.out.reasons.has(reason::rules_instead_of_ammonia));
    EXPECT_DOUBLE_EQ(r.out.value, before);
    EXPECT_EQ(r.state.last_mode, 2);
}

} // namespace
