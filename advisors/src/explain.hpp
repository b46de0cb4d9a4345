// Internal: pieces of the one-line explanations, shared by the advisors.
#pragma once

#include "floc/advisors/machinery.hpp"
#include "floc/advisors/signal.hpp"
#include "floc/advisors/text.hpp"

#include <functional>
#include <initializer_list>
#include <string>
#include <string_view>
#include <utility>

namespace floc::advisors::detail {

struct named_reading {
    std::string_view name;
    const reading* r;
};

// "ammonia stale, flow bad" for the readings that are not usable.
std::string unusable_inputs(std::initializer_list<named_reading> readings);

// How a value of the advice is written ("1.9 mg/L", "70 m3/d").
using value_text = std::function<std::string(double)>;
value_text quantity_text(units::quantity q, units::unit_system system);

// "raised 1.6 -> 1.9 mg/L", "lowered ...", "unchanged at 1.9 mg/L", or "1.9 mg/L" with no
// previous value.
std::string change(bool had_previous, double previous, double now, const value_text& write);

// The explanation of a held or fallback advice: "<why>; holding the last good <what> 1.9 mg/L
// (12 min of 30 min)" or "<why>; fallback <what> 2 mg/L (no good input for 40 min, hold 30 min)".
std::string held(std::string_view why, std::string_view what, const held_output& h,
                 const output_memory& m, double now_s, double hold_for_s, const value_text& write);

} // namespace floc::advisors::detail
