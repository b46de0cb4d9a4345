// Advisor states to and from the state file: every member of every advisor's state struct is
// listed once, in visit(); one writer and one reader walk those lists. A member missing from an
// older file keeps its default.
#pragma once

#include "floc/advisors/aeration.hpp"
#include "floc/advisors/ras.hpp"
#include "floc/advisors/recycle.hpp"
#include "floc/advisors/waste.hpp"
#include "floc/store/state_file.hpp"

#include <string>

namespace floc::app {

void save_state(store::state_section& out, const advisors::aeration_state& s);
void save_state(store::state_section& out, const advisors::recycle_state& s);
void save_state(store::state_section& out, const advisors::ras_state& s);
void save_state(store::state_section& out, const advisors::waste_state& s);

void load_state(const store::state_section& in, advisors::aeration_state& s);
void load_state(const store::state_section& in, advisors::recycle_state& s);
void load_state(const store::state_section& in, advisors::ras_state& s);
void load_state(const store::state_section& in, advisors::waste_state& s);

} // namespace floc::app
