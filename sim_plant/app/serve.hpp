// flocsim serving: the simulated plant behind the project's Modbus/TCP server, on plant time in
// real time, accelerated, as fast as possible or in lockstep with its clients; the protocol
// faults of the scenario on their schedule; the client log; the status line, the trend; and the
// operator stand-in that reads floc's advice as an HMI does and types in the lab sheet.
#pragma once

#include "floc/sim/scenario.hpp"

#include <cstdint>
#include <optional>
#include <string>

namespace floc::app {

enum class clock_mode : std::uint8_t {
    speed,    // plant seconds per wall second (1: real time)
    fast,     // as fast as the model runs, still serving between steps
    lockstep, // one step each time a client has read the plant time
};

struct serve_options {
    std::string bind = "127.0.0.1";
    std::optional<std::uint16_t> port; // the scenario's when empty; 0: a free port
    clock_mode clock = clock_mode::speed;
    double speed = 1.0;          // plant seconds per wall second
    double lockstep_s = 0.0;     // plant time per step
    std::optional<double> for_s; // stop after this much plant time
    std::string client_log;      // JSON of the clients' requests, written at exit
    bool status = false;         // live status line on standard error
    std::string trend;           // CSV trend
    double trend_interval_s = 900.0;
    std::string json; // final state at exit
    // The operator stand-in.
    std::string hmi_address; // floc advisory server, empty: none
    std::uint16_t hmi_port = 0;
    std::string hmi_config; // the flocd config its register map is built from
    std::optional<double> apply_delay_s;
    bool show_advice = false;
    bool enter_lab = false; // type the scenario's lab sheet into flocd's lab entries
};

// Serves `s` until --for, SIGTERM or SIGINT; returns the exit code.
[[nodiscard]] int serve(const serve_options& o, const sim::scenario& s);

// True for an IPv4 address written as four numbers ("127.0.0.1").
[[nodiscard]] bool is_ipv4(const std::string& address);
// True for an IPv4 address in 127.0.0.0/8.
[[nodiscard]] bool is_loopback(const std::string& address);

} // namespace floc::app
