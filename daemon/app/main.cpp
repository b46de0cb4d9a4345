// flocd: the floc advisory daemon.
#include "calc.hpp"
#include "config_summary.hpp"
#include "exit_codes.hpp"

#include "floc/config/load.hpp"

#include <cstdio>
#include <exception>
#include <iostream>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#ifndef FLOC_VERSION
#define FLOC_VERSION "0.0.0"
#endif

namespace {

constexpr std::string_view help_text = R"(flocd - floc advisory service for activated-sludge plants

Usage:
  flocd --check-config FILE   validate FILE, print a short summary, exit
  flocd calc [--units si|us] ADVISOR key=value ...
                              run one advisor on given inputs and print the advice, its
                              explanation and figures (do, recycle, ras, state-point, was,
                              min-srt); 'flocd calc --help' lists them, 'flocd calc ADVISOR
                              --help' their keys
  flocd --help                this text
  flocd --version             version

floc reads the plant's measurements over Modbus/TCP, computes advised set points (DO per
aerated zone, internal recycle, RAS, daily waste volume) and publishes them with their
reasons on its own Modbus/TCP registers. It never writes to the PLC.

CAUTION: floc is advisory only. A licensed operator decides every set point; local
permits, codes and plant procedures prevail over any advice. Never point the simulator
(flocsim) or the test suite at a real plant network.

Exit codes: 0 ok / config valid, 64 bad command line, 65 bad calc value,
            66 file unreadable, 70 internal error, 78 config invalid.
The config reference is config/README.md in the source tree.
)";

int check_config(const std::string& path) {
    const floc::config::load_result result = floc::config::load_file(path);
    if (result.unreadable) {
        for (const auto& e : result.errors) {
            std::cerr << "flocd: " << e.message() << "\n";
        }
        return floc::app::exit_no_input;
    }
    if (!result.ok()) {
        for (const auto& e : result.errors) {
            std::cerr << e.message() << "\n";
        }
        std::cerr << "flocd: " << path << ": " << result.errors.size()
                  << (result.errors.size() == 1 ? " error" : " errors") << "; the config is invalid\n";
        return floc::app::exit_config;
    }
    std::cout << floc::app::config_summary(*result.config);
    return floc::app::exit_ok;
}

int usage_error(std::string_view why) {
    std::cerr << "flocd: " << why << "\n" << "Try 'flocd --help'.\n";
    return floc::app::exit_usage;
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
        std::cout << "flocd " FLOC_VERSION "\n";
        return floc::app::exit_ok;
    }
    if (first == "--check-config") {
        if (args.size() != 3) {
            return usage_error("--check-config takes exactly one FILE");
        }
        return check_config(args[2]);
    }
    if (first == "calc") {
        const std::vector<std::string_view> rest(args.begin() + 2, args.end());
        return floc::app::run_calc(rest, std::cout, std::cerr);
    }
    return usage_error("unknown option '" + std::string{first} + "'");
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
