#include "floc/advisors/waste.hpp"

#include "explain.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <optional>

namespace floc::advisors {
namespace {

using units::quantity;
constexpr double seconds_per_day = 86400.0;
constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double nan = std::numeric_limits<double>::quiet_NaN();
constexpr std::size_t lab_mlss = 0;
constexpr std::size_t lab_was_solids = 1;
constexpr std::size_t lab_effluent = 2;
constexpr std::size_t lab_bod = 3;

std::int64_t day_of(double now_s) {
    return static_cast<std::int64_t>(std::floor(now_s / seconds_per_day));
}

std::uint32_t minute_of(double now_s) {
    const double in_day = now_s - static_cast<double>(day_of(now_s)) * seconds_per_day;
    return static_cast<std::uint32_t>(std::clamp(std::floor(in_day / 60.0), 0.0, 1439.0));
}

std::string clock_text(std::uint32_t minute) {
    std::array<char, 24> buf{};
    std::snprintf(buf.data(), buf.size(), "%02u:%02u", (minute / 60U) % 24U, minute % 60U);
    return buf.data();
}

// Adds a lab sample once (by its sample time).
void count_lab(const reading& r, double& last_sampled_at_s, double& sum, double& count) {
    if (!r.usable() || r.sampled_at_s == last_sampled_at_s) {
        return;
    }
    last_sampled_at_s = r.sampled_at_s;
    sum += r.value;
    count += 1.0;
}

void record(const waste_params& p, const waste_inputs& in, waste_state& s, double now_s) {
    const std::int64_t today = day_of(now_s);
    const std::int64_t oldest =
        today - static_cast<std::int64_t>(std::max<std::uint32_t>(p.averaging_days, 1U)) + 1;
    std::erase_if(s.days, [&](const waste_day& d) { return d.day < oldest || d.day > today; });
    if (s.days.empty() || s.days.back().day != today) {
        s.days.push_back(waste_day{today});
    }
    waste_day& d = s.days.back();
    const double gap = s.has_sample ? now_s - s.last_sample_at_s : 1.0;
    const double w = std::clamp(std::isfinite(gap) ? gap : 1.0, 1.0, 3600.0);
    s.has_sample = true;
    s.last_sample_at_s = now_s;
    if (in.flow.usable()) {
        d.flow_sum += in.flow.value * w;
        d.flow_weight += w;
    }
    if (in.was_flow.usable()) {
        d.was_flow_sum += in.was_flow.value * w;
        d.was_flow_weight += w;
    }
    if (in.temperature.usable()) {
        d.temperature_sum += in.temperature.value * w;
        d.temperature_weight += w;
    }
    count_lab(in.mlss, s.lab_sampled_at_s.at(lab_mlss), d.mlss_sum, d.mlss_count);
    count_lab(in.was_solids, s.lab_sampled_at_s.at(lab_was_solids), d.was_solids_sum,
              d.was_solids_count);
    count_lab(in.effluent_tss, s.lab_sampled_at_s.at(lab_effluent), d.effluent_tss_sum,
              d.effluent_tss_count);
    count_lab(in.influent_bod, s.lab_sampled_at_s.at(lab_bod), d.bod_sum, d.bod_count);
}

struct averages {
    std::optional<double> flow, was_flow, temperature, mlss, mlss_latest, was_solids, effluent_tss,
        bod;
    std::size_t days_with_data = 0;
};

std::optional<double> mean(double sum, double weight) {
    return weight > 0.0 ? std::optional<double>{sum / weight} : std::nullopt;
}

averages average(const waste_state& s) {
    waste_day t{};
    averages a;
    for (const waste_day& d : s.days) {
        t.flow_sum += d.flow_sum;
        t.flow_weight += d.flow_weight;
        t.was_flow_sum += d.was_flow_sum;
        t.was_flow_weight += d.was_flow_weight;
        t.temperature_sum += d.temperature_sum;
        t.temperature_weight += d.temperature_weight;
        t.mlss_sum += d.mlss_sum;
        t.mlss_count += d.mlss_count;
        t.was_solids_sum += d.was_solids_sum;
        t.was_solids_count += d.was_solids_count;
        t.effluent_tss_sum += d.effluent_tss_sum;
        t.effluent_tss_count += d.effluent_tss_count;
        t.bod_sum += d.bod_sum;
        t.bod_count += d.bod_count;
        if (d.flow_weight > 0.0 || d.mlss_count > 0.0) {
            ++a.days_with_data;
        }
        if (d.mlss_count > 0.0) {
            a.mlss_latest = d.mlss_sum / d.mlss_count;
        }
    }
    a.flow = mean(t.flow_sum, t.flow_weight);
    a.was_flow = mean(t.was_flow_sum, t.was_flow_weight);
    a.temperature = mean(t.temperature_sum, t.temperature_weight);
    a.mlss = mean(t.mlss_sum, t.mlss_count);
    a.was_solids = mean(t.was_solids_sum, t.was_solids_count);
    a.effluent_tss = mean(t.effluent_tss_sum, t.effluent_tss_count);
    a.bod = mean(t.bod_sum, t.bod_count);
    return a;
}

} // namespace

double waste_flow_for_srt(double inventory_g, double srt_s, double flow, double xw, double xe) {
    if (!(srt_s > 0.0) || !(xw > xe)) {
        return nan;
    }
    const double wastage_g_per_d = inventory_g / (srt_s / seconds_per_day);
    return (wastage_g_per_d - flow * xe) / (xw - xe);
}

double srt_for_waste_flow(double inventory_g, double waste, double flow, double xw, double xe) {
    const double out_g_per_d = waste * xw + std::max(flow - waste, 0.0) * xe;
    return out_g_per_d > 0.0 ? inventory_g / out_g_per_d * seconds_per_day : inf;
}

double food_to_microorganism(double flow, double bod, double volume, double mlss, double fvss) {
    const double biomass_g = volume * mlss * fvss;
    return biomass_g > 0.0 ? flow * bod / biomass_g : nan;
}

waste_result step_waste(const waste_params& p, const waste_inputs& in, const waste_state& previous,
                        double now_s) {
    waste_result r{advice{}, previous};
    waste_state& s = r.state;
    advice& a = r.out;
    a.kind = quantity::flow;
    a.min = p.min_waste_m3_per_d;
    a.max = p.max_waste_m3_per_d;
    const units::unit_system sys = p.text_units;
    const detail::value_text daily = [sys](double v) { return text_daily_flow(v, sys); };
    const auto& flow_text = daily;

    record(p, in, s, now_s);
    const std::int64_t today = day_of(now_s);
    const bool due = in.recompute || !s.out.has_value || s.computed_day < 0 ||
                     (s.computed_day < today && minute_of(now_s) >= p.compute_at_minute) ||
                     s.computed_day < today - 1;
    if (!due && s.out.last_was_good) {
        a.value = s.out.value;
        a.quality = advice_quality::good;
        a.reasons.add(reason::daily_schedule);
        a.explanation = "daily waste advice " + flow_text(a.value) + " from " +
                        clock_text(minute_of(s.out.good_at_s)) + " (plant day " +
                        std::to_string(s.computed_day) + "); next at " +
                        clock_text(p.compute_at_minute) + " or on demand";
        return r;
    }

    const averages m = average(s);
    const bool inputs_ok = m.flow && m.mlss && m.was_solids && *m.mlss > 0.0 &&
                           *m.was_solids > m.effluent_tss.value_or(0.0) && *m.flow > 0.0;
    if (!inputs_ok) {
        a.reasons.add(reason::input_bad);
        const held_output h =
            hold_or_fallback(s.out, now_s, {p.hold_for_s, p.fallback_m3_per_d}, a.reasons);
        a.value = std::clamp(h.value, a.min, a.max);
        a.quality = h.quality;
        std::string why;
        if (!m.flow) {
            why += "no good flow";
        }
        if (!m.mlss) {
            why += std::string{why.empty() ? "" : ", "} + "no MLSS sample";
        }
        if (!m.was_solids) {
            why += std::string{why.empty() ? "" : ", "} + "no waste solids sample";
        }
        if (why.empty()) {
            why = "waste solids not above effluent solids";
        }
        why += " in the last " + std::to_string(p.averaging_days) + " d";
        a.explanation = detail::held(why, "waste flow", h, s.out, now_s, p.hold_for_s, daily);
        remember(s.out, a.value, now_s, false);
        return r;
    }

    const double q = *m.flow;
    const double x = *m.mlss;
    const double xw = *m.was_solids;
    double xe = 0.0;
    if (m.effluent_tss) {
        xe = *m.effluent_tss;
    } else {
        a.reasons.add(reason::effluent_solids_assumed_zero);
    }
    const double volume =
        p.system_volume_m3 + (p.include_clarifier_solids ? p.clarifier_volume_m3 : 0.0);
    const double inventory_g = volume * x;
    const double aerobic_fraction =
        volume > 0.0 ? std::clamp(p.aerobic_volume_m3 / volume, 0.0, 1.0) : 1.0;

    // The safe minimum of the total SRT from the nitrifiers' minimum aerobic SRT.
    double safe_srt_s = 0.0;
    std::optional<aerobic_srt> nitrifiers;
    if (m.temperature) {
        nitrifiers = minimum_aerobic_srt(p.nitrifiers, *m.temperature);
        if (!nitrifiers->sustainable || !(aerobic_fraction > 0.0)) {
            safe_srt_s = inf;
            a.reasons.add(reason::nitrification_not_sustainable);
        } else {
            safe_srt_s = nitrifiers->design_s / aerobic_fraction;
        }
    }
    const double safe_max_waste = std::isfinite(safe_srt_s) && safe_srt_s > 0.0
                                      ? waste_flow_for_srt(inventory_g, safe_srt_s, q, xw, xe)
                                      : (safe_srt_s > 0.0 ? 0.0 : inf);

    double wanted = 0.0;
    double target_srt_s = p.target_srt_s;
    if (p.mode == waste_mode::srt) {
        a.reasons.add(reason::srt_mass_balance);
        if (safe_srt_s > target_srt_s) {
            a.reasons.add(reason::target_srt_unsafe);
            target_srt_s = safe_srt_s;
        }
        wanted = std::isfinite(target_srt_s)
                     ? waste_flow_for_srt(inventory_g, target_srt_s, q, xw, xe)
                     : 0.0;
    } else {
        a.reasons.add(reason::mlss_target);
        const double x_now = m.mlss_latest.value_or(x);
        const double error = x_now - p.target_mlss_g_per_m3;
        const pi_tuning tuning{volume / (std::max(p.mlss_horizon_s, 3600.0) / seconds_per_day),
                               p.mlss_integral_time_s};
        const auto mass_of = [&](double waste) { return waste * (xw - xe) + q * xe; };
        if (!s.mlss_loop.primed || now_s < s.mlss_loop.at_s ||
            now_s - s.mlss_loop.at_s > 3.0 * seconds_per_day || !s.out.last_was_good) {
            const double start =
                s.out.has_value
                    ? s.out.value
                    : std::max(waste_flow_for_srt(inventory_g, p.target_srt_s, q, xw, xe), 0.0);
            // The integral starts at the wastage in force (or the SRT-mode estimate of the sludge
            // production); the proportional part acts on the excess from the first advice.
            s.mlss_loop = pi_start(mass_of(start), 0.0, 0.0, tuning, now_s);
        }
        const pi_proposal proposal = pi_propose(tuning, s.mlss_loop, error, 0.0, now_s);
        wanted = (proposal.wanted - q * xe) / (xw - xe);
        // Integral tracking against the bounds only (the daily limit is applied below).
        const double bounded = std::clamp(
            wanted, p.min_waste_m3_per_d,
            std::min(p.max_waste_m3_per_d, std::max(safe_max_waste, p.min_waste_m3_per_d)));
        s.mlss_loop = pi_accept(s.mlss_loop, proposal, mass_of(bounded), 0.0, now_s);
        a.add_figure("mlss_error", quantity::concentration, error);
    }
    if (wanted < 0.0) {
        a.reasons.add(reason::effluent_exceeds_wastage);
        wanted = 0.0;
    }
    if (wanted > safe_max_waste) {
        wanted = safe_max_waste;
        a.reasons.add(reason::srt_guard_limits_waste);
    }

    // Day-to-day change, from the advice in force when the plant day began.
    if (s.base_day != today) {
        s.base_day = today;
        s.base_value = s.out.has_value ? s.out.value : (m.was_flow ? *m.was_flow : nan);
        if (!s.out.has_value && m.was_flow) {
            a.reasons.add(reason::started_from_operator_value);
        }
    }
    const double days_elapsed =
        s.computed_day >= 0
            ? std::clamp(static_cast<double>(today - s.computed_day), 1.0,
                         static_cast<double>(std::max<std::uint32_t>(p.averaging_days, 1U)))
            : 1.0;
    double reference =
        std::isfinite(s.base_value) ? std::max(s.base_value, p.min_waste_m3_per_d) : 0.0;
    if (!(reference > 0.0)) {
        reference = p.max_waste_m3_per_d;
    }
    const double max_step = p.max_daily_change * reference * days_elapsed;
    shaped_output shaped =
        shape_output(wanted, s.base_value, max_step, p.min_waste_m3_per_d, p.max_waste_m3_per_d);
    if (shaped.rate_limited) {
        a.reasons.add(reason::daily_change_limited);
        shaped.rate_limited = false;
    }
    note_shaping(shaped, a.reasons);
    double value = shaped.value;
    if (value > safe_max_waste) {
        // The safety guard overrides the daily limit: less wastage is always allowed.
        value = std::max(safe_max_waste, p.min_waste_m3_per_d);
        a.reasons.add(reason::srt_guard_limits_waste);
        if (safe_max_waste < p.min_waste_m3_per_d) {
            a.reasons.add(reason::minimum_waste_conflicts_srt);
        }
    }
    if (!m.temperature) {
        a.reasons.add(reason::temperature_unknown);
    }
    if (m.days_with_data < p.averaging_days) {
        a.reasons.add(reason::short_history);
    }

    // Figures.
    const double srt_advised_s = srt_for_waste_flow(inventory_g, value, q, xw, xe);
    std::optional<double> srt_actual_s;
    if (m.was_flow) {
        srt_actual_s = srt_for_waste_flow(inventory_g, *m.was_flow, q, xw, xe);
    } else if (s.out.has_value) {
        srt_actual_s = srt_for_waste_flow(inventory_g, s.out.value, q, xw, xe);
        a.reasons.add(reason::waste_flow_not_metered);
    }
    a.add_figure("flow_mean", quantity::flow, q);
    a.add_figure("mlss_mean", quantity::concentration, x);
    a.add_figure("was_solids_mean", quantity::concentration, xw);
    a.add_figure("effluent_tss_mean", quantity::concentration, xe);
    a.add_figure("solids_inventory", quantity::mass, inventory_g / 1000.0);
    a.add_figure("wastage", quantity::mass_rate, (value * xw + (q - value) * xe) / 1000.0);
    a.add_figure("srt_at_advice", quantity::duration, srt_advised_s);
    a.add_figure("aerobic_srt_at_advice", quantity::duration, srt_advised_s * aerobic_fraction);
    if (srt_actual_s) {
        a.add_figure("srt_actual", quantity::duration, *srt_actual_s);
        a.add_figure("aerobic_srt_actual", quantity::duration, *srt_actual_s * aerobic_fraction);
    }
    if (p.mode == waste_mode::srt) {
        a.add_figure("srt_target_used", quantity::duration, target_srt_s);
    }
    if (m.temperature) {
        a.add_figure("temperature_mean", quantity::temperature, *m.temperature);
    }
    if (nitrifiers) {
        a.add_figure("nitrifier_net_growth", quantity::rate, nitrifiers->net_growth_per_d);
        if (nitrifiers->sustainable) {
            a.add_figure("min_aerobic_srt", quantity::duration, nitrifiers->minimum_s);
            a.add_figure("design_aerobic_srt", quantity::duration, nitrifiers->design_s);
        }
    }
    std::optional<double> fm;
    if (m.bod) {
        fm = food_to_microorganism(q, *m.bod, volume, x, p.mlvss_fraction);
        a.add_figure("f_to_m", quantity::rate, *fm);
    }
    a.add_figure("days_of_data", quantity::dimensionless, static_cast<double>(m.days_with_data));

    // Explanation.
    std::string e = p.mode == waste_mode::srt
                        ? "target SRT " + text_duration(p.target_srt_s)
                        : "MLSS " + text(m.mlss_latest.value_or(x), quantity::concentration, sys) +
                              " vs target " +
                              text(p.target_mlss_g_per_m3, quantity::concentration, sys);
    if (a.reasons.has(reason::target_srt_unsafe)) {
        e += " below the safe minimum " + text_duration(target_srt_s) + " at " +
             text(*m.temperature, quantity::temperature, sys) + ", using the minimum";
    }
    e += "; " + std::to_string(m.days_with_data) + " d mean: MLSS " +
         text(x, quantity::concentration, sys) + ", waste solids " +
         text(xw, quantity::concentration, sys) + ", flow " + flow_text(q);
    if (srt_actual_s) {
        e += "; SRT now " + text_duration(*srt_actual_s);
    }
    if (nitrifiers && nitrifiers->sustainable) {
        e += "; aerobic SRT min " + text_duration(nitrifiers->minimum_s) + " x " +
             text_number(p.nitrifiers.safety_factor) + " = " + text_duration(nitrifiers->design_s);
    } else if (nitrifiers) {
        e += "; WARNING nitrifiers cannot grow at " +
             text(*m.temperature, quantity::temperature, sys);
    }
    e += "; waste advice " +
         detail::change(std::isfinite(s.base_value), s.base_value, value, daily) + " (SRT " +
         text_duration(srt_advised_s) + ")";
    if (a.reasons.has(reason::daily_change_limited)) {
        e += ", limited to " + text_number(100.0 * p.max_daily_change) + " % a day";
    }
    if (a.reasons.has(reason::srt_guard_limits_waste)) {
        e += ", cut to keep the safe aerobic SRT";
    }
    if (fm) {
        e += "; F/M " + text_number(*fm) + " /d";
    }
    a.explanation = std::move(e);

    a.value = value;
    a.quality = advice_quality::good;
    s.computed_day = today;
    remember(s.out, value, now_s, true);
    return r;
}

} // namespace floc::advisors
