// The layered clarifier (Takacs, Patry & Nolasco 1991, Water Research 25(10)) against solids-flux
// theory, and its sludge blanket against the operator's everyday experience of RAS.
//
// The state-point calculation here is written from the one-dimensional flux theory (Keinath,
// Ryckman, Dana & Hofer 1977, J. Environ. Eng. Div. ASCE; the limiting flux is the minimum of the
// total flux G_t(X) = X v_s(X) + u X beyond the peak of the gravity flux) with the same settling
// velocity function and parameters as the model (the benchmark's, Alex et al. 2008 section 2.3.3).
// "Blanket rises when RAS is cut, falls when it is raised" is common practice.
#include "support.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <limits>

namespace {

using namespace floc::sim;

struct flux_curve {
    settling_spec p;
    double x_min = 0.0;
    double u = 0.0;  // underflow velocity, m/d

    [[nodiscard]] double velocity(double x) const {
        const double v = p.v0_m_per_d * (std::exp(-p.r_h_m3_per_g * (x - x_min)) - std::exp(-p.r_p_m3_per_g * (x - x_min)));
        return std::clamp(v, 0.0, p.v0_max_m_per_d);
    }
    [[nodiscard]] double gravity(double x) const { return x * velocity(x); }
    [[nodiscard]] double total(double x) const { return gravity(x) + u * x; }
    [[nodiscard]] double gravity_peak() const {
        double best = x_min;
        for (double x = x_min; x < 20000.0; x += 1.0) {
            if (gravity(x) > gravity(best)) {
                best = x;
            }
        }
        return best;
    }
    [[nodiscard]] double limiting_flux() const {
        double g = std::numeric_limits<double>::infinity();
        for (double x = gravity_peak(); x < 30000.0; x += 1.0) {
            g = std::min(g, total(x));
        }
        return g;
    }
    // The concentration below the peak at which the total flux equals `g` (bisection).
    [[nodiscard]] double lower_root(double g) const {
        double lo = x_min;
        double hi = gravity_peak();
        for (int i = 0; i < 100; ++i) {
            const double mid = 0.5 * (lo + hi);
            (total(mid) < g ? lo : hi) = mid;
        }
        return 0.5 * (lo + hi);
    }
};

flux_curve curve_for(const plant_output& o, const clarifier_spec& c) {
    flux_curve f;
    f.p = c.settling;
    f.x_min = c.settling.f_ns * o.trains[0].clarifier.feed_tss_g_per_m3;
    f.u = o.trains[0].clarifier.underflow_m3_per_d / c.area_m2;
    return f;
}

TEST(Clarifier, SteadyThickeningAgreesWithTheSolidsFluxStatePoint) {
    const scenario& s = test::bsm1();
    const plant_model model{s.plant, s.influent};
    const plant_output o = model.outputs(test::bsm1_steady_state().data(), 0.0, initial_controls(s.plant));
    const clarifier_spec& c = s.plant.trains[0].clarifier;
    const clarifier_output& co = o.trains[0].clarifier;
    const flux_curve f = curve_for(o, c);

    // The state point is under the limiting flux: the clarifier is not overloaded.
    const double applied = co.feed_m3_per_d * co.feed_tss_g_per_m3 / c.area_m2;
    EXPECT_LT(applied, f.limiting_flux());
    // Underflow solids from the mass balance around the clarifier (within 0.1 %).
    const double x_u = (co.feed_m3_per_d * co.feed_tss_g_per_m3 - co.effluent_m3_per_d * co.tss_g_per_m3.front()) /
                       co.underflow_m3_per_d;
    EXPECT_NEAR(co.tss_g_per_m3.back(), x_u, 1e-3 * x_u);
    // Below the feed layer the solids sit at the dilute root of G_t(X) = Q_u X_u / A: the flux
    // that leaves at the bottom passes through the thickening zone (within 1 %).
    const double x_thick = f.lower_root(co.underflow_m3_per_d * x_u / c.area_m2);
    for (std::size_t j = c.feed_layer + 1; j + 1 < settler_layers; ++j) {
        EXPECT_NEAR(co.tss_g_per_m3[j], x_thick, 0.01 * x_thick) << "layer " << j + 1;
    }
}

// The RAS flow at which the state point reaches the limiting flux, for the plant at steady state.
double critical_ras(const plant_output& o, const scenario& s) {
    const clarifier_spec& c = s.plant.trains[0].clarifier;
    const double q_in = o.trains[0].influent.flow_m3_per_d;
    const double q_w = o.trains[0].was_m3_per_d;
    double lo = 0.0;
    double hi = 3.0 * q_in;
    for (int i = 0; i < 40; ++i) {
        const double q_r = 0.5 * (lo + hi);
        flux_curve f = curve_for(o, c);
        f.u = (q_r + q_w) / c.area_m2;
        const double applied = (q_in + q_r) * o.trains[0].clarifier.feed_tss_g_per_m3 / c.area_m2;
        (applied > f.limiting_flux() ? lo : hi) = q_r;
    }
    return 0.5 * (lo + hi);
}

double blanket_after(simulation& sim, double t_s) {
    EXPECT_TRUE(sim.advance_to(t_s)) << sim.error();
    return sim.outputs().trains[0].clarifier.blanket_m;
}

TEST(Clarifier, BlanketRisesWhenRasIsCutBelowTheStatePointAndFallsWhenRaised) {
    scenario s = test::bsm1();
    s.plant.trains[0].clarifier.blanket = blanket_rule::interpolated;
    const plant_model model{s.plant, s.influent};
    const plant_output o = model.outputs(test::bsm1_steady_state().data(), 0.0, initial_controls(s.plant));
    const double start = o.trains[0].clarifier.blanket_m;
    const double q_crit = critical_ras(o, s);
    EXPECT_GT(q_crit, 1000.0);
    EXPECT_LT(q_crit, 18446.0);

    // RAS well above the critical flow, but cut from its design value: the blanket stays low.
    {
        simulation sim = make_simulation(s, test::bsm1_steady_state());
        plant_controls u = sim.controls();
        u.trains[0].ras_flow_m3_per_d = 1.4 * q_crit;
        sim.set_controls(u);
        EXPECT_LT(blanket_after(sim, 0.5 * 86400.0), 1.2);
    }
    // RAS below the critical flow: the clarifier is overloaded, the blanket rises and the
    // clarifier takes up solids (until the mixed liquor it loses brings the state point back
    // under the limiting flux).
    simulation sim = make_simulation(s, test::bsm1_steady_state());
    const double solids_start = sim.outputs().trains[0].clarifier.solids_kg;
    plant_controls u = sim.controls();
    u.trains[0].ras_flow_m3_per_d = 0.6 * q_crit;
    sim.set_controls(u);
    const double after_3h = blanket_after(sim, 3.0 * 3600.0);
    const double after_6h = blanket_after(sim, 6.0 * 3600.0);
    EXPECT_GT(after_3h, start + 0.3);
    EXPECT_GT(after_6h, start + 0.3);
    EXPECT_GT(sim.outputs().trains[0].clarifier.solids_kg, 1.5 * solids_start);
    // RAS raised well above its design value: the blanket falls again.
    u.trains[0].ras_flow_m3_per_d = 2.0 * 18446.0;
    sim.set_controls(u);
    const double after_9h = blanket_after(sim, 9.0 * 3600.0);
    const double after_12h = blanket_after(sim, 12.0 * 3600.0);
    EXPECT_LT(after_9h, after_6h - 0.3);
    EXPECT_LT(after_12h, after_6h - 0.3);
    EXPECT_LT(after_12h, start);
}

TEST(Clarifier, BlanketRulesOnAKnownProfile) {
    clarifier_spec c;  // 4 m, 10 layers of 0.4 m, threshold 3000 g/m3
    const std::array<double, settler_layers> profile{12.5, 18.1, 29.5, 69.0, 356.1, 356.1, 356.1, 356.1, 356.1, 6394.0};
    // Interpolated between the mid-heights of the two lowest layers (0.2 m and 0.6 m):
    // 0.2 + 0.4 (6394 - 3000)/(6394 - 356.1) = 0.42485 m.
    c.blanket = blanket_rule::interpolated;
    EXPECT_NEAR(blanket_height(c, profile), 0.2 + 0.4 * (6394.0 - 3000.0) / (6394.0 - 356.1), 1e-9);
    // The benchmark toolbox's formula on the same profile: 0.4 + 0.4 (356.1 + 356.1)/(6394 - 356.1).
    c.blanket = blanket_rule::benchmark;
    EXPECT_NEAR(blanket_height(c, profile), 0.4 + 0.4 * (2 * 356.1) / (6394.0 - 356.1), 1e-9);
    // No layer at the threshold: no blanket; the top layer at it: a full clarifier.
    std::array<double, settler_layers> clear{};
    clear.fill(200.0);
    c.blanket = blanket_rule::interpolated;
    EXPECT_EQ(blanket_height(c, clear), 0.0);
    std::array<double, settler_layers> full{};
    full.fill(5000.0);
    EXPECT_EQ(blanket_height(c, full), 4.0);
}

} // namespace
