// Property tests over long random input sequences: never NaN, always inside the bounds, never
// faster than the rate limit, held values are the last good value and fallbacks come only
// after the hold time, and monotonic where physics says so (higher ammonia -> no lower DO;
// deeper blanket -> no less RAS; lower anoxic nitrate -> no less recycle). The seed is printed;
// FLOC_TEST_SEED=<seed> replays a run.
#include "floc/advisors/aeration.hpp"
#include "floc/advisors/ras.hpp"
#include "floc/advisors/recycle.hpp"
#include "floc/advisors/waste.hpp"

#include "seed.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <random>

namespace {

using namespace floc::advisors;
constexpr int steps = 4000;

struct dice {
    std::mt19937_64 rng;
    double uniform(double lo, double hi) {
        return std::uniform_real_distribution<double>{lo, hi}(rng);
    }
    bool chance(double p) { return std::bernoulli_distribution{p}(rng); }
    // Mostly good; sometimes bad, stale, frozen, missing or not a number.
    reading value(double lo, double hi, double now, double good_share = 0.9) {
        reading r = good(uniform(lo, hi), now);
        if (!chance(good_share)) {
            switch (std::uniform_int_distribution<int>{0, 4}(rng)) {
            case 0:
                r.quality = signal_quality::bad;
                break;
            case 1:
                r.quality = signal_quality::stale;
                break;
            case 2:
                r.quality = signal_quality::frozen;
                break;
            case 3:
                r.quality = signal_quality::missing;
                break;
            default:
                r.value = std::numeric_limits<double>::quiet_NaN();
                break;
            }
        }
        return r;
    }
    // Irregular time steps: mostly around the period, some repeats, a few gaps and clock jumps.
    double next_time(double now, double period) {
        const double pick = uniform(0.0, 1.0);
        if (pick < 0.03) {
            return now; // repeated time
        }
        if (pick < 0.04) {
            return now - uniform(1.0, period); // clock went back
        }
        if (pick < 0.06) {
            return now + uniform(period, 4.0 * 3600.0); // a gap
        }
        return now + uniform(0.2 * period, 2.0 * period);
    }
};

// Tracks what an advisor published to check the shared invariants.
struct watcher {
    bool has_good = false;
    double good_value = 0.0;
    double good_at = 0.0;
    bool has_last = false;
    double last_value = 0.0;
    double last_at = 0.0;
    double last_min = 0.0;
    double last_max = 0.0;

    void check(const advice& a, double now, double hold_for, double rate_per_hour, double lo_cfg,
               double hi_cfg, const std::string& where) {
        ASSERT_TRUE(std::isfinite(a.value)) << where;
        ASSERT_FALSE(a.explanation.empty()) << where;
        EXPECT_GE(a.value, a.min - 1e-12) << where;
        EXPECT_LE(a.value, a.max + 1e-12) << where;
        EXPECT_GE(a.min, lo_cfg - 1e-12) << where;
        EXPECT_LE(a.max, hi_cfg + 1e-12) << where;
        for (const figure& f : a.figures) {
            EXPECT_FALSE(std::isnan(f.value)) << where << " " << f.name;
        }
        if (a.quality == advice_quality::good && has_last && a.min == last_min &&
            a.max == last_max) {
            const double dt = std::max(now - last_at, 0.0);
            EXPECT_LE(std::abs(a.value - last_value), rate_per_hour * dt / 3600.0 + 1e-9) << where;
        }
        if (a.quality == advice_quality::held) {
            ASSERT_TRUE(has_good) << where;
            EXPECT_LE(now - good_at, hold_for + 1e-9) << where;
            EXPECT_NEAR(a.value, std::clamp(good_value, a.min, a.max), 1e-12) << where;
        }
        if (a.quality == advice_quality::fallback && has_good) {
            EXPECT_GT(now - good_at, hold_for) << where;
        }
        if (a.quality == advice_quality::good) {
            has_good = true;
            good_value = a.value;
            good_at = now;
        }
        has_last = true;
        last_value = a.value;
        last_at = now;
        last_min = a.min;
        last_max = a.max;
    }
};

TEST(Properties, AerationInvariantsAndMonotonicInAmmonia) {
    dice d{floc::test::seeded(1)};
    aeration_params p;
    p.mode = aeration_mode::automatic;
    p.hold_for_s = 1200.0;
    aeration_state s;
    watcher w;
    double now = 0.0;
    double temperature = 20.0;
    for (int i = 0; i < steps; ++i) {
        now = d.next_time(now, 60.0);
        if (d.chance(0.01)) {
            temperature = d.uniform(5.0, 25.0); // moves the cold-weather minimum now and then
        }
        aeration_inputs in;
        in.dissolved_oxygen = d.value(0.0, 6.0, now);
        in.ammonia = d.value(0.0, 8.0, now, i % 1000 < 500 ? 0.95 : 0.2);
        in.nitrate = d.value(0.0, 15.0, now);
        in.flow = d.value(2000.0, 20000.0, now);
        in.temperature = good(temperature, now);
        in.setpoint = d.value(0.0, 4.0, now, 0.5);
        const aeration_result r = step_aeration(p, in, s, now);
        w.check(r.out, now, p.hold_for_s, p.max_change_per_hour_g_per_m3, p.min_g_per_m3,
                p.max_g_per_m3, "aeration step " + std::to_string(i));
        if (in.ammonia.usable()) {
            aeration_inputs more = in;
            more.ammonia.value += d.uniform(0.01, 3.0);
            EXPECT_GE(step_aeration(p, more, s, now).out.value, r.out.value - 1e-12)
                << "step " << i;
        }
        s = r.state;
    }
}

TEST(Properties, RecycleInvariantsAndMonotonicInNitrate) {
    dice d{floc::test::seeded(2)};
    recycle_params p;
    p.pump_max_m3_per_d = 36000.0;
    p.hold_for_s = 900.0;
    recycle_state s;
    watcher w;
    double now = 0.0;
    double flow = 9000.0;
    for (int i = 0; i < steps; ++i) {
        now = d.next_time(now, 300.0);
        if (d.chance(0.05)) {
            flow = d.uniform(1000.0, 20000.0); // bounds move with the flow now and then
        }
        recycle_inputs in{d.value(0.0, 10.0, now), d.value(flow, flow, now),
                          d.value(0.0, 40000.0, now, 0.3)};
        const recycle_result r = step_recycle(p, in, s, now);
        w.check(r.out, now, p.hold_for_s, p.max_change_per_hour, 0.0, p.max_ratio,
                "recycle step " + std::to_string(i));
        if (in.nitrate.usable() && in.flow.usable()) {
            recycle_inputs less = in;
            less.nitrate.value = std::max(0.0, less.nitrate.value - d.uniform(0.01, 3.0));
            EXPECT_GE(step_recycle(p, less, s, now).out.value, r.out.value - 1e-12) << "step " << i;
        }
        s = r.state;
    }
}

TEST(Properties, RasInvariantsAndMonotonicInBlanket) {
    dice d{floc::test::seeded(3)};
    ras_params p;
    p.pump_min_m3_per_d = 500.0;
    p.pump_max_m3_per_d = 15000.0;
    p.clarifier_area_m2 = 450.0;
    p.hold_for_s = 1800.0;
    ras_state s;
    watcher w;
    double now = 0.0;
    double flow = 4500.0;
    for (int i = 0; i < steps; ++i) {
        now = d.next_time(now, 300.0);
        if (d.chance(0.05)) {
            flow = d.uniform(1500.0, 12000.0);
        }
        ras_inputs in;
        in.flow = d.value(flow, flow, now);
        in.ras_flow = d.value(500.0, 15000.0, now, 0.5);
        in.mlss = d.value(1500.0, 6000.0, now);
        in.ras_solids = d.value(3000.0, 15000.0, now, 0.7);
        in.sv30 = d.value(100.0, 950.0, now, 0.7);
        in.svi = d.value(50.0, 400.0, now, 0.3);
        in.blanket = d.value(0.0, 3.5, now);
        const ras_result r = step_ras(p, in, s, now);
        w.check(r.out, now, p.hold_for_s, p.max_change_per_hour, 0.0, 1e9,
                "ras step " + std::to_string(i));
        if (r.out.quality == advice_quality::good) {
            EXPECT_LE(r.out.max, p.max_ratio + 1e-12);
        }
        if (in.blanket.usable()) {
            ras_inputs deeper = in;
            deeper.blanket.value += d.uniform(0.01, 1.0);
            EXPECT_GE(step_ras(p, deeper, s, now).out.value, r.out.value - 1e-12) << "step " << i;
        }
        s = r.state;
    }
}

TEST(Properties, WasteInvariantsAndTheSrtGuard) {
    dice d{floc::test::seeded(4)};
    waste_params p;
    p.target_srt_s = 6.0 * 86400.0;
    p.system_volume_m3 = 2700.0;
    p.aerobic_volume_m3 = 2000.0;
    p.min_waste_m3_per_d = 0.0;
    p.max_waste_m3_per_d = 400.0;
    p.fallback_m3_per_d = 50.0;
    waste_state s;
    double now = 0.0;
    double lab_at = 0.0;
    for (int i = 0; i < steps; ++i) {
        now = d.next_time(now, 1800.0);
        if (d.chance(0.05)) {
            lab_at = now;
        }
        waste_inputs in;
        in.flow = d.value(2000.0, 8000.0, now);
        in.mlss = d.value(1500.0, 5000.0, lab_at);
        in.was_solids = d.value(5000.0, 14000.0, lab_at);
        in.effluent_tss = d.value(2.0, 30.0, lab_at);
        in.was_flow = d.value(0.0, 300.0, now, 0.5);
        in.temperature = d.value(6.0, 25.0, now);
        in.influent_bod = d.value(50.0, 400.0, lab_at, 0.5);
        in.recompute = d.chance(0.02);
        const waste_result r = step_waste(p, in, s, now);
        ASSERT_TRUE(std::isfinite(r.out.value)) << "waste step " << i;
        EXPECT_GE(r.out.value, p.min_waste_m3_per_d);
        EXPECT_LE(r.out.value, p.max_waste_m3_per_d);
        for (const figure& f : r.out.figures) {
            EXPECT_FALSE(std::isnan(f.value)) << "waste step " << i << " " << f.name;
        }
        if (const auto aerobic = r.out.figure_value("aerobic_srt_at_advice");
            aerobic && r.out.figure_value("design_aerobic_srt") &&
            r.out.value > p.min_waste_m3_per_d) {
            EXPECT_GE(*aerobic, *r.out.figure_value("design_aerobic_srt") * (1.0 - 1e-9))
                << "waste step " << i;
        }
        s = r.state;
        EXPECT_LE(s.days.size(), p.averaging_days);
    }
}

// Anti-windup in a whole advisor: six hours of ammonia far above target pin the DO advice at
// its maximum; when ammonia falls below target the advice leaves the maximum at the next step
// instead of staying pinned while a wound-up integral unwinds.
TEST(Properties, SaturatedCascadeRecoversWithoutWindup) {
    aeration_params p;
    p.mode = aeration_mode::ammonia;
    p.max_change_per_hour_g_per_m3 = 6.0;
    aeration_state s;
    double now = 0.0;
    for (int i = 0; i < 6 * 60; ++i, now += 60.0) {
        aeration_inputs in;
        in.ammonia = good(12.0, now);
        in.flow = good(9000.0, now);
        s = step_aeration(p, in, s, now).state;
    }
    EXPECT_DOUBLE_EQ(s.out.value, p.max_g_per_m3);
    aeration_inputs in;
    in.ammonia = good(0.8, now);
    in.flow = good(9000.0, now);
    const aeration_result r = step_aeration(p, in, s, now);
    EXPECT_LT(r.out.value, p.max_g_per_m3);
}

} // namespace
