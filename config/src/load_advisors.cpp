// [[aeration]], [[recycle]], [[ras]], [[waste]]: the advisors and their parameters.
#include "loader.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace floc::config::detail {
namespace {

using advisors::aeration_mode;
using advisors::nitrifier_kinetics;
using advisors::ras_method;
using advisors::svi_correlation;
using advisors::waste_mode;
using units::quantity;
constexpr double inf = std::numeric_limits<double>::infinity();

// Each advisor of a kind may exist once per zone or train.
bool claim_once(loader& l, std::map<std::string, source_pos, std::less<>>& seen, table_reader& t,
                std::string_view key, const std::optional<std::string>& name, std::string_view what) {
    if (!name) {
        return false;
    }
    return l.claim(seen, *name, t.pos_of(key), t.path_of(key), what);
}

// `fallback` must lie inside [low, high].
void check_inside(table_reader& t, std::string_view key, double value, double low, double high,
                  quantity kind) {
    if (!t.has(key) || (value >= low && value <= high)) {
        return;
    }
    const units::unit& u = units::canonical_unit(kind);
    t.diags().error(t.pos_of(key), t.path_of(key), units::format(value, u),
                    "a value inside the limits " + units::format(low, u) + " to " +
                        units::format(high, u));
}

void read_ratio_limits(table_reader& t, double& min_ratio, double& max_ratio, double upper) {
    if (const auto r = t.quantity_range("ratio_limits", quantity::dimensionless, need::optional)) {
        if (r->first < 0.0 || r->second > upper) {
            t.diags().error(t.pos_of("ratio_limits"), t.path_of("ratio_limits"),
                            "[" + units::format(r->first, units::canonical_unit(quantity::dimensionless)) +
                                ", " +
                                units::format(r->second, units::canonical_unit(quantity::dimensionless)) +
                                "]",
                            "ratios from 0 to " + std::to_string(static_cast<int>(upper)));
            return;
        }
        min_ratio = r->first;
        max_ratio = r->second;
    }
}

void read_pump_limits(table_reader& t, double& min_flow, double& max_flow) {
    if (const auto r = t.quantity_range("pump_limits", quantity::flow, need::required)) {
        min_flow = r->first;
        max_flow = r->second;
        if (max_flow <= 0.0) {
            t.diags().error(t.pos_of("pump_limits"), t.path_of("pump_limits"),
                            "a pump maximum of 0", "a maximum pump flow above 0");
        }
    }
}

// The output keys of an advisor that advises a multiple of the influent flow (recycle, RAS).
struct flow_paced_output {
    double& min_ratio;
    double& max_ratio;
    double& pump_min_m3_per_d;
    double& pump_max_m3_per_d;
    double& max_change_per_hour;
    double& fallback_ratio;
};

// `ratio_limits` (up to `upper`), `pump_limits`, `max_change_per_hour`, `fallback_ratio`.
void read_flow_paced(table_reader& t, flow_paced_output o, double upper) {
    read_ratio_limits(t, o.min_ratio, o.max_ratio, upper);
    read_pump_limits(t, o.pump_min_m3_per_d, o.pump_max_m3_per_d);
    o.max_change_per_hour = t.number("max_change_per_hour", 0.01, upper, need::optional)
                                .value_or(o.max_change_per_hour);
    o.fallback_ratio = t.number("fallback_ratio", 0.0, upper, need::optional)
                           .value_or(std::clamp(o.fallback_ratio, o.min_ratio, o.max_ratio));
    check_inside(t, "fallback_ratio", o.fallback_ratio, o.min_ratio, o.max_ratio,
                 quantity::dimensionless);
}

// "HH:MM" -> minute of the day.
std::optional<std::uint32_t> read_clock_time(table_reader& t, std::string_view key) {
    const std::optional<std::string> s = t.string(key, need::optional);
    if (!s) {
        return std::nullopt;
    }
    const bool shape = s->size() == 5 && (*s)[2] == ':' &&
                       std::all_of(s->begin(), s->end(), [](char c) { return c == ':' || (c >= '0' && c <= '9'); });
    if (shape) {
        const int h = ((*s)[0] - '0') * 10 + ((*s)[1] - '0');
        const int m = ((*s)[3] - '0') * 10 + ((*s)[4] - '0');
        if (h < 24 && m < 60) {
            return static_cast<std::uint32_t>(h * 60 + m);
        }
    }
    t.diags().error(t.pos_of(key), t.path_of(key), quote(*s),
                    "a time of day \"HH:MM\" from \"00:00\" to \"23:59\" (plant time)");
    return std::nullopt;
}

// The volumes the waste advisor needs: every zone of the train, its aerated zones, and its
// clarifiers (area x side water depth).
void read_train_volumes(const loader& l, const std::string& train, advisors::waste_params& p) {
    p.system_volume_m3 = 0.0;
    p.aerobic_volume_m3 = 0.0;
    p.clarifier_volume_m3 = 0.0;
    for (const zone& z : l.cfg.zones) {
        if (z.train == train) {
            p.system_volume_m3 += z.volume_m3;
            if (z.kind == zone_kind::aerobic) {
                p.aerobic_volume_m3 += z.volume_m3;
            }
        }
    }
    for (const clarifier& c : l.cfg.clarifiers) {
        if (c.train == train) {
            p.clarifier_volume_m3 += c.area_m2 * c.side_water_depth_m;
        }
    }
}

void read_aeration(loader& l, table_reader& t, std::map<std::string, source_pos, std::less<>>& seen) {
    aeration_advisor a;
    a.common = l.common(t);
    advisors::aeration_params& p = a.params;
    p.hold_for_s = a.common.hold_for_s;
    p.text_units = l.cfg.display.system;
    if (const std::optional<std::string> zone_name = t.string("zone", need::required)) {
        const zone* z = l.cfg.find_zone(*zone_name);
        if (z == nullptr) {
            std::map<std::string, source_pos, std::less<>> aerobic;
            for (const zone& each : l.cfg.zones) {
                if (each.kind == zone_kind::aerobic) {
                    aerobic.emplace(each.name, each.at);
                }
            }
            t.diags().error(t.pos_of("zone"), t.path_of("zone"),
                            quote(*zone_name) + ", which is not defined",
                            "the name of an aerobic [[zone]] (" + std::to_string(aerobic.size()) +
                                " defined)");
        } else if (z->kind != zone_kind::aerobic) {
            t.diags().error(t.pos_of("zone"), t.path_of("zone"),
                            quote(*zone_name) + ", an " + std::string{to_string(z->kind)} + " zone",
                            "an aerobic zone: DO advice is for aerated zones");
        } else {
            a.zone = *zone_name;
            claim_once(l, seen, t, "zone", zone_name, "[[aeration]] advisor's zone");
        }
    }
    a.dissolved_oxygen = l.signal(t, "dissolved_oxygen", need::required, signal_source::tag_only,
                                  quantity::concentration);
    a.ammonia = l.signal(t, "ammonia", need::optional, signal_source::tag_only, quantity::concentration);
    a.nitrate = l.signal(t, "nitrate", need::optional, signal_source::tag_only, quantity::concentration);
    a.flow = l.signal(t, "flow", need::required, signal_source::tag_only, quantity::flow);
    a.temperature = l.signal(t, "temperature", need::optional, signal_source::tag_or_lab,
                             quantity::temperature);
    a.setpoint = l.signal(t, "setpoint", need::optional, signal_source::tag_only,
                          quantity::concentration);
    p.mode = t.choice<aeration_mode>("mode",
                                     {{"auto", aeration_mode::automatic},
                                      {"ammonia", aeration_mode::ammonia},
                                      {"rules", aeration_mode::rules}},
                                     need::optional)
                 .value_or(aeration_mode::automatic);
    if (p.mode == aeration_mode::ammonia && !t.has("ammonia")) {
        t.diags().error(t.pos_of("mode"), t.path_of("mode"), "mode \"ammonia\" without an ammonia tag",
                        "an `ammonia` key naming the ammonia probe, or mode \"rules\"");
    }
    if (p.mode == aeration_mode::rules && !t.has("nitrate")) {
        t.diags().error(t.pos_of("mode"), t.path_of("mode"), "mode \"rules\" without a nitrate tag",
                        "a `nitrate` key naming the aerobic-zone nitrate probe");
    }
    if (p.mode == aeration_mode::automatic && !t.has("ammonia") && !t.has("nitrate")) {
        t.diags().error(t.pos(), t.path(), "an aeration advisor with neither ammonia nor nitrate",
                        "an `ammonia` tag (ammonia cascade) or a `nitrate` tag (nitrate/DO rules)");
    }
    if (const auto limits = t.quantity_range("limits", quantity::concentration, need::optional)) {
        p.min_g_per_m3 = limits->first;
        p.max_g_per_m3 = limits->second;
        if (p.min_g_per_m3 < 0.0 || p.max_g_per_m3 > 8.0) {
            t.diags().error(t.pos_of("limits"), t.path_of("limits"),
                            "DO limits " + units::format(p.min_g_per_m3, units::canonical_unit(quantity::concentration)) +
                                " to " + units::format(p.max_g_per_m3, units::canonical_unit(quantity::concentration)),
                            "DO limits within 0 to 8 mg/L");
        }
    }
    p.max_change_per_hour_g_per_m3 =
        t.quantity("max_change_per_hour", quantity::concentration, 0.01, 8.0, need::optional, nullptr,
                   measure::difference)
            .value_or(p.max_change_per_hour_g_per_m3);
    p.fallback_g_per_m3 = t.quantity("fallback", quantity::concentration, 0.0, 8.0, need::optional)
                              .value_or(std::clamp(p.fallback_g_per_m3, p.min_g_per_m3, p.max_g_per_m3));
    check_inside(t, "fallback", p.fallback_g_per_m3, p.min_g_per_m3, p.max_g_per_m3,
                 quantity::concentration);
    p.cold_below_degC = t.quantity("cold_below", quantity::temperature, -5.0, 40.0, need::optional)
                            .value_or(p.cold_below_degC);
    p.cold_minimum_g_per_m3 =
        t.quantity("cold_minimum", quantity::concentration, 0.0, 8.0, need::optional)
            .value_or(std::clamp(p.cold_minimum_g_per_m3, p.min_g_per_m3, p.max_g_per_m3));
    check_inside(t, "cold_minimum", p.cold_minimum_g_per_m3, p.min_g_per_m3, p.max_g_per_m3,
                 quantity::concentration);

    t.table("ammonia_loop", need::optional, [&](table_reader& s) {
        advisors::ammonia_loop_params& c = p.ammonia_loop;
        c.target_g_per_m3 = s.quantity("target", quantity::concentration, 0.0, 20.0, need::optional)
                                .value_or(c.target_g_per_m3);
        c.gain = s.number("gain", 0.0, 20.0, need::optional).value_or(c.gain);
        c.integral_time_s = s.quantity("integral_time", quantity::duration, 60.0, 86400.0,
                                       need::optional)
                                .value_or(c.integral_time_s);
        c.feedforward_gain_g_per_m3 =
            s.quantity("feedforward_gain", quantity::concentration, 0.0, 8.0, need::optional, nullptr,
                       measure::difference)
                .value_or(c.feedforward_gain_g_per_m3);
    });
    t.table("rules", need::optional, [&](table_reader& s) {
        advisors::aeration_rules_params& c = p.rules;
        c.nitrate_window_s = s.quantity("nitrate_window", quantity::duration, 600.0, 86400.0,
                                        need::optional)
                                 .value_or(c.nitrate_window_s);
        c.nitrate_trend_g_per_m3_per_h =
            s.quantity("nitrate_trend_per_hour", quantity::concentration, 0.01, 20.0,
                       need::optional, nullptr, measure::difference)
                .value_or(c.nitrate_trend_g_per_m3_per_h);
        c.high_flow_ratio = s.number("high_flow_ratio", 1.0, 5.0, need::optional).value_or(c.high_flow_ratio);
        c.low_flow_ratio = s.number("low_flow_ratio", 0.0, 1.0, need::optional).value_or(c.low_flow_ratio);
        c.residual_high_g_per_m3 =
            s.quantity("residual_high", quantity::concentration, 0.1, 8.0, need::optional)
                .value_or(c.residual_high_g_per_m3);
        c.step_g_per_m3 = s.quantity("step", quantity::concentration, 0.01, 1.0, need::optional,
                                     nullptr, measure::difference)
                              .value_or(c.step_g_per_m3);
        c.hysteresis_s = s.quantity("hysteresis", quantity::duration, 0.0, 86400.0, need::optional)
                             .value_or(c.hysteresis_s);
    });
    l.cfg.aeration.push_back(std::move(a));
}

void read_recycle(loader& l, table_reader& t, std::map<std::string, source_pos, std::less<>>& seen) {
    recycle_advisor r;
    r.common = l.common(t);
    advisors::recycle_params& p = r.params;
    p.hold_for_s = r.common.hold_for_s;
    p.text_units = l.cfg.display.system;
    const std::optional<std::string> train = l.train(t, "train", need::required);
    if (claim_once(l, seen, t, "train", train, "[[recycle]] advisor's train")) {
        r.train = *train;
        const bool has_anoxic = std::any_of(l.cfg.zones.begin(), l.cfg.zones.end(), [&](const zone& z) {
            return z.train == *train && z.kind == zone_kind::anoxic;
        });
        if (!has_anoxic) {
            t.diags().error(t.pos_of("train"), t.path_of("train"),
                            "train " + quote(*train) + " without an anoxic zone",
                            "a train with an anoxic zone for the nitrate recycle to feed");
        }
    }
    r.nitrate = l.signal(t, "nitrate", need::required, signal_source::tag_only, quantity::concentration);
    r.flow = l.signal(t, "flow", need::required, signal_source::tag_only, quantity::flow);
    r.recycle_flow = l.signal(t, "recycle_flow", need::optional, signal_source::tag_only, quantity::flow);
    p.target_g_per_m3 = t.quantity("target", quantity::concentration, 0.0, 20.0, need::optional)
                            .value_or(p.target_g_per_m3);
    p.gain_per_g_per_m3 = t.number("gain", 0.0, 20.0, need::optional).value_or(p.gain_per_g_per_m3);
    p.integral_time_s = t.quantity("integral_time", quantity::duration, 60.0, 7 * 86400.0, need::optional)
                            .value_or(p.integral_time_s);
    read_flow_paced(t, {p.min_ratio, p.max_ratio, p.pump_min_m3_per_d, p.pump_max_m3_per_d,
                        p.max_change_per_hour, p.fallback_ratio},
                    10.0);
    l.cfg.recycle.push_back(std::move(r));
}

void read_ras(loader& l, table_reader& t, std::map<std::string, source_pos, std::less<>>& seen) {
    ras_advisor r;
    r.common = l.common(t);
    advisors::ras_params& p = r.params;
    p.hold_for_s = r.common.hold_for_s;
    p.text_units = l.cfg.display.system;
    p.clarifier_area_m2 = 0.0;
    const std::optional<std::string> train = l.train(t, "train", need::required);
    if (claim_once(l, seen, t, "train", train, "[[ras]] advisor's train")) {
        r.train = *train;
    }
    double min_depth_m = inf;
    if (const auto list = t.string_list("clarifiers", need::required)) {
        const std::vector<source_pos> where = t.list_positions("clarifiers");
        for (std::size_t i = 0; i < list->size(); ++i) {
            const std::string& name = (*list)[i];
            const auto it = std::find_if(l.cfg.clarifiers.begin(), l.cfg.clarifiers.end(),
                                         [&](const clarifier& c) { return c.name == name; });
            if (it == l.cfg.clarifiers.end()) {
                t.diags().error(where.at(i), t.path_of("clarifiers") + "[" + std::to_string(i) + "]",
                                quote(name) + ", which is not defined", "the name of a [[clarifier]]");
                continue;
            }
            min_depth_m = std::min(min_depth_m, it->side_water_depth_m);
            p.clarifier_area_m2 += it->area_m2;
            r.clarifiers.push_back(name);
        }
        if (list->empty()) {
            t.diags().error(t.pos_of("clarifiers"), t.path_of("clarifiers"), "an empty list",
                            "the clarifiers this RAS flow returns from");
        }
    }
    r.flow = l.signal(t, "flow", need::required, signal_source::tag_only, quantity::flow);
    r.ras_flow = l.signal(t, "ras_flow", need::optional, signal_source::tag_only, quantity::flow);
    r.mlss = l.signal(t, "mlss", need::required, signal_source::tag_or_lab, quantity::concentration);
    r.ras_solids = l.signal(t, "ras_solids", need::optional, signal_source::tag_or_lab,
                            quantity::concentration);
    r.sv30 = l.signal(t, "sv30", need::optional, signal_source::tag_or_lab, quantity::settled_volume);
    r.svi = l.signal(t, "svi", need::optional, signal_source::tag_or_lab,
                     quantity::sludge_volume_index);
    r.blanket = l.signal(t, "blanket", need::optional, signal_source::tag_or_lab, quantity::length);
    p.method = t.choice<ras_method>("method",
                                    {{"auto", ras_method::automatic},
                                     {"mass_balance", ras_method::mass_balance},
                                     {"settleometer", ras_method::settleometer}},
                                    need::optional)
                   .value_or(ras_method::automatic);
    if (p.method == ras_method::mass_balance && !t.has("ras_solids")) {
        t.diags().error(t.pos_of("method"), t.path_of("method"),
                        "method \"mass_balance\" without ras_solids",
                        "a `ras_solids` key (RAS suspended solids, lab or probe)");
    }
    if (p.method == ras_method::settleometer && !t.has("sv30")) {
        t.diags().error(t.pos_of("method"), t.path_of("method"), "method \"settleometer\" without sv30",
                        "an `sv30` key (30-minute settled volume, lab entry)");
    }
    if (p.method == ras_method::automatic && !t.has("ras_solids") && !t.has("sv30")) {
        t.diags().error(t.pos(), t.path(), "a RAS advisor with neither ras_solids nor sv30",
                        "`ras_solids` (mass balance) or `sv30` (settleometer), or both");
    }
    p.correlation = t.choice<svi_correlation>(
                         "svi_correlation",
                         {{"daigger_1995", svi_correlation::daigger_1995},
                          {"wahlberg_keinath_1988", svi_correlation::wahlberg_keinath_1988}},
                         need::optional)
                        .value_or(svi_correlation::daigger_1995);
    if (const auto band = t.quantity_range("blanket_band", quantity::length, need::optional)) {
        p.blanket_low_m = band->first;
        p.blanket_high_m = band->second;
        if (min_depth_m < inf && p.blanket_high_m >= min_depth_m) {
            t.diags().error(t.pos_of("blanket_band"), t.path_of("blanket_band"),
                            "a band up to " + units::format(p.blanket_high_m, units::canonical_unit(quantity::length)),
                            "a band below the side water depth (" +
                                units::format(min_depth_m, units::canonical_unit(quantity::length)) + ")");
        }
    }
    p.blanket_gain_per_m = t.number("blanket_gain", 0.0, 10.0, need::optional).value_or(p.blanket_gain_per_m);
    p.blanket_integral_time_s = t.quantity("blanket_integral_time", quantity::duration, 600.0,
                                           7 * 86400.0, need::optional)
                                    .value_or(p.blanket_integral_time_s);
    read_flow_paced(t, {p.min_ratio, p.max_ratio, p.pump_min_m3_per_d, p.pump_max_m3_per_d,
                        p.max_change_per_hour, p.fallback_ratio},
                    5.0);
    p.max_solids_loading_kg_per_m2_d =
        t.quantity("max_solids_loading", quantity::solids_flux, 1.0, 2000.0, need::optional)
            .value_or(p.max_solids_loading_kg_per_m2_d);
    l.cfg.ras.push_back(std::move(r));
}

void read_waste(loader& l, table_reader& t, std::map<std::string, source_pos, std::less<>>& seen) {
    waste_advisor w;
    w.common = l.common(t);  // `period`: how often it samples; the advice changes once a day
    advisors::waste_params& p = w.params;
    p.hold_for_s = w.common.hold_for_s;
    p.text_units = l.cfg.display.system;
    const std::optional<std::string> train = l.train(t, "train", need::required);
    if (claim_once(l, seen, t, "train", train, "[[waste]] advisor's train")) {
        w.train = *train;
        read_train_volumes(l, *train, p);
    }
    p.mode = t.choice<waste_mode>("mode", {{"srt", waste_mode::srt}, {"mlss", waste_mode::mlss}},
                                  need::optional)
                 .value_or(waste_mode::srt);
    p.target_srt_s = t.quantity("target_srt", quantity::duration, 86400.0, 100 * 86400.0,
                                p.mode == waste_mode::srt ? need::required : need::optional)
                         .value_or(p.target_srt_s);
    p.target_mlss_g_per_m3 = t.quantity("target_mlss", quantity::concentration, 100.0, 15000.0,
                                        p.mode == waste_mode::mlss ? need::required : need::optional)
                                 .value_or(p.target_mlss_g_per_m3);
    w.mlss = l.signal(t, "mlss", need::required, signal_source::tag_or_lab, quantity::concentration);
    w.was_solids = l.signal(t, "was_solids", need::required, signal_source::tag_or_lab,
                            quantity::concentration);
    w.effluent_tss = l.signal(t, "effluent_tss", need::optional, signal_source::tag_or_lab,
                              quantity::concentration);
    w.flow = l.signal(t, "flow", need::required, signal_source::tag_only, quantity::flow);
    w.was_flow = l.signal(t, "was_flow", need::optional, signal_source::tag_only, quantity::flow);
    w.temperature = l.signal(t, "temperature", need::optional, signal_source::tag_or_lab,
                             quantity::temperature);
    w.influent_bod = l.signal(t, "influent_bod", need::optional, signal_source::tag_or_lab,
                              quantity::concentration);
    if (const auto averaging = t.quantity("averaging", quantity::duration, 86400.0, 30 * 86400.0,
                                          need::optional)) {
        const double days = std::round(*averaging / 86400.0);
        if (std::abs(*averaging - days * 86400.0) > 1.0) {
            t.diags().error(t.pos_of("averaging"), t.path_of("averaging"),
                            units::format(*averaging, *units::find_unit("h")),
                            "a whole number of days from 1 d to 30 d");
        } else {
            p.averaging_days = static_cast<std::uint32_t>(days);
        }
    }
    p.max_daily_change = t.number("max_daily_change", 0.01, 1.0, need::optional).value_or(p.max_daily_change);
    p.compute_at_minute = read_clock_time(t, "compute_at").value_or(p.compute_at_minute);
    p.include_clarifier_solids =
        t.boolean("include_clarifier_solids", need::optional).value_or(p.include_clarifier_solids);
    p.nitrifiers.kinetics =
        t.choice<nitrifier_kinetics>("nitrifier_kinetics",
                                     {{"metcalf_eddy_5th", nitrifier_kinetics::metcalf_eddy_5th},
                                      {"metcalf_eddy_4th", nitrifier_kinetics::metcalf_eddy_4th}},
                                     need::optional)
            .value_or(p.nitrifiers.kinetics);
    p.nitrifiers.safety_factor =
        t.number("srt_safety_factor", 1.0, 4.0, need::optional).value_or(p.nitrifiers.safety_factor);
    p.nitrifiers.ammonia_g_per_m3 =
        t.quantity("nitrifier_ammonia", quantity::concentration, 0.05, 20.0, need::optional)
            .value_or(p.nitrifiers.ammonia_g_per_m3);
    p.nitrifiers.oxygen_g_per_m3 = t.quantity("nitrifier_do", quantity::concentration, 0.1, 8.0, need::optional)
                                       .value_or(p.nitrifiers.oxygen_g_per_m3);
    p.mlss_horizon_s = t.quantity("mlss_horizon", quantity::duration, 3600.0, 30 * 86400.0, need::optional)
                           .value_or(p.mlss_horizon_s);
    p.mlss_integral_time_s = t.quantity("mlss_integral_time", quantity::duration, 86400.0,
                                        100 * 86400.0, need::optional)
                                 .value_or(p.mlss_integral_time_s);
    p.mlvss_fraction = t.number("mlvss_fraction", 0.3, 1.0, need::optional).value_or(p.mlvss_fraction);
    if (const auto r = t.quantity_range("waste_limits", quantity::flow, need::required)) {
        p.min_waste_m3_per_d = r->first;
        p.max_waste_m3_per_d = r->second;
    }
    p.fallback_m3_per_d = t.quantity("fallback", quantity::flow, 0.0, 1e7, need::optional)
                              .value_or(p.min_waste_m3_per_d);
    check_inside(t, "fallback", p.fallback_m3_per_d, p.min_waste_m3_per_d, p.max_waste_m3_per_d,
                 quantity::flow);
    l.cfg.waste.push_back(std::move(w));
}

} // namespace

void read_advisors(loader& l, table_reader& root) {
    std::map<std::string, source_pos, std::less<>> aerated_zones;
    std::map<std::string, source_pos, std::less<>> recycle_trains;
    std::map<std::string, source_pos, std::less<>> ras_trains;
    std::map<std::string, source_pos, std::less<>> waste_trains;
    root.each_table("aeration", [&](table_reader& t, std::size_t) { read_aeration(l, t, aerated_zones); });
    root.each_table("recycle", [&](table_reader& t, std::size_t) { read_recycle(l, t, recycle_trains); });
    root.each_table("ras", [&](table_reader& t, std::size_t) { read_ras(l, t, ras_trains); });
    root.each_table("waste", [&](table_reader& t, std::size_t) { read_waste(l, t, waste_trains); });
}

} // namespace floc::config::detail
