// The machinery every advisor shares: output shaping, hold then fallback, the PI controller and
// the rolling window. Behaviour tests; no published values are involved.
#include "floc/advisors/machinery.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>

namespace {

using namespace floc::advisors;
constexpr double nan = std::numeric_limits<double>::quiet_NaN();

// --- shape_output -----------------------------------------------------------------------------

TEST(Shaping, ClampsToTheBounds) {
    EXPECT_DOUBLE_EQ(shape_output(5.0, nan, 1.0, 0.0, 3.0).value, 3.0);
    EXPECT_TRUE(shape_output(5.0, nan, 1.0, 0.0, 3.0).clamped_high);
    EXPECT_DOUBLE_EQ(shape_output(-1.0, nan, 1.0, 0.0, 3.0).value, 0.0);
    EXPECT_TRUE(shape_output(-1.0, nan, 1.0, 0.0, 3.0).clamped_low);
    const shaped_output inside = shape_output(2.0, nan, 1.0, 0.0, 3.0);
    EXPECT_DOUBLE_EQ(inside.value, 2.0);
    EXPECT_FALSE(inside.clamped_low || inside.clamped_high || inside.rate_limited);
}

TEST(Shaping, LimitsTheStepFromThePreviousValue) {
    const shaped_output up = shape_output(3.0, 1.0, 0.25, 0.0, 5.0);
    EXPECT_DOUBLE_EQ(up.value, 1.25);
    EXPECT_TRUE(up.rate_limited);
    EXPECT_DOUBLE_EQ(shape_output(0.0, 1.0, 0.25, 0.0, 5.0).value, 0.75);
    EXPECT_DOUBLE_EQ(shape_output(1.1, 1.0, 0.25, 0.0, 5.0).value, 1.1);
    // A zero step holds the previous value.
    EXPECT_DOUBLE_EQ(shape_output(3.0, 1.0, 0.0, 0.0, 5.0).value, 1.0);
}

TEST(Shaping, BoundsWinOverTheRateLimit) {
    // The previous value lies above a bound that moved down: the bound is obeyed at once.
    const shaped_output s = shape_output(4.0, 4.0, 0.1, 0.0, 2.0);
    EXPECT_DOUBLE_EQ(s.value, 2.0);
    EXPECT_TRUE(s.clamped_high);
    EXPECT_FALSE(s.rate_limited);
}

TEST(Shaping, NeverReturnsNaN) {
    EXPECT_DOUBLE_EQ(shape_output(nan, 1.5, 0.1, 0.0, 3.0).value, 1.5);
    EXPECT_DOUBLE_EQ(shape_output(nan, nan, 0.1, 0.5, 3.0).value, 0.5);
    EXPECT_DOUBLE_EQ(shape_output(2.0, 1.0, nan, 0.0, 3.0).value, 1.0);
    EXPECT_TRUE(std::isfinite(
        shape_output(std::numeric_limits<double>::infinity(), 1.0, 0.5, 0.0, 3.0).value));
}

// --- hold and fallback --------------------------------------------------------------------------

TEST(Hold, HoldsTheLastGoodValueThenFallsBack) {
    output_memory m;
    remember(m, 1.7, 1000.0, true);
    const hold_policy p{600.0, 2.0};
    reason_list r1;
    const held_output a = hold_or_fallback(m, 1000.0 + 600.0, p, r1);
    EXPECT_EQ(a.quality, advice_quality::held);
    EXPECT_DOUBLE_EQ(a.value, 1.7);
    EXPECT_TRUE(r1.has(reason::holding_last_good));
    reason_list r2;
    const held_output b = hold_or_fallback(m, 1000.0 + 601.0, p, r2);
    EXPECT_EQ(b.quality, advice_quality::fallback);
    EXPECT_DOUBLE_EQ(b.value, 2.0);
    EXPECT_TRUE(r2.has(reason::fallback_value));
}

TEST(Hold, HeldValuesDoNotRestartTheHoldTime) {
    output_memory m;
    remember(m, 1.7, 0.0, true);
    remember(m, 1.7, 300.0, false); // a held step
    reason_list r;
    EXPECT_EQ(hold_or_fallback(m, 700.0, {600.0, 2.0}, r).quality, advice_quality::fallback);
}

TEST(Hold, WithoutAnyGoodValueFallsBackAtOnce) {
    const output_memory m;
    reason_list r;
    const held_output h = hold_or_fallback(m, 0.0, {600.0, 2.0}, r);
    EXPECT_EQ(h.quality, advice_quality::fallback);
    EXPECT_DOUBLE_EQ(h.value, 2.0);
}

// --- PI controller ------------------------------------------------------------------------------

TEST(Pi, BumplessStartGivesTheStartValue) {
    const pi_tuning t{0.5, 600.0};
    const pi_memory m = pi_start(1.6, 1.4, 0.2, t, 0.0);
    const pi_proposal p = pi_propose(t, m, 1.4, 0.2, 0.0);
    EXPECT_NEAR(p.wanted, 1.6, 1e-12);
}

TEST(Pi, IntegratesWithTheElapsedTime) {
    const pi_tuning t{0.5, 600.0};
    pi_memory m = pi_start(1.0, 0.0, 0.0, t, 0.0);
    // Error 1 for 600 s then 300 s: integral grows by Kp e dt / Ti = 0.5 and 0.25.
    pi_proposal p = pi_propose(t, m, 1.0, 0.0, 600.0);
    EXPECT_NEAR(p.wanted, 1.0 + 0.5 + 0.5, 1e-12);
    m = pi_accept(m, p, p.wanted, 0.0, 600.0);
    p = pi_propose(t, m, 1.0, 0.0, 900.0);
    EXPECT_NEAR(p.integral_free, 1.0 + 0.5 + 0.25, 1e-12);
}

TEST(Pi, ARepeatedOrBackwardTimeIntegratesNothing) {
    const pi_tuning t{0.5, 600.0};
    const pi_memory m = pi_start(1.0, 0.0, 0.0, t, 1000.0);
    EXPECT_DOUBLE_EQ(pi_propose(t, m, 1.0, 0.0, 1000.0).integral_free, m.integral);
    EXPECT_DOUBLE_EQ(pi_propose(t, m, 1.0, 0.0, 400.0).integral_free, m.integral);
    EXPECT_DOUBLE_EQ(pi_propose(t, m, 1.0, 0.0, 400.0).dt_s, 0.0);
}

// A long saturated period stores no excess in the integral: when the error reverses the output
// leaves the limit at once, while an integrator without anti-windup would stay pinned.
TEST(Pi, AntiWindupLeavesSaturationAsSoonAsTheErrorReverses) {
    const pi_tuning t{0.5, 600.0};
    const double lo = 0.5;
    const double hi = 3.0;
    pi_memory m = pi_start(2.0, 0.0, 0.0, t, 0.0);
    double naive_integral = m.integral;
    double out = 2.0;
    double now = 0.0;
    for (int i = 0; i < 200; ++i) { // 200 min with a large positive error
        now += 60.0;
        const pi_proposal p = pi_propose(t, m, 4.0, 0.0, now);
        out = shape_output(p.wanted, nan, 0.0, lo, hi).value;
        m = pi_accept(m, p, out, 0.0, now);
        naive_integral += t.gain * 60.0 / t.integral_time_s * 4.0;
    }
    EXPECT_DOUBLE_EQ(out, hi);
    // The integral did not grow while the output sat at the limit.
    EXPECT_NEAR(m.integral, 2.0, 1e-9);
    // The error reverses: one step later the output is below the limit.
    now += 60.0;
    const pi_proposal p = pi_propose(t, m, -0.5, 0.0, now);
    EXPECT_LT(shape_output(p.wanted, nan, 0.0, lo, hi).value, hi);
    // Without anti-windup the output would still be pinned at the limit.
    EXPECT_GT(naive_integral + t.gain * -0.5, hi);
}

TEST(Pi, RateLimitedOutputDoesNotWindUp) {
    const pi_tuning t{1.0, 300.0};
    pi_memory m = pi_start(1.0, 0.0, 0.0, t, 0.0);
    double out = 1.0;
    for (int i = 1; i <= 30; ++i) {
        const double now = 60.0 * i;
        const pi_proposal p = pi_propose(t, m, 2.0, 0.0, now);
        out = shape_output(p.wanted, out, 0.01, 0.0, 10.0).value;
        m = pi_accept(m, p, out, 0.0, now);
    }
    EXPECT_NEAR(out, 1.3, 1e-9);
    // The rate limit held the output back the whole time, so the integral did not grow (free
    // integration would have added 30 x 0.4 = 12).
    EXPECT_LE(m.integral, 1.0 + 1e-9);
}

// --- rolling window -----------------------------------------------------------------------------

TEST(Window, TimeWeightedMean) {
    rolling_window w;
    for (int i = 0; i < 12; ++i) {
        window_add(w, 86400.0, 100.0, i * 3600.0); // 12 h at 100
    }
    for (int i = 12; i < 24; ++i) {
        window_add(w, 86400.0, 200.0, i * 3600.0); // 12 h at 200
    }
    const auto m = window_mean(w, 23.5 * 3600.0);
    ASSERT_TRUE(m.has_value());
    EXPECT_NEAR(*m, 150.0, 5.0);
}

TEST(Window, ForgetsWhatIsOlderThanTheWindow) {
    rolling_window w;
    for (int i = 0; i < 48; ++i) {
        window_add(w, 86400.0, i < 24 ? 1000.0 : 10.0, i * 3600.0);
    }
    EXPECT_NEAR(*window_mean(w, 47.5 * 3600.0), 10.0, 1e-9);
    EXPECT_FALSE(window_mean(w, 200.0 * 3600.0).has_value());
}

TEST(Window, SlopeOfALinearRamp) {
    rolling_window w;
    // Nitrate rising 0.6 mg/L per hour, sampled every 5 min for 1 h.
    for (int i = 0; i <= 12; ++i) {
        window_add(w, 3600.0, 5.0 + 0.6 * i / 12.0, i * 300.0);
    }
    const auto s = window_slope_per_s(w, 3600.0);
    ASSERT_TRUE(s.has_value());
    EXPECT_NEAR(*s * 3600.0, 0.6, 0.02);
}

TEST(Window, NoSlopeFromTooLittleHistory) {
    rolling_window w;
    window_add(w, 3600.0, 5.0, 0.0);
    window_add(w, 3600.0, 5.5, 300.0);
    EXPECT_FALSE(window_slope_per_s(w, 300.0).has_value());
}

TEST(Window, IrregularAndRepeatedSamplesAreHandled) {
    rolling_window w;
    window_add(w, 3600.0, 1.0, 100.0);
    window_add(w, 3600.0, 1.0, 100.0); // repeated time
    window_add(w, 3600.0, 1.0, 50.0);  // late sample inside the window
    window_add(w, 3600.0, nan, 200.0); // ignored
    window_add(w, 3600.0, 1.0, 1e7);   // far in the future: window moves on
    EXPECT_NEAR(*window_mean(w, 1e7), 1.0, 1e-12);
}

} // namespace
