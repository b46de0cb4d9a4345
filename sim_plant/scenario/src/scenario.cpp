#include "floc/sim/scenario.hpp"

#include "floc/config/table_reader.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <limits>
#include <map>
#include <sstream>

namespace floc::sim {
namespace {

using config::diagnostics;
using config::need;
using config::quote;
using config::table_reader;
using units::quantity;

constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double big = 1e12;

// A list of numbers written as one string, e.g. "0.6 0.5 0.45 ...".
template <std::size_t N>
std::optional<std::array<double, N>> number_string(table_reader& r, std::string_view key, double min, double max) {
    const std::optional<std::string> text = r.string(key, need::optional);
    if (!text) {
        return std::nullopt;
    }
    std::istringstream in(*text);
    std::vector<double> v;
    std::string word;
    bool good = true;
    while (in >> word) {
        char* end = nullptr;
        const double x = std::strtod(word.c_str(), &end);
        if (end == word.c_str() || *end != '\0' || !std::isfinite(x) || x < min || x > max) {
            good = false;
            break;
        }
        v.push_back(x);
    }
    if (!good || v.size() != N) {
        r.diags().error(r.pos_of(key), r.path_of(key),
                        good ? "a list of " + std::to_string(v.size()) + " numbers"
                             : "the text " + quote(*text),
                        "a string of " + std::to_string(N) + " numbers from " + std::to_string(static_cast<int>(min)) +
                            " to " + std::to_string(static_cast<int>(max)) + " separated by spaces");
        return std::nullopt;
    }
    std::array<double, N> out{};
    std::copy(v.begin(), v.end(), out.begin());
    return out;
}

template <class T>
void set(std::optional<T> v, T& target) {
    if (v) {
        target = *v;
    }
}

// ASM1 concentrations as a table of component names; alkalinity as a plain number in mol/m3.
void read_components(table_reader& r, asm1::vector& c) {
    for (std::size_t k = 0; k < asm1::component_count; ++k) {
        const std::string key{asm1::component_name(k)};
        if (k == asm1::s_alk) {
            set(r.number(key, 0.0, 1000.0, need::optional), c[k]);
        } else {
            set(r.quantity(key, quantity::concentration, 0.0, 1e6, need::optional), c[k]);
        }
    }
}

// A scenario file read as one that may be based on another (any), or as the base of one (base:
// a based_on key is then an error, so that no chain or cycle of bases is ever followed).
enum class load_as : std::uint8_t { any, base };
scenario_result load_file_as(const std::string& path, load_as as);

struct name_index {
    std::map<std::string, std::pair<std::size_t, std::size_t>, std::less<>> zones;  // train, zone
    std::map<std::string, std::size_t, std::less<>> trains;
    std::map<std::string, std::size_t, std::less<>> sensors;
};

class loader {
public:
    loader(diagnostics& d, scenario& s) : d_(d), s_(s) {}

    void read(table_reader& root) {
        read_version(root);
        root.table("scenario", need::required, [&](table_reader& r) { read_scenario(r); });
        root.table("solver", need::optional, [&](table_reader& r) { read_solver(r); });
        root.table("initial", need::optional, [&](table_reader& r) { read_initial(r); });
        root.table("influent", need::required, [&](table_reader& r) { read_influent(r); });
        root.table("biology", need::optional, [&](table_reader& r) { read_biology(r); });
        root.table("oxygen", need::optional, [&](table_reader& r) { read_oxygen(r); });
        std::size_t trains = 0;
        root.each_table("train", [&](table_reader& r, std::size_t i) {
            ++trains;
            read_train(r, i);
        });
        if (trains == 0) {
            d_.error(root.pos(), "train", "no [[train]] table", "at least one [[train]] with its zones and clarifier");
        }
        check_shares(root);
        root.each_table("sensor", [&](table_reader& r, std::size_t) { read_sensor(r); });
        root.each_table("event", [&](table_reader& r, std::size_t) { read_event(r); });
        root.table("server", need::optional, [&](table_reader& r) { read_server(r); });
        root.table("lab_sheet", need::optional, [&](table_reader& r) { read_lab_sheet(r); });
        if (root.has("registers")) {
            s_.default_registers = false;
            root.table("registers", need::optional, [&](table_reader& r) { read_registers(r); });
        } else {
            s_.registers = default_register_map(s_.plant, s_.sensors);
        }
    }

    // A scenario based on another: the base file's plant, then this file's changes (a new name,
    // seed and server, and the fault schedule). Only one level: a base cannot be based on another.
    void read_overlay(table_reader& root, std::string_view source_name) {
        read_version(root);
        // Without a base the changes cannot be read; they are not reported as unknown keys.
        const auto give_up = [&] { root.skip({"base_faults", "scenario", "server", "fault", "event"}); };
        const std::optional<std::string> base = root.string("based_on", need::required);
        if (!base) {
            give_up();
            return;
        }
        for (const std::string_view key : {"solver", "initial", "influent", "biology", "oxygen",
                                           "train", "sensor", "registers", "lab_sheet"}) {
            if (root.has(key)) {
                d_.error(root.pos_of(key), std::string{key},
                         "the table " + quote(key) + " in a scenario based on another",
                         "only [scenario], [server], [[fault]] and [[event]] here (the plant and "
                         "its lab sheet are the "
                         "base's; change them there)");
                root.skip({key});
            }
        }
        const std::filesystem::path here{std::string{source_name}};
        const std::filesystem::path base_path =
            std::filesystem::path{*base}.is_absolute() ? std::filesystem::path{*base} : here.parent_path() / *base;
        scenario_result b = load_file_as(base_path.string(), load_as::base);
        if (b.unreadable) {
            d_.error(root.pos_of("based_on"), "based_on", "the file " + quote(base_path.string()) + " that cannot be opened",
                     "the path of a readable scenario file, relative to this one");
            give_up();
            return;
        }
        if (!b.ok()) {
            base_errors_ = std::move(b.errors);
            d_.error(root.pos_of("based_on"), "based_on", "the invalid scenario " + quote(base_path.string()),
                     "a valid base scenario (its errors are listed above)");
            give_up();
            return;
        }
        const std::string source = s_.source_file;
        s_ = std::move(*b.value);
        s_.source_file = source;
        s_.based_on = base_path.string();
        index_names();
        const auto keep = root.choice<bool>("base_faults", {{"keep", true}, {"drop", false}}, need::optional);
        if (keep && !*keep) {
            for (sensor_spec& sn : s_.sensors) {
                sn.faults.clear();
            }
            s_.events.clear();
        }
        root.table("scenario", need::optional, [&](table_reader& r) {
            set(r.string("name", need::optional), s_.name);
            set(r.string("description", need::optional), s_.description);
            if (const auto seed = r.integer("seed", 0, std::numeric_limits<std::int64_t>::max(), need::optional)) {
                s_.seed = static_cast<std::uint64_t>(*seed);
            }
        });
        root.table("server", need::optional, [&](table_reader& r) { read_server(r); });
        root.each_table("fault", [&](table_reader& f, std::size_t) {
            const auto name = f.string("sensor", need::required);
            if (!name) {
                return;
            }
            const auto it = names_.sensors.find(*name);
            if (it == names_.sensors.end()) {
                f.diags().error(f.pos_of("sensor"), f.path_of("sensor"), "the sensor " + quote(*name),
                                "the name of a [[sensor]] of the base scenario");
                f.skip({"kind", "start", "end", "duration", "per_day", "magnitude", "hold"});
                return;
            }
            sensor_spec& sn = s_.sensors[it->second];
            read_fault(f, quantity_of(sn), sn);
        });
        root.each_table("event", [&](table_reader& r, std::size_t) { read_event(r); });
    }

    [[nodiscard]] std::vector<config::diagnostic> take_base_errors() { return std::move(base_errors_); }

private:
    void read_version(table_reader& root) {
        const auto version = root.integer("scenario_version", 1, 1000, need::required);
        if (version && *version != scenario_schema_version) {
            d_.error(root.pos_of("scenario_version"), "scenario_version", "version " + std::to_string(*version),
                     "scenario_version = " + std::to_string(scenario_schema_version) + " (the version this flocsim reads)");
        }
    }

    void index_names() {
        names_ = {};
        for (std::size_t t = 0; t < s_.plant.trains.size(); ++t) {
            names_.trains.emplace(s_.plant.trains[t].name, t);
            for (std::size_t z = 0; z < s_.plant.trains[t].zones.size(); ++z) {
                names_.zones.emplace(s_.plant.trains[t].zones[z].name, std::pair{t, z});
            }
        }
        for (std::size_t i = 0; i < s_.sensors.size(); ++i) {
            names_.sensors.emplace(s_.sensors[i].name, i);
        }
    }

    void read_scenario(table_reader& r) {
        set(r.string("name", need::required), s_.name);
        set(r.string("description", need::optional), s_.description);
        if (const auto seed = r.integer("seed", 0, std::numeric_limits<std::int64_t>::max(), need::optional)) {
            s_.seed = static_cast<std::uint64_t>(*seed);
        }
        const auto weekday = r.choice<int>("start_weekday",
                                           {{"monday", 0}, {"tuesday", 1}, {"wednesday", 2}, {"thursday", 3},
                                            {"friday", 4}, {"saturday", 5}, {"sunday", 6}},
                                           need::optional);
        set(weekday, s_.influent.start_weekday);
        if (const auto doy = r.integer("start_day_of_year", 1, 366, need::optional)) {
            s_.influent.start_day_of_year = static_cast<double>(*doy);
        }
    }

    void read_solver(table_reader& r) {
        set(r.choice<stepper_kind>("stepper", {{"dopri5", stepper_kind::dopri5}, {"rosenbrock4", stepper_kind::rosenbrock4}},
                                   need::optional),
            s_.solver.stepper);
        set(r.number("relative_tolerance", 1e-12, 1e-2, need::optional), s_.solver.relative_tolerance);
        set(r.number("absolute_tolerance", 1e-12, 1.0, need::optional), s_.solver.absolute_tolerance);
        set(r.quantity("max_step", quantity::duration, 1.0, 86400.0, need::optional), s_.solver.max_step_s);
    }

    void read_initial(table_reader& r) {
        set(r.choice<initial_mode>("state", {{"steady", initial_mode::steady}, {"guess", initial_mode::guess}},
                                   need::optional),
            s_.initial);
        r.table("guess", s_.initial == initial_mode::guess ? need::required : need::optional,
                [&](table_reader& g) { read_components(g, s_.initial_guess); });
    }

    void read_influent(table_reader& r) {
        influent_spec& in = s_.influent;
        in = flat_profiles(in);
        set(r.choice<influent_kind>("kind", {{"constant", influent_kind::constant}, {"generated", influent_kind::generated}},
                                    need::required),
            in.kind);
        set(r.quantity("flow", quantity::flow, 1.0, 1e8, need::required), in.mean_flow_m3_per_d);
        r.table("composition", need::required, [&](table_reader& c) { read_components(c, in.composition); });
        r.table("temperature", need::optional, [&](table_reader& t) {
            set(t.quantity("mean", quantity::temperature, 0.0, 40.0, need::optional), in.temperature_mean_c);
            set(t.quantity("seasonal_amplitude", quantity::temperature, 0.0, 20.0, need::optional, nullptr,
                           config::measure::difference),
                in.temperature_amplitude_c);
            if (const auto cd = t.integer("coldest_day", 1, 366, need::optional)) {
                in.coldest_day_of_year = static_cast<double>(*cd);
            }
            set(t.quantity("daily_amplitude", quantity::temperature, 0.0, 10.0, need::optional, nullptr,
                           config::measure::difference),
                in.temperature_diurnal_amplitude_c);
        });
        r.table("pattern", need::optional, [&](table_reader& p) {
            set(number_string<24>(p, "flow", 0.0, 10.0), in.flow_profile);
            set(number_string<24>(p, "load", 0.0, 10.0), in.load_profile);
            set(number_string<24>(p, "nitrogen", 0.0, 10.0), in.nitrogen_profile);
            set(number_string<7>(p, "weekly_flow", 0.0, 10.0), in.weekly_flow);
            set(number_string<7>(p, "weekly_load", 0.0, 10.0), in.weekly_load);
            if (const auto delay = p.quantity("weekend_delay", quantity::duration, 0.0, 6.0 * 3600.0, need::optional)) {
                in.weekly_delay_h[5] = *delay / 3600.0;
                in.weekly_delay_h[6] = *delay / 3600.0;
            }
            set(p.number("daily_variation", 0.0, 0.5, need::optional), in.daily_variation);
        });
        r.table("rain", need::optional, [&](table_reader& p) {
            rain_spec& rain = in.rain;
            set(p.number("events_per_week", 0.0, 7.0, need::optional), rain.events_per_week);
            set(p.number("peak_factor", 0.0, 20.0, need::optional), rain.mean_peak_factor);
            if (const auto tp = p.quantity("time_to_peak", quantity::duration, 600.0, 2.0 * 86400.0, need::optional)) {
                rain.mean_time_to_peak_d = *tp / 86400.0;
            }
            set(p.number("first_flush", 0.0, 10.0, need::optional), rain.first_flush);
            p.table("storm_water", need::optional, [&](table_reader& c) { read_components(c, rain.storm_water); });
        });
        if (in.kind == influent_kind::constant) {
            in = flat_profiles(in);
            in.daily_variation = 0.0;
            in.rain.events_per_week = 0.0;
        }
    }

    void read_biology(table_reader& r) {
        asm1::parameters& p = s_.plant.biology;
        asm1::kinetics& k = p.at_reference;
        set(r.quantity("reference_temperature", quantity::temperature, 0.0, 40.0, need::optional),
            p.reference_temperature_c);
        const auto rate = [&](std::string_view key, double& v) {
            set(r.quantity(key, quantity::rate, 0.0, 100.0, need::optional), v);
        };
        const auto conc = [&](std::string_view key, double& v) {
            set(r.quantity(key, quantity::concentration, 0.0, 1000.0, need::optional), v);
        };
        const auto plain = [&](std::string_view key, double& v, double lo, double hi) {
            set(r.number(key, lo, hi, need::optional), v);
        };
        rate("mu_h", k.mu_h);
        conc("k_s", k.k_s);
        conc("k_oh", k.k_oh);
        conc("k_no", k.k_no);
        rate("b_h", k.b_h);
        plain("eta_g", k.eta_g, 0.0, 1.0);
        plain("eta_h", k.eta_h, 0.0, 1.0);
        rate("k_h", k.k_h);
        plain("k_x", k.k_x, 0.0, 10.0);
        rate("mu_a", k.mu_a);
        conc("k_nh", k.k_nh);
        rate("b_a", k.b_a);
        conc("k_oa", k.k_oa);
        plain("k_a", k.k_a, 0.0, 10.0);
        plain("y_h", p.stoich.y_h, 0.01, 0.99);
        plain("y_a", p.stoich.y_a, 0.01, 0.99);
        plain("f_p", p.stoich.f_p, 0.0, 1.0);
        plain("i_xb", p.stoich.i_xb, 0.0, 0.2);
        plain("i_xp", p.stoich.i_xp, 0.0, 0.2);
        plain("tss_per_cod", p.tss_per_cod, 0.1, 1.5);
        r.table("theta", need::optional, [&](table_reader& t) {
            const auto th = [&](std::string_view key, double& v) { set(t.number(key, 0.9, 1.3, need::optional), v); };
            th("mu_h", p.theta.mu_h);
            th("b_h", p.theta.b_h);
            th("k_h", p.theta.k_h);
            th("k_x", p.theta.k_x);
            th("mu_a", p.theta.mu_a);
            th("b_a", p.theta.b_a);
            th("k_a", p.theta.k_a);
        });
    }

    void read_oxygen(table_reader& r) {
        oxygen_spec& o = s_.plant.oxygen;
        set(r.choice<saturation_rule>("saturation",
                                      {{"benson_krause", saturation_rule::benson_krause}, {"fixed", saturation_rule::fixed}},
                                      need::optional),
            o.rule);
        set(r.quantity("fixed_saturation", quantity::concentration, 0.1, 50.0,
                       o.rule == saturation_rule::fixed ? need::required : need::optional),
            o.fixed_saturation_g_per_m3);
        if (const auto elevation = r.quantity("elevation", quantity::length, -400.0, 5000.0, need::optional)) {
            o.pressure_kpa = standard_pressure_kpa(*elevation);
        }
        set(r.number("beta", 0.5, 1.1, need::optional), o.beta);
        set(r.quantity("kla_reference_temperature", quantity::temperature, 0.0, 40.0, need::optional),
            o.kla_reference_temperature_c);
        set(r.number("kla_theta", 1.0, 1.1, need::optional), o.kla_theta);
    }

    void read_pi(table_reader& r, pi_spec& pi, quantity out_kind, double out_max, double default_offset) {
        pi.gain = r.number("gain", -1e9, 1e9, need::required).value_or(0.0);
        pi.integral_time_d = r.quantity("integral_time", quantity::duration, 1.0, 1e8, need::required).value_or(86400.0) / 86400.0;
        pi.tracking_time_d = r.quantity("tracking_time", quantity::duration, 1.0, 1e8, need::optional).value_or(0.0) / 86400.0;
        pi.offset = r.quantity("offset", out_kind, 0.0, out_max, need::optional).value_or(default_offset);
    }

    void read_train(table_reader& r, std::size_t index) {
        train_spec t;
        set(r.name("name", need::required), t.name);
        if (!t.name.empty() && !names_.trains.emplace(t.name, index).second) {
            d_.error(r.pos_of("name"), r.path_of("name"), "the train name " + quote(t.name) + " a second time",
                     "a name no other train has");
        }
        set(r.number("influent_share", 0.0, 1.0, need::optional), t.influent_share);
        share_pos_.push_back(r.pos_of("influent_share"));
        std::map<std::string, std::size_t, std::less<>> zone_names;
        r.each_table("zone", [&](table_reader& z, std::size_t zi) {
            zone_spec zs;
            set(z.name("name", need::required), zs.name);
            if (!zs.name.empty()) {
                if (names_.zones.count(zs.name) != 0) {
                    d_.error(z.pos_of("name"), z.path_of("name"), "the zone name " + quote(zs.name) + " a second time",
                             "a name no other zone has");
                } else {
                    names_.zones.emplace(zs.name, std::pair{index, zi});
                    zone_names.emplace(zs.name, zi);
                }
            }
            set(z.choice<zone_kind>("kind", {{"anoxic", zone_kind::anoxic}, {"aerobic", zone_kind::aerobic},
                                             {"anaerobic", zone_kind::anaerobic}},
                                    need::required),
                zs.kind);
            set(z.quantity("volume", quantity::volume, 1.0, 1e7, need::required), zs.volume_m3);
            const auto mode = z.choice<int>("aeration", {{"none", 0}, {"fixed", 1}, {"do_loop", 2}},
                                            zs.kind == zone_kind::aerobic ? need::required : need::optional)
                                  .value_or(0);
            if (mode == 2 && zs.kind != zone_kind::aerobic) {
                d_.error(z.pos_of("aeration"), z.path_of("aeration"), "a DO loop in an unaerated zone",
                         "aeration = \"none\" or \"fixed\" for an anoxic or anaerobic zone");
            }
            zs.aeration.mode = mode == 2 ? aeration_mode::do_loop : aeration_mode::fixed_kla;
            zs.aeration.kla_per_d =
                z.quantity("kla", quantity::rate, 0.0, 2000.0, mode == 1 ? need::required : need::optional).value_or(0.0);
            set(z.quantity("do_setpoint", quantity::concentration, 0.0, 10.0, mode == 2 ? need::required : need::optional),
                zs.aeration.do_setpoint_g_per_m3);
            z.table("do_loop", mode == 2 ? need::required : need::optional, [&](table_reader& l) {
                pi_spec& pi = zs.aeration.loop;
                const auto limits = l.quantity_range("kla_limits", quantity::rate, need::required);
                if (limits) {
                    pi.out_min = limits->first;
                    pi.out_max = limits->second;
                }
                read_pi(l, pi, quantity::rate, 5000.0, 0.0);
            });
            if (zs.aeration.mode == aeration_mode::fixed_kla) {
                // An idle loop still needs limits for a later switch to do_loop.
                zs.aeration.loop.out_max = std::max(zs.aeration.loop.out_max, zs.aeration.kla_per_d);
            }
            t.zones.push_back(std::move(zs));
        });
        if (t.zones.empty()) {
            d_.error(r.pos(), r.path_of("zone"), "no [[train.zone]] in this train", "at least one zone");
        } else if (t.zones.size() > max_zones_per_train) {
            d_.error(r.pos(), r.path_of("zone"), std::to_string(t.zones.size()) + " zones",
                     "at most " + std::to_string(max_zones_per_train) + " zones per train");
        }
        const auto zone_ref = [&](table_reader& x, std::string_view key, need n) -> std::optional<std::size_t> {
            const auto name = x.string(key, n);
            if (!name) {
                return std::nullopt;
            }
            const auto it = zone_names.find(*name);
            if (it == zone_names.end()) {
                d_.error(x.pos_of(key), x.path_of(key), "the zone " + quote(*name), "a zone of this train");
                return std::nullopt;
            }
            return it->second;
        };
        r.table("recycle", need::optional, [&](table_reader& x) {
            recycle_spec& rc = t.recycle;
            set(zone_ref(x, "from", need::optional), rc.from_zone);
            set(zone_ref(x, "to", need::optional), rc.to_zone);
            const std::size_t from = rc.from_zone == no_index ? t.zones.size() - 1 : rc.from_zone;
            if (!t.zones.empty() && rc.to_zone > from) {
                d_.error(x.pos(), x.path(), "a recycle from a zone upstream of the zone it returns to",
                         "\"from\" downstream of (or equal to) \"to\"");
            }
            set(x.choice<recycle_mode>("control", {{"fixed", recycle_mode::fixed_flow}, {"nitrate_loop", recycle_mode::nitrate_loop}},
                                       need::optional),
                rc.mode);
            set(x.quantity("flow", quantity::flow, 0.0, 1e8, need::required), rc.flow_m3_per_d);
            x.table("nitrate_loop", rc.mode == recycle_mode::nitrate_loop ? need::required : need::optional,
                    [&](table_reader& l) {
                        set(zone_ref(l, "zone", need::required), rc.measured_zone);
                        set(l.quantity("setpoint", quantity::concentration, 0.0, 30.0, need::required),
                            rc.nitrate_setpoint_g_per_m3);
                        const auto limits = l.quantity_range("flow_limits", quantity::flow, need::required);
                        if (limits) {
                            rc.loop.out_min = limits->first;
                            rc.loop.out_max = limits->second;
                        }
                        read_pi(l, rc.loop, quantity::flow, 1e8, rc.flow_m3_per_d);
                    });
        });
        r.table("ras", need::required, [&](table_reader& x) {
            set(x.choice<ras_mode>("control", {{"fixed", ras_mode::fixed_flow}, {"ratio", ras_mode::flow_ratio}}, need::optional),
                t.ras.mode);
            set(x.quantity("flow", quantity::flow, 0.0, 1e8, t.ras.mode == ras_mode::fixed_flow ? need::required : need::optional),
                t.ras.flow_m3_per_d);
            set(x.number("ratio", 0.0, 5.0, t.ras.mode == ras_mode::flow_ratio ? need::required : need::optional), t.ras.ratio);
        });
        r.table("was", need::required, [&](table_reader& x) {
            set(x.quantity("flow", quantity::flow, 0.0, 1e7, need::required), t.was.flow_m3_per_d);
            set(x.choice<waste_source>("from", {{"underflow", waste_source::underflow}, {"mixed_liquor", waste_source::mixed_liquor}},
                                       need::optional),
                t.was.from);
        });
        r.table("clarifier", need::required, [&](table_reader& x) {
            clarifier_spec& c = t.clarifier;
            set(x.name("name", need::required), c.name);
            set(x.quantity("area", quantity::area, 1.0, 1e6, need::required), c.area_m2);
            set(x.quantity("side_water_depth", quantity::length, 1.0, 20.0, need::required), c.depth_m);
            if (const auto f = x.integer("feed_layer", 1, static_cast<std::int64_t>(settler_layers), need::optional)) {
                c.feed_layer = static_cast<std::size_t>(*f - 1);
            }
            set(x.quantity("blanket_threshold", quantity::concentration, 100.0, 50000.0, need::optional),
                c.blanket_threshold_g_per_m3);
            set(x.choice<blanket_rule>("blanket_rule", {{"interpolated", blanket_rule::interpolated}, {"benchmark", blanket_rule::benchmark}},
                                       need::optional),
                c.blanket);
            x.table("settling", need::optional, [&](table_reader& st) {
                settling_spec& p = c.settling;
                set(st.quantity("v0_max", quantity::velocity, 1.0, 5000.0, need::optional), p.v0_max_m_per_d);
                set(st.quantity("v0", quantity::velocity, 1.0, 5000.0, need::optional), p.v0_m_per_d);
                set(st.number("r_h", 1e-6, 0.1, need::optional), p.r_h_m3_per_g);
                set(st.number("r_p", 1e-6, 1.0, need::optional), p.r_p_m3_per_g);
                set(st.number("f_ns", 0.0, 0.1, need::optional), p.f_ns);
                set(st.quantity("x_t", quantity::concentration, 10.0, 50000.0, need::optional), p.x_t_g_per_m3);
            });
        });
        s_.plant.trains.push_back(std::move(t));
    }

    void check_shares(table_reader& root) {
        double sum = 0.0;
        for (const train_spec& t : s_.plant.trains) {
            sum += t.influent_share;
        }
        if (!s_.plant.trains.empty() && std::abs(sum - 1.0) > 1e-6) {
            std::array<char, 32> buf{};
            std::snprintf(buf.data(), buf.size(), "%g", sum);
            d_.error(share_pos_.empty() ? root.pos() : share_pos_.front(), "train[0].influent_share",
                     std::string{"shares adding up to "} + buf.data(), "influent shares of all trains adding up to 1");
        }
    }

    std::optional<std::size_t> train_ref(table_reader& r, std::string_view key, need n) {
        const auto name = r.string(key, n);
        if (!name) {
            return std::nullopt;
        }
        const auto it = names_.trains.find(*name);
        if (it == names_.trains.end()) {
            d_.error(r.pos_of(key), r.path_of(key), "the train " + quote(*name), "the name of a [[train]]");
            return std::nullopt;
        }
        return it->second;
    }

    std::optional<std::pair<std::size_t, std::size_t>> zone_ref(table_reader& r, std::string_view key, need n) {
        const auto name = r.string(key, n);
        if (!name) {
            return std::nullopt;
        }
        const auto it = names_.zones.find(*name);
        if (it == names_.zones.end()) {
            d_.error(r.pos_of(key), r.path_of(key), "the zone " + quote(*name), "the name of a [[train.zone]]");
            return std::nullopt;
        }
        return it->second;
    }

    void read_sensor(table_reader& r) {
        sensor_spec s;
        set(r.name("name", need::required), s.name);
        if (!s.name.empty() && !names_.sensors.emplace(s.name, s_.sensors.size()).second) {
            d_.error(r.pos_of("name"), r.path_of("name"), "the sensor name " + quote(s.name) + " a second time",
                     "a name no other sensor has");
        }
        set(r.string("description", need::optional), s.description);
        // What it measures, and the quantity of its value.
        enum class place : std::uint8_t { zone, train, plant };
        struct what {
            std::string_view word;
            signal_kind kind;
            place where;
            quantity q;
            std::size_t component;
        };
        static const std::vector<what> words{
            {"do", signal_kind::zone_component, place::zone, quantity::concentration, asm1::s_o},
            {"nitrate", signal_kind::zone_component, place::zone, quantity::concentration, asm1::s_no},
            {"ammonium", signal_kind::zone_component, place::zone, quantity::concentration, asm1::s_nh},
            {"mlss", signal_kind::zone_tss, place::zone, quantity::concentration, 0},
            {"kla", signal_kind::zone_kla, place::zone, quantity::rate, 0},
            {"influent_flow", signal_kind::influent_flow, place::train, quantity::flow, 0},
            {"temperature", signal_kind::influent_temperature, place::plant, quantity::temperature, 0},
            {"ras_flow", signal_kind::ras_flow, place::train, quantity::flow, 0},
            {"was_flow", signal_kind::was_flow, place::train, quantity::flow, 0},
            {"recycle_flow", signal_kind::recycle_flow, place::train, quantity::flow, 0},
            {"effluent_flow", signal_kind::effluent_flow, place::train, quantity::flow, 0},
            {"effluent_ammonium", signal_kind::effluent_component, place::train, quantity::concentration, asm1::s_nh},
            {"effluent_nitrate", signal_kind::effluent_component, place::train, quantity::concentration, asm1::s_no},
            {"effluent_tss", signal_kind::effluent_tss, place::train, quantity::concentration, 0},
            {"ras_tss", signal_kind::underflow_tss, place::train, quantity::concentration, 0},
            {"blanket", signal_kind::blanket_height, place::train, quantity::length, 0},
            {"aeration_power", signal_kind::aeration_power, place::plant, quantity::power, 0},
        };
        std::vector<std::pair<std::string_view, std::size_t>> options;
        for (std::size_t i = 0; i < words.size(); ++i) {
            options.emplace_back(words[i].word, i);
        }
        std::optional<std::size_t> chosen;
        {
            // choice<> takes an initializer_list; build the word list by hand.
            const auto text = r.string("measures", need::required);
            if (text) {
                for (const auto& [w, i] : options) {
                    if (w == *text) {
                        chosen = i;
                    }
                }
                if (!chosen) {
                    std::string list;
                    for (const auto& [w, i] : options) {
                        list += (list.empty() ? "" : ", ") + quote(w);
                    }
                    d_.error(r.pos_of("measures"), r.path_of("measures"), "the string " + quote(*text), "one of " + list);
                }
            }
        }
        quantity q = quantity::concentration;
        if (chosen) {
            const what& w = words[*chosen];
            q = w.q;
            s.signal.kind = w.kind;
            s.signal.component = w.component;
            if (w.where == place::zone) {
                if (const auto z = zone_ref(r, "zone", need::required)) {
                    s.signal.train = z->first;
                    s.signal.zone = z->second;
                }
            } else if (w.where == place::train) {
                const bool one = s_.plant.trains.size() == 1;
                if (const auto t = train_ref(r, "train", one ? need::optional : need::required)) {
                    s.signal.train = *t;
                } else if (one) {
                    s.signal.train = 0;
                }
            }
        } else {
            r.skip({"zone", "train"});
        }
        set(r.quantity("noise", q, 0.0, big, need::optional, nullptr, config::measure::difference), s.noise_sd);
        set(r.quantity("lag", quantity::duration, 0.0, 86400.0, need::optional), s.lag_s);
        set(r.quantity("sample_interval", quantity::duration, 0.1, 86400.0, need::optional), s.sample_interval_s);
        if (const auto range = r.quantity_range("range", q, need::optional)) {
            s.range_min = range->first;
            s.range_max = range->second;
        }
        r.each_table("fault", [&](table_reader& f, std::size_t) { read_fault(f, q, s); });
        s_.sensors.push_back(std::move(s));
    }

    void read_fault(table_reader& f, quantity q, sensor_spec& s) {
        sensor_fault fault;
        set(f.choice<fault_kind>("kind", {{"stuck", fault_kind::stuck}, {"drift", fault_kind::drift}, {"spike", fault_kind::spike},
                                          {"dropout", fault_kind::dropout}, {"offset", fault_kind::offset}},
                                 need::required),
            fault.kind);
        read_window(f, fault.start_s, fault.end_s);
        if (fault.kind == fault_kind::drift) {
            set(f.quantity("per_day", q, -big, big, need::required, nullptr, config::measure::difference), fault.magnitude);
        } else if (fault.kind == fault_kind::spike || fault.kind == fault_kind::offset) {
            set(f.quantity("magnitude", q, -big, big, need::required, nullptr, config::measure::difference), fault.magnitude);
        } else if (fault.kind == fault_kind::dropout) {
            set(f.boolean("hold", need::optional), fault.hold);
        }
        s.faults.push_back(fault);
    }

    void read_window(table_reader& r, double& start_s, double& end_s) {
        set(r.quantity("start", quantity::duration, 0.0, 1e10, need::required), start_s);
        const auto end = r.quantity("end", quantity::duration, 0.0, 1e10, need::optional);
        const auto duration = r.quantity("duration", quantity::duration, 0.0, 1e10, need::optional);
        if (end && duration) {
            d_.error(r.pos_of("duration"), r.path_of("duration"), "both \"end\" and \"duration\"", "one of them");
        } else if (end) {
            end_s = *end;
            if (end_s <= start_s) {
                d_.error(r.pos_of("end"), r.path_of("end"), "an end not after the start", "an end after \"start\"");
            }
        } else if (duration) {
            end_s = start_s + *duration;
        }
    }

    void read_event(table_reader& r) {
        plant_event e;
        set(r.choice<event_kind>("kind", {{"link_loss", event_kind::link_loss}, {"slow_replies", event_kind::slow_replies},
                                          {"dropped_connections", event_kind::dropped_connections},
                                          {"exception_replies", event_kind::exception_replies},
                                          {"wrong_transaction_id", event_kind::wrong_transaction_id},
                                          {"blower_trip", event_kind::blower_trip}, {"power_failure", event_kind::power_failure}},
                                 need::required),
            e.kind);
        read_window(r, e.start_s, e.end_s);
        if (e.kind == event_kind::blower_trip) {
            set(train_ref(r, "train", need::required), e.train);
        }
        if (e.kind == event_kind::slow_replies) {
            set(r.quantity("delay", quantity::duration, 0.001, 600.0, need::required), e.delay_s);
        }
        if (e.kind == event_kind::exception_replies) {
            if (const auto code = r.integer("exception", 1, 11, need::required)) {
                static constexpr std::array<std::int64_t, 9> codes{1, 2, 3, 4, 5, 6, 8, 10, 11};
                if (std::find(codes.begin(), codes.end(), *code) == codes.end()) {
                    d_.error(r.pos_of("exception"), r.path_of("exception"), "the exception code " + std::to_string(*code),
                             "a Modbus exception code: 1, 2, 3, 4, 5, 6, 8, 10 or 11");
                } else {
                    e.exception = static_cast<std::uint8_t>(*code);
                }
            }
        }
        if (is_protocol_fault(e.kind) && e.kind != event_kind::link_loss) {
            if (const auto fc = r.integer("function", 1, 127, need::optional)) {
                e.function = static_cast<std::uint8_t>(*fc);
            }
            if (const auto first = r.integer("first_address", 0, 65535, need::optional)) {
                e.first_address = static_cast<std::uint16_t>(*first);
            }
            if (const auto last = r.integer("last_address", 0, 65535, need::optional)) {
                e.last_address = static_cast<std::uint16_t>(*last);
                if (e.last_address < e.first_address) {
                    d_.error(r.pos_of("last_address"), r.path_of("last_address"),
                             "a last address below the first (" + std::to_string(e.first_address) + ")",
                             "last_address >= first_address");
                }
            }
        }
        s_.events.push_back(e);
    }

    void read_server(table_reader& r) {
        server_spec& sv = s_.server;
        if (const auto port = r.integer("port", 1, 65535, need::optional)) {
            sv.port = static_cast<std::uint16_t>(*port);
        }
        if (const auto n = r.integer("max_connections", 1, 64, need::optional)) {
            sv.max_connections = static_cast<std::size_t>(*n);
        }
        set(r.quantity("idle_timeout", quantity::duration, 0.0, 86400.0, need::optional), sv.idle_timeout_s);
    }

    // Times of day "HH:MM" (plant time), each once, returned ascending in seconds after midnight.
    std::optional<std::vector<double>> times_of_day(table_reader& r, std::string_view key, need n) {
        const auto list = r.string_list(key, n);
        if (!list) {
            return std::nullopt;
        }
        const std::vector<config::source_pos> where = r.list_positions(key);
        const auto at = [&](std::size_t i) { return i < where.size() ? where[i] : r.pos_of(key); };
        const auto path = [&](std::size_t i) {
            return r.path_of(key) + "[" + std::to_string(i) + "]";
        };
        std::vector<double> out;
        bool good = true;
        for (std::size_t i = 0; i < list->size(); ++i) {
            const std::string& t = (*list)[i];
            const bool shape =
                t.size() == 5 && t[2] == ':' && std::all_of(t.begin(), t.end(), [](char c) {
                    return c == ':' || (c >= '0' && c <= '9');
                });
            const int h = shape ? (t[0] - '0') * 10 + (t[1] - '0') : 99;
            const int m = shape ? (t[3] - '0') * 10 + (t[4] - '0') : 99;
            if (h > 23 || m > 59) {
                d_.error(at(i), path(i), quote(t),
                         "a time of day \"HH:MM\" from \"00:00\" to \"23:59\" (plant time)");
                good = false;
                continue;
            }
            const double s = 3600.0 * h + 60.0 * m;
            if (std::find(out.begin(), out.end(), s) != out.end()) {
                d_.error(at(i), path(i), quote(t) + " a second time", "each time of day once");
                good = false;
                continue;
            }
            out.push_back(s);
        }
        if (good && out.empty()) {
            d_.error(r.pos_of(key), r.path_of(key), "an empty list",
                     "at least one time of day, like [\"08:00\"]");
            good = false;
        }
        if (!good) {
            return std::nullopt;
        }
        std::sort(out.begin(), out.end());
        return out;
    }

    void read_lab_sheet(table_reader& r) {
        lab_sheet_spec& sheet = s_.lab_sheet;
        sheet.source_file = s_.source_file;
        const std::vector<double> times =
            times_of_day(r, "sample_times", need::required).value_or(std::vector<double>{});
        constexpr double max_delay_s = 30.0 * 86400.0;
        const double delay =
            r.quantity("entry_delay", quantity::duration, 0.0, max_delay_s, need::required)
                .value_or(0.0);
        set(r.boolean("at_start", need::optional), sheet.at_start);
        std::map<std::string, std::size_t, std::less<>> names;
        r.each_table("entry", [&](table_reader& e, std::size_t i) {
            lab_sheet_entry entry;
            entry.at = e.pos_of("name");
            set(e.name("name", need::required), entry.name);
            if (!entry.name.empty() && !names.emplace(entry.name, i).second) {
                d_.error(e.pos_of("name"), e.path_of("name"),
                         "the entry " + quote(entry.name) + " a second time",
                         "each flocd lab entry once on the sheet");
            }
            const auto figure = e.choice<lab_figure>("source",
                                                     {{"mlss", lab_figure::mlss},
                                                      {"ras_tss", lab_figure::ras_tss},
                                                      {"was_tss", lab_figure::was_tss},
                                                      {"effluent_tss", lab_figure::effluent_tss},
                                                      {"influent_bod5", lab_figure::influent_bod5},
                                                      {"sv30", lab_figure::sv30},
                                                      {"temperature", lab_figure::temperature}},
                                                     need::required);
            if (!figure) {
                e.skip({"train", "composite"});
            } else {
                entry.figure = *figure;
                const std::string what{to_string(*figure)};
                if (may_have_train(*figure)) {
                    const bool one = s_.plant.trains.size() == 1 && needs_train(*figure);
                    const need n = needs_train(*figure) && !one ? need::required : need::optional;
                    if (const auto t = train_ref(e, "train", n)) {
                        entry.train = *t;
                    } else if (one) {
                        entry.train = 0;
                    }
                } else if (e.has("train")) {
                    d_.error(e.pos_of("train"), e.path_of("train"), "a train for " + what,
                             "no train: " + what + " is the plant's");
                    e.skip({"train"});
                }
                if (e.has("composite") && !may_be_composite(*figure)) {
                    d_.error(e.pos_of("composite"), e.path_of("composite"),
                             "a composite of " + what,
                             "a grab sample (composites are for influent_bod5 and effluent_tss)");
                    e.skip({"composite"});
                } else {
                    set(e.quantity("composite", quantity::duration, 3600.0, 7.0 * 86400.0,
                                   need::optional),
                        entry.composite_s);
                }
            }
            entry.sample_times_s = times_of_day(e, "sample_times", need::optional).value_or(times);
            entry.entry_delay_s =
                e.quantity("entry_delay", quantity::duration, 0.0, max_delay_s, need::optional)
                    .value_or(delay);
            sheet.entries.push_back(std::move(entry));
        });
        if (sheet.entries.empty()) {
            d_.error(r.pos(), r.path_of("entry"), "no [[lab_sheet.entry]]",
                     "at least one entry naming a flocd lab entry");
        }
    }

    void read_registers(table_reader& r) {
        register_word_order order = register_word_order::abcd;
        set(r.choice<register_word_order>("word_order", {{"abcd", register_word_order::abcd}, {"badc", register_word_order::badc},
                                                         {"cdab", register_word_order::cdab}, {"dcba", register_word_order::dcba}},
                                          need::optional),
            order);
        const std::pair<std::string_view, register_table> tables[] = {
            {"input", register_table::input_registers},
            {"holding", register_table::holding_registers},
            {"discrete", register_table::discrete_inputs},
            {"coil", register_table::coils},
        };
        std::vector<config::source_pos> at;
        for (const auto& [key, table] : tables) {
            r.each_table(key, [&, table = table](table_reader& e, std::size_t) {
                register_entry entry;
                entry.table = table;
                entry.order = order;
                at.push_back(e.pos());
                read_entry(e, entry);
                s_.registers.entries.push_back(std::move(entry));
            });
        }
        for (const auto& [i, j] : overlapping_entries(s_.registers)) {
            const register_entry& a = s_.registers.entries[i];
            const register_entry& b = s_.registers.entries[j];
            d_.error(at[j], "registers", b.label + " at address " + std::to_string(b.address) + " overlapping " + a.label +
                                              " at address " + std::to_string(a.address),
                     "entries of one table that do not overlap (flags in one register need different bits)");
        }
    }

    void read_entry(table_reader& e, register_entry& entry) {
        const bool bits = entry.table == register_table::coils || entry.table == register_table::discrete_inputs;
        if (const auto a = e.integer("address", 0, 65535, need::required)) {
            entry.address = static_cast<std::uint16_t>(*a);
        }
        entry.type = bits ? register_type::bit : register_type::float32;
        if (!bits) {
            set(e.choice<register_type>("type", {{"uint16", register_type::uint16}, {"int16", register_type::int16},
                                                 {"uint32", register_type::uint32}, {"int32", register_type::int32},
                                                 {"float32", register_type::float32}},
                                        need::optional),
                entry.type);
            if (const auto b = e.integer("bit", 0, 15, need::optional)) {
                entry.bit = static_cast<std::uint8_t>(*b);
                if (entry.type != register_type::uint16) {
                    e.diags().error(e.pos_of("bit"), e.path_of("bit"), "a bit in a " + std::string{type_name(entry.type)} + " register",
                                    "a bit only with type = \"uint16\"");
                }
            }
        }
        if (entry.address + entry.width() > 65536U) {
            e.diags().error(e.pos_of("address"), e.path_of("address"), "a 32-bit value at address 65535",
                            "an address from 0 to 65534 for a 32-bit value");
        }
        const auto source = e.choice<register_source>(
            "source", {{"plant_time", register_source::plant_time}, {"sensor", register_source::sensor},
                       {"setpoint", register_source::setpoint}, {"blower_running", register_source::blower_running},
                       {"power_failure", register_source::power_failure}, {"spare", register_source::spare}},
            need::required);
        std::optional<quantity> q;
        if (source) {
            entry.source = *source;
            switch (*source) {
            case register_source::plant_time:
                entry.label = "plant_time";
                q = quantity::duration;
                break;
            case register_source::sensor: {
                const auto name = e.string("sensor", need::required);
                if (name) {
                    const auto it = names_.sensors.find(*name);
                    if (it == names_.sensors.end()) {
                        e.diags().error(e.pos_of("sensor"), e.path_of("sensor"), "the sensor " + quote(*name), "the name of a [[sensor]]");
                    } else {
                        entry.sensor = it->second;
                        entry.label = *name;
                        q = quantity_of(s_.sensors[it->second]);
                    }
                }
                break;
            }
            case register_source::setpoint: read_setpoint(e, entry, q); break;
            case register_source::blower_running:
                set(train_ref(e, "train", need::required), entry.train);
                entry.label = "blower_running";
                break;
            case register_source::power_failure: entry.label = "power_failure"; break;
            case register_source::spare: entry.label = "spare"; break;
            }
        }
        if (q && !bits) {
            entry.unit = e.unit_symbol("unit", *q, need::optional);
            set(e.number("scale", 1e-9, 1e9, need::optional), entry.scale);
        } else {
            e.skip({"unit", "scale"});
        }
    }

    static std::string_view type_name(register_type t) {
        switch (t) {
        case register_type::bit: return "bit";
        case register_type::int16: return "int16";
        case register_type::uint16: return "uint16";
        case register_type::int32: return "int32";
        case register_type::uint32: return "uint32";
        case register_type::float32: return "float32";
        }
        return "?";
    }

    static quantity quantity_of(const sensor_spec& s) {
        switch (s.signal.kind) {
        case signal_kind::zone_component:
        case signal_kind::zone_tss:
        case signal_kind::influent_component:
        case signal_kind::effluent_component:
        case signal_kind::effluent_tss:
        case signal_kind::underflow_tss: return quantity::concentration;
        case signal_kind::zone_kla: return quantity::rate;
        case signal_kind::influent_flow:
        case signal_kind::ras_flow:
        case signal_kind::was_flow:
        case signal_kind::recycle_flow:
        case signal_kind::effluent_flow: return quantity::flow;
        case signal_kind::influent_temperature: return quantity::temperature;
        case signal_kind::blanket_height: return quantity::length;
        case signal_kind::aeration_power: return quantity::power;
        }
        return quantity::dimensionless;
    }

    void read_setpoint(table_reader& e, register_entry& entry, std::optional<quantity>& q) {
        const auto kind = e.choice<setpoint_kind>(
            "setpoint", {{"do", setpoint_kind::do_setpoint}, {"kla", setpoint_kind::kla}, {"ras_flow", setpoint_kind::ras_flow},
                         {"ras_ratio", setpoint_kind::ras_ratio}, {"was_flow", setpoint_kind::was_flow},
                         {"recycle_flow", setpoint_kind::recycle_flow}, {"nitrate", setpoint_kind::nitrate_setpoint}},
            need::required);
        if (!kind) {
            e.skip({"zone", "train", "writable", "limits"});
            return;
        }
        entry.setpoint = *kind;
        const bool per_zone = *kind == setpoint_kind::do_setpoint || *kind == setpoint_kind::kla;
        std::string owner;
        if (per_zone) {
            if (const auto z = zone_ref(e, "zone", need::required)) {
                entry.train = z->first;
                entry.zone = z->second;
                owner = s_.plant.trains[z->first].zones[z->second].name;
            }
        } else if (const auto t = train_ref(e, "train", need::required)) {
            entry.train = *t;
            owner = s_.plant.trains[*t].name;
        }
        static const std::map<setpoint_kind, std::pair<std::string_view, quantity>> labels{
            {setpoint_kind::do_setpoint, {"do_setpoint", quantity::concentration}},
            {setpoint_kind::kla, {"kla", quantity::rate}},
            {setpoint_kind::ras_flow, {"ras_flow", quantity::flow}},
            {setpoint_kind::ras_ratio, {"ras_ratio", quantity::dimensionless}},
            {setpoint_kind::was_flow, {"was_flow", quantity::flow}},
            {setpoint_kind::recycle_flow, {"recycle_flow", quantity::flow}},
            {setpoint_kind::nitrate_setpoint, {"nitrate_setpoint", quantity::concentration}},
        };
        const auto& [label, kind_q] = labels.at(*kind);
        entry.label = owner + "." + std::string{label};
        q = kind_q;
        set(e.boolean("writable", need::optional), entry.writable);
        const auto limits = e.quantity_range("limits", kind_q, entry.writable ? need::required : need::optional);
        if (limits) {
            entry.write_min = limits->first;
            entry.write_max = limits->second;
        }
    }

    diagnostics& d_;
    scenario& s_;
    name_index names_;
    std::vector<config::source_pos> share_pos_;
    std::vector<config::diagnostic> base_errors_;
};

} // namespace

const sensor_spec* scenario::find_sensor(std::string_view n) const {
    for (const sensor_spec& s : sensors) {
        if (s.name == n) {
            return &s;
        }
    }
    return nullptr;
}

namespace {

scenario_result load_text_as(std::string_view text, std::string_view source_name, load_as as) {
    scenario_result result;
    diagnostics diags{std::string{source_name}};
    scenario s;
    s.source_file = std::string{source_name};
    loader l{diags, s};
    config::read_document(text, diags, [&](table_reader& root) {
        if (!root.has("based_on")) {
            l.read(root);
        } else if (as == load_as::any) {
            l.read_overlay(root, source_name);
        } else {
            diags.error(root.pos_of("based_on"), "based_on", "based_on in a scenario used as a base",
                        "a base scenario that is not based on another");
            root.skip({"scenario_version", "based_on", "base_faults", "scenario", "server", "fault", "event"});
        }
    });
    result.errors = l.take_base_errors();
    for (config::diagnostic& d : diags.take_sorted()) {
        result.errors.push_back(std::move(d));
    }
    if (result.errors.empty()) {
        s.influent.seed = s.seed;
        result.value = std::move(s);
    }
    return result;
}

scenario_result load_file_as(const std::string& path, load_as as) {
    std::ifstream in(path, std::ios::binary);
    if (!in) {
        scenario_result r;
        r.unreadable = true;
        r.errors.push_back(config::diagnostic{path, {}, "", "a file that cannot be opened", "a readable scenario file"});
        return r;
    }
    std::ostringstream text;
    text << in.rdbuf();
    return load_text_as(text.str(), path, as);
}

} // namespace

scenario_result load_scenario_text(std::string_view text, std::string_view source_name) {
    return load_text_as(text, source_name, load_as::any);
}

scenario_result load_scenario_file(const std::string& path) { return load_file_as(path, load_as::any); }

influent_spec mean_influent(const influent_spec& s) {
    influent_spec m = flat_profiles(s);
    m.kind = influent_kind::constant;
    m.daily_variation = 0.0;
    m.rain.events_per_week = 0.0;
    m.temperature_amplitude_c = 0.0;
    m.temperature_diurnal_amplitude_c = 0.0;
    return m;
}

std::vector<double> initial_state(const scenario& s, steady_state_result* result) {
    const plant_model model{s.plant, s.influent};
    asm1::vector guess = s.initial_guess;
    if (s.initial == initial_mode::steady) {
        // A generic activated-sludge start; the steady state does not depend on it.
        guess = s.influent.composition;
        guess[asm1::x_bh] = std::max(guess[asm1::x_bh], 1500.0);
        guess[asm1::x_ba] = std::max(guess[asm1::x_ba], 80.0);
        guess[asm1::x_i] = std::max(guess[asm1::x_i], 800.0);
        guess[asm1::x_p] = std::max(guess[asm1::x_p], 300.0);
        guess[asm1::s_s] = 5.0;
        guess[asm1::s_o] = 1.0;
        guess[asm1::s_no] = 5.0;
        guess[asm1::s_nh] = 5.0;
    }
    std::vector<double> x = model.uniform_state(guess);
    if (s.initial == initial_mode::steady) {
        const plant_model steady{s.plant, mean_influent(s.influent)};
        const steady_state_result r = find_steady_state(steady, initial_controls(s.plant), x);
        if (result != nullptr) {
            *result = r;
        }
    }
    return x;
}

simulation make_simulation(const scenario& s, std::vector<double> x0) {
    plant_model model{s.plant, s.influent};
    plant_controls u = initial_controls(s.plant);
    return simulation{std::move(model), s.sensors, s.events, s.solver, std::move(x0), std::move(u), s.seed};
}

} // namespace floc::sim
