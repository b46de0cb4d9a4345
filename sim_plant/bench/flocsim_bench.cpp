// flocsim_bench: how fast the process model runs, in simulated plant days per wall-clock second
// on one core. Not a test: timings depend on the machine.
//
//   build/release/sim_plant/bench/flocsim_bench
//
// bsm1_14d_dopri5     the BSM1-size plant (5 zones, 10-layer settler, 212 states) for 14 days of
//                     dynamic influent from our generator (diurnal, weekly, rain), from steady state
// bsm1_2d_rosenbrock4 the same with the Rosenbrock stepper, 2 days (it is far slower)
// marrowby_14d        the demo plant (2 trains, DO loops, 19 sensors sampled every 5 s to 1 min)
#include "floc/sim/scenario.hpp"

#include <benchmark/benchmark.h>

#include <cstdlib>
#include <iostream>
#include <string>

namespace {

using namespace floc::sim;

scenario load(const std::string& name) {
    scenario_result r = load_scenario_file(std::string{FLOC_SOURCE_DIR} + "/sim_plant/scenarios/" + name + ".toml");
    if (!r.ok()) {
        std::cerr << "flocsim_bench: cannot load " << name << "\n";
        std::exit(1);
    }
    return std::move(*r.value);
}

// The benchmark plant with a dynamic influent: the BSM1 mean flow and composition, shaped by the
// Marrowby patterns.
scenario dynamic_bsm1(stepper_kind stepper) {
    scenario s = load("bsm1-validation");
    const scenario m = load("marrowby");
    const influent_spec mean = s.influent;
    s.influent = m.influent;
    s.influent.mean_flow_m3_per_d = mean.mean_flow_m3_per_d;
    s.influent.composition = mean.composition;
    s.influent.temperature_mean_c = 15.0;
    s.influent.temperature_amplitude_c = 0.0;
    s.influent.temperature_diurnal_amplitude_c = 0.0;
    s.solver.stepper = stepper;
    return s;
}

void run(benchmark::State& state, const scenario& s, double days) {
    const std::vector<double> x0 = initial_state(s);
    std::uint64_t steps = 0;
    for (auto _ : state) {
        simulation sim = make_simulation(s, x0);
        if (!sim.advance_to(days * 86400.0)) {
            state.SkipWithError(sim.error().c_str());
            return;
        }
        steps = sim.statistics().steps;
        benchmark::DoNotOptimize(sim.state().data());
    }
    const double plant_days = days * static_cast<double>(state.iterations());
    state.counters["plant_days_per_s"] = benchmark::Counter(plant_days, benchmark::Counter::kIsRate);
    state.counters["x_real_time"] = benchmark::Counter(plant_days * 86400.0, benchmark::Counter::kIsRate);
    state.counters["steps"] = static_cast<double>(steps);
}

void bsm1_14d_dopri5(benchmark::State& state) {
    static const scenario s = dynamic_bsm1(stepper_kind::dopri5);
    run(state, s, 14.0);
}

void bsm1_2d_rosenbrock4(benchmark::State& state) {
    static const scenario s = dynamic_bsm1(stepper_kind::rosenbrock4);
    run(state, s, 2.0);
}

void marrowby_14d(benchmark::State& state) {
    static const scenario s = load("marrowby");
    run(state, s, 14.0);
}

} // namespace

BENCHMARK(bsm1_14d_dopri5)->Unit(benchmark::kMillisecond)->MinTime(3.0);
BENCHMARK(bsm1_2d_rosenbrock4)->Unit(benchmark::kMillisecond)->Iterations(1);
BENCHMARK(marrowby_14d)->Unit(benchmark::kMillisecond)->MinTime(3.0);

BENCHMARK_MAIN();
