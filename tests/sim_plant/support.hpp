// Shared helpers of the simulator tests: scenarios from sim_plant/scenarios and cached steady states.
#pragma once

#include "floc/sim/scenario.hpp"

#include <string>
#include <vector>

namespace floc::sim::test {

// Loads sim_plant/scenarios/NAME.toml; fails the test (and aborts it) when it does not load.
[[nodiscard]] scenario load(const std::string& name);

// The steady state of `s` from the scenario's start; aborts when it is not reached.
[[nodiscard]] std::vector<double> steady_state(const scenario& s);

// The BSM1 validation scenario and its open-loop steady state, computed once per test binary.
[[nodiscard]] const scenario& bsm1();
[[nodiscard]] const std::vector<double>& bsm1_steady_state();

// A scheduled event; the protocol-fault fields keep their defaults.
[[nodiscard]] inline plant_event scheduled(event_kind kind, double start_s, double end_s, std::size_t train = no_index,
                                           double delay_s = 0.0) {
    plant_event e;
    e.kind = kind;
    e.start_s = start_s;
    e.end_s = end_s;
    e.train = train;
    e.delay_s = delay_s;
    return e;
}

// Marrowby and its steady state at the mean influent, computed once.
[[nodiscard]] const scenario& marrowby();
[[nodiscard]] const std::vector<double>& marrowby_steady_state();

} // namespace floc::sim::test
