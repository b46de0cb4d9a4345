// flocsim: the simulated activated-sludge plant of floc's bench.
//
// Two modes: serving (the simulated PLC on Modbus/TCP, on plant time in real time, accelerated,
// as fast as possible or in lockstep, with the operator stand-in that reads floc's advice; see
// serve.hpp) and headless runs (for a plant time or to a steady state, writing trends and final
// states). The model, the scenarios and the register encoding are floc::sim_model and
// floc::sim_scenario; the Modbus/TCP side is floc::sim_server on floc::modbus_server.
#include "report.hpp"
#include "serve.hpp"

#include "exit_codes.hpp"
#include "floc/sim/scenario.hpp"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <exception>
#include <fstream>
#include <iostream>
#include <optional>
#include <set>
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
  flocsim --scenario FILE [--serve] [serving options]
                                       serve the simulated PLC on Modbus/TCP (the default
                                       when neither --for nor --to-steady-state is given;
                                       any serving option below implies --serve)
  flocsim --scenario FILE --for TIME [output options]
                                       run FILE headless for TIME of plant time
  flocsim --scenario FILE --to-steady-state [output options]
                                       find the plant's steady state at its mean influent
  flocsim --check-scenario FILE        validate a scenario, print a summary, exit
  flocsim --scenario FILE --print-registers
                                       print the simulated PLC's register map
  flocsim --help | --version

Serving options:
  --serve               serve even with --for and no other serving option
  --bind ADDRESS        IPv4 address to listen on (default 127.0.0.1); an address outside
                        127.0.0.0/8 is refused unless --allow-non-loopback is given
  --allow-non-loopback  accept a --bind or --hmi address outside 127.0.0.0/8 (see CAUTION)
  --port N              TCP port (default: the scenario's [server] port, else 15020);
                        0 picks a free port
  --speed N             N plant seconds per wall second (default 1, real time; e.g. 60, 600)
  --fast                plant time as fast as the model runs, still serving between steps
  --lockstep STEP       plant time moves by STEP (e.g. 5s, 1min) each time a client has read
                        the plant-time registers, after that read is answered; while a
                        protocol fault or link loss is on and no client reads them, by STEP
                        each wall second
  --for TIME            stop after TIME of plant time (exit 0)
  --status              a live status line on standard error (plant day and time, influent
                        flow, effluent NH4/NO3/TSS, blanket, active faults): rewritten in place
                        on a terminal, else one line per plant hour
  --trend FILE          CSV trend, as --csv in headless runs (--trend-interval as --csv-interval)
  --json FILE           the final state at exit
  --client-log FILE     at exit, JSON of every client's requests by function code:
                        {"clients":[{"address":..., "requests":N, "writes":W,
                        "by_function":{"3":n, ...}}]}, written atomically

  The first line on standard output is "flocsim: serving NAME on ADDRESS:PORT". Plant time is
  published in the registers (the Marrowby map: input registers 0-1, uint32 seconds since the
  scenario started). Bench writes to the writable set points (holding registers) are taken;
  values outside an entry's limits are clamped to them; a non-number gets exception 04, a
  read-only, unmapped or half-covered register exception 02. SIGTERM and SIGINT stop cleanly.

Operator stand-in (reads floc's advice as an HMI does, function 03 only, never a write; only
--enter-lab writes, and only into flocd's lab entries):
  --hmi ADDRESS:PORT    the floc advisory server to read (retried quietly every 3 s)
  --hmi-config FILE     the flocd config that server runs (its register map is built from it)
  --apply-advice DELAY  apply each good advice to the simulated PLC's set points DELAY of plant
                        time after it was first read: DO set points, recycle flow = advised
                        ratio x the train's influent flow, RAS flow (or ratio), daily waste flow
  --show-advice         print the advice table on standard output (advisor, value, quality,
                        main reason, age, what the operator did): redrawn in place at most once
                        a second on a terminal, else a block every 5 s
  --enter-lab           play the lab technician too: take the scenario's [lab_sheet] samples
                        from the plant at their times (MLSS, RAS and WAS solids, SV30, effluent
                        TSS, influent BOD5, temperature) and, after each entry delay, type the
                        results into flocd's lab entries as an HMI does: the sample's age in
                        minutes, then the value (function 16), then read the slot back (03);
                        each outcome ("accepted", "refused: out of range", ...) on standard
                        error as an "operator at ..." line; a refused entry is not typed again

Output options (headless runs):
  --csv FILE            trend: every state of every zone and clarifier layer, the effluent,
                        the energy figures and every sensor, one row per interval
  --csv-interval TIME   interval of the trend rows (default 15min)
  --json FILE           the final state, as one JSON document
  --quiet               no status line on standard error

TIME, STEP and DELAY are a number with a unit: 90s, 15min, 36h, 14d (or "14 d").

The model: ASM1 (Henze et al. 1987) in trains of completely mixed zones, a ten-layer Takacs
(1991) clarifier, KLa aeration with DO saturation after Benson & Krause (1984) or fixed, the
PLC's own DO and nitrate PI loops, an influent generator with diurnal, weekly, rain and seasonal
patterns, sensors with noise, lag, sampling and scheduled faults, and protocol faults (link loss,
slow replies, dropped connections, exception replies, wrong transaction ids) on the scenario's
schedule. Scenario files are TOML; the schema is in sim_plant/README.md, examples in
sim_plant/scenarios/.

CAUTION: flocsim is a simulator for bench tests. Never point it, floc or the test suite at a
real plant network: it answers and takes writes like a PLC, from whatever connects.
floc is advisory only: a licensed operator decides every set point; local permits, codes and
plant procedures prevail over any advice.

Exit codes: 0 ok / scenario valid / stopped by --for or a signal, 64 bad command line, 66 file
            unreadable, 70 internal or solver error, 71 the port cannot be opened, 73 output
            file not writable, 74 an output file failed while writing, 78 scenario or flocd
            config invalid (or the lab sheet does not fit the flocd config).
)";

struct options {
    std::string scenario;
    std::string check;
    std::optional<double> for_s;
    bool steady = false;
    bool print_registers = false;
    bool serve = false;
    std::string csv;
    double csv_interval_s = 900.0;
    std::string json;
    bool quiet = false;
    bool allow_non_loopback = false;
    std::string hmi;
    bool serving_option = false;  // a serving option was given: it implies --serve
    floc::app::serve_options serving;
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

std::optional<std::uint16_t> parse_port(std::string_view text) {
    unsigned v = 0;
    const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), v);
    if (ec != std::errc{} || end != text.data() + text.size() || v > 65535) {
        return std::nullopt;
    }
    return static_cast<std::uint16_t>(v);
}

std::optional<double> parse_speed(const std::string& text) {
    char* end = nullptr;
    const double v = std::strtod(text.c_str(), &end);
    if (end == text.c_str() || *end != '\0' || !std::isfinite(v) || v <= 0.0 || v > 1e9) {
        return std::nullopt;
    }
    return v;
}

std::variant<options, int> parse(std::span<char*> args) {
    options o;
    floc::app::serve_options& sv = o.serving;
    std::optional<std::string> clock_option;  // the one of --speed, --fast, --lockstep given
    const auto set_clock = [&](std::string_view a) -> bool {
        if (clock_option && *clock_option != a) {
            return false;
        }
        clock_option = std::string{a};
        return true;
    };
    for (std::size_t i = 1; i < args.size(); ++i) {
        const std::string_view a = args[i];
        const auto value = [&]() -> std::optional<std::string> {
            if (i + 1 >= args.size()) {
                return std::nullopt;
            }
            return std::string{args[++i]};
        };
        static const std::set<std::string_view> with_value{
            "--scenario", "--check-scenario", "--csv", "--trend", "--json", "--for", "--csv-interval",
            "--trend-interval", "--bind", "--port", "--speed", "--lockstep", "--client-log", "--hmi",
            "--hmi-config", "--apply-advice"};
        static const std::set<std::string_view> serving_only{
            "--bind", "--port", "--speed", "--fast", "--lockstep", "--client-log", "--status", "--hmi",
            "--hmi-config", "--apply-advice", "--show-advice", "--enter-lab", "--allow-non-loopback"};
        o.serving_option = o.serving_option || serving_only.count(a) != 0;
        if (with_value.count(a) != 0) {
            const auto v = value();
            if (!v) {
                return usage_error(std::string{a} + " needs a value");
            }
            const auto duration = [&]() -> std::optional<double> {
                const auto d = parse_duration(*v);
                if (!d) {
                    usage_error(std::string{a} + ": found '" + *v + "'; expected a duration like 90s, 15min, 36h or 14d");
                }
                return d;
            };
            if (a == "--scenario") {
                o.scenario = *v;
            } else if (a == "--check-scenario") {
                o.check = *v;
            } else if (a == "--csv" || a == "--trend") {
                o.csv = *v;
            } else if (a == "--json") {
                o.json = *v;
            } else if (a == "--bind") {
                sv.bind = *v;
            } else if (a == "--client-log") {
                sv.client_log = *v;
            } else if (a == "--hmi") {
                o.hmi = *v;
            } else if (a == "--hmi-config") {
                sv.hmi_config = *v;
            } else if (a == "--port") {
                sv.port = parse_port(*v);
                if (!sv.port) {
                    return usage_error("--port: found '" + *v + "'; expected a port number from 0 to 65535 (0: a free port)");
                }
            } else if (a == "--speed") {
                const auto speed = parse_speed(*v);
                if (!speed) {
                    return usage_error("--speed: found '" + *v +
                                       "'; expected plant seconds per wall second, a number above 0 (1 = real time)");
                }
                if (!set_clock(a)) {
                    return usage_error("--speed, --fast and --lockstep exclude each other");
                }
                sv.clock = floc::app::clock_mode::speed;
                sv.speed = *speed;
            } else {
                const auto d = duration();
                if (!d) {
                    return floc::app::exit_usage;
                }
                if (a == "--for") {
                    o.for_s = *d;
                } else if (a == "--csv-interval" || a == "--trend-interval") {
                    o.csv_interval_s = *d;
                } else if (a == "--lockstep") {
                    if (!set_clock(a)) {
                        return usage_error("--speed, --fast and --lockstep exclude each other");
                    }
                    sv.clock = floc::app::clock_mode::lockstep;
                    sv.lockstep_s = *d;
                } else {  // --apply-advice
                    sv.apply_delay_s = *d;
                }
            }
        } else if (a == "--to-steady-state") {
            o.steady = true;
        } else if (a == "--print-registers") {
            o.print_registers = true;
        } else if (a == "--quiet") {
            o.quiet = true;
        } else if (a == "--serve") {
            o.serve = true;
        } else if (a == "--fast") {
            if (!set_clock(a)) {
                return usage_error("--speed, --fast and --lockstep exclude each other");
            }
            sv.clock = floc::app::clock_mode::fast;
        } else if (a == "--status") {
            sv.status = true;
        } else if (a == "--show-advice") {
            sv.show_advice = true;
        } else if (a == "--enter-lab") {
            sv.enter_lab = true;
        } else if (a == "--allow-non-loopback") {
            o.allow_non_loopback = true;
        } else {
            return usage_error("unknown option '" + std::string{a} + "'");
        }
    }
    return o;
}

// Checks the serving options and completes them; an exit code when they do not fit.
std::optional<int> check_serving(options& o) {
    floc::app::serve_options& sv = o.serving;
    if (o.steady) {
        return usage_error("--to-steady-state is a headless run; it cannot be served (no serving options with it)");
    }
    const std::string caution = "; never point the simulator at a real plant network (--allow-non-loopback if this is a "
                                "bench network of its own)";
    if (!floc::app::is_ipv4(sv.bind)) {
        return usage_error("--bind: found '" + sv.bind + "'; expected an IPv4 address like 127.0.0.1");
    }
    if (!floc::app::is_loopback(sv.bind) && !o.allow_non_loopback) {
        return usage_error("--bind: " + sv.bind + " is not a loopback address (127.0.0.0/8)" + caution);
    }
    if (!o.hmi.empty()) {
        const auto colon = o.hmi.rfind(':');
        std::uint16_t port = 0;  // 0: none given
        if (colon != std::string::npos) {
            if (const auto p = parse_port(std::string_view{o.hmi}.substr(colon + 1))) {
                port = *p;
            }
        }
        sv.hmi_address = colon == std::string::npos ? o.hmi : o.hmi.substr(0, colon);
        if (port == 0 || !floc::app::is_ipv4(sv.hmi_address)) {
            return usage_error("--hmi: found '" + o.hmi + "'; expected an IPv4 address and a port, like 127.0.0.1:15021");
        }
        if (!floc::app::is_loopback(sv.hmi_address) && !o.allow_non_loopback) {
            return usage_error("--hmi: " + sv.hmi_address + " is not a loopback address (127.0.0.0/8)" + caution);
        }
        sv.hmi_port = port;
        if (sv.hmi_config.empty()) {
            return usage_error("--hmi needs --hmi-config FILE, the config of the flocd it reads");
        }
    } else if (!sv.hmi_config.empty() || sv.apply_delay_s || sv.show_advice || sv.enter_lab) {
        return usage_error(
            "--hmi-config, --apply-advice, --show-advice and --enter-lab need --hmi ADDRESS:PORT");
    }
    sv.for_s = o.for_s;
    sv.trend = o.csv;
    sv.trend_interval_s = o.csv_interval_s;
    sv.json = o.json;
    return std::nullopt;
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
    options& o = std::get<options>(parsed);
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
    // Serving: asked for, implied by a serving option, or the default without a headless run.
    const bool serving = !o.print_registers && (o.serve || o.serving_option || (!o.for_s && !o.steady));
    if (serving) {
        if (const auto code = check_serving(o)) {
            return *code;
        }
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
    if (serving) {
        return floc::app::serve(o.serving, sc);
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
