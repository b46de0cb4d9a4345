// The lines of the advice journal (README.md, "The advice journal"), written by the service and
// by `flocd replay` alike: the envelope of every line, the record of an advice and of a probe
// check.
#pragma once

#include "advisor_engine.hpp"
#include "floc/config/config.hpp"
#include "lab_book.hpp"
#include "floc/store/json.hpp"

#include <optional>
#include <string_view>

namespace floc::app {

// The unit a value of quantity `q` is shown in: the display unit of the config, except that
// plain numbers (ratios, states) stay plain. The HMI's lab entries use the same unit.
[[nodiscard]] const units::unit& shown_unit(const config::display_config& display,
                                            units::quantity q);

// The `advice` record of one outcome (value in SI and in display units, bounds, quality,
// reasons, explanation, inputs, figures).
[[nodiscard]] store::json_object advice_record(const advisor_outcome& o,
                                               const config::plant_config& cfg);

// The `probe_check` record of a check reading judged against its probe (values in SI).
[[nodiscard]] store::json_object probe_check_record(const probe_check_event& e,
                                                    const config::plant_config& cfg);

// One journal line: wall-clock time, plant time (null when unknown), site, and the record.
[[nodiscard]] store::json_object journal_line(const store::json_object& record, double wall_unix_s,
                                              std::optional<double> plant_time_s,
                                              std::string_view site);

} // namespace floc::app
