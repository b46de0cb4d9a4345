// flocd: the floc advisory daemon.
#include "calc.hpp"
#include "config_summary.hpp"
#include "exit_codes.hpp"
#include "logging.hpp"
#include "replay.hpp"
#include "service.hpp"

#include "floc/config/load.hpp"
#include "floc/registers/register_map.hpp"

#include <boost/asio/io_context.hpp>
#include <spdlog/logger.h>

#include <cstdio>
#include <exception>
#include <iostream>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#ifndef FLOC_VERSION
#define FLOC_VERSION "0.0.0"
#endif

namespace {

using namespace floc;

constexpr std::string_view default_config = "/etc/floc/flocd.toml";

constexpr std::string_view help_text = R"(flocd - floc advisory service for activated-sludge plants

Usage:
  flocd [--config FILE]                run the service (default FILE: /etc/floc/flocd.toml)
  flocd [--config FILE] --once         one poll-advise-publish cycle, print it, exit
  flocd --check-config FILE            validate FILE, print a short summary, exit
  flocd [--config FILE] --register-map [--format md|csv]
                                       print the advisory register map for the HMI integrator
  flocd calc [--units si|us] ADVISOR key=value ...
                                       run one advisor on given inputs and print the advice, its
                                       explanation and figures (do, recycle, ras, state-point,
                                       was, min-srt); 'flocd calc --help' lists them, 'flocd calc
                                       ADVISOR --help' their keys
  flocd replay [--config FILE] --input HISTORY.csv --output ADVICE.csv [--units si|us]
               [--from TIME] [--to TIME] [--changes-only] [--journal FILE]
               [--ignore-unknown] [--max-gap DURATION]
                                       run the advisors over a historian export (timestamped
                                       tag values) at full speed and write every advice run;
                                       'flocd replay --help' describes the files
  flocd --help                         this text
  flocd --version                      version

floc reads the plant's measurements over Modbus/TCP, computes advised set points (DO per
aerated zone, internal recycle, RAS, daily waste volume) and publishes them with their
reasons on its own Modbus/TCP registers. It never writes to the PLC.

Signals: SIGTERM or SIGINT stop the service, state flushed; SIGHUP reloads the config (an
invalid new config is refused and logged, the running one stays).

CAUTION: floc is advisory only. A licensed operator decides every set point; local
permits, codes and plant procedures prevail over any advice. Never point the simulator
(flocsim) or the test suite at a real plant network.

Exit codes: 0 ok / config valid, 64 bad command line, 65 bad calc value or replay data,
66 file unreadable, 69 a PLC did not answer (--once), 70 internal error, 71 a socket could
not be opened, 73 a state or journal directory (or a replay output) could not be created,
74 a write failed, 78 config invalid.
The config reference is config/README.md in the source tree.
)";

struct options {
    std::string config = std::string{default_config};
    bool config_given = false;
    std::optional<std::string> check_config;
    bool once = false;
    bool register_map = false;
    std::string format = "md";
};

int usage_error(std::string_view why) {
    std::cerr << "flocd: " << why << "\n" << "Try 'flocd --help'.\n";
    return app::exit_usage;
}

// Loads and validates; on failure prints every error and returns the exit code.
std::optional<config::plant_config> load_or_report(const std::string& path, int& code) {
    config::load_result result = config::load_file(path);
    if (result.unreadable) {
        for (const auto& e : result.errors) {
            std::cerr << "flocd: " << e.message() << "\n";
        }
        code = app::exit_no_input;
        return std::nullopt;
    }
    if (!result.ok()) {
        for (const auto& e : result.errors) {
            std::cerr << e.message() << "\n";
        }
        std::cerr << "flocd: " << path << ": " << result.errors.size()
                  << (result.errors.size() == 1 ? " error" : " errors") << "; the config is invalid\n";
        code = app::exit_config;
        return std::nullopt;
    }
    code = app::exit_ok;
    return std::move(result.config);
}

int check_config(const std::string& path) {
    int code = 0;
    if (const auto cfg = load_or_report(path, code)) {
        std::cout << app::config_summary(*cfg);
    }
    return code;
}

int print_register_map(const options& o) {
    int code = 0;
    const auto cfg = load_or_report(o.config, code);
    if (!cfg) {
        return code;
    }
    const registers::register_map map = registers::build(*cfg);
    std::cout << (o.format == "csv" ? registers::to_csv(map) : registers::to_markdown(map, *cfg));
    return app::exit_ok;
}

int run_service(const options& o) {
    int code = 0;
    auto cfg = load_or_report(o.config, code);
    if (!cfg) {
        return code;
    }
    std::string warning;
    auto log = app::make_logger(cfg->storage, warning);
    if (!warning.empty()) {
        log->warn("{}", warning);
    }
    boost::asio::io_context io;
    app::service_options so;
    so.config_path = o.config;
    so.once = o.once;
    app::service svc{io, std::move(*cfg), log, so};
    if (const int start = svc.start(); start != app::exit_ok) {
        return start;
    }
    io.run();
    if (o.once) {
        std::cout << svc.once_report();
    }
    return svc.exit_code();
}

int run(std::span<char*> args) {
    if (args.size() >= 2 && std::string_view{args[1]} == "calc") {
        const std::vector<std::string_view> rest(args.begin() + 2, args.end());
        return app::run_calc(rest, std::cout, std::cerr);
    }
    if (args.size() >= 2 && std::string_view{args[1]} == "replay") {
        const std::vector<std::string_view> rest(args.begin() + 2, args.end());
        return app::replay::run_replay(rest, std::cout, std::cerr, load_or_report);
    }
    options o;
    for (std::size_t i = 1; i < args.size(); ++i) {
        const std::string_view a = args[i];
        const auto value = [&](std::string_view what) -> std::optional<std::string> {
            if (i + 1 >= args.size()) {
                return std::nullopt;
            }
            (void)what;
            return std::string{args[++i]};
        };
        if (a == "--help" || a == "-h") {
            std::cout << help_text;
            return app::exit_ok;
        }
        if (a == "--version") {
            std::cout << "flocd " FLOC_VERSION "\n";
            return app::exit_ok;
        }
        if (a == "--check-config") {
            const auto file = value("FILE");
            if (!file || i + 1 != args.size()) {
                return usage_error("--check-config takes exactly one FILE");
            }
            o.check_config = *file;
        } else if (a == "--config") {
            const auto file = value("FILE");
            if (!file) {
                return usage_error("--config needs a FILE");
            }
            o.config = *file;
            o.config_given = true;
        } else if (a == "--once") {
            o.once = true;
        } else if (a == "--register-map") {
            o.register_map = true;
        } else if (a == "--format") {
            const auto f = value("md|csv");
            if (!f || (*f != "md" && *f != "csv")) {
                return usage_error("--format takes md or csv");
            }
            o.format = *f;
        } else {
            return usage_error("unknown option '" + std::string{a} + "'");
        }
    }
    if (o.check_config) {
        return check_config(*o.check_config);
    }
    if (o.register_map) {
        return print_register_map(o);
    }
    return run_service(o);
}

} // namespace

int main(int argc, char** argv) {
    try {
        return run(std::span<char*>{argv, static_cast<std::size_t>(argc)});
    } catch (const std::exception& e) {
        std::cerr << "flocd: internal error: " << e.what() << "\n";
        return floc::app::exit_software;
    }
}
