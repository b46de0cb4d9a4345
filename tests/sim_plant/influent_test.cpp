// The influent generator (our own pattern model; the checks are of its definition).
#include "support.hpp"

#include <gtest/gtest.h>

namespace {

using namespace floc::sim;

influent_spec dry_weather() {
    influent_spec s = test::marrowby().influent;
    s.rain.events_per_week = 0.0;
    return s;
}

TEST(Influent, TheSameSeedGivesTheSameInfluentInAnyOrder) {
    const influent_generator a{test::marrowby().influent};
    const influent_generator b{test::marrowby().influent};
    for (double t = 13.7; t > 0.0; t -= 0.37) {
        const influent_sample x = a.at(t);
        const influent_sample y = b.at(t);
        EXPECT_EQ(x.flow_m3_per_d, y.flow_m3_per_d);
        EXPECT_EQ(x.c, y.c);
    }
    influent_spec other = test::marrowby().influent;
    other.seed += 1;
    const influent_generator c{other};
    bool differs = false;
    for (double t = 0.0; t < 14.0; t += 0.25) {
        differs = differs || c.at(t).flow_m3_per_d != a.at(t).flow_m3_per_d;
    }
    EXPECT_TRUE(differs);
}

TEST(Influent, DryWeatherMeansMatchTheScenario) {
    // Over four weeks of dry weather, the mean flow is the scenario's flow and the flow-weighted
    // mean concentrations are its composition, within the day-to-day variation (2 %).
    const influent_spec s = dry_weather();
    const influent_generator g{s};
    double q_sum = 0.0;
    asm1::vector load{};
    const int n = 28 * 96;
    for (int i = 0; i < n; ++i) {
        const influent_sample x = g.at((i + 0.5) / 96.0);
        q_sum += x.flow_m3_per_d;
        for (std::size_t k = 0; k < asm1::component_count; ++k) {
            load[k] += x.flow_m3_per_d * x.c[k];
        }
    }
    EXPECT_NEAR(q_sum / n, s.mean_flow_m3_per_d, 0.02 * s.mean_flow_m3_per_d);
    for (const std::size_t k : {asm1::s_s, asm1::x_s, asm1::s_nh, asm1::x_nd}) {
        EXPECT_NEAR(load[k] / q_sum, s.composition[k], 0.03 * s.composition[k]) << asm1::component_name(k);
    }
}

TEST(Influent, DiurnalPeakInTheMorningAndLowAtNight) {
    influent_spec s = dry_weather();
    s.daily_variation = 0.0;
    const influent_generator g{s};  // plant time 0 is a Monday, 00:00
    const double night = g.at(4.0 / 24.0).flow_m3_per_d;
    const double morning = g.at(10.0 / 24.0).flow_m3_per_d;
    EXPECT_GT(morning, 2.0 * night);
    // Saturday's morning comes later (weekend delay): at 08:00 less flow than on Monday.
    EXPECT_LT(g.at(5.0 + 8.0 / 24.0).flow_m3_per_d, g.at(8.0 / 24.0).flow_m3_per_d);
}

TEST(Influent, RainAddsDilutedFlow) {
    influent_spec wet = test::marrowby().influent;
    wet.rain.events_per_week = 7.0;  // an event starts every day
    influent_spec dry = wet;
    dry.rain.events_per_week = 0.0;
    const influent_generator w{wet};
    const influent_generator d{dry};
    double peak_ratio = 0.0;
    double nh_at_peak = 0.0;
    double nh_dry = 0.0;
    for (double t = 0.0; t < 7.0; t += 1.0 / 288.0) {
        const double ratio = w.at(t).flow_m3_per_d / d.at(t).flow_m3_per_d;
        if (ratio > peak_ratio) {
            peak_ratio = ratio;
            nh_at_peak = w.at(t).c[asm1::s_nh];
            nh_dry = d.at(t).c[asm1::s_nh];
        }
        EXPECT_GE(ratio, 1.0 - 1e-12);
    }
    EXPECT_GT(peak_ratio, 1.5);
    EXPECT_LT(nh_at_peak, nh_dry);
}

TEST(Influent, TemperatureFollowsTheSeason) {
    influent_spec s = dry_weather();
    s.temperature_diurnal_amplitude_c = 0.0;
    s.start_day_of_year = s.coldest_day_of_year;
    const influent_generator g{s};
    EXPECT_NEAR(g.at(0.0).temperature_c, s.temperature_mean_c - s.temperature_amplitude_c, 1e-9);
    EXPECT_NEAR(g.at(365.25 / 2.0).temperature_c, s.temperature_mean_c + s.temperature_amplitude_c, 1e-9);
}

} // namespace
