// What every advisor returns: the advised value with its bounds, a quality, reason codes, a
// one-line explanation naming the inputs that drove it, and the intermediate figures.
#pragma once

#include "floc/units.hpp"

#include <array>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace floc::advisors {

// How far an advice can be trusted. Stable numbers (registers, journal).
enum class advice_quality : std::uint8_t {
    good = 0,        // computed now from good inputs
    held = 1,        // inputs bad or stale: the last good advice, held for `hold_for`
    fallback = 2,    // held too long: the configured safe value
    unavailable = 3, // no advice can be given (one-shot calculations without the inputs they need)
};

[[nodiscard]] std::string_view to_string(advice_quality q);

// Why an advice is what it is. The numbers are stable: an HMI maps them to text, so a code is
// never renumbered or reused. Ranges: 1-19 every advisor, 20-39 DO, 40-59 internal recycle,
// 60-79 RAS and the clarifier, 80-99 waste. `describe()` gives the text of each; README.md
// ("How each advice is computed") has the table.
enum class reason : std::uint16_t {
    none = 0,
    // Every advisor
    input_bad = 1,                   // a required input is bad, stale, frozen or missing
    holding_last_good = 2,           // holding the last good advice (inside `hold_for`)
    fallback_value = 3,              // `hold_for` has passed: the configured fallback
    clamped_to_minimum = 4,          // the computed value was below the lower bound
    clamped_to_maximum = 5,          // the computed value was above the upper bound
    rate_limited = 6,                // the change was limited to the allowed rate
    started_from_operator_value = 7, // bumpless start from the set point the plant runs now
    started_from_fallback = 8,       // first advice, no operator value known: starts at fallback
    optional_input_bad = 9,          // an optional input is unusable; its part is frozen or skipped
    // DO set point
    ammonia_above_target = 20,
    ammonia_below_target = 21,
    flow_above_daily_mean = 22,    // load feed-forward raises the DO advice
    flow_below_daily_mean = 23,    // load feed-forward lowers the DO advice
    rules_instead_of_ammonia = 24, // auto mode: ammonia unusable, nitrate/DO rules in use
    rule_raise_nitrification = 25, // rule R1: nitrate falling at high flow
    rule_lower_residual = 26,      // rule R2: DO residual high, nitrate stable
    rule_lower_light_load = 27,    // rule R3: low flow, nitrate not falling
    rule_pending = 28,             // a rule's condition holds but not yet for `hysteresis`
    no_rule_applies = 29,          // rules mode: nothing to change
    cold_weather_minimum = 30,     // cold mixed liquor raises the lower DO bound
    nitrate_trend_unknown = 31,    // too little nitrate history for a trend
    // Internal recycle
    anoxic_nitrate_below_target = 40, // spare denitrification: more recycle
    anoxic_nitrate_above_target = 41, // denitrification saturated: less recycle
    pump_limit = 42,                  // the bounds come from the pump's flow limits
    // RAS and the clarifier
    mass_balance = 60, // base ratio from MLSS and RAS solids
    settleometer = 61, // base ratio from the 30-minute settled volume
    blanket_above_band = 62,
    blanket_below_band = 63,
    blanket_in_band = 64,
    thickening_overloaded = 65,      // state point outside the thickening limit (warning)
    clarification_overloaded = 66,   // overflow rate above the settling velocity (warning)
    limited_by_clarifier = 67,       // RAS held to the highest flow the clarifier tolerates
    raised_for_thickening = 68,      // RAS raised to the lowest flow thickening needs
    state_point_unavailable = 69,    // no SVI (or no stirred SVI): no state-point check
    ras_solids_not_above_mlss = 70,  // mass balance impossible (RAS solids <= MLSS)
    svi_outside_correlation = 71,    // SVI outside the data the correlation was fitted to
    solids_loading_above_limit = 72, // applied solids loading above the configured maximum
    // Waste
    srt_mass_balance = 80,              // waste volume that holds the target SRT
    mlss_target = 81,                   // waste volume that steers MLSS to its target
    target_srt_unsafe = 82,             // target below the minimum aerobic SRT: minimum used
    daily_change_limited = 83,          // day-to-day change limit
    daily_schedule = 84,                // today's advice repeated until the next daily time
    short_history = 85,                 // fewer days of data than the averaging window
    temperature_unknown = 86,           // minimum aerobic SRT not checked
    nitrification_not_sustainable = 87, // nitrifiers cannot grow at this temperature
    effluent_solids_assumed_zero = 88,  // no effluent TSS: counted as zero
    effluent_exceeds_wastage = 89,      // effluent solids alone exceed the target wastage
    waste_flow_not_metered = 90,        // actual SRT from the previous advice, not a meter
    srt_guard_limits_waste = 91,        // waste cut to keep the minimum aerobic SRT
    minimum_waste_conflicts_srt = 92,   // the waste minimum forces SRT below the safe minimum
};

inline constexpr std::size_t max_reasons = 8;

struct reason_info {
    reason code;
    std::string_view name; // stable identifier, e.g. "ammonia_above_target"
    std::string_view text; // one short phrase for an HMI
};

// Every reason with its name and text, in code order.
[[nodiscard]] std::span<const reason_info> all_reasons();
[[nodiscard]] const reason_info& describe(reason r);

// The reasons of one advice, in the order they were added (the first is the main one).
class reason_list {
public:
    void add(reason r); // ignored when present or full
    [[nodiscard]] bool has(reason r) const;
    [[nodiscard]] std::size_t size() const { return count_; }
    [[nodiscard]] reason operator[](std::size_t i) const { return codes_.at(i); }
    [[nodiscard]] std::span<const reason> codes() const { return {codes_.data(), count_}; }

private:
    std::array<reason, max_reasons> codes_{};
    std::size_t count_ = 0;
};

// A named intermediate number (SRT, limiting flux, ...) in the canonical unit of its quantity.
struct figure {
    std::string_view name; // stable identifier, e.g. "srt_actual"
    units::quantity kind = units::quantity::dimensionless;
    double value = 0.0;
};

struct advice {
    double value = 0.0; // canonical unit of `kind`; never NaN
    units::quantity kind = units::quantity::dimensionless;
    double min = 0.0; // the bounds `value` was clamped to
    double max = 0.0;
    advice_quality quality = advice_quality::unavailable;
    reason_list reasons;
    std::string explanation; // one line, e.g. "ammonia 2.4 mg/L above 1 mg/L target ..."
    std::vector<figure> figures;

    void add_figure(std::string_view name, units::quantity kind, double value);
    [[nodiscard]] std::optional<double> figure_value(std::string_view name) const;
};

} // namespace floc::advisors
