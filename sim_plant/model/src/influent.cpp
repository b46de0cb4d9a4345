#include "floc/sim/influent.hpp"

#include "floc/sim/random.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

namespace floc::sim {
namespace {

template <std::size_t N>
std::array<double, N> normalised(const std::array<double, N>& a) {
    const double sum = std::accumulate(a.begin(), a.end(), 0.0);
    std::array<double, N> out{};
    for (std::size_t i = 0; i < N; ++i) {
        out[i] = sum > 0.0 ? a[i] * static_cast<double>(N) / sum : 1.0;
    }
    return out;
}

// Periodic Catmull-Rom interpolation through points at integer positions; the mean over a period
// equals the mean of the points, so normalised points give a normalised curve.
template <std::size_t N>
double periodic(const std::array<double, N>& p, double x) {
    const double n = static_cast<double>(N);
    x = std::fmod(x, n);
    if (x < 0.0) {
        x += n;
    }
    const auto i1 = static_cast<std::size_t>(x) % N;
    const double u = x - std::floor(x);
    const double p0 = p[(i1 + N - 1) % N];
    const double p1 = p[i1];
    const double p2 = p[(i1 + 1) % N];
    const double p3 = p[(i1 + 2) % N];
    return 0.5 * (2.0 * p1 + (-p0 + p2) * u + (2.0 * p0 - 5.0 * p1 + 4.0 * p2 - p3) * u * u +
                  (-p0 + 3.0 * p1 - 3.0 * p2 + p3) * u * u * u);
}

constexpr std::uint64_t stream_flow = 1;
constexpr std::uint64_t stream_load = 2;
constexpr std::uint64_t stream_rain = 10;

} // namespace

influent_spec flat_profiles(influent_spec s) {
    s.flow_profile.fill(1.0);
    s.load_profile.fill(1.0);
    s.nitrogen_profile.fill(1.0);
    s.weekly_flow.fill(1.0);
    s.weekly_load.fill(1.0);
    s.weekly_delay_h.fill(0.0);
    return s;
}

influent_generator::influent_generator(const influent_spec& spec)
    : spec_(spec),
      flow_(normalised(spec.flow_profile)),
      load_(normalised(spec.load_profile)),
      nitrogen_(normalised(spec.nitrogen_profile)),
      weekly_flow_(normalised(spec.weekly_flow)),
      weekly_load_(normalised(spec.weekly_load)) {}

double influent_generator::day_noise(std::int64_t day, std::uint64_t stream) const {
    // A standard normal per (day, stream), from two hashed uniforms.
    const auto d = static_cast<std::uint64_t>(day);
    const double u1 = hashed_uniform(spec_.seed, d, stream * 2);
    const double u2 = hashed_uniform(spec_.seed, d, stream * 2 + 1);
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * pi * u2);
}

double influent_generator::smooth_daily(double t_d, std::uint64_t stream) const {
    // Catmull-Rom through one lognormal factor per day placed at noon: smooth from day to day.
    if (spec_.daily_variation <= 0.0) {
        return 1.0;
    }
    const double x = t_d - 0.5;
    const auto i = static_cast<std::int64_t>(std::floor(x));
    const double u = x - static_cast<double>(i);
    const double s = spec_.daily_variation;
    const auto f = [&](std::int64_t d) { return std::exp(s * day_noise(d, stream) - 0.5 * s * s); };
    const double p0 = f(i - 1);
    const double p1 = f(i);
    const double p2 = f(i + 1);
    const double p3 = f(i + 2);
    return 0.5 * (2.0 * p1 + (-p0 + p2) * u + (2.0 * p0 - 5.0 * p1 + 4.0 * p2 - p3) * u * u +
                  (-p0 + 3.0 * p1 - 3.0 * p2 + p3) * u * u * u);
}

double influent_generator::storm_flow(double t_d) const {
    const rain_spec& r = spec_.rain;
    if (spec_.kind != influent_kind::generated || r.events_per_week <= 0.0) {
        return 0.0;
    }
    const double p = std::min(r.events_per_week / 7.0, 1.0);
    const auto today = static_cast<std::int64_t>(std::floor(t_d));
    double q = 0.0;
    for (std::int64_t d = today - 5; d <= today; ++d) {
        const auto du = static_cast<std::uint64_t>(d);
        if (hashed_uniform(spec_.seed, du, stream_rain) >= p) {
            continue;
        }
        const double start = static_cast<double>(d) + hashed_uniform(spec_.seed, du, stream_rain + 1);
        const double peak = r.mean_peak_factor * -std::log(hashed_uniform(spec_.seed, du, stream_rain + 2));
        const double tp = r.mean_time_to_peak_d * (0.5 + hashed_uniform(spec_.seed, du, stream_rain + 3));
        const double u = (t_d - start) / tp;
        if (u <= 0.0) {
            continue;
        }
        // A smooth storm hydrograph: u^2 exp(2 (1 - u)), peak 1 at u = 1.
        q += peak * spec_.mean_flow_m3_per_d * u * u * std::exp(2.0 * (1.0 - u));
    }
    return q;
}

influent_sample influent_generator::at(double t_d) const {
    influent_sample s;
    if (spec_.kind == influent_kind::constant) {
        s.flow_m3_per_d = spec_.mean_flow_m3_per_d;
        s.temperature_c = spec_.temperature_mean_c;
        s.c = spec_.composition;
        return s;
    }
    // Calendar position.
    const double day_pos = t_d + static_cast<double>(spec_.start_weekday);  // days since a Monday 00:00
    // Weekday factors at noon of each day, shift of the morning per weekday.
    const double week_x = day_pos - 0.5;
    const double wf = periodic(weekly_flow_, week_x);
    const double wl = periodic(weekly_load_, week_x);
    const double delay_h = periodic(spec_.weekly_delay_h, week_x);
    const double hour = (day_pos - std::floor(day_pos)) * 24.0 - delay_h;
    const double df = periodic(flow_, hour);
    const double dl = periodic(load_, hour);
    const double dn = periodic(nitrogen_, hour);

    const double flow_factor = std::max(0.05, wf * df * smooth_daily(t_d, stream_flow));
    const double load_day = smooth_daily(t_d, stream_load) * wl;
    const double dry_flow = spec_.mean_flow_m3_per_d * flow_factor;
    const double conc_load = std::max(0.0, load_day * dl / flow_factor);
    const double conc_n = std::max(0.0, load_day * dn / flow_factor);

    asm1::vector dry = spec_.composition;
    for (std::size_t k = 0; k < asm1::component_count; ++k) {
        switch (k) {
        case asm1::s_nh:
        case asm1::s_nd:
        case asm1::x_nd:
            dry[k] *= conc_n;
            break;
        case asm1::s_o:
        case asm1::s_no:
        case asm1::s_alk:
            break;  // set by water chemistry, not by the load
        default:
            dry[k] *= conc_load;
            break;
        }
    }
    // Rain: storm flow mixed in, with a first flush of sewer solids early in each event.
    const double storm = storm_flow(t_d);
    s.flow_m3_per_d = dry_flow + storm;
    if (storm > 0.0) {
        const double flush = 1.0 + spec_.rain.first_flush * std::min(1.0, storm / spec_.mean_flow_m3_per_d);
        for (std::size_t k = 0; k < asm1::component_count; ++k) {
            double cs = spec_.rain.storm_water[k];
            if (asm1::is_particulate(k)) {
                cs *= flush;
            }
            s.c[k] = (dry_flow * dry[k] + storm * cs) / s.flow_m3_per_d;
        }
    } else {
        s.c = dry;
    }
    // Season and day.
    const double doy = spec_.start_day_of_year + t_d;
    const double season = -std::cos(2.0 * pi * (doy - spec_.coldest_day_of_year) / 365.25);
    const double diurnal = std::cos(2.0 * pi * ((day_pos - std::floor(day_pos)) - 16.0 / 24.0));
    s.temperature_c = spec_.temperature_mean_c + spec_.temperature_amplitude_c * season +
                      spec_.temperature_diurnal_amplitude_c * diurnal;
    return s;
}

} // namespace floc::sim
