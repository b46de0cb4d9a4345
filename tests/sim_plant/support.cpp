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

std::vector<double> steady_state(const scenario& s, const bsm1_reference::tank_table* near) {
    steady_state_result r;
    std::vector<double> x;
#ifdef FLOC_SIM_TESTS_SANITIZED
    if (near != nullptr && s.plant.trains.size() == 1 && s.plant.trains[0].zones.size() == 5) {
        const plant_model model{s.plant, s.influent};
        asm1::vector last{};
        for (std::size_t k = 0; k < asm1::component_count; ++k) {
            last[k] = 1.1 * (*near)[k][4];
        }
        x = model.uniform_state(last);
        for (std::size_t z = 0; z < 5; ++z) {
            for (std::size_t k = 0; k < asm1::component_count; ++k) {
                x[model.layout().zone(0, z) + k] = 1.1 * (*near)[k][z];
            }
        }
        r = find_steady_state(model, initial_controls(s.plant), x);
    } else {
        x = initial_state(s, &r);
    }
#else
    (void)near;
    x = initial_state(s, &r);
#endif
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
    static const std::vector<double> x = steady_state(bsm1(), &bsm1_reference::open_loop);
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
