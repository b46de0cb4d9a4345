// Time integration of the plant with Boost.Odeint, sensors sampled along the way, scheduled plant
// events, and a steady-state solver.
//
// Stepper choice. The system is stiff: oxygen in the zones relaxes at KLa + uptake (up to about
// 10^4 1/d in the benchmark's anoxic tanks, where the oxygen half-saturation terms are steep),
// settler layers at v/h, while the biomass moves over days. Two Odeint steppers are offered:
//  * rosenbrock4 (an L-stable linearly implicit Rosenbrock method of order 4 with step control and
//    dense output), with a finite-difference Jacobian: its step is limited by accuracy only, but
//    each step costs a Jacobian (n + 1 evaluations) and an n^3 LU decomposition.
//  * runge_kutta_dopri5 (explicit Dormand-Prince 5(4), step control, dense output): its step is
//    held near the stability limit of the fastest oxygen mode (tens of seconds of plant time), but
//    a step costs 6 evaluations against the ~n evaluations plus an n^3 LU decomposition of a
//    Rosenbrock step with a dense finite-difference Jacobian (n = 212 for the benchmark plant).
//    Measured on the benchmark plant over 14 days of dynamic influent (release build, one core,
//    sim_plant/bench): dopri5 0.46 s (33 300 steps), rosenbrock4 about 40 s (0.35 plant days per
//    second; most of the time in the Jacobian and uBLAS's LU), so dopri5 is the default.
// The steady-state solver (find_steady_state) integrates the transient with dopri5 and finishes
// with Newton iterations on dx/dt = 0.
// Either can be chosen per scenario ([solver] stepper).
#pragma once

#include "floc/sim/plant.hpp"
#include "floc/sim/sensors.hpp"

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

namespace floc::sim {

enum class stepper_kind : std::uint8_t { dopri5, rosenbrock4 };

struct solver_options {
    stepper_kind stepper = stepper_kind::dopri5;
    double relative_tolerance = 1e-6;
    double absolute_tolerance = 1e-6;
    double max_step_s = 3600.0;
    double initial_step_s = 1.0;
};

struct steady_state_options {
    // The transient is integrated (dopri5) until the residual falls below `newton_from`; Newton
    // iterations follow. `transient_days` bounds the plant time integrated in all.
    double transient_days = 500.0;
    double newton_from = 0.1;
    std::uint64_t max_iterations = 30;
    // Converged when every state changes by less than this fraction of itself (or of 1 g/m3)
    // per day.
    double tolerance_per_day = 1e-8;
};

struct steady_state_result {
    bool converged = false;
    double days = 0.0;        // plant days integrated
    double residual = 0.0;    // the largest relative rate at the end, 1/d
    std::uint64_t steps = 0;
    std::string error;        // set when the solver failed
};

// The largest |dx/dt| / max(|x|, 1) over the concentrations and loop states (1/d).
[[nodiscard]] double steady_residual(const plant_model& model, const std::vector<double>& x,
                                     const plant_controls& u, double t_d = 0.0);

// Integrates `model` with the controls held from `x` until it no longer changes. `model`'s influent
// should be constant. The totals in `x` are reset to zero afterwards.
[[nodiscard]] steady_state_result find_steady_state(const plant_model& model, const plant_controls& u,
                                                    std::vector<double>& x,
                                                    const steady_state_options& options = {});

struct run_statistics {
    std::uint64_t steps = 0;
    std::uint64_t evaluations = 0;
    std::uint64_t restarts = 0;
    std::uint64_t samples = 0;
};

class simulation {
public:
    simulation(plant_model model, std::vector<sensor_spec> sensors, std::vector<plant_event> events,
               solver_options options, std::vector<double> x0, plant_controls controls,
               std::uint64_t seed);
    ~simulation();
    simulation(const simulation&) = delete;
    simulation& operator=(const simulation&) = delete;
    simulation(simulation&&) noexcept;
    simulation& operator=(simulation&&) = delete;

    // Runs on to plant time `t_s` (seconds since the scenario's start). Sensors are sampled at
    // their instants, events applied at their start and end. False when the solver failed; the
    // simulation then stays at the last good time (see error()).
    bool advance_to(double t_s);

    [[nodiscard]] double time_s() const { return time_s_; }
    [[nodiscard]] const std::vector<double>& state() const { return state_; }
    [[nodiscard]] plant_output outputs() const;
    [[nodiscard]] const plant_model& model() const { return model_; }
    [[nodiscard]] const std::vector<sensor>& sensors() const { return sensors_; }
    [[nodiscard]] const std::vector<plant_event>& events() const { return events_; }
    [[nodiscard]] const plant_controls& controls() const { return controls_; }
    [[nodiscard]] const run_statistics& statistics() const;
    [[nodiscard]] const std::string& error() const { return error_; }

    // Takes the sensor samples due at the current time (at the start: the first readings), as
    // the next advance would; a served plant has readings before its first step.
    void sample_due();

    // New PLC controls from now on (a set point written on a holding register); availability of
    // blowers and pumps still follows the event schedule.
    void set_controls(const plant_controls& u);

private:
    struct engine;
    bool integrate_to(double t_s);
    void sample(double t_s, const double* x);  // the sensors due at t_s, from state x
    void restart();
    [[nodiscard]] double next_event_after(double t_s) const;

    plant_model model_;
    std::vector<sensor> sensors_;
    std::vector<double> next_sample_s_;
    std::vector<plant_event> events_;
    solver_options options_;
    plant_controls controls_;
    std::vector<double> state_;
    double time_s_ = 0.0;
    std::string error_;
    std::unique_ptr<engine> engine_;
};

} // namespace floc::sim
