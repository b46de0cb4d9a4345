// Internal (nitrate) recycle of one train, as a multiple of the influent flow.
//
// PI on the anoxic-zone nitrate: e = target - NO3_anoxic. Nitrate below the target means the
// anoxic zone has spare denitrification capacity, so more nitrate may be recycled (raise); above
// it the zone is saturated (carbon-limited) and more recycle only carries nitrate and DO through
// (lower). The ratio is bounded by `ratio_limits` and by the pump's flow limits at the current
// influent flow, [pump_min / Q, pump_max / Q]; where the two disagree the pump limits win.
#pragma once

#include "floc/advisors/advice.hpp"
#include "floc/advisors/machinery.hpp"
#include "floc/advisors/signal.hpp"

namespace floc::advisors {

struct recycle_params {
    double target_g_per_m3 = 1.0;   // anoxic nitrate target (as N)
    double gain_per_g_per_m3 = 0.5; // ratio change per mg/L of error
    double integral_time_s = 3600.0;
    double min_ratio = 0.5;
    double max_ratio = 4.0;
    double pump_min_m3_per_d = 0.0;
    double pump_max_m3_per_d = 1e9;
    double max_change_per_hour = 0.5; // ratio units per hour
    double fallback_ratio = 2.0;
    double hold_for_s = 1800.0;
    units::unit_system text_units = units::unit_system::si;
};

struct recycle_inputs {
    reading nitrate;      // anoxic-zone nitrate
    reading flow;         // the train's influent flow
    reading recycle_flow; // optional: the recycle flow now (bumpless start)
};

struct recycle_state {
    output_memory out;
    pi_memory loop;
};

struct recycle_result {
    advice out; // value: recycle ratio (dimensionless); figure "recycle_flow" in m3/d
    recycle_state state;
};

// True when some ratio inside [.., max_ratio] gives at least the pump's minimum flow: below that
// influent flow (a stopped inflow, a failed meter reading zero) a ratio is meaningless and the
// flow-paced advisors hold their advice instead of publishing pump_min / flow.
[[nodiscard]] constexpr bool flow_can_be_paced(double flow_m3_per_d, double max_ratio, double pump_min_m3_per_d) {
    return flow_m3_per_d > 0.0 && flow_m3_per_d * max_ratio >= pump_min_m3_per_d;
}

// The ratio bounds at influent flow `flow_m3_per_d`; `pump_limited` when the pump decides.
struct ratio_bounds {
    double lo = 0.0;
    double hi = 0.0;
    bool pump_limited = false;
};
[[nodiscard]] ratio_bounds flow_paced_bounds(double min_ratio, double max_ratio, double pump_min,
                                             double pump_max, double flow_m3_per_d);

[[nodiscard]] recycle_result step_recycle(const recycle_params& p, const recycle_inputs& in,
                                          const recycle_state& previous, double now_s);

} // namespace floc::advisors
