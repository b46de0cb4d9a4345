#include "floc/advisors/aeration.hpp"

#include "explain.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>

namespace floc::advisors {
namespace {

using units::quantity;
constexpr double nan = std::numeric_limits<double>::quiet_NaN();
constexpr std::uint8_t mode_ammonia = 1;
constexpr std::uint8_t mode_rules = 2;
constexpr double cold_ramp_degC = 2.0;

struct step_context {
    const aeration_params& p;
    const aeration_inputs& in;
    aeration_state& s;
    advice& a;
    double now_s;
    double lo;
    double hi;
    std::optional<double> flow_ratio;
    std::optional<double> daily_mean;
};

std::string conc(const step_context& c, double v) {
    return text(v, quantity::concentration, c.p.text_units);
}

// The value a (re)started loop begins from: the last advice, else the operator's set point,
// else the fallback.
double start_value(step_context& c) {
    if (c.s.out.has_value) {
        return std::clamp(c.s.out.value, c.lo, c.hi);
    }
    if (c.in.setpoint.usable()) {
        c.a.reasons.add(reason::started_from_operator_value);
        return std::clamp(c.in.setpoint.value, c.lo, c.hi);
    }
    c.a.reasons.add(reason::started_from_fallback);
    return std::clamp(c.p.fallback_g_per_m3, c.lo, c.hi);
}

std::string flow_text(const step_context& c) {
    if (!c.flow_ratio) {
        return "flow unusable";
    }
    return "flow " + text_number(*c.flow_ratio, 2) + "x its daily mean";
}

double run_ammonia(step_context& c) {
    const ammonia_loop_params& lp = c.p.ammonia_loop;
    const pi_tuning tuning{lp.gain, lp.integral_time_s};
    const double ammonia = c.in.ammonia.value;
    const double error = ammonia - lp.target_g_per_m3;

    double feedforward = c.s.last_feedforward_g_per_m3;
    if (c.flow_ratio) {
        feedforward = lp.feedforward_gain_g_per_m3 * (std::clamp(*c.flow_ratio, 0.5, 2.0) - 1.0);
        c.s.last_feedforward_g_per_m3 = feedforward;
    } else {
        c.a.reasons.add(reason::optional_input_bad);
    }

    const double max_gap_s = std::max(c.p.hold_for_s, default_pi_max_gap_s);
    const bool restart = !c.s.loop.primed || c.s.last_mode != mode_ammonia ||
                         !c.s.out.last_was_good || c.now_s < c.s.loop.at_s ||
                         c.now_s - c.s.loop.at_s > max_gap_s;
    double previous = c.s.out.has_value ? c.s.out.value : nan;
    if (restart) {
        const double start = start_value(c);
        c.s.loop = pi_start(start, error, feedforward, tuning, c.now_s);
        previous = start;
    }
    const pi_proposal proposal = pi_propose(tuning, c.s.loop, error, feedforward, c.now_s);
    const double max_step =
        c.p.max_change_per_hour_g_per_m3 * since_last_s(c.s.out, c.now_s) / 3600.0;
    const shaped_output shaped = shape_output(proposal.wanted, previous, max_step, c.lo, c.hi);
    c.s.loop = pi_accept(c.s.loop, proposal, shaped.value, feedforward, c.now_s);

    const std::int8_t side = error > 0.0 ? 1 : (error < 0.0 ? -1 : 0);
    if (side != c.s.ammonia_side) {
        c.s.ammonia_side = side;
        c.s.ammonia_side_since_s = c.now_s;
    }
    c.a.reasons.add(error > 0.0 ? reason::ammonia_above_target : reason::ammonia_below_target);
    if (std::abs(feedforward) >= 0.01) {
        c.a.reasons.add(feedforward > 0.0 ? reason::flow_above_daily_mean
                                          : reason::flow_below_daily_mean);
    }
    note_shaping(shaped, c.a.reasons);

    std::string e = "ammonia " + conc(c, ammonia) +
                    (error > 0.0   ? " above "
                     : error < 0.0 ? " below "
                                   : " at ") +
                    conc(c, lp.target_g_per_m3) + " target";
    if (side != 0) {
        e += " for " + text_duration(c.now_s - c.s.ammonia_side_since_s);
    }
    e += "; " + flow_text(c);
    if (std::abs(feedforward) >= 0.01) {
        e += std::string{" ("} + (feedforward > 0.0 ? "+" : "-") +
             text_difference(std::abs(feedforward), quantity::concentration, c.p.text_units) + ")";
    }
    e += "; DO advice " +
         detail::change(!std::isnan(previous), previous, shaped.value,
                        detail::quantity_text(quantity::concentration, c.p.text_units));
    c.a.explanation = std::move(e);
    c.a.add_figure("ammonia_error", quantity::concentration, error);
    c.a.add_figure("feedforward", quantity::concentration, feedforward);
    c.a.add_figure("integral", quantity::concentration, c.s.loop.integral);
    return shaped.value;
}

// Keeps a rule's "condition holds since" timer.
void track(bool condition, bool& active, double& since_s, double now_s) {
    if (condition && !active) {
        active = true;
        since_s = now_s;
    } else if (!condition) {
        active = false;
    }
}

double run_rules(step_context& c) {
    const aeration_rules_params& rp = c.p.rules;
    const std::optional<double> slope_per_s = window_slope_per_s(c.s.nitrate_trend, c.now_s);
    const bool has_trend = slope_per_s.has_value();
    const double trend = slope_per_s.value_or(0.0) * 3600.0; // mg/L per hour
    const double threshold = rp.nitrate_trend_g_per_m3_per_h;
    const double ratio = c.flow_ratio.value_or(1.0);
    const double residual = c.in.dissolved_oxygen.value;

    const bool raise = has_trend && trend < -threshold && ratio >= rp.high_flow_ratio;
    const bool lower_residual =
        has_trend && std::abs(trend) <= threshold && residual >= rp.residual_high_g_per_m3;
    const bool lower_light = has_trend && trend >= -threshold && ratio <= rp.low_flow_ratio;
    track(raise, c.s.raise_active, c.s.raise_since_s, c.now_s);
    track(lower_residual, c.s.residual_active, c.s.residual_since_s, c.now_s);
    track(lower_light, c.s.light_active, c.s.light_since_s, c.now_s);

    // The rules keep their own level, which the published advice follows at the rate limit (so
    // that a step cut by the rate limit is not lost).
    const bool resume = c.s.last_mode != mode_rules || !c.s.out.last_was_good || !c.s.out.has_value;
    const double base = std::clamp(resume ? start_value(c) : c.s.rules_level_g_per_m3, c.lo, c.hi);
    const double previous = c.s.out.has_value ? c.s.out.value : base;
    double wanted = base;

    const std::string trend_text =
        has_trend
            ? "nitrate " + std::string{trend < 0.0 ? "falling " : "rising "} +
                  text_difference(std::abs(trend), quantity::concentration, c.p.text_units) + "/h"
            : std::string{"nitrate trend unknown"};
    std::string why;
    const auto act = [&](double& since_s, reason r, double step, const std::string& what) {
        const double held_for = c.now_s - since_s;
        if (held_for >= rp.hysteresis_s) {
            wanted = base + step;
            since_s = c.now_s;
            c.a.reasons.add(r);
            why = what + " for " + text_duration(held_for);
        } else {
            c.a.reasons.add(r);
            c.a.reasons.add(reason::rule_pending);
            why = what + " for " + text_duration(held_for) + " of " +
                  text_duration(rp.hysteresis_s) + " (pending)";
        }
    };
    if (raise) {
        act(c.s.raise_since_s, reason::rule_raise_nitrification, rp.step_g_per_m3,
            "R1 " + trend_text + " at " + flow_text(c) + ": nitrification short of oxygen");
    } else if (lower_residual) {
        act(c.s.residual_since_s, reason::rule_lower_residual, -rp.step_g_per_m3,
            "R2 DO residual " + conc(c, residual) + " with nitrate stable: air in excess");
    } else if (lower_light) {
        act(c.s.light_since_s, reason::rule_lower_light_load, -rp.step_g_per_m3,
            "R3 " + flow_text(c) + ", " + trend_text + ": light load");
    } else if (!has_trend) {
        c.a.reasons.add(reason::nitrate_trend_unknown);
        why = trend_text + " (" + text_duration(window_coverage_s(c.s.nitrate_trend, c.now_s)) +
              " of history): no rule may act";
    } else {
        c.a.reasons.add(reason::no_rule_applies);
        why = trend_text + ", " + flow_text(c) + ", DO residual " + conc(c, residual) +
              ": no rule applies";
    }

    const double max_step =
        c.p.max_change_per_hour_g_per_m3 * since_last_s(c.s.out, c.now_s) / 3600.0;
    c.s.rules_level_g_per_m3 = std::clamp(wanted, c.lo, c.hi);
    const shaped_output shaped = shape_output(wanted, previous, max_step, c.lo, c.hi);
    note_shaping(shaped, c.a.reasons);
    c.a.explanation =
        why + "; DO advice " +
        detail::change(c.s.out.has_value, previous, shaped.value,
                       detail::quantity_text(quantity::concentration, c.p.text_units));
    if (has_trend) {
        c.a.add_figure("nitrate_trend_per_hour", quantity::concentration, trend);
    }
    c.a.add_figure("do_residual", quantity::concentration, residual);
    return shaped.value;
}

} // namespace

aeration_result step_aeration(const aeration_params& p, const aeration_inputs& in,
                              const aeration_state& previous, double now_s) {
    aeration_result r{advice{}, previous};
    aeration_state& s = r.state;
    advice& a = r.out;
    a.kind = quantity::concentration;

    if (in.flow.usable()) {
        window_add(s.flow_day, p.daily_window_s, in.flow.value, now_s);
    }
    if (in.nitrate.usable()) {
        window_add(s.nitrate_trend, p.rules.nitrate_window_s, in.nitrate.value, now_s);
    }

    double lo = p.min_g_per_m3;
    const double hi = p.max_g_per_m3;
    bool cold = false;
    if (in.temperature.usable() && p.cold_minimum_g_per_m3 > p.min_g_per_m3) {
        const double f =
            std::clamp((p.cold_below_degC - in.temperature.value) / cold_ramp_degC, 0.0, 1.0);
        if (f > 0.0) {
            lo = std::min(hi, p.min_g_per_m3 + (p.cold_minimum_g_per_m3 - p.min_g_per_m3) * f);
            cold = true;
        }
    }
    a.min = lo;
    a.max = hi;

    step_context c{p, in, s, a, now_s, lo, hi, std::nullopt, window_mean(s.flow_day, now_s)};
    if (in.flow.usable() && c.daily_mean && *c.daily_mean > 0.0) {
        c.flow_ratio = in.flow.value / *c.daily_mean;
        a.add_figure("flow_daily_mean", quantity::flow, *c.daily_mean);
        a.add_figure("flow_ratio", quantity::dimensionless, *c.flow_ratio);
    }

    const bool ammonia_ok = in.ammonia.usable();
    const bool rules_ok =
        in.dissolved_oxygen.usable() && in.nitrate.usable() && c.flow_ratio.has_value();
    std::uint8_t mode = 0;
    switch (p.mode) {
    case aeration_mode::ammonia:
        mode = ammonia_ok ? mode_ammonia : 0;
        break;
    case aeration_mode::rules:
        mode = rules_ok ? mode_rules : 0;
        break;
    case aeration_mode::automatic:
        mode = ammonia_ok ? mode_ammonia : (rules_ok ? mode_rules : 0);
        if (mode == mode_rules) {
            a.reasons.add(reason::rules_instead_of_ammonia);
        }
        break;
    }

    if (mode == 0) {
        a.reasons.add(reason::input_bad);
        const held_output h =
            hold_or_fallback(s.out, now_s, {p.hold_for_s, p.fallback_g_per_m3}, a.reasons);
        a.value = std::clamp(h.value, lo, hi);
        a.quality = h.quality;
        std::string why;
        if (p.mode == aeration_mode::ammonia) {
            why = detail::unusable_inputs({{"ammonia", &in.ammonia}});
        } else if (p.mode == aeration_mode::rules) {
            why = detail::unusable_inputs(
                {{"DO", &in.dissolved_oxygen}, {"nitrate", &in.nitrate}, {"flow", &in.flow}});
        } else {
            why = detail::unusable_inputs({{"ammonia", &in.ammonia},
                                           {"DO", &in.dissolved_oxygen},
                                           {"nitrate", &in.nitrate},
                                           {"flow", &in.flow}});
        }
        a.explanation = detail::held(why, "DO advice", h, s.out, now_s, p.hold_for_s,
                                     detail::quantity_text(quantity::concentration, p.text_units));
        if (cold) {
            a.reasons.add(reason::cold_weather_minimum);
        }
        s.raise_active = s.residual_active = s.light_active = false;
        remember(s.out, a.value, now_s, false);
        return r;
    }

    a.value = mode == mode_ammonia ? run_ammonia(c) : run_rules(c);
    if (mode != mode_rules) {
        s.raise_active = s.residual_active = s.light_active = false;
    }
    if (cold) {
        a.reasons.add(reason::cold_weather_minimum);
        a.explanation += "; cold " +
                         text(in.temperature.value, quantity::temperature, p.text_units) +
                         ": minimum " + conc(c, lo);
    }
    a.quality = advice_quality::good;
    s.last_mode = mode;
    remember(s.out, a.value, now_s, true);
    return r;
}

} // namespace floc::advisors
