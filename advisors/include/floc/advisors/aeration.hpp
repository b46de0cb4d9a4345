// DO set point of one aerated zone.
//
// Mode "ammonia" - ammonia cascade (ammonia-based aeration control, after Rieger, Jones, Dold &
// Bott 2014, Water Environment Research 86(1) 63-73: an outer ammonia loop sets the DO set point
// of the inner DO loop; feedback holds a modest ammonia residual, feedforward damps load peaks):
//   DO = Kp e + (Kp / Ti) integral(e dt) + Kff (Q / Q_daily_mean - 1),   e = NH4 - target
// with the flow ratio clipped to [0.5, 2] and the PI's anti-windup, bumpless start and irregular
// sample handling from machinery.hpp. With no good flow the feed-forward term keeps its last
// value.
//
// Mode "rules" - nitrate/DO rules, for zones with DO, nitrate and flow but no ammonia probe.
// Inputs: the nitrate trend (least-squares slope over `nitrate_window`, mg/L per hour), the DO
// residual (measured DO) and the flow relative to its rolling 24-h mean. Every rule must hold
// without a break for `hysteresis` before it moves the advice by one `step`; after acting it
// must hold another `hysteresis` to act again. Rules are checked in this order and the first
// whose condition holds wins; while R1's condition holds no lowering rule may act.
//   R1 raise:  nitrate falling faster than `nitrate_trend_per_hour` while flow >= high_flow_ratio
//              x daily mean. At high load, falling aerobic-zone nitrate means less ammonia is
//              being oxidised than arrives: nitrification is short of oxygen.
//   R2 lower:  DO residual >= `residual_high` while nitrate is stable (|trend| <= threshold).
//              Nitrification keeps pace and the oxygen is in excess: blower energy is wasted.
//   R3 lower:  flow <= low_flow_ratio x daily mean while nitrate is not falling (trend >=
//              -threshold). Light load needs less oxygen, and nitrification is keeping up.
//   Otherwise the advice stays (no_rule_applies); with too little nitrate history for a trend
//   none of the rules may act.
//
// Both modes: bounds [min, max] (0.5-3.0 mg/L by default, common practice), raised in cold
// mixed liquor: below `cold_below` the lower bound ramps over 2 degC up to `cold_minimum`
// (common practice: nitrifiers grow slowly in the cold, so less ammonia slip is tolerated).
// Rate limit `max_change_per_hour`; hold then fallback on bad inputs; switching between modes
// and resuming after a hold are bumpless.
#pragma once

#include "floc/advisors/advice.hpp"
#include "floc/advisors/machinery.hpp"
#include "floc/advisors/signal.hpp"

#include <cstdint>

namespace floc::advisors {

enum class aeration_mode : std::uint8_t {
    automatic = 0, // ammonia cascade while the ammonia reading is good, else the rules
    ammonia = 1,
    rules = 2,
};

struct ammonia_loop_params {
    double target_g_per_m3 = 1.0; // ammonia set point (as N)
    double gain = 0.5;            // mg/L DO per mg/L ammonia error
    double integral_time_s = 2400.0;
    double feedforward_gain_g_per_m3 = 0.5; // DO change per unit of (flow / daily mean - 1)
};

struct aeration_rules_params {
    double nitrate_window_s = 3600.0;
    double nitrate_trend_g_per_m3_per_h = 0.3; // |slope| above this is a trend
    double high_flow_ratio = 1.2;              // flow / daily mean
    double low_flow_ratio = 0.8;
    double residual_high_g_per_m3 = 2.5;
    double step_g_per_m3 = 0.1;   // change per decision
    double hysteresis_s = 1800.0; // a condition must hold this long
};

struct aeration_params {
    aeration_mode mode = aeration_mode::automatic;
    double min_g_per_m3 = 0.5;
    double max_g_per_m3 = 3.0;
    double max_change_per_hour_g_per_m3 = 0.5;
    double fallback_g_per_m3 = 2.0;
    double hold_for_s = 1800.0;
    double cold_below_degC = 12.0;      // below this the lower bound rises ...
    double cold_minimum_g_per_m3 = 1.0; // ... to this (<= max); <= min disables it
    double daily_window_s = 86400.0;    // window of the flow's rolling mean
    ammonia_loop_params ammonia_loop;
    aeration_rules_params rules;
    units::unit_system text_units = units::unit_system::si; // units in the explanation
};

struct aeration_inputs {
    reading dissolved_oxygen; // measured DO of the zone (required by the rules)
    reading ammonia;          // optional: enables the cascade
    reading nitrate;          // optional: aerobic-zone nitrate, for the rules
    reading flow;             // influent flow
    reading temperature;      // optional: the cold-weather minimum
    reading setpoint;         // optional: the DO set point the plant runs now (bumpless start)
};

// Persisted by the caller between steps (flat data).
struct aeration_state {
    output_memory out;
    std::uint8_t last_mode = 0; // 0 none yet, 1 ammonia, 2 rules
    pi_memory loop;
    double last_feedforward_g_per_m3 = 0.0;
    std::int8_t ammonia_side = 0; // +1 above target, -1 below, 0 unknown
    double ammonia_side_since_s = 0.0;
    rolling_window flow_day;      // rolling daily mean of the flow
    rolling_window nitrate_trend; // nitrate history for the trend
    bool raise_active = false;    // rule R1's condition holds since raise_since_s
    double raise_since_s = 0.0;
    bool residual_active = false; // rule R2
    double residual_since_s = 0.0;
    bool light_active = false; // rule R3
    double light_since_s = 0.0;
    double rules_level_g_per_m3 = 0.0; // the level the rules have set; the advice follows it
};

struct aeration_result {
    advice out;
    aeration_state state;
};

// One step at plant time `now_s` (seconds). Call it at the advisor's period.
[[nodiscard]] aeration_result step_aeration(const aeration_params& p, const aeration_inputs& in,
                                            const aeration_state& previous, double now_s);

} // namespace floc::advisors
