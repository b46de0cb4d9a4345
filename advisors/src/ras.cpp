#include "floc/advisors/ras.hpp"

#include "floc/advisors/recycle.hpp"

#include "explain.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace floc::advisors {
namespace {

using units::quantity;
constexpr double nan = std::numeric_limits<double>::quiet_NaN();

std::string percent(double fraction) {
    return text_number(100.0 * fraction, 3) + " %";
}

// The settling parameters for the state point, when an SVI of the right kind is known.
struct settling_choice {
    std::optional<settling_estimate> estimate;
    double svi = 0.0;
    std::string why_not; // when empty
};

settling_choice choose_settling(const ras_params& p, const ras_inputs& in) {
    settling_choice c;
    if (!(p.clarifier_area_m2 > 0.0)) {
        c.why_not = "no clarifier area";
        return c;
    }
    if (in.svi.usable()) {
        c.svi = in.svi.value;
    } else if (!expects_stirred_svi(p.correlation) && in.sv30.usable() && in.mlss.usable()) {
        const std::optional<double> svi = svi_from_sv30(in.sv30.value, in.mlss.value);
        if (!svi) {
            c.why_not = "no SVI";
            return c;
        }
        c.svi = *svi;
    } else {
        c.why_not = expects_stirred_svi(p.correlation)
                        ? "no stirred SSVI3.5 (wahlberg_keinath_1988)"
                        : "no SVI or SV30";
        return c;
    }
    const settling_estimate e = settling_from_svi(p.correlation, c.svi);
    if (!e.valid) {
        c.why_not = "SVI " + text_number(c.svi) + " mL/g outside the correlation";
        return c;
    }
    c.estimate = e;
    return c;
}

} // namespace

std::optional<double> ras_ratio_mass_balance(double x, double xr) {
    if (!std::isfinite(x) || !std::isfinite(xr) || !(x > 0.0) || !(xr > x)) {
        return std::nullopt;
    }
    return x / (xr - x);
}

std::optional<double> ras_ratio_settleometer(double sv30) {
    if (!std::isfinite(sv30) || !(sv30 > 0.0) || !(sv30 < 1000.0)) {
        return std::nullopt;
    }
    return sv30 / (1000.0 - sv30);
}

std::optional<double> svi_from_sv30(double sv30, double mlss) {
    if (!std::isfinite(sv30) || !std::isfinite(mlss) || !(sv30 > 0.0) || !(mlss > 0.0)) {
        return std::nullopt;
    }
    return sv30 * 1000.0 / mlss;
}

double settleometer_ras_flow(double flow, double ras_flow_now, double settled_fraction) {
    return (flow + ras_flow_now) * settled_fraction;
}

ras_result step_ras(const ras_params& p, const ras_inputs& in, const ras_state& previous,
                    double now_s) {
    ras_result r{advice{}, previous};
    ras_state& s = r.state;
    advice& a = r.out;
    a.kind = quantity::dimensionless;
    const units::unit_system sys = p.text_units;
    const bool flow_ok = in.flow.usable() && flow_can_be_paced(in.flow.value, p.max_ratio, p.pump_min_m3_per_d);
    const double flow = flow_ok ? in.flow.value : 0.0;

    ratio_bounds b =
        flow_paced_bounds(p.min_ratio, p.max_ratio, p.pump_min_m3_per_d, p.pump_max_m3_per_d, flow);

    // Base ratio.
    std::optional<double> mass_balance;
    std::optional<double> settleometer;
    if (in.mlss.usable() && in.ras_solids.usable()) {
        mass_balance = ras_ratio_mass_balance(in.mlss.value, in.ras_solids.value);
    }
    if (in.sv30.usable()) {
        settleometer = ras_ratio_settleometer(in.sv30.value);
    }
    std::optional<double> base;
    reason method = reason::none;
    if (p.method != ras_method::settleometer && mass_balance) {
        base = mass_balance;
        method = reason::mass_balance;
    } else if (p.method != ras_method::mass_balance && settleometer) {
        base = settleometer;
        method = reason::settleometer;
    }

    if (!flow_ok || !in.mlss.usable() || !base) {
        a.reasons.add(reason::input_bad);
        if (in.mlss.usable() && in.ras_solids.usable() && !mass_balance) {
            a.reasons.add(reason::ras_solids_not_above_mlss);
        }
        const held_output h =
            hold_or_fallback(s.out, now_s, {p.hold_for_s, p.fallback_ratio}, a.reasons);
        a.min = b.lo;
        a.max = b.hi;
        a.value = std::clamp(h.value, b.lo, b.hi);
        a.quality = h.quality;
        std::string why;
        if (a.reasons.has(reason::ras_solids_not_above_mlss)) {
            why = "RAS solids " + text(in.ras_solids.value, quantity::concentration, sys) +
                  " not above MLSS " + text(in.mlss.value, quantity::concentration, sys);
        } else if (in.flow.usable() && !flow_ok) {
            why = "influent flow " + text(std::max(in.flow.value, 0.0), quantity::flow, sys) +
                  " too low to pace the RAS pump";
        } else if (p.method == ras_method::mass_balance) {
            why = detail::unusable_inputs(
                {{"flow", &in.flow}, {"MLSS", &in.mlss}, {"RAS solids", &in.ras_solids}});
        } else if (p.method == ras_method::settleometer) {
            why = detail::unusable_inputs(
                {{"flow", &in.flow}, {"MLSS", &in.mlss}, {"SV30", &in.sv30}});
        } else {
            why = detail::unusable_inputs({{"flow", &in.flow},
                                           {"MLSS", &in.mlss},
                                           {"RAS solids", &in.ras_solids},
                                           {"SV30", &in.sv30}});
        }
        a.explanation = detail::held(why, "RAS ratio", h, s.out, now_s, p.hold_for_s,
                                     detail::quantity_text(quantity::dimensionless, sys));
        if (flow_ok) {
            a.add_figure("ras_flow", quantity::flow, a.value * flow);
        }
        remember(s.out, a.value, now_s, false);
        return r;
    }
    a.reasons.add(method);
    const double x = in.mlss.value;

    // Blanket trim.
    const pi_tuning tuning{p.blanket_gain_per_m, p.blanket_integral_time_s};
    double trim = s.last_trim;
    std::optional<pi_proposal> proposal;
    double blanket_error = 0.0;
    if (in.blanket.usable()) {
        const double level = in.blanket.value;
        blanket_error = level > p.blanket_high_m  ? level - p.blanket_high_m
                        : level < p.blanket_low_m ? level - p.blanket_low_m
                                                  : 0.0;
        const double max_gap_s = std::max(p.hold_for_s, default_pi_max_gap_s);
        if (!s.trim.primed) {
            s.trim = pi_memory{true, 0.0, now_s};
        } else if (now_s < s.trim.at_s || now_s - s.trim.at_s > max_gap_s) {
            s.trim.at_s = now_s; // no integration over a gap
        }
        proposal = pi_propose(tuning, s.trim, blanket_error, 0.0, now_s);
        trim = proposal->wanted;
        a.reasons.add(blanket_error > 0.0   ? reason::blanket_above_band
                      : blanket_error < 0.0 ? reason::blanket_below_band
                                            : reason::blanket_in_band);
    } else if (in.blanket.quality != signal_quality::missing) {
        a.reasons.add(reason::optional_input_bad);
    }

    // What the clarifier tolerates at this flow and MLSS.
    const settling_choice settling = choose_settling(p, in);
    std::optional<ras_window> window;
    clarifier_loading load{flow, 0.0, x, p.clarifier_area_m2};
    if (settling.estimate) {
        window = tolerated_ras_flows(settling.estimate->settling, load, b.lo * flow, b.hi * flow,
                                     p.max_solids_loading_kg_per_m2_d);
    }
    double lo = b.lo;
    double hi = b.hi;
    if (window) {
        lo = std::max(lo, window->lowest_m3_per_d / flow);
        hi = std::min(hi, window->highest_m3_per_d / flow);
        if (lo > hi) {
            lo = b.lo;
            hi = b.hi;
        }
    }
    a.min = lo;
    a.max = hi;

    // Shape from the previous advice (or the RAS ratio in use, or the fallback).
    double prev = s.out.has_value ? s.out.value : nan;
    if (!s.out.has_value) {
        if (in.ras_flow.usable()) {
            prev = in.ras_flow.value / flow;
            a.reasons.add(reason::started_from_operator_value);
        } else {
            prev = p.fallback_ratio;
            a.reasons.add(reason::started_from_fallback);
        }
    }
    const double wanted = *base + trim;
    const double max_step = p.max_change_per_hour * since_last_s(s.out, now_s) / 3600.0;
    const shaped_output shaped = shape_output(wanted, prev, max_step, lo, hi);
    if (proposal) {
        s.trim = pi_accept(s.trim, *proposal, shaped.value - *base, 0.0, now_s);
        s.last_trim = trim;
    }
    note_shaping(shaped, a.reasons);
    if (b.pump_limited &&
        ((shaped.clamped_high && hi == b.hi) || (shaped.clamped_low && lo == b.lo))) {
        a.reasons.add(reason::pump_limit);
    }
    if (shaped.clamped_high && hi < b.hi) {
        a.reasons.add(reason::limited_by_clarifier);
    }
    if (shaped.clamped_low && lo > b.lo) {
        a.reasons.add(reason::raised_for_thickening);
    }
    a.value = shaped.value;
    a.quality = advice_quality::good;
    const double ras_flow = a.value * flow;

    // Explanation and figures.
    std::string e;
    if (method == reason::mass_balance) {
        e = "mass balance MLSS " + text(x, quantity::concentration, sys) + ", RAS solids " +
            text(in.ras_solids.value, quantity::concentration, sys) + ": " + text_number(*base) +
            "x";
    } else {
        e = "settleometer SV30 " + text(in.sv30.value, quantity::settled_volume, sys) + ": " +
            text_number(*base) + "x";
    }
    if (in.blanket.usable()) {
        e += "; blanket " + text(in.blanket.value, quantity::length, sys);
        if (blanket_error > 0.0) {
            e += " above the band top " + text(p.blanket_high_m, quantity::length, sys);
        } else if (blanket_error < 0.0) {
            e += " below the band bottom " + text(p.blanket_low_m, quantity::length, sys);
        } else {
            e += " in band";
        }
        e += ", trim " + std::string{trim >= 0.0 ? "+" : ""} + text_number(trim, 2);
    }
    e += "; RAS " +
         detail::change(s.out.has_value, prev, a.value,
                        detail::quantity_text(quantity::dimensionless, sys)) +
         "x influent (" + text(ras_flow, quantity::flow, sys) + ")";

    a.add_figure("ras_flow", quantity::flow, ras_flow);
    a.add_figure("base_ratio", quantity::dimensionless, *base);
    if (mass_balance) {
        a.add_figure("ratio_mass_balance", quantity::dimensionless, *mass_balance);
    }
    if (settleometer) {
        a.add_figure("ratio_settleometer", quantity::dimensionless, *settleometer);
        if (in.ras_flow.usable()) {
            a.add_figure("settleometer_ras_flow", quantity::flow,
                         settleometer_ras_flow(flow, in.ras_flow.value, in.sv30.value / 1000.0));
        }
    }
    a.add_figure("blanket_trim", quantity::dimensionless, trim);

    if (!settling.estimate) {
        a.reasons.add(reason::state_point_unavailable);
        e += "; state point not checked (" + settling.why_not + ")";
    } else {
        const vesilind& v = settling.estimate->settling;
        load.ras_flow_m3_per_d = ras_flow;
        const state_point sp = evaluate_state_point(v, load);
        if (!settling.estimate->inside_data) {
            a.reasons.add(reason::svi_outside_correlation);
        }
        if (!sp.clarification_ok) {
            a.reasons.add(reason::clarification_overloaded);
        }
        if (!sp.thickening_ok) {
            a.reasons.add(reason::thickening_overloaded);
        }
        if (sp.solids_loading_kg_per_m2_d > p.max_solids_loading_kg_per_m2_d) {
            a.reasons.add(reason::solids_loading_above_limit);
        }
        a.add_figure("svi", quantity::sludge_volume_index, settling.svi);
        a.add_figure("v0", quantity::velocity, v.v0_m_per_d);
        a.add_figure("k_l_per_g", quantity::dimensionless, v.k_m3_per_g * 1000.0);
        a.add_figure("overflow_rate", quantity::velocity, sp.overflow_rate_m_per_d);
        a.add_figure("settling_velocity", quantity::velocity, sp.settling_velocity_m_per_d);
        a.add_figure("clarification_margin", quantity::dimensionless, sp.clarification_margin);
        a.add_figure("solids_loading", quantity::solids_flux, sp.solids_loading_kg_per_m2_d);
        if (sp.thickening_limits) {
            a.add_figure("limiting_flux", quantity::solids_flux, sp.limit.flux_kg_per_m2_d);
            a.add_figure("limiting_concentration", quantity::concentration, sp.limit.at_g_per_m3);
        }
        a.add_figure("thickening_margin", quantity::dimensionless, sp.thickening_margin);
        a.add_figure("underflow_solids", quantity::concentration, sp.underflow_solids_g_per_m3);
        if (window) {
            a.add_figure("min_ras_flow_clarifier", quantity::flow, window->lowest_m3_per_d);
            a.add_figure("max_ras_flow_clarifier", quantity::flow, window->highest_m3_per_d);
        }
        if (sp.inside()) {
            e += "; state point inside (thickening margin " + percent(sp.thickening_margin) +
                 ", clarification margin " + percent(sp.clarification_margin) + ")";
        } else {
            e += std::string{"; WARNING state point outside: "} +
                 (!sp.clarification_ok
                      ? "overflow rate " + text(sp.overflow_rate_m_per_d, quantity::velocity, sys) +
                            " above settling velocity " +
                            text(sp.settling_velocity_m_per_d, quantity::velocity, sys)
                      : "solids loading " +
                            text(sp.solids_loading_kg_per_m2_d, quantity::solids_flux, sys) +
                            " above limiting flux " +
                            text(sp.limit.flux_kg_per_m2_d, quantity::solids_flux, sys));
        }
        if (a.reasons.has(reason::limited_by_clarifier)) {
            e += "; held to the clarifier's highest RAS " +
                 text(window->highest_m3_per_d, quantity::flow, sys);
        }
        if (a.reasons.has(reason::raised_for_thickening)) {
            e += "; raised to the RAS thickening needs " +
                 text(window->lowest_m3_per_d, quantity::flow, sys);
        }
    }
    a.explanation = std::move(e);
    remember(s.out, a.value, now_s, true);
    return r;
}

} // namespace floc::advisors
