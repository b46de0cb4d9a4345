#include "floc/advisors/recycle.hpp"

#include "explain.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace floc::advisors {

using units::quantity;

ratio_bounds flow_paced_bounds(double min_ratio, double max_ratio, double pump_min, double pump_max,
                               double flow) {
    ratio_bounds b{min_ratio, max_ratio, false};
    if (!(flow > 0.0)) {
        return b;
    }
    const double pump_lo = pump_min / flow;
    const double pump_hi = pump_max / flow;
    if (pump_lo > b.lo) {
        b.lo = pump_lo;
        b.pump_limited = true;
    }
    if (pump_hi < b.hi) {
        b.hi = pump_hi;
        b.pump_limited = true;
    }
    if (b.lo > b.hi) {
        // The pump cannot run inside the ratio limits at this flow: its nearest limit wins.
        b.lo = b.hi = pump_lo > max_ratio ? pump_lo : pump_hi;
    }
    return b;
}

recycle_result step_recycle(const recycle_params& p, const recycle_inputs& in,
                            const recycle_state& previous, double now_s) {
    recycle_result r{advice{}, previous};
    recycle_state& s = r.state;
    advice& a = r.out;
    a.kind = quantity::dimensionless;
    const units::unit_system sys = p.text_units;

    const bool flow_ok = in.flow.usable() && flow_can_be_paced(in.flow.value, p.max_ratio, p.pump_min_m3_per_d);
    const ratio_bounds b = flow_paced_bounds(p.min_ratio, p.max_ratio, p.pump_min_m3_per_d,
                                             p.pump_max_m3_per_d, flow_ok ? in.flow.value : 0.0);
    a.min = b.lo;
    a.max = b.hi;

    if (!in.nitrate.usable() || !flow_ok) {
        a.reasons.add(reason::input_bad);
        const held_output h =
            hold_or_fallback(s.out, now_s, {p.hold_for_s, p.fallback_ratio}, a.reasons);
        a.value = std::clamp(h.value, b.lo, b.hi);
        a.quality = h.quality;
        const std::string why =
            in.flow.usable() && !flow_ok
                ? "influent flow " + text(std::max(in.flow.value, 0.0), quantity::flow, sys) +
                      " too low to pace the recycle pump"
                : detail::unusable_inputs({{"anoxic nitrate", &in.nitrate}, {"flow", &in.flow}});
        a.explanation = detail::held(why, "recycle ratio", h, s.out, now_s, p.hold_for_s,
                                     detail::quantity_text(quantity::dimensionless, sys));
        remember(s.out, a.value, now_s, false);
        return r;
    }

    const double flow = in.flow.value;
    const double nitrate = in.nitrate.value;
    const double error = p.target_g_per_m3 - nitrate;
    const pi_tuning tuning{p.gain_per_g_per_m3, p.integral_time_s};
    const double max_gap_s = std::max(p.hold_for_s, default_pi_max_gap_s);
    double prev = s.out.has_value ? s.out.value : std::numeric_limits<double>::quiet_NaN();
    const bool restart = !s.loop.primed || !s.out.last_was_good || now_s < s.loop.at_s ||
                         now_s - s.loop.at_s > max_gap_s;
    if (restart) {
        double start = p.fallback_ratio;
        if (s.out.has_value) {
            start = s.out.value;
        } else if (in.recycle_flow.usable()) {
            start = in.recycle_flow.value / flow;
            a.reasons.add(reason::started_from_operator_value);
        } else {
            a.reasons.add(reason::started_from_fallback);
        }
        start = std::clamp(start, b.lo, b.hi);
        s.loop = pi_start(start, error, 0.0, tuning, now_s);
        prev = start;
    }
    const pi_proposal proposal = pi_propose(tuning, s.loop, error, 0.0, now_s);
    const double max_step = p.max_change_per_hour * since_last_s(s.out, now_s) / 3600.0;
    const shaped_output shaped = shape_output(proposal.wanted, prev, max_step, b.lo, b.hi);
    s.loop = pi_accept(s.loop, proposal, shaped.value, 0.0, now_s);

    if (error > 0.0) {
        a.reasons.add(reason::anoxic_nitrate_below_target);
    } else if (error < 0.0) {
        a.reasons.add(reason::anoxic_nitrate_above_target);
    }
    note_shaping(shaped, a.reasons);
    if (b.pump_limited && (shaped.clamped_high || shaped.clamped_low)) {
        a.reasons.add(reason::pump_limit);
    }

    a.value = shaped.value;
    a.quality = advice_quality::good;
    const double recycle_flow = a.value * flow;
    a.add_figure("recycle_flow", quantity::flow, recycle_flow);
    a.add_figure("nitrate_error", quantity::concentration, error);
    a.add_figure("integral", quantity::dimensionless, s.loop.integral);
    a.explanation = "anoxic nitrate " + text(nitrate, quantity::concentration, sys) +
                    (error > 0.0   ? " below "
                     : error < 0.0 ? " above "
                                   : " at ") +
                    text(p.target_g_per_m3, quantity::concentration, sys) + " target; recycle " +
                    detail::change(!std::isnan(prev), prev, a.value,
                                   detail::quantity_text(quantity::dimensionless, sys)) +
                    "x influent (" + text(recycle_flow, quantity::flow, sys) + ")";
    if (a.reasons.has(reason::pump_limit)) {
        a.explanation += "; pump limits " + text(p.pump_min_m3_per_d, quantity::flow, sys) +
                         " to " + text(p.pump_max_m3_per_d, quantity::flow, sys);
    }
    remember(s.out, a.value, now_s, true);
    return r;
}

} // namespace floc::advisors
