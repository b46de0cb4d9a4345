// Scenarios: strict TOML files describing a simulated plant (trains, zones, clarifiers, PLC loops),
// its influent, sensors and faults, scheduled events, the register map and the solver. Read with
// floc::config's table reader, so that every problem is reported with file:line:column, key path,
// what was found and what was expected, exactly like flocd's config. The schema is documented in
// sim_plant/README.md.
#pragma once

#include "floc/config/load.hpp"
#include "floc/sim/lab.hpp"
#include "floc/sim/plant.hpp"
#include "floc/sim/registers.hpp"
#include "floc/sim/sensors.hpp"
#include "floc/sim/simulation.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace floc::sim {

inline constexpr std::int64_t scenario_schema_version = 1;
inline constexpr std::size_t max_zones_per_train = 16;

enum class initial_mode : std::uint8_t {
    steady,  // the steady state of the plant at the mean influent, found before plant time 0
    guess,   // every zone and clarifier layer at the given concentrations
};

// The simulated PLC's Modbus/TCP server.
inline constexpr std::uint16_t default_server_port = 15020;

struct server_spec {
    std::uint16_t port = default_server_port;  // flocsim --port overrides it
    std::size_t max_connections = 8;
    double idle_timeout_s = 300.0;             // 0: never
};

// The lab sheet the operator stand-in types into flocd's lab entries (flocsim --enter-lab): what
// each entry is, when it is sampled, how long its result takes to be typed in.
struct lab_sheet_entry {
    std::string name; // the flocd [[lab_entry]] it is typed into
    lab_figure figure = lab_figure::mlss;
    std::size_t train = no_index; // no_index: the plant's
    std::vector<double>
        sample_times_s;         // times of day (s after midnight of each plant day), ascending
    double entry_delay_s = 0.0; // from sampling to typing in
    double composite_s = 0.0;   // 0: a grab sample; else a flow-proportional composite over
                                // this long, ending at the sampling time
    config::source_pos at;      // where its name is written
};

struct lab_sheet_spec {
    std::string source_file; // the file it is written in (a base's, when inherited)
    std::vector<lab_sheet_entry> entries;
    bool at_start = false; // also a sheet sampled at plant time 0 and typed in at once
};

struct scenario {
    std::string source_file;
    std::string based_on;  // the base scenario's path when this one is based on another
    std::string name;
    std::string description;
    std::uint64_t seed = 1;
    plant_spec plant;
    influent_spec influent;
    std::vector<sensor_spec> sensors;
    std::vector<plant_event> events;
    register_map registers;
    bool default_registers = true;  // no [registers] table: the documented default map
    solver_options solver;
    initial_mode initial = initial_mode::steady;
    asm1::vector initial_guess{};
    server_spec server;
    lab_sheet_spec lab_sheet; // no entries: no lab sheet

    [[nodiscard]] const sensor_spec* find_sensor(std::string_view name) const;
};

struct scenario_result {
    std::optional<scenario> value;            // set only when `errors` is empty
    std::vector<config::diagnostic> errors;   // in file order
    bool unreadable = false;

    [[nodiscard]] bool ok() const { return value.has_value(); }
};

[[nodiscard]] scenario_result load_scenario_file(const std::string& path);
[[nodiscard]] scenario_result load_scenario_text(std::string_view text, std::string_view source_name);

// The influent at its mean, constant (for the steady state before plant time 0).
[[nodiscard]] influent_spec mean_influent(const influent_spec& s);

// The start state of a scenario: its steady state or its guess. `result` reports the solver.
[[nodiscard]] std::vector<double> initial_state(const scenario& s, steady_state_result* result = nullptr);

// A simulation of the scenario, started from `x0`.
[[nodiscard]] simulation make_simulation(const scenario& s, std::vector<double> x0);

} // namespace floc::sim
