#include "floc/advisors/advice.hpp"
#include "floc/advisors/signal.hpp"

#include <algorithm>
#include <array>

namespace floc::advisors {
namespace {

constexpr std::array reason_table{
    reason_info{reason::none, "none", "no reason"},
    reason_info{reason::input_bad, "input_bad", "a required input is bad, stale or missing"},
    reason_info{reason::holding_last_good, "holding_last_good", "holding the last good advice"},
    reason_info{reason::fallback_value, "fallback_value", "hold time over: safe fallback value"},
    reason_info{reason::clamped_to_minimum, "clamped_to_minimum", "held at the lower bound"},
    reason_info{reason::clamped_to_maximum, "clamped_to_maximum", "held at the upper bound"},
    reason_info{reason::rate_limited, "rate_limited", "change limited to the allowed rate"},
    reason_info{reason::started_from_operator_value, "started_from_operator_value",
                "started from the set point in use"},
    reason_info{reason::started_from_fallback, "started_from_fallback",
                "first advice started from the fallback value"},
    reason_info{reason::optional_input_bad, "optional_input_bad",
                "an optional input is unusable; its part is frozen"},
    reason_info{reason::ammonia_above_target, "ammonia_above_target", "ammonia above target"},
    reason_info{reason::ammonia_below_target, "ammonia_below_target", "ammonia below target"},
    reason_info{reason::flow_above_daily_mean, "flow_above_daily_mean",
                "flow above its daily mean"},
    reason_info{reason::flow_below_daily_mean, "flow_below_daily_mean",
                "flow below its daily mean"},
    reason_info{reason::rules_instead_of_ammonia, "rules_instead_of_ammonia",
                "ammonia unusable: nitrate/DO rules in use"},
    reason_info{reason::rule_raise_nitrification, "rule_raise_nitrification",
                "nitrate falling at high flow: raise DO"},
    reason_info{reason::rule_lower_residual, "rule_lower_residual",
                "DO residual high, nitrate stable: lower DO"},
    reason_info{reason::rule_lower_light_load, "rule_lower_light_load",
                "light load, nitrate not falling: lower DO"},
    reason_info{reason::rule_pending, "rule_pending", "a rule waits for its hysteresis time"},
    reason_info{reason::no_rule_applies, "no_rule_applies", "no rule applies: DO unchanged"},
    reason_info{reason::cold_weather_minimum, "cold_weather_minimum",
                "cold mixed liquor: higher DO minimum"},
    reason_info{reason::nitrate_trend_unknown, "nitrate_trend_unknown",
                "too little nitrate history for a trend"},
    reason_info{reason::anoxic_nitrate_below_target, "anoxic_nitrate_below_target",
                "anoxic nitrate below target: more recycle"},
    reason_info{reason::anoxic_nitrate_above_target, "anoxic_nitrate_above_target",
                "anoxic nitrate above target: less recycle"},
    reason_info{reason::pump_limit, "pump_limit", "bounded by the pump's flow limits"},
    reason_info{reason::mass_balance, "mass_balance", "RAS ratio from the solids mass balance"},
    reason_info{reason::settleometer, "settleometer", "RAS ratio from the settled volume"},
    reason_info{reason::blanket_above_band, "blanket_above_band",
                "sludge blanket above its band: more RAS"},
    reason_info{reason::blanket_below_band, "blanket_below_band",
                "sludge blanket below its band: less RAS"},
    reason_info{reason::blanket_in_band, "blanket_in_band", "sludge blanket inside its band"},
    reason_info{reason::thickening_overloaded, "thickening_overloaded",
                "WARNING clarifier thickening overloaded"},
    reason_info{reason::clarification_overloaded, "clarification_overloaded",
                "WARNING overflow rate above the settling velocity"},
    reason_info{reason::limited_by_clarifier, "limited_by_clarifier",
                "RAS held to what the clarifier tolerates"},
    reason_info{reason::raised_for_thickening, "raised_for_thickening",
                "RAS raised to what thickening needs"},
    reason_info{reason::state_point_unavailable, "state_point_unavailable",
                "no SVI: clarifier state point not checked"},
    reason_info{reason::ras_solids_not_above_mlss, "ras_solids_not_above_mlss",
                "RAS solids not above MLSS: no mass balance"},
    reason_info{reason::svi_outside_correlation, "svi_outside_correlation",
                "SVI outside the settling correlation's data"},
    reason_info{reason::solids_loading_above_limit, "solids_loading_above_limit",
                "WARNING solids loading above its limit"},
    reason_info{reason::srt_mass_balance, "srt_mass_balance",
                "waste volume that holds the target SRT"},
    reason_info{reason::mlss_target, "mlss_target", "waste volume that steers MLSS to target"},
    reason_info{reason::target_srt_unsafe, "target_srt_unsafe",
                "WARNING target SRT below the safe minimum aerobic SRT"},
    reason_info{reason::daily_change_limited, "daily_change_limited", "day-to-day change limited"},
    reason_info{reason::daily_schedule, "daily_schedule",
                "today's advice, until the next daily run"},
    reason_info{reason::short_history, "short_history", "fewer days of data than the window"},
    reason_info{reason::temperature_unknown, "temperature_unknown",
                "no temperature: minimum aerobic SRT not checked"},
    reason_info{reason::nitrification_not_sustainable, "nitrification_not_sustainable",
                "WARNING nitrifiers cannot grow at this temperature"},
    reason_info{reason::effluent_solids_assumed_zero, "effluent_solids_assumed_zero",
                "no effluent TSS: counted as zero"},
    reason_info{reason::effluent_exceeds_wastage, "effluent_exceeds_wastage",
                "effluent solids alone exceed the target wastage"},
    reason_info{reason::waste_flow_not_metered, "waste_flow_not_metered",
                "actual SRT from the previous advice, not a meter"},
    reason_info{reason::srt_guard_limits_waste, "srt_guard_limits_waste",
                "waste cut to keep the minimum aerobic SRT"},
    reason_info{reason::minimum_waste_conflicts_srt, "minimum_waste_conflicts_srt",
                "WARNING waste minimum forces SRT below the safe minimum"},
};

} // namespace

std::string_view to_string(signal_quality q) {
    switch (q) {
    case signal_quality::good:
        return "good";
    case signal_quality::bad:
        return "bad";
    case signal_quality::stale:
        return "stale";
    case signal_quality::frozen:
        return "frozen";
    case signal_quality::missing:
        return "missing";
    }
    return "unknown";
}

std::string_view to_string(advice_quality q) {
    switch (q) {
    case advice_quality::good:
        return "good";
    case advice_quality::held:
        return "held";
    case advice_quality::fallback:
        return "fallback";
    case advice_quality::unavailable:
        return "unavailable";
    }
    return "unknown";
}

std::span<const reason_info> all_reasons() {
    return {reason_table.data(), reason_table.size()};
}

const reason_info& describe(reason r) {
    const auto* it = std::find_if(reason_table.begin(), reason_table.end(),
                                  [r](const reason_info& i) { return i.code == r; });
    return it == reason_table.end() ? reason_table.front() : *it;
}

void reason_list::add(reason r) {
    if (r == reason::none || has(r) || count_ == codes_.size()) {
        return;
    }
    codes_.at(count_++) = r;
}

bool reason_list::has(reason r) const {
    return std::find(codes_.begin(), codes_.begin() + static_cast<std::ptrdiff_t>(count_), r) !=
           codes_.begin() + static_cast<std::ptrdiff_t>(count_);
}

void advice::add_figure(std::string_view name, units::quantity q, double v) {
    figures.push_back(figure{name, q, v});
}

std::optional<double> advice::figure_value(std::string_view name) const {
    for (const figure& f : figures) {
        if (f.name == name) {
            return f.value;
        }
    }
    return std::nullopt;
}

} // namespace floc::advisors
