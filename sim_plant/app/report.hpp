// flocsim's output files: the CSV trend (every state of every zone and clarifier layer, the
// effluent, the energy figures and every sensor, one row per interval) and the JSON final state.
#pragma once

#include "floc/sim/scenario.hpp"

#include <ostream>
#include <string>

namespace floc::app {

// Writes the header line of the trend for scenario `s`.
void write_csv_header(std::ostream& out, const sim::scenario& s);
// Writes one row at the simulation's current time.
void write_csv_row(std::ostream& out, const sim::scenario& s, const sim::simulation& sim);

// Writes the whole state at the simulation's current time as one JSON document.
void write_json(std::ostream& out, const sim::scenario& s, const sim::simulation& sim);

// A one-line summary of the plant at the simulation's current time (for the status line).
[[nodiscard]] std::string status_line(const sim::scenario& s, const sim::simulation& sim, double until_s);

// The faults and events active at the simulation's current time ("a_oxic1_do stuck, link_loss"),
// or "none".
[[nodiscard]] std::string active_faults(const sim::scenario& s, const sim::simulation& sim);

// The live status line of a served run: plant day and time, influent flow, effluent NH4, NO3 and
// TSS, the blanket of each clarifier, the active faults.
[[nodiscard]] std::string serving_status_line(const sim::scenario& s, const sim::simulation& sim);

// The register map as a table, with the cautions.
void write_register_map(std::ostream& out, const sim::scenario& s);

// The summary printed by --check-scenario.
void write_summary(std::ostream& out, const sim::scenario& s);

} // namespace floc::app
