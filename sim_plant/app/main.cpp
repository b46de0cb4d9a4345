// flocsim: the simulated activated-sludge plant of floc's bench.
//
// This build runs scenarios headless (for a plant time or to a steady state) and writes trends and
// final states. The Modbus/TCP serving of the simulated PLC joins `run` as a second mode once the
// project's Modbus/TCP server library is available; the scenario, the simulation and the register
// encoding it will serve are already here (floc::sim_scenario, floc::sim_model).
#include "report.hpp"

#include "exit_codes.hpp"
#include "floc/sim/scenario.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <exception>
#include <fstream>
#include <iostream>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <variant>

#ifndef FLOC_VERSION
#define FLOC_VERSION "0.0.0"
#endif

namespace {

constexpr std::string_view help_text = R"(flocsim - the simulated activated-sludge plant of floc's bench

Usage:
  flocsim --check-scenario FILE        validate a scenario, print a summary, exit
  flocsim --scenario FILE --for TIME [output options]
                                       run FILE headless for TIME of plant time
  flocsim --scenario FILE --to-steady-state [output options]
                                       find the plant's steady state at its mean influent
  flocsim --scenario FILE --print-registers
                                       print the simulated PLC's register map
  flocsim --help | --version

Output options (headless runs):
  --csv FILE            trend: every state of every zone and clarifier layer, the effluent,
                        the energy figures and every sensor, one row per interval
  --csv-interval TIME   interval of the trend rows (default 15min)
  --json FILE           the final state, as one JSON document
  --quiet               no status line on standard error

TIME is a number with a unit: 90s, 15min, 36h, 14d (or "14 d").

The model: ASM1 (Henze et al. 1987) in trains of completely mixed zones, a ten-layer Takacs
(1991) clarifier, KLa aeration with DO saturation after Benson & Krause (1984) or fixed, the
PLC's own DO and nitrate PI loops, an influent generator with diurnal, weekly, rain and seasonal
patterns, sensors with noise, lag, sampling and scheduled faults. Scenario files are TOML; the
schema is in sim_plant/README.md, examples in sim_plant/scenarios/.

Serving the simulated PLC over Modbus/TCP is not part of this build.

CAUTION: flocsim is a simulator for bench tests. Never point it, floc or the test suite at a
real plant network. floc is advisory only: a licensed operator decides every set point; local
permits, codes and plant procedures prevail over any advice.

Exit codes: 0 ok / scenario valid, 64 bad command line, 66 file unreadable, 69 mode not
            available in this build, 70 internal or solver error, 73 output file not
            writable, 78 scenario invalid.
)";

struct options {
    std::string scenario;
    std::string check;
    std::optional<double> for_s;
    bool steady = false;
    bool print_registers = false;
    std::string csv;
    double csv_interval_s = 900.0;
    std::string json;
    bool quiet = false;
};

int usage_error(std::string_view why) {
    std::cerr << "flocsim: " << why << "\nTry 'flocsim --help'.\n";
    return floc::app::exit_usage;
}

// "14d", "14 d", "90min" -> seconds.
std::optional<double> parse_duration(std::string text) {
    std::size_t i = 0;
    while (i < text.size() && (std::isdigit(static_cast<unsigned char>(text[i])) != 0 || text[i] == '.')) {
        ++i;
    }
    if (i > 0 && i < text.size() && text[i] != ' ') {
        text.insert(i, " ");
    }
    const auto parsed = floc::units::parse_quantity(text);
    const auto* q = std::get_if<floc::units::quantity_value>(&parsed);
    if (q == nullptr || q->as_written->kind != floc::units::quantity::duration) {
        return std::nullopt;
    }
    const double s = q->canonical();
    if (!std::isfinite(s) || s <= 0.0) {
        return std::nullopt;
    }
    return s;
}

std::variant<options, int> parse(std::span<char*> args) {
    options o;
    for (std::size_t i = 1; i < args.size(); ++i) {
        const std::string_view a = args[i];
        const auto value = [&]() -> std::optional<std::string> {
            if (i + 1 >= args.size()) {
                return std::nullopt;
            }
            return std::string{args[++i]};
        };
        if (a == "--scenario" || a == "--check-scenario" || a == "--csv" || a == "--json" || a == "--for" ||
            a == "--csv-interval") {
            const auto v = value();
            if (!v) {
                return usage_error(std::string{a} + " needs a value");
            }
            if (a == "--scenario") {
                o.scenario = *v;
            } else if (a == "--check-scenario") {
                o.check = *v;
            } else if (a == "--csv") {
                o.csv = *v;
            } else if (a == "--json") {
                o.json = *v;
            } else {
                const auto d = parse_duration(*v);
                if (!d) {
                    return usage_error(std::string{a} + ": found '" + *v + "'; expected a duration like 90s, 15min, 36h or 14d");
                }
                if (a == "--for") {
                    o.for_s = *d;
                } else {
                    o.csv_interval_s = *d;
                }
            }
        } else if (a == "--to-steady-state") {
            o.steady = true;
        } else if (a == "--print-registers") {
            o.print_registers = true;
        } else if (a == "--quiet") {
            o.quiet = true;
        } else {
            return usage_error("unknown option '" + std::string{a} + "'");
        }
    }
    return o;
}

// Loads a scenario; on failure prints the diagnostics and returns the exit code.
std::variant<floc::sim::scenario, int> load(const std::string& path) {
    floc::sim::scenario_result r = floc::sim::load_scenario_file(path);
    if (r.unreadable) {
        std::cerr << "flocsim: " << path << ": cannot open the scenario file\n";
        return floc::app::exit_no_input;
    }
    if (!r.ok()) {
        for (const auto& e : r.errors) {
            std::cerr << e.message() << "\n";
        }
        std::cerr << "flocsim: " << path << ": " << r.errors.size() << (r.errors.size() == 1 ? " error" : " errors")
                  << "; the scenario is invalid\n";
        return floc::app::exit_config;
    }
    return std::move(*r.value);
}

int headless(const options& o, const floc::sim::scenario& s) {
    std::ofstream csv;
    if (!o.csv.empty()) {
        csv.open(o.csv);
        if (!csv) {
            std::cerr << "flocsim: " << o.csv << ": cannot write the trend file\n";
            return floc::app::exit_cant_create;
        }
    }
    std::ofstream json;
    if (!o.json.empty()) {
        json.open(o.json);
        if (!json) {
            std::cerr << "flocsim: " << o.json << ": cannot write the state file\n";
            return floc::app::exit_cant_create;
        }
    }
    floc::sim::scenario run = s;
    if (o.steady) {
        run.initial = floc::sim::initial_mode::steady;
        run.influent = floc::sim::mean_influent(s.influent);
    }
    floc::sim::steady_state_result steady;
    std::vector<double> x0 = floc::sim::initial_state(run, &steady);
    if (run.initial == floc::sim::initial_mode::steady && !steady.converged) {
        std::cerr << "flocsim: the steady state was not reached (residual " << steady.residual << " 1/d after "
                  << steady.days << " plant days)" << (steady.error.empty() ? "" : ": " + steady.error) << "\n";
        return floc::app::exit_software;
    }
    floc::sim::simulation sim = floc::sim::make_simulation(run, std::move(x0));
    if (csv) {
        floc::app::write_csv_header(csv, run);
        floc::app::write_csv_row(csv, run, sim);
    }
    const double until = o.steady ? 0.0 : *o.for_s;
    double next_row = o.csv_interval_s;
    double next_status = 0.0;
    const double status_every = std::max(until / 200.0, 3600.0);
    while (sim.time_s() < until) {
        const double target = std::min({until, next_row, sim.time_s() + 86400.0});
        if (!sim.advance_to(target)) {
            std::cerr << "\nflocsim: " << sim.error() << "\n";
            return floc::app::exit_software;
        }
        if (sim.time_s() >= next_row - 1e-9) {
            if (csv) {
                floc::app::write_csv_row(csv, run, sim);
            }
            next_row += o.csv_interval_s;
        }
        if (!o.quiet && sim.time_s() >= next_status) {
            std::cerr << "\r" << floc::app::status_line(run, sim, until) << std::flush;
            next_status += status_every;
        }
    }
    if (!o.quiet) {
        std::cerr << "\r" << floc::app::status_line(run, sim, until) << "\n";
    }
    if (json) {
        floc::app::write_json(json, run, sim);
    }
    csv.close();
    json.close();
    if ((!o.csv.empty() && csv.fail()) || (!o.json.empty() && json.fail())) {
        std::cerr << "flocsim: writing the output files failed\n";
        return floc::app::exit_io_error;
    }
    const floc::sim::plant_output out = sim.outputs();
    std::printf("plant time %.0f s: effluent COD %.1f, NH4-N %.2f, NO3-N %.2f, TSS %.1f mg/L; aeration %.0f kWh, pumping %.0f kWh\n",
                sim.time_s(), floc::sim::asm1::total_cod(out.effluent), out.effluent[floc::sim::asm1::s_nh],
                out.effluent[floc::sim::asm1::s_no], out.effluent_tss_g_per_m3, out.energy.aeration_kwh, out.energy.pumping_kwh);
    return floc::app::exit_ok;
}

int run(std::span<char*> args) {
    if (args.size() < 2) {
        return usage_error("no command given");
    }
    const std::string_view first = args[1];
    if (first == "--help" || first == "-h") {
        std::cout << help_text;
        return floc::app::exit_ok;
    }
    if (first == "--version") {
        std::cout << "flocsim " FLOC_VERSION "\n";
        return floc::app::exit_ok;
    }
    auto parsed = parse(args);
    if (const int* code = std::get_if<int>(&parsed)) {
        return *code;
    }
    const options& o = std::get<options>(parsed);
    if (!o.check.empty()) {
        if (!o.scenario.empty() || o.for_s || o.steady) {
            return usage_error("--check-scenario takes no other options");
        }
        auto s = load(o.check);
        if (const int* code = std::get_if<int>(&s)) {
            return *code;
        }
        floc::app::write_summary(std::cout, std::get<floc::sim::scenario>(s));
        return floc::app::exit_ok;
    }
    if (o.scenario.empty()) {
        return usage_error("no scenario given (--scenario FILE)");
    }
    if (o.for_s && o.steady) {
        return usage_error("--for and --to-steady-state exclude each other");
    }
    auto s = load(o.scenario);
    if (const int* code = std::get_if<int>(&s)) {
        return *code;
    }
    const floc::sim::scenario& sc = std::get<floc::sim::scenario>(s);
    if (o.print_registers) {
        floc::app::write_register_map(std::cout, sc);
        return floc::app::exit_ok;
    }
    if (!o.for_s && !o.steady) {
        std::cerr << "flocsim: serving the simulated PLC over Modbus/TCP is not part of this build; "
                     "run headless with --for TIME or --to-steady-state\n";
        return floc::app::exit_unavailable;
    }
    return headless(o, sc);
}

} // namespace

int main(int argc, char** argv) {
    try {
        return run(std::span<char*>{argv, static_cast<std::size_t>(argc)});
    } catch (const std::exception& e) {
        std::cerr << "flocsim: internal error: " << e.what() << "\n";
        return floc::app::exit_software;
    }
}
