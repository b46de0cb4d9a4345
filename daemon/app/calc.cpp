#include "calc.hpp"

#include "exit_codes.hpp"

#include "floc/advisors/aeration.hpp"
#include "floc/advisors/nitrification.hpp"
#include "floc/advisors/ras.hpp"
#include "floc/advisors/recycle.hpp"
#include "floc/advisors/settling.hpp"
#include "floc/advisors/text.hpp"
#include "floc/advisors/waste.hpp"
#include "floc/units.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <functional>
#include <limits>
#include <map>
#include <ostream>
#include <string>
#include <variant>
#include <vector>

namespace floc::app {
namespace {

namespace adv = floc::advisors;
using units::quantity;
using units::unit_system;
constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double day_s = 86400.0;

constexpr std::string_view caution =
    "CAUTION: advisory only. A licensed operator decides; local permits, codes and plant\n"
    "procedures prevail over any figure printed here.\n";

// --- keys -------------------------------------------------------------------------------------

enum class key_type : std::uint8_t { value, number, word };

struct key_spec {
    std::string_view name;
    key_type type = key_type::value;
    quantity kind = quantity::dimensionless; // of a `value`
    std::string_view fallback;               // default, written as on the command line
    bool required = false;
    std::string_view help;
    double min = -inf; // canonical
    double max = inf;
    std::vector<std::string_view> words{}; // for `word`
};

key_spec value_key(std::string_view name, quantity q, std::string_view fallback, bool required,
                   std::string_view help, double min = 0.0, double max = inf) {
    return key_spec{name, key_type::value, q, fallback, required, help, min, max, {}};
}
key_spec number_key(std::string_view name, std::string_view fallback, std::string_view help,
                    double min, double max) {
    return key_spec{
        name, key_type::number, quantity::dimensionless, fallback, false, help, min, max, {}};
}
key_spec word_key(std::string_view name, std::vector<std::string_view> words,
                  std::string_view help) {
    const std::string_view first = words.front();
    return key_spec{name, key_type::word,  quantity::dimensionless, first, false, help, -inf,
                    inf,  std::move(words)};
}

// A value whose quantity has one unit only (mL/L, mL/g) may be written as a plain number.
bool bare_number_allowed(const key_spec& k) {
    return k.type == key_type::number || units::units_of(k.kind).size() == 1;
}

struct bad_input {
    int code;
    std::string message;
};

class values {
public:
    [[nodiscard]] bool has(std::string_view key) const {
        return numbers_.find(key) != numbers_.end() || words_.find(key) != words_.end();
    }
    [[nodiscard]] double number(std::string_view key) const { return numbers_.find(key)->second; }
    [[nodiscard]] std::string_view word(std::string_view key) const {
        return words_.find(key)->second;
    }
    // A good reading of the key's value, or a missing one when the key was not given.
    [[nodiscard]] adv::reading reading(std::string_view key, double at_s) const {
        return has(key) ? adv::good(number(key), at_s) : adv::reading{};
    }
    void set_number(std::string_view key, double v) { numbers_[std::string{key}] = v; }
    void set_word(std::string_view key, std::string v) { words_[std::string{key}] = std::move(v); }

private:
    std::map<std::string, double, std::less<>> numbers_;
    std::map<std::string, std::string, std::less<>> words_;
};

std::string quantity_words(quantity q) {
    std::string name{units::quantity_name(q)};
    std::replace(name.begin(), name.end(), '_', ' ');
    return name;
}

std::string unit_hint(const key_spec& k) {
    if (k.type == key_type::word) {
        std::string out;
        for (const std::string_view w : k.words) {
            out += (out.empty() ? "" : "|") + std::string{w};
        }
        return out;
    }
    if (k.type == key_type::number) {
        return "number";
    }
    return units::symbols_of(k.kind);
}

std::string with_article(quantity q) {
    const std::string noun = quantity_words(q);
    const bool vowel =
        !noun.empty() && std::string_view{"aeiou"}.find(noun.front()) != std::string_view::npos;
    return std::string{vowel ? "an " : "a "} + noun;
}

std::string with_article_of(const key_spec& k) {
    return with_article(k.kind);
}

std::string_view example_of(quantity q) {
    switch (q) {
    case quantity::flow:
        return "4500m3/d";
    case quantity::concentration:
        return "3000mg/L";
    case quantity::length:
        return "1.2m";
    case quantity::area:
        return "450m2";
    case quantity::volume:
        return "2700m3";
    case quantity::temperature:
        return "12degC";
    case quantity::duration:
        return "2h";
    case quantity::solids_flux:
        return "8kg/m2/h";
    default:
        return "1";
    }
}

// Parses one value for `k`; a std::string is the reason it is refused.
std::variant<double, std::string> parse_value(const key_spec& k, std::string_view text) {
    if (k.type == key_type::number || (bare_number_allowed(k) && !text.empty())) {
        double v = 0.0;
        const char* first = text.data();
        const char* last = text.data() + text.size();
        const auto [end, ec] = std::from_chars(first, last, v);
        if (ec == std::errc{} && end == last && std::isfinite(v)) {
            if (k.type == key_type::value) {
                v = units::to_canonical(v, units::canonical_unit(k.kind));
            }
            return v;
        }
        if (k.type == key_type::number) {
            return "found \"" + std::string{text} + "\"; expected a plain number";
        }
    } else {
        double v = 0.0;
        const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), v);
        if (ec == std::errc{} && end == text.data() + text.size()) {
            return "found the plain number " + std::string{text} + "; expected " +
                   with_article_of(k) + " with its unit, like \"" +
                   std::string{k.fallback.empty() ? example_of(k.kind) : k.fallback} + "\" (" +
                   units::symbols_of(k.kind) + ")";
        }
    }
    const auto parsed = units::parse_quantity(text);
    if (const auto* why = std::get_if<std::string>(&parsed)) {
        return "found " + *why + "; expected " + with_article_of(k) + " with its unit, like \"" +
               std::string{k.fallback.empty() ? example_of(k.kind) : k.fallback} + "\" (" +
               units::symbols_of(k.kind) + ")";
    }
    const units::quantity_value qv = std::get<units::quantity_value>(parsed);
    if (qv.as_written->kind != k.kind) {
        return "found \"" + std::string{text} + "\", " + with_article(qv.as_written->kind) +
               "; expected " + with_article_of(k) + " (" + units::symbols_of(k.kind) + ")";
    }
    return qv.canonical();
}

std::string range_text(const key_spec& k) {
    const units::unit& u = k.type == key_type::value
                               ? units::canonical_unit(k.kind)
                               : units::canonical_unit(quantity::dimensionless);
    if (std::isfinite(k.max)) {
        return "from " + units::format(k.min, u) + " to " + units::format(k.max, u);
    }
    return "of at least " + units::format(k.min, u);
}

struct command {
    std::string_view name;
    std::string_view summary;
    std::vector<key_spec> keys;
    std::function<void(const values&, unit_system, std::ostream&)> run;
    std::function<std::string(const values&)> check; // cross-key checks; empty string = fine
};

// --- output -------------------------------------------------------------------------------------

std::string figure_text(const adv::figure& f, unit_system sys) {
    switch (f.kind) {
    case quantity::duration:
        return adv::text_duration(f.value);
    case quantity::dimensionless:
        return adv::text_number(f.value, 4);
    default:
        return adv::text(f.value, f.kind, sys, 4);
    }
}

void print_line(std::ostream& out, std::string_view label, const std::string& value) {
    std::string l{label};
    l.resize(std::max<std::size_t>(l.size() + 1, 26), ' ');
    out << "  " << l << value << "\n";
}

void print_advice(std::ostream& out, std::string_view what, const adv::advice& a,
                  const std::function<std::string(double)>& write, unit_system sys) {
    out << what << ": " << write(a.value) << " (" << adv::to_string(a.quality) << ")\n";
    print_line(out, "bounds",
               write(a.min) + " to " + (std::isfinite(a.max) ? write(a.max) : "no limit"));
    std::string reasons;
    for (const adv::reason r : a.reasons.codes()) {
        reasons += (reasons.empty() ? "" : ", ") + std::to_string(static_cast<int>(r)) + " " +
                   std::string{adv::describe(r).name};
    }
    print_line(out, "reasons", reasons.empty() ? "-" : reasons);
    print_line(out, "explanation", a.explanation);
    if (!a.figures.empty()) {
        out << "figures\n";
        for (const adv::figure& f : a.figures) {
            print_line(out, f.name, figure_text(f, sys));
        }
    }
}

std::string ratio_text(double r) {
    return adv::text_number(r, 3) + "x influent";
}

// The stateful advisors are run for `for` at steps of `period` with the inputs held constant,
// so that the rate limit and the controllers have played out.
int steps_of(const values& v) {
    const double period = v.number("period");
    return static_cast<int>(std::clamp(std::ceil(v.number("for") / period), 1.0, 200000.0));
}

void print_run(std::ostream& out, const values& v, const std::string& start,
               const std::string& end) {
    print_line(out, "run",
               "inputs held for " + adv::text_duration(v.number("for")) + " at " +
                   adv::text_duration(v.number("period")) + " steps: " + start + " -> " + end);
}

std::vector<key_spec> run_keys(std::string_view for_default, std::string_view period_default) {
    return {value_key("for", quantity::duration, for_default, false,
                      "how long the inputs are held (the advisor steps through it)", 0.0,
                      60 * day_s),
            value_key("period", quantity::duration, period_default, false, "step of the run", 1.0,
                      day_s)};
}

// --- the commands
// -----------------------------------------------------------------------------------

void run_min_srt(const values& v, unit_system sys, std::ostream& out) {
    adv::nitrifier_params p;
    p.kinetics = v.word("kinetics") == "metcalf_eddy_4th"
                     ? adv::nitrifier_kinetics::metcalf_eddy_4th
                     : adv::nitrifier_kinetics::metcalf_eddy_5th;
    p.safety_factor = v.number("safety_factor");
    p.ammonia_g_per_m3 = v.number("ammonia");
    p.oxygen_g_per_m3 = v.number("do");
    const double t = v.number("temperature");
    const adv::aerobic_srt s = adv::minimum_aerobic_srt(p, t);
    out << "minimum aerobic SRT at " << adv::text(t, quantity::temperature, sys) << " ("
        << adv::to_string(p.kinetics) << ", ammonia "
        << adv::text(p.ammonia_g_per_m3, quantity::concentration, sys) << ", DO "
        << adv::text(p.oxygen_g_per_m3, quantity::concentration, sys) << ")\n";
    print_line(out, "mu_max", adv::text_number(s.mu_max_per_d, 4) + " /d");
    print_line(out, "decay", adv::text_number(s.decay_per_d, 4) + " /d");
    print_line(out, "ammonia_half_saturation",
               adv::text(s.ammonia_half_saturation_g_per_m3, quantity::concentration, sys, 4));
    print_line(out, "net_growth", adv::text_number(s.net_growth_per_d, 4) + " /d");
    if (s.sustainable) {
        print_line(out, "minimum", adv::text_duration(s.minimum_s));
        print_line(out, "design",
                   adv::text_duration(s.design_s) + " (safety factor " +
                       adv::text_number(p.safety_factor) + ")");
    } else {
        print_line(out, "minimum", "none: nitrifiers cannot grow at this temperature (WARNING)");
    }
}

adv::settling_estimate settling_of(const values& v) {
    const adv::svi_correlation c = v.word("correlation") == "wahlberg_keinath_1988"
                                       ? adv::svi_correlation::wahlberg_keinath_1988
                                       : adv::svi_correlation::daigger_1995;
    return adv::settling_from_svi(c, v.number("svi"));
}

void run_state_point(const values& v, unit_system sys, std::ostream& out) {
    const adv::settling_estimate e = settling_of(v);
    const adv::clarifier_loading load{v.number("flow"), v.number("ras_flow"), v.number("mlss"),
                                      v.number("area")};
    const auto flux = [&](double f) { return adv::text(f, quantity::solids_flux, sys, 4); };
    const auto velocity = [&](double x) { return adv::text(x, quantity::velocity, sys, 4); };
    const auto conc = [&](double x) { return adv::text(x, quantity::concentration, sys, 4); };
    out << "clarifier state point (" << v.word("correlation") << ", "
        << (v.word("correlation") == "wahlberg_keinath_1988" ? "stirred SSVI3.5 " : "SVI ")
        << adv::text_number(v.number("svi")) << " mL/g)\n";
    if (!e.valid) {
        print_line(out, "verdict", "unavailable: the correlation gives no settling at this SVI");
        return;
    }
    const adv::state_point sp = adv::evaluate_state_point(e.settling, load);
    print_line(out, "v0", velocity(e.settling.v0_m_per_d));
    print_line(out, "k", adv::text_number(e.settling.k_m3_per_g * 1000.0, 4) + " L/g");
    if (!e.inside_data) {
        print_line(out, "note",
                   "SVI outside the correlation's data (" + adv::text_number(e.data_min_svi) +
                       " to " + adv::text_number(e.data_max_svi) + " mL/g)");
    }
    print_line(out, "overflow_rate", velocity(sp.overflow_rate_m_per_d));
    print_line(out, "settling_velocity",
               velocity(sp.settling_velocity_m_per_d) + " at MLSS " + conc(load.mlss_g_per_m3));
    print_line(out, "clarification",
               std::string{sp.clarification_ok ? "ok" : "OVERLOADED"} + ", margin " +
                   adv::text_number(100.0 * sp.clarification_margin) + " %");
    print_line(out, "solids_loading", flux(sp.solids_loading_kg_per_m2_d));
    print_line(out, "underflow_velocity", velocity(sp.underflow_velocity_m_per_d));
    print_line(out, "underflow_solids", conc(sp.underflow_solids_g_per_m3) + " (mass balance)");
    if (sp.thickening_limits) {
        print_line(out, "limiting_flux",
                   flux(sp.limit.flux_kg_per_m2_d) + " at " + conc(sp.limit.at_g_per_m3));
        print_line(out, "max_underflow_solids", conc(sp.limit.max_underflow_g_per_m3));
    } else {
        print_line(out, "limiting_flux", "none: thickening does not limit at this underflow rate");
    }
    print_line(out, "thickening",
               std::string{sp.thickening_ok ? "ok" : "OVERLOADED"} + ", margin " +
                   adv::text_number(100.0 * sp.thickening_margin) + " %");
    print_line(out, "verdict", sp.inside() ? "state point inside" : "WARNING state point outside");
    const double max_flow = v.has("ras_max") ? v.number("ras_max") : 2.0 * load.flow_m3_per_d;
    const auto w =
        adv::tolerated_ras_flows(e.settling, load, 0.0, max_flow, v.number("max_solids_loading"));
    if (w) {
        const bool capped = w->highest_m3_per_d >= max_flow * (1.0 - 1e-9);
        print_line(out, "tolerated_ras_flows",
                   adv::text(w->lowest_m3_per_d, quantity::flow, sys, 4) + " to " +
                       adv::text(w->highest_m3_per_d, quantity::flow, sys, 4) +
                       (capped ? " or more (searched up to ras_max)" : "") +
                       " (thickening; solids loading up to " +
                       flux(v.number("max_solids_loading")) + ")");
    } else {
        print_line(out, "tolerated_ras_flows",
                   "none up to " + adv::text(max_flow, quantity::flow, sys, 4));
    }
}

void run_ras(const values& v, unit_system sys, std::ostream& out) {
    adv::ras_params p;
    const std::string_view method = v.word("method");
    p.method = method == "mass_balance"   ? adv::ras_method::mass_balance
               : method == "settleometer" ? adv::ras_method::settleometer
                                          : adv::ras_method::automatic;
    p.correlation = v.word("correlation") == "wahlberg_keinath_1988"
                        ? adv::svi_correlation::wahlberg_keinath_1988
                        : adv::svi_correlation::daigger_1995;
    p.blanket_low_m = v.number("blanket_low");
    p.blanket_high_m = v.number("blanket_high");
    p.min_ratio = v.number("min_ratio");
    p.max_ratio = v.number("max_ratio");
    p.pump_min_m3_per_d = v.number("pump_min");
    p.pump_max_m3_per_d = v.has("pump_max") ? v.number("pump_max") : inf;
    p.max_change_per_hour = v.number("max_change_per_hour");
    p.clarifier_area_m2 = v.has("area") ? v.number("area") : 0.0;
    p.max_solids_loading_kg_per_m2_d = v.number("max_solids_loading");
    p.text_units = sys;
    adv::ras_state s;
    adv::ras_result r{};
    double first = 0.0;
    const int n = steps_of(v);
    for (int i = 0; i <= n; ++i) {
        const double now = i * v.number("period");
        adv::ras_inputs in;
        in.flow = adv::good(v.number("flow"), now);
        in.mlss = v.reading("mlss", now);
        in.ras_solids = v.reading("ras_solids", now);
        in.sv30 = v.reading("sv30", now);
        in.svi = v.reading("svi", now);
        in.blanket = v.reading("blanket", now);
        in.ras_flow = v.reading("ras_flow", now);
        r = adv::step_ras(p, in, s, now);
        s = r.state;
        first = i == 0 ? r.out.value : first;
    }
    print_advice(out, "RAS ratio", r.out, ratio_text, sys);
    print_run(out, v, ratio_text(first), ratio_text(r.out.value));
}

void run_recycle(const values& v, unit_system sys, std::ostream& out) {
    adv::recycle_params p;
    p.target_g_per_m3 = v.number("target");
    p.gain_per_g_per_m3 = v.number("gain");
    p.integral_time_s = v.number("integral_time");
    p.min_ratio = v.number("min_ratio");
    p.max_ratio = v.number("max_ratio");
    p.pump_min_m3_per_d = v.number("pump_min");
    p.pump_max_m3_per_d = v.has("pump_max") ? v.number("pump_max") : inf;
    p.max_change_per_hour = v.number("max_change_per_hour");
    p.text_units = sys;
    adv::recycle_state s;
    adv::recycle_result r{};
    double first = 0.0;
    const int n = steps_of(v);
    for (int i = 0; i <= n; ++i) {
        const double now = i * v.number("period");
        r = adv::step_recycle(p,
                              {adv::good(v.number("nitrate"), now),
                               adv::good(v.number("flow"), now), v.reading("recycle_flow", now)},
                              s, now);
        s = r.state;
        first = i == 0 ? r.out.value : first;
    }
    print_advice(out, "recycle ratio", r.out, ratio_text, sys);
    print_run(out, v, ratio_text(first), ratio_text(r.out.value));
}

void run_do(const values& v, unit_system sys, std::ostream& out) {
    adv::aeration_params p;
    const std::string_view mode = v.word("mode");
    p.mode = mode == "ammonia" ? adv::aeration_mode::ammonia
             : mode == "rules" ? adv::aeration_mode::rules
                               : adv::aeration_mode::automatic;
    p.min_g_per_m3 = v.number("min");
    p.max_g_per_m3 = v.number("max");
    p.max_change_per_hour_g_per_m3 = v.number("max_change_per_hour");
    p.cold_below_degC = v.number("cold_below");
    p.cold_minimum_g_per_m3 = v.number("cold_minimum");
    p.ammonia_loop = {v.number("target"), v.number("gain"), v.number("integral_time"),
                      v.number("feedforward_gain")};
    p.rules.step_g_per_m3 = v.number("step");
    p.rules.hysteresis_s = v.number("hysteresis");
    p.rules.residual_high_g_per_m3 = v.number("residual_high");
    p.text_units = sys;

    // History before the run: a day at the daily mean flow and an hour of steady nitrate, so
    // that the flow ratio and the nitrate trend start from known values.
    adv::aeration_state s;
    const double mean_flow =
        v.has("daily_mean_flow") ? v.number("daily_mean_flow") : v.number("flow");
    for (int i = 0; i < 24 * 12; ++i) {
        adv::window_add(s.flow_day, p.daily_window_s, mean_flow, (i - 24 * 12) * 300.0);
    }
    if (v.has("nitrate")) {
        for (int i = 0; i < 12; ++i) {
            adv::window_add(s.nitrate_trend, p.rules.nitrate_window_s, v.number("nitrate"),
                            (i - 12) * 300.0);
        }
    }
    const int n = steps_of(v);
    const double span = std::max(v.number("for"), 1.0);
    adv::aeration_result r{};
    double first = 0.0;
    for (int i = 0; i <= n; ++i) {
        const double now = i * v.number("period");
        adv::aeration_inputs in;
        in.dissolved_oxygen = v.reading("do", now);
        in.ammonia = v.reading("ammonia", now);
        in.nitrate = v.reading("nitrate", now);
        if (v.has("nitrate") && v.has("nitrate_end")) {
            const double f = std::min(now / span, 1.0);
            in.nitrate.value =
                v.number("nitrate") + (v.number("nitrate_end") - v.number("nitrate")) * f;
        }
        in.flow = adv::good(v.number("flow"), now);
        in.temperature = v.reading("temperature", now);
        in.setpoint = v.reading("current", now);
        r = adv::step_aeration(p, in, s, now);
        s = r.state;
        first = i == 0 ? r.out.value : first;
    }
    const auto write = [sys](double x) { return adv::text(x, quantity::concentration, sys); };
    print_advice(out, "DO set point", r.out, write, sys);
    print_run(out, v, write(first), write(r.out.value));
}

void run_was(const values& v, unit_system sys, std::ostream& out) {
    adv::waste_params p;
    p.mode = v.word("mode") == "mlss" ? adv::waste_mode::mlss : adv::waste_mode::srt;
    p.target_srt_s = v.number("target_srt");
    if (v.has("target_mlss")) {
        p.target_mlss_g_per_m3 = v.number("target_mlss");
    }
    p.system_volume_m3 = v.number("volume");
    p.aerobic_volume_m3 = v.has("aerobic_volume") ? v.number("aerobic_volume") : p.system_volume_m3;
    p.clarifier_volume_m3 = v.number("clarifier_volume");
    p.include_clarifier_solids = v.word("include_clarifier") == "yes";
    p.nitrifiers.kinetics = v.word("kinetics") == "metcalf_eddy_4th"
                                ? adv::nitrifier_kinetics::metcalf_eddy_4th
                                : adv::nitrifier_kinetics::metcalf_eddy_5th;
    p.nitrifiers.safety_factor = v.number("safety_factor");
    p.nitrifiers.ammonia_g_per_m3 = v.number("nitrifier_ammonia");
    p.nitrifiers.oxygen_g_per_m3 = v.number("nitrifier_do");
    p.max_daily_change = v.number("max_daily_change");
    p.min_waste_m3_per_d = v.number("min_waste");
    p.max_waste_m3_per_d = v.has("max_waste") ? v.number("max_waste") : inf;
    p.mlvss_fraction = v.number("mlvss_fraction");
    p.averaging_days = 1;
    p.text_units = sys;

    const double now = day_s + 12 * 3600.0; // midday of plant day 1
    adv::waste_state s;
    if (v.has("previous")) {
        // Yesterday's advice, in force since then.
        adv::remember(s.out, v.number("previous"), day_s - 12 * 3600.0, true);
        s.computed_day = 0;
    }
    adv::waste_inputs in;
    in.flow = adv::good(v.number("flow"), now);
    in.mlss = adv::good(v.number("mlss"), now);
    in.was_solids = adv::good(v.number("was_solids"), now);
    in.effluent_tss = v.reading("effluent_tss", now);
    in.was_flow = v.reading("was_flow", now);
    in.temperature = v.reading("temperature", now);
    in.influent_bod = v.reading("bod", now);
    in.recompute = true;
    const adv::waste_result r = adv::step_waste(p, in, s, now);
    print_advice(
        out, "waste flow", r.out, [sys](double x) { return adv::text_daily_flow(x, sys); }, sys);
}

std::vector<std::string_view> correlations() {
    return {"daigger_1995", "wahlberg_keinath_1988"};
}
std::vector<std::string_view> kinetics() {
    return {"metcalf_eddy_5th", "metcalf_eddy_4th"};
}

std::vector<command> commands() {
    std::vector<command> list;
    list.push_back(command{
        "do",
        "DO set point of an aerated zone: ammonia cascade or nitrate/DO rules",
        {word_key("mode", {"auto", "ammonia", "rules"},
                  "auto: the cascade when ammonia is given, else the rules"),
         value_key("ammonia", quantity::concentration, "", false, "ammonium in the zone (cascade)"),
         value_key("target", quantity::concentration, "1.0mg/L", false, "ammonia target"),
         number_key("gain", "0.5", "mg/L DO per mg/L ammonia error", 0.0, 20.0),
         value_key("integral_time", quantity::duration, "40min", false,
                   "integral time of the cascade", 60.0, day_s),
         value_key("feedforward_gain", quantity::concentration, "0.5mg/L", false,
                   "DO per unit of flow/daily mean - 1", 0.0, 8.0),
         value_key("do", quantity::concentration, "", false, "measured DO residual (rules)"),
         value_key("nitrate", quantity::concentration, "", false,
                   "aerobic-zone nitrate at the start (rules)"),
         value_key("nitrate_end", quantity::concentration, "", false,
                   "nitrate at the end of the run (a ramp)"),
         value_key("flow", quantity::flow, "", true, "influent flow"),
         value_key("daily_mean_flow", quantity::flow, "", false, "its daily mean (default: flow)"),
         value_key("temperature", quantity::temperature, "", false, "mixed-liquor temperature",
                   -5.0, 45.0),
         value_key("current", quantity::concentration, "", false,
                   "the DO set point in use (start value)", 0.0, 8.0),
         value_key("min", quantity::concentration, "0.5mg/L", false, "lower bound", 0.0, 8.0),
         value_key("max", quantity::concentration, "3.0mg/L", false, "upper bound", 0.0, 8.0),
         value_key("max_change_per_hour", quantity::concentration, "0.5mg/L", false, "rate limit",
                   0.01, 8.0),
         value_key("cold_below", quantity::temperature, "12degC", false,
                   "the minimum rises below this", -5.0, 40.0),
         value_key("cold_minimum", quantity::concentration, "1.0mg/L", false,
                   "minimum in cold mixed liquor", 0.0, 8.0),
         value_key("step", quantity::concentration, "0.1mg/L", false, "rules: change per decision",
                   0.01, 1.0),
         value_key("hysteresis", quantity::duration, "30min", false,
                   "rules: a condition must hold this long", 0.0, day_s),
         value_key("residual_high", quantity::concentration, "2.5mg/L", false,
                   "rules: a DO residual this high wastes air", 0.1, 8.0)},
        run_do,
        [](const values& v) -> std::string {
            if (v.number("min") > v.number("max")) {
                return "min is above max";
            }
            const std::string_view mode = v.word("mode");
            if ((mode == "ammonia" || (mode == "auto" && !v.has("nitrate"))) && !v.has("ammonia")) {
                return "the ammonia cascade needs ammonia=...";
            }
            if ((mode == "rules" || (mode == "auto" && !v.has("ammonia"))) &&
                (!v.has("do") || !v.has("nitrate"))) {
                return "the nitrate/DO rules need do=... and nitrate=...";
            }
            return {};
        }});
    for (auto& k : run_keys("1h", "1min")) {
        list.back().keys.push_back(k);
    }

    list.push_back(command{
        "recycle",
        "internal (nitrate) recycle as a multiple of the influent flow",
        {value_key("nitrate", quantity::concentration, "", true, "anoxic-zone nitrate"),
         value_key("flow", quantity::flow, "", true, "influent flow of the train"),
         value_key("target", quantity::concentration, "1.0mg/L", false, "anoxic nitrate target"),
         number_key("gain", "0.5", "ratio change per mg/L of error", 0.0, 20.0),
         value_key("integral_time", quantity::duration, "1h", false, "integral time", 60.0,
                   7 * day_s),
         value_key("recycle_flow", quantity::flow, "", false,
                   "the recycle flow in use (start value)"),
         number_key("min_ratio", "0.5", "lowest ratio", 0.0, 10.0),
         number_key("max_ratio", "4.0", "highest ratio", 0.0, 10.0),
         value_key("pump_min", quantity::flow, "0m3/d", false, "recycle pump minimum"),
         value_key("pump_max", quantity::flow, "", false,
                   "recycle pump maximum (default: no limit)"),
         number_key("max_change_per_hour", "0.5", "rate limit in ratio units", 0.01, 10.0)},
        run_recycle,
        [](const values& v) -> std::string {
            return v.number("min_ratio") > v.number("max_ratio") ? "min_ratio is above max_ratio"
                                                                 : "";
        }});
    for (auto& k : run_keys("2h", "5min")) {
        list.back().keys.push_back(k);
    }

    list.push_back(command{
        "ras",
        "RAS ratio: mass balance or settleometer, blanket trim, clarifier state point",
        {value_key("flow", quantity::flow, "", true, "influent flow to the clarifiers"),
         value_key("mlss", quantity::concentration, "", true, "MLSS"),
         value_key("ras_solids", quantity::concentration, "", false,
                   "RAS suspended solids (mass balance)"),
         value_key("sv30", quantity::settled_volume, "", false,
                   "30-minute settled volume (settleometer)", 0.0, 1000.0),
         value_key("svi", quantity::sludge_volume_index, "", false,
                   "SVI (stirred SSVI3.5 for wahlberg_keinath_1988)", 1.0, 2000.0),
         value_key("area", quantity::area, "", false, "clarifier area (enables the state point)"),
         value_key("blanket", quantity::length, "", false, "blanket height above the floor"),
         value_key("blanket_low", quantity::length, "0.3m", false, "bottom of the blanket band"),
         value_key("blanket_high", quantity::length, "0.9m", false, "top of the blanket band"),
         value_key("ras_flow", quantity::flow, "", false, "the RAS flow in use (start value)"),
         word_key("method", {"auto", "mass_balance", "settleometer"}, "base ratio method"),
         word_key("correlation", correlations(), "settling parameters from SVI"),
         number_key("min_ratio", "0.25", "lowest ratio", 0.0, 5.0),
         number_key("max_ratio", "1.5", "highest ratio", 0.0, 5.0),
         value_key("pump_min", quantity::flow, "0m3/d", false, "RAS pump minimum"),
         value_key("pump_max", quantity::flow, "", false, "RAS pump maximum (default: no limit)"),
         number_key("max_change_per_hour", "0.1", "rate limit in ratio units", 0.01, 5.0),
         value_key("max_solids_loading", quantity::solids_flux, "8kg/m2/h", false,
                   "solids loading limit", 1.0)},
        run_ras,
        [](const values& v) -> std::string {
            if (!v.has("ras_solids") && !v.has("sv30")) {
                return "give ras_solids=... (mass balance) or sv30=... (settleometer)";
            }
            if (v.number("min_ratio") > v.number("max_ratio")) {
                return "min_ratio is above max_ratio";
            }
            return v.number("blanket_low") > v.number("blanket_high")
                       ? "blanket_low is above blanket_high"
                       : "";
        }});
    for (auto& k : run_keys("2h", "5min")) {
        list.back().keys.push_back(k);
    }

    list.push_back(
        command{"state-point",
                "clarifier state point by solids flux theory (Vesilind settling from SVI)",
                {value_key("flow", quantity::flow, "", true, "influent flow to the clarifiers"),
                 value_key("ras_flow", quantity::flow, "", true, "RAS flow"),
                 value_key("mlss", quantity::concentration, "", true, "MLSS (feed concentration)"),
                 value_key("svi", quantity::sludge_volume_index, "", true,
                           "SVI (stirred SSVI3.5 for wahlberg_keinath_1988)", 1.0, 2000.0),
                 value_key("area", quantity::area, "", true, "total clarifier surface area", 0.01),
                 word_key("correlation", correlations(), "settling parameters from SVI"),
                 value_key("max_solids_loading", quantity::solids_flux, "8kg/m2/h", false,
                           "solids loading limit", 1.0),
                 value_key("ras_max", quantity::flow, "", false,
                           "highest RAS flow searched (default: 2 x flow)")},
                run_state_point,
                {}});

    list.push_back(command{
        "was",
        "daily waste volume that holds the target SRT (or steers MLSS), with the SRT guard",
        {word_key("mode", {"srt", "mlss"}, "hold target_srt or steer to target_mlss"),
         value_key("target_srt", quantity::duration, "10d", false, "target SRT", day_s,
                   100 * day_s),
         value_key("target_mlss", quantity::concentration, "", false, "MLSS target (mlss mode)",
                   100.0, 15000.0),
         value_key("volume", quantity::volume, "", true, "volume of the train's zones", 1.0),
         value_key("aerobic_volume", quantity::volume, "", false,
                   "its aerated part (default: volume)"),
         value_key("clarifier_volume", quantity::volume, "0m3", false, "clarifier volume"),
         word_key("include_clarifier", {"no", "yes"}, "count the clarifier inventory at MLSS"),
         value_key("mlss", quantity::concentration, "", true, "MLSS (rolling mean)", 1.0),
         value_key("was_solids", quantity::concentration, "", true, "waste sludge solids", 1.0),
         value_key("effluent_tss", quantity::concentration, "", false, "effluent suspended solids"),
         value_key("flow", quantity::flow, "", true, "influent flow (rolling mean)", 0.001),
         value_key("was_flow", quantity::flow, "", false, "metered waste flow (actual SRT)"),
         value_key("temperature", quantity::temperature, "", false,
                   "temperature (minimum aerobic SRT)", -5.0, 45.0),
         value_key("bod", quantity::concentration, "", false, "influent BOD (F/M)"),
         word_key("kinetics", kinetics(), "nitrifier parameter set"),
         number_key("safety_factor", "1.5", "on the minimum aerobic SRT", 1.0, 4.0),
         value_key("nitrifier_ammonia", quantity::concentration, "1.0mg/L", false,
                   "ammonia to reach", 0.05, 20.0),
         value_key("nitrifier_do", quantity::concentration, "2.0mg/L", false, "aerobic DO", 0.1,
                   8.0),
         value_key("previous", quantity::flow, "", false, "yesterday's advice (day-to-day limit)"),
         number_key("max_daily_change", "0.15", "day-to-day change limit", 0.01, 1.0),
         value_key("min_waste", quantity::flow, "0m3/d", false, "lowest waste flow"),
         value_key("max_waste", quantity::flow, "", false,
                   "highest waste flow (default: no limit)"),
         number_key("mlvss_fraction", "0.8", "MLVSS / MLSS for F/M", 0.3, 1.0)},
        run_was,
        [](const values& v) -> std::string {
            if (v.word("mode") == "mlss" && !v.has("target_mlss")) {
                return "mode=mlss needs target_mlss=...";
            }
            if (v.number("was_solids") <=
                (v.has("effluent_tss") ? v.number("effluent_tss") : 0.0)) {
                return "was_solids must be above effluent_tss";
            }
            if (v.has("aerobic_volume") && v.number("aerobic_volume") > v.number("volume")) {
                return "aerobic_volume is above volume";
            }
            return {};
        }});

    list.push_back(command{
        "min-srt",
        "minimum aerobic SRT for nitrification at a temperature",
        {value_key("temperature", quantity::temperature, "", true, "mixed-liquor temperature", -5.0,
                   45.0),
         word_key("kinetics", kinetics(), "nitrifier parameter set (Metcalf & Eddy)"),
         number_key("safety_factor", "1.5", "design SRT = factor x minimum", 1.0, 4.0),
         value_key("ammonia", quantity::concentration, "1.0mg/L", false, "ammonia to reach", 0.05,
                   20.0),
         value_key("do", quantity::concentration, "2.0mg/L", false, "aerobic DO", 0.1, 8.0)},
        run_min_srt,
        {}});
    return list;
}

// --- the command line
// ---------------------------------------------------------------------------------

constexpr std::string_view usage_head =
    "Usage: flocd calc [--units si|us] ADVISOR key=value ...\n"
    "       flocd calc ADVISOR --help     keys of one advisor, with units and defaults\n";

void print_overview(std::ostream& out, const std::vector<command>& list) {
    out << "flocd calc - run one advisor or formula on given inputs\n\n"
        << usage_head << "\nAdvisors:\n";
    for (const command& c : list) {
        std::string n{c.name};
        n.resize(14, ' ');
        out << "  " << n << c.summary << "\n";
    }
    out << "\nValues carry their unit, with or without a space in quotes: flow=4500m3/d, "
           "flow=\"0.5 MGD\",\n"
           "mlss=3000mg/L, temperature=12degC, for=6h. Plain numbers only for ratios, gains,\n"
           "fractions and for sv30 (mL/L) and svi (mL/g). --units us prints in US customary "
           "units.\n"
           "Stateful advisors (do, recycle, ras) start from the value in use and step through\n"
           "`for` with the inputs held, so that rate limits and controllers play out.\n"
           "Exit codes: 0 ok, 64 bad command line (advisor, key), 65 bad value.\n\n"
        << caution;
}

void print_keys(std::ostream& out, const command& c) {
    out << "flocd calc " << c.name << " - " << c.summary << "\n\nKeys:\n";
    for (const key_spec& k : c.keys) {
        // Pad the columns, but never cut a long name or default short.
        std::string n{k.name};
        n.resize(std::max<std::size_t>(n.size() + 1, 22), ' ');
        std::string what =
            k.required ? "required"
                       : (k.fallback.empty() ? "optional" : "default " + std::string{k.fallback});
        what.resize(std::max<std::size_t>(what.size() + 1, 20), ' ');
        out << "  " << n << what << k.help << " [" << unit_hint(k) << "]\n";
    }
    out << "\n" << caution;
}

const key_spec* find_key(const command& c, std::string_view name) {
    for (const key_spec& k : c.keys) {
        if (k.name == name) {
            return &k;
        }
    }
    return nullptr;
}

// The key closest to a misspelt one (edit distance), for the message.
std::string_view nearest_key(const command& c, std::string_view name) {
    std::string_view best;
    std::size_t best_d = 4;
    for (const key_spec& k : c.keys) {
        std::vector<std::size_t> row(k.name.size() + 1);
        for (std::size_t j = 0; j < row.size(); ++j) {
            row[j] = j;
        }
        for (std::size_t i = 1; i <= name.size(); ++i) {
            std::size_t diag = row[0];
            row[0] = i;
            for (std::size_t j = 1; j <= k.name.size(); ++j) {
                const std::size_t up = row[j];
                row[j] = std::min(
                    {row[j] + 1, row[j - 1] + 1, diag + (name[i - 1] == k.name[j - 1] ? 0U : 1U)});
                diag = up;
            }
        }
        if (row.back() < best_d) {
            best_d = row.back();
            best = k.name;
        }
    }
    return best;
}

std::variant<values, bad_input> parse_keys(const command& c,
                                           std::span<const std::string_view> words) {
    values v;
    std::map<std::string_view, bool> given;
    const std::string where = "flocd calc " + std::string{c.name} + ": ";
    for (const std::string_view w : words) {
        const std::size_t eq = w.find('=');
        if (eq == std::string_view::npos || eq == 0) {
            return bad_input{exit_usage, where + "'" + std::string{w} + "': expected key=value"};
        }
        const std::string_view name = w.substr(0, eq);
        const std::string_view text = w.substr(eq + 1);
        const key_spec* k = find_key(c, name);
        if (k == nullptr) {
            std::string m = where + "unknown key '" + std::string{name} + "'";
            const std::string_view near = nearest_key(c, name);
            m += near.empty() ? "" : "; did you mean '" + std::string{near} + "'?";
            m += " ('flocd calc " + std::string{c.name} + " --help' lists the keys)";
            return bad_input{exit_usage, m};
        }
        if (given[k->name]) {
            return bad_input{exit_usage, where + "key '" + std::string{name} + "' given twice"};
        }
        given[k->name] = true;
        if (k->type == key_type::word) {
            if (std::find(k->words.begin(), k->words.end(), text) == k->words.end()) {
                return bad_input{exit_data, where + std::string{w} + ": found \"" +
                                                std::string{text} + "\"; expected one of " +
                                                unit_hint(*k)};
            }
            v.set_word(k->name, std::string{text});
            continue;
        }
        const auto parsed = parse_value(*k, text);
        if (const auto* why = std::get_if<std::string>(&parsed)) {
            return bad_input{exit_data, where + std::string{w} + ": " + *why};
        }
        const double x = std::get<double>(parsed);
        if (x < k->min || x > k->max) {
            const units::unit& u = k->type == key_type::value
                                       ? units::canonical_unit(k->kind)
                                       : units::canonical_unit(quantity::dimensionless);
            return bad_input{exit_data, where + std::string{w} + ": found " + units::format(x, u) +
                                            "; expected a value " + range_text(*k)};
        }
        v.set_number(k->name, x);
    }
    for (const key_spec& k : c.keys) {
        if (v.has(k.name)) {
            continue;
        }
        if (k.required) {
            return bad_input{exit_usage, where + "missing key '" + std::string{k.name} + "' (" +
                                             std::string{k.help} + ", " + unit_hint(k) + ")"};
        }
        if (k.fallback.empty()) {
            continue;
        }
        if (k.type == key_type::word) {
            v.set_word(k.name, std::string{k.fallback});
        } else {
            v.set_number(k.name, std::get<double>(parse_value(k, k.fallback)));
        }
    }
    if (c.check) {
        if (const std::string why = c.check(v); !why.empty()) {
            return bad_input{exit_usage, where + why};
        }
    }
    return v;
}

} // namespace

int run_calc(std::span<const std::string_view> args, std::ostream& out, std::ostream& err) {
    const std::vector<command> list = commands();
    unit_system sys = unit_system::si;
    bool help = false;
    const command* chosen = nullptr;
    std::vector<std::string_view> keys;
    for (std::size_t i = 0; i < args.size(); ++i) {
        const std::string_view a = args[i];
        if (a == "--help" || a == "-h") {
            help = true;
        } else if (a == "--units" || a.starts_with("--units=")) {
            std::string_view system;
            if (a == "--units") {
                if (i + 1 >= args.size()) {
                    err << "flocd calc: --units needs si or us\n" << usage_head;
                    return exit_usage;
                }
                system = args[++i];
            } else {
                system = a.substr(8);
            }
            if (system != "si" && system != "us") {
                err << "flocd calc: --units " << system << ": expected si or us\n" << usage_head;
                return exit_usage;
            }
            sys = system == "us" ? unit_system::us_customary : unit_system::si;
        } else if (a.starts_with("-")) {
            err << "flocd calc: unknown option '" << a << "'\n" << usage_head;
            return exit_usage;
        } else if (chosen == nullptr) {
            const auto it = std::find_if(list.begin(), list.end(),
                                         [&](const command& c) { return c.name == a; });
            if (it == list.end()) {
                err << "flocd calc: unknown advisor '" << a << "'; expected one of";
                for (const command& c : list) {
                    err << " " << c.name;
                }
                err << "\n" << usage_head;
                return exit_usage;
            }
            chosen = &*it;
        } else {
            keys.push_back(a);
        }
    }
    if (chosen == nullptr) {
        if (help) {
            print_overview(out, list);
            return exit_ok;
        }
        err << "flocd calc: no advisor given\n" << usage_head << "Try 'flocd calc --help'.\n";
        return exit_usage;
    }
    if (help) {
        print_keys(out, *chosen);
        return exit_ok;
    }
    const auto parsed = parse_keys(*chosen, keys);
    if (const auto* bad = std::get_if<bad_input>(&parsed)) {
        err << bad->message << "\n";
        return bad->code;
    }
    chosen->run(std::get<values>(parsed), sys, out);
    out << caution;
    return exit_ok;
}

} // namespace floc::app
