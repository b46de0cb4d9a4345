// Internal: pieces of the one-line explanations, shared by the advisors.
#pragma once

#include "floc/advisors/machinery.hpp"
#include "floc/advisors/signal.hpp"
#include "floc/advisors/text.hpp"

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

// "raised 1.6 -> 1.9 mg/L", "lowered ...", "unchanged at 1.9 mg/L", or "1.9 mg/L" with no
// previous value.
std::string change(bool had_previous, double previous, double now, units::quantity q,
                   units::unit_system system);

// The explanation of a held or fallback advice: "<why>; holding the last good <what> 1.9 mg/L
// (12 min of 30 min)" or "<why>; fallback <what> 2 mg/L after 30 min".
std::string held(std::string_view why, std::string_view what, const held_output& h,
                 const output_memory& m, double now_s, double hold_for_s, units::quantity q,
                 units::unit_system system);

} // namespace floc::advisors::detail
