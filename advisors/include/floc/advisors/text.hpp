// Numbers with units for explanations and for `flocd calc`: one formatting for both.
#pragma once

#include "floc/units.hpp"

#include <string>

namespace floc::advisors {

// The unit a quantity is shown in: the display default of `system` (floc/units.hpp).
[[nodiscard]] const units::unit& text_unit(units::quantity q, units::unit_system system);

// "2.4 mg/L", "0.35 MGD": `canonical` in the text unit with 3 significant digits.
[[nodiscard]] std::string text(double canonical, units::quantity q, units::unit_system system,
                               int digits = 3);

// A difference of a quantity (a step, a change): like text() but without the affine offset,
// so that 1 K prints as "1.8 degF".
[[nodiscard]] std::string text_difference(double canonical, units::quantity q,
                                          units::unit_system system, int digits = 3);

// A duration for people: "45 s", "40 min", "2.5 h", "12 d".
[[nodiscard]] std::string text_duration(double seconds);

// A plain number with `digits` significant digits ("1.25", "0.6").
[[nodiscard]] std::string text_number(double x, int digits = 3);

} // namespace floc::advisors

namespace floc::advisors {

// A daily volume of sludge or water: m3/d in SI, gpd in US customary (operators count waste
// sludge per day, not per hour or minute).
[[nodiscard]] std::string text_daily_flow(double m3_per_d, units::unit_system system,
                                          int digits = 3);

} // namespace floc::advisors
