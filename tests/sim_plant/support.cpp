#include "support.hpp"

#include <gtest/gtest.h>

#include <cstdlib>
#include <iostream>

namespace floc::sim::test {

scenario load(const std::string& name) {
    const std::string path = std::string{FLOC_SOURCE_DIR} + "/sim_plant/scenarios/" + name + ".toml";
    scenario_result r = load_scenario_file(path);
    if (!r.ok()) {
        for (const auto& e : r.errors) {
            std::cerr << e.message() << "\n";
        }
        std::cerr << "cannot load " << path << "\n";
        std::abort();
    }
    return std::move(*r.value);
}

std::vector<double> steady_state(const scenario& s) {
    steady_state_result r;
    std::vector<double> x = initial_state(s, &r);
    if (!r.converged) {
        std::cerr << s.name << ": steady state not reached, residual " << r.residual << " " << r.error << "\n";
        std::abort();
    }
    return x;
}

const scenario& bsm1() {
    static const scenario s = load("bsm1-validation");
    return s;
}

const std::vector<double>& bsm1_steady_state() {
    static const std::vector<double> x = steady_state(bsm1());
    return x;
}

const scenario& marrowby() {
    static const scenario s = load("marrowby");
    return s;
}

const std::vector<double>& marrowby_steady_state() {
    static const std::vector<double> x = steady_state(marrowby());
    return x;
}

} // namespace floc::sim::test
