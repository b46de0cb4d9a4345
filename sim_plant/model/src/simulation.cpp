#include "floc/sim/simulation.hpp"

#include <boost/numeric/odeint.hpp>

#include <algorithm>
#include <cmath>
#include <exception>
#include <limits>
#include <variant>

namespace floc::sim {
namespace {

namespace odeint = boost::numeric::odeint;
using state_type = boost::numeric::ublas::vector<double>;
using matrix_type = boost::numeric::ublas::matrix<double>;

constexpr double seconds_per_day = 86400.0;

struct counters {
    std::uint64_t evaluations = 0;
};

// dx/dt for Odeint: the plant with its controls held.
struct plant_system {
    const plant_model* model;
    const plant_controls* controls;
    counters* count;
    template <class V>
    void operator()(const V& x, V& dxdt, double t_d) const {
        ++count->evaluations;
        model->derivatives(&x[0], &dxdt[0], t_d, *controls);
    }
};

// The plant without its totals (which only grow and have no steady state).
struct reduced_system {
    const plant_model* model;
    const plant_controls* controls;
    counters* count;
    std::vector<double>* full_x;
    std::vector<double>* full_dxdt;
    template <class V>
    void operator()(const V& x, V& dxdt, double t_d) const {
        ++count->evaluations;
        std::copy(x.begin(), x.end(), full_x->begin());
        model->derivatives(full_x->data(), full_dxdt->data(), t_d, *controls);
        std::copy(full_dxdt->begin(), full_dxdt->begin() + static_cast<std::ptrdiff_t>(x.size()), dxdt.begin());
    }
};

// Finite-difference Jacobian (and time derivative, for the Rosenbrock stepper).
template <class System>
struct fd_jacobian {
    System f;
    void jacobian(const state_type& x, matrix_type& jac, double t_d, state_type& f0) const {
        const std::size_t n = x.size();
        state_type f1(n);
        state_type xp = x;
        f(x, f0, t_d);
        for (std::size_t j = 0; j < n; ++j) {
            const double h = 1e-7 * std::max(std::abs(x[j]), 1.0);
            xp[j] = x[j] + h;
            f(xp, f1, t_d);
            for (std::size_t i = 0; i < n; ++i) {
                jac(i, j) = (f1[i] - f0[i]) / h;
            }
            xp[j] = x[j];
        }
    }
    void operator()(const state_type& x, matrix_type& jac, double t_d) const {
        state_type f0(x.size());
        jacobian(x, jac, t_d, f0);
    }
    void operator()(const state_type& x, matrix_type& jac, double t_d, state_type& dfdt) const {
        state_type f0(x.size());
        state_type f1(x.size());
        jacobian(x, jac, t_d, f0);
        const double ht = 1e-6;
        f(x, f1, t_d + ht);
        for (std::size_t i = 0; i < x.size(); ++i) {
            dfdt[i] = (f1[i] - f0[i]) / ht;
        }
    }
};

state_type to_state(const std::vector<double>& v) {
    state_type s(v.size());
    std::copy(v.begin(), v.end(), s.begin());
    return s;
}

// The explicit stepper works on std::vector (plain loops); only the Rosenbrock stepper needs uBLAS.
using plain_state = std::vector<double>;
using runge_kutta_dopri5_plain = odeint::runge_kutta_dopri5<plain_state>;
using dopri_dense = odeint::dense_output_runge_kutta<odeint::controlled_runge_kutta<runge_kutta_dopri5_plain>>;
using rosenbrock_dense = odeint::rosenbrock4_dense_output<odeint::rosenbrock4_controller<odeint::rosenbrock4<double>>>;

} // namespace

double steady_residual(const plant_model& model, const std::vector<double>& x, const plant_controls& u,
                       double t_d) {
    std::vector<double> dxdt(x.size());
    model.derivatives(x.data(), dxdt.data(), t_d, u);
    double worst = 0.0;
    const std::size_t n = model.layout().accumulators();
    for (std::size_t i = 0; i < n; ++i) {
        const double r = std::abs(dxdt[i]) / std::max(std::abs(x[i]), 1.0);
        if (!std::isfinite(r)) {
            return std::numeric_limits<double>::infinity();
        }
        worst = std::max(worst, r);
    }
    return worst;
}

namespace {

// Solves a x = b in place (a: n x n row-major, b: n) by LU decomposition with partial pivoting.
// False when a is singular.
bool solve_dense(std::vector<double>& a, std::vector<double>& b, std::size_t n) {
    for (std::size_t k = 0; k < n; ++k) {
        std::size_t p = k;
        for (std::size_t i = k + 1; i < n; ++i) {
            if (std::abs(a[i * n + k]) > std::abs(a[p * n + k])) {
                p = i;
            }
        }
        if (a[p * n + k] == 0.0) {
            return false;
        }
        if (p != k) {
            for (std::size_t j = 0; j < n; ++j) {
                std::swap(a[k * n + j], a[p * n + j]);
            }
            std::swap(b[k], b[p]);
        }
        const double pivot = a[k * n + k];
        for (std::size_t i = k + 1; i < n; ++i) {
            const double f = a[i * n + k] / pivot;
            if (f == 0.0) {
                continue;
            }
            double* row = &a[i * n];
            const double* top = &a[k * n];
            for (std::size_t j = k + 1; j < n; ++j) {
                row[j] -= f * top[j];
            }
            b[i] -= f * b[k];
        }
    }
    for (std::size_t k = n; k-- > 0;) {
        double v = b[k];
        for (std::size_t j = k + 1; j < n; ++j) {
            v -= a[k * n + j] * b[j];
        }
        b[k] = v / a[k * n + k];
    }
    return true;
}

} // namespace

steady_state_result find_steady_state(const plant_model& model, const plant_controls& u,
                                      std::vector<double>& x, const steady_state_options& options) {
    // 1. The transient is integrated with Odeint (dopri5) until the plant is near its steady
    //    state. 2. Damped Newton iterations on dx/dt = 0 (finite-difference Jacobian, dense LU)
    //    then take it to the steady state itself; when an iteration makes no progress, the
    //    transient is integrated further and Newton tried again.
    steady_state_result result;
    counters count;
    const std::size_t n = model.layout().accumulators();
    std::vector<double> full_x(x.size(), 0.0);
    std::vector<double> full_dxdt(x.size(), 0.0);
    const reduced_system sys{&model, &u, &count, &full_x, &full_dxdt};
    plain_state s(x.begin(), x.begin() + static_cast<std::ptrdiff_t>(n));
    std::vector<double> trial = x;
    std::fill(trial.begin() + static_cast<std::ptrdiff_t>(n), trial.end(), 0.0);
    const auto residual_of = [&](const plain_state& v) {
        std::copy(v.begin(), v.end(), trial.begin());
        return steady_residual(model, trial, u);
    };
    double t = 0.0;
    try {
        auto explicit_stepper = odeint::make_controlled(1e-7, 1e-7, runge_kutta_dopri5_plain());
        double residual = residual_of(s);
        std::vector<double> jac(n * n);
        std::vector<double> rhs(n);
        plain_state f0(n);
        plain_state f1(n);
        while (residual >= options.tolerance_per_day && t < options.transient_days) {
            if (residual > options.newton_from) {
                const double chunk = 2.0;
                odeint::integrate_adaptive(explicit_stepper, sys, s, t, t + chunk, 1e-4);
                t += chunk;
                residual = residual_of(s);
                continue;
            }
            // Newton iterations from here.
            bool progress = true;
            for (std::uint64_t i = 0; i < options.max_iterations && progress &&
                                      residual >= options.tolerance_per_day; ++i) {
                sys(s, f0, 0.0);
                plain_state xp = s;
                for (std::size_t j = 0; j < n; ++j) {
                    const double h = 1e-7 * std::max(std::abs(s[j]), 1.0);
                    xp[j] = s[j] + h;
                    sys(xp, f1, 0.0);
                    for (std::size_t r = 0; r < n; ++r) {
                        jac[r * n + j] = (f1[r] - f0[r]) / h;
                    }
                    xp[j] = s[j];
                }
                for (std::size_t r = 0; r < n; ++r) {
                    rhs[r] = -f0[r];
                }
                if (!solve_dense(jac, rhs, n)) {
                    break;
                }
                progress = false;
                for (double lambda = 1.0; lambda > 1e-3; lambda *= 0.5) {
                    plain_state next = s;
                    for (std::size_t r = 0; r < n; ++r) {
                        next[r] += lambda * rhs[r];
                    }
                    const double rn = residual_of(next);
                    if (std::isfinite(rn) && rn < residual) {
                        s = next;
                        residual = rn;
                        progress = true;
                        ++result.steps;
                        break;
                    }
                }
            }
            if (residual >= options.tolerance_per_day) {
                // Newton stalled: more of the transient, then try again.
                odeint::integrate_adaptive(explicit_stepper, sys, s, t, t + 5.0, 1e-4);
                t += 5.0;
                residual = residual_of(s);
            }
        }
    } catch (const std::exception& e) {
        result.error = std::string{"the steady-state solver failed: "} + e.what();
    }
    std::copy(s.begin(), s.end(), x.begin());
    std::fill(x.begin() + static_cast<std::ptrdiff_t>(n), x.end(), 0.0);
    result.days = t;
    result.residual = steady_residual(model, x, u);
    result.converged = result.residual < options.tolerance_per_day;
    return result;
}

// --- simulation ----------------------------------------------------------------------------------

struct simulation::engine {
    std::variant<dopri_dense, rosenbrock_dense> stepper;
    counters count;
    run_statistics stats;
    double last_dt_d = 0.0;
    bool fresh = true;  // initialised, no step taken yet: no interpolation interval exists

    engine(const solver_options& o)
        : stepper(make(o)) {}

    static std::variant<dopri_dense, rosenbrock_dense> make(const solver_options& o) {
        const double max_dt = o.max_step_s / seconds_per_day;
        if (o.stepper == stepper_kind::rosenbrock4) {
            return odeint::make_dense_output(o.absolute_tolerance, o.relative_tolerance, max_dt,
                                             odeint::rosenbrock4<double>());
        }
        return odeint::make_dense_output(o.absolute_tolerance, o.relative_tolerance, max_dt, runge_kutta_dopri5_plain());
    }
};

simulation::simulation(plant_model model, std::vector<sensor_spec> sensors, std::vector<plant_event> events,
                       solver_options options, std::vector<double> x0, plant_controls controls,
                       std::uint64_t seed)
    : model_(std::move(model)),
      events_(std::move(events)),
      options_(options),
      controls_(std::move(controls)),
      state_(std::move(x0)),
      engine_(std::make_unique<engine>(options)) {
    std::uint64_t i = 0;
    for (sensor_spec& s : sensors) {
        sensors_.emplace_back(std::move(s), mix64(seed ^ mix64(++i)));
        next_sample_s_.push_back(0.0);
    }
    engine_->last_dt_d = options_.initial_step_s / seconds_per_day;
    apply_events(events_, 0.0, controls_);
    restart();
}

simulation::~simulation() = default;
simulation::simulation(simulation&&) noexcept = default;

const run_statistics& simulation::statistics() const {
    engine_->stats.evaluations = engine_->count.evaluations;
    return engine_->stats;
}

void simulation::restart() {
    const double t_d = time_s_ / seconds_per_day;
    const double dt = std::max(engine_->last_dt_d, 1e-9);
    std::visit(
        [&](auto& st) {
            if constexpr (std::is_same_v<std::decay_t<decltype(st)>, rosenbrock_dense>) {
                st.initialize(to_state(state_), t_d, dt);
            } else {
                st.initialize(state_, t_d, dt);
            }
        },
        engine_->stepper);
    engine_->fresh = true;
    ++engine_->stats.restarts;
}

plant_output simulation::outputs() const {
    return model_.outputs(state_.data(), time_s_ / seconds_per_day, controls_);
}

void simulation::set_controls(const plant_controls& u) {
    controls_ = u;
    apply_events(events_, time_s_, controls_);
    restart();
}

double simulation::next_event_after(double t_s) const {
    double next = std::numeric_limits<double>::infinity();
    for (const plant_event& e : events_) {
        if (e.kind != event_kind::blower_trip && e.kind != event_kind::power_failure) {
            continue;  // link events do not change the plant
        }
        if (e.start_s > t_s) {
            next = std::min(next, e.start_s);
        }
        if (e.end_s > t_s) {
            next = std::min(next, e.end_s);
        }
    }
    return next;
}

bool simulation::advance_to(double t_s) {
    while (time_s_ < t_s) {
        const double event = next_event_after(time_s_);
        const double stop = std::min(t_s, event);
        if (!integrate_to(stop)) {
            return false;
        }
        if (stop == event) {
            apply_events(events_, time_s_, controls_);
            restart();
        }
    }
    return true;
}

void simulation::sample(double t_s, const double* x) {
    const plant_output out = model_.outputs(x, t_s / seconds_per_day, controls_);
    for (std::size_t i = 0; i < sensors_.size(); ++i) {
        if (next_sample_s_[i] <= t_s) {
            sensors_[i].sample(t_s, read_signal(out, sensors_[i].spec().signal));
            next_sample_s_[i] = sensors_[i].next_sample_after(t_s);
            ++engine_->stats.samples;
        }
    }
}

void simulation::sample_due() { sample(time_s_, state_.data()); }

bool simulation::integrate_to(double t_stop_s) {
    const plant_system sys{&model_, &controls_, &engine_->count};
    const fd_jacobian<plant_system> jac{sys};
    plain_state x(state_.size());
    state_type xu(state_.size());
    try {
        while (true) {
            double next_sample = std::numeric_limits<double>::infinity();
            for (const double t : next_sample_s_) {
                next_sample = std::min(next_sample, t);
            }
            const double t_obs = std::min(next_sample, t_stop_s);
            const double t_obs_d = t_obs / seconds_per_day;
            std::visit(
                [&](auto& st) {
                    using stepper_t = std::decay_t<decltype(st)>;
                    while (st.current_time() < t_obs_d) {
                        std::pair<double, double> span;
                        if constexpr (std::is_same_v<stepper_t, rosenbrock_dense>) {
                            span = st.do_step(std::make_pair(sys, jac));
                        } else {
                            span = st.do_step(sys);
                        }
                        engine_->last_dt_d = span.second - span.first;
                        engine_->fresh = false;
                        ++engine_->stats.steps;
                    }
                    if constexpr (std::is_same_v<stepper_t, rosenbrock_dense>) {
                        if (engine_->fresh) {
                            xu = st.current_state();
                        } else {
                            st.calc_state(t_obs_d, xu);
                        }
                        std::copy(xu.begin(), xu.end(), x.begin());
                    } else if (engine_->fresh) {
                        x = st.current_state();
                    } else {
                        st.calc_state(t_obs_d, x);
                    }
                },
                engine_->stepper);
            if (next_sample <= t_stop_s) {
                sample(t_obs, x.data());
                if (next_sample < t_stop_s) {
                    continue;
                }
            }
            state_ = x;
            time_s_ = t_stop_s;
            return true;
        }
    } catch (const std::exception& e) {
        error_ = "the solver failed near plant time " + std::to_string(time_s_) + " s: " + e.what();
        return false;
    }
}

} // namespace floc::sim
