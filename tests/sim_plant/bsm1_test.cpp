// The process model against the IWA Benchmark Simulation Model No. 1 (BSM1) steady states.
//
// Plant, parameters and influent: Copp, J.B. (ed.) (2002), The COST Simulation Benchmark:
// Description and Simulator Manual, COST Action 624 & 682; Alex, J. et al. (2008), Benchmark
// Simulation Model no. 1 (BSM1), Lund University, IEA, sections 2 (plant) and 3-4 (steady state
// with the constant influent). The published steady-state values are those of the benchmark's
// MATLAB/Simulink reference, printed in the toolbox's initialisation files (asm1init.m and
// settler1dinit.m, block "Steady state conditions, default initial conditions used by the
// MATLAB codes"), open loop and with the default DO and nitrate controllers; the open-loop
// effluent and the sludge blanket height also appear in the bsm2-python port's test file
// tests/bsm1_ol_test.py as the MATLAB reference. Collected in shared/notes/bsm1-facts.md, 2.1.
//
// Tolerance: 0.1 % of each published value (values are published with five significant digits),
// with an absolute floor of 1e-5 g/m3 for the oxygen in the anoxic tanks (about 1e-4 g/m3).
#include "support.hpp"

#include <gtest/gtest.h>

#include <array>
#include <cmath>

namespace {

using namespace floc::sim;
using floc::sim::test::bsm1;
using floc::sim::test::bsm1_steady_state;

constexpr double rel_tol = 1e-3;
constexpr double abs_floor = 1e-5;

void expect_near_published(double model, double published, const std::string& what) {
    const double tol = std::max(rel_tol * std::abs(published), abs_floor);
    EXPECT_NEAR(model, published, tol) << what;
}

// Rows: S_I S_S X_I X_S X_BH X_BA X_P S_O S_NO S_NH S_ND X_ND S_ALK; columns: tanks 1-5.
using tank_table = std::array<std::array<double, 5>, 13>;

// Open loop: KLa 0/0/240/240/84 1/d, Q_a 55 338, Q_r 18 446, Q_w 385 m3/d.
constexpr tank_table open_loop{{
    {30, 30, 30, 30, 30},
    {2.8082, 1.4588, 1.1495, 0.99532, 0.88949},
    {1149.1252, 1149.1252, 1149.1252, 1149.1252, 1149.1252},
    {82.1349, 76.3862, 64.8549, 55.694, 49.3056},
    {2551.7658, 2553.3851, 2557.1314, 2559.1826, 2559.3436},
    {148.3894, 148.3091, 148.9413, 149.5271, 149.7971},
    {448.8519, 449.5227, 450.4183, 451.3147, 452.2111},
    {0.0042984, 6.3132e-05, 1.7184, 2.4289, 0.49094},
    {5.3699, 3.662, 6.5409, 9.299, 10.4152},
    {7.9179, 8.3444, 5.5479, 2.9674, 1.7333},
    {1.2166, 0.88206, 0.82889, 0.76679, 0.68828},
    {5.2849, 5.0291, 4.3924, 3.879, 3.5272},
    {4.9277, 5.0802, 4.6748, 4.2935, 4.1256},
}};
constexpr std::array<double, 5> open_loop_tss{3285.2004, 3282.5462, 3277.8533, 3273.6327, 3269.8370};
constexpr std::array<double, 10> open_loop_settler{12.4969, 18.1132, 29.5402, 68.9781, 356.0747,
                                                   356.0747, 356.0747, 356.0747, 356.0747, 6393.9844};
// Effluent (top layer), open loop: S_I S_S X_I X_S X_BH X_BA X_P S_O S_NO S_NH S_ND X_ND S_ALK.
constexpr std::array<double, 13> open_loop_effluent{30.0,     0.889493, 4.391827, 0.188440, 9.781524,
                                                    0.572508, 1.728300, 0.490944, 10.415220, 1.733331,
                                                    0.688280, 0.0134805, 4.125579};

// With the default controllers: S_O,5 at 2 g/m3 via KLa5, S_NO,2 at 1 g N/m3 via Q_a.
constexpr tank_table closed_loop{{
    {30, 30, 30, 30, 30},
    {3.2439, 1.6707, 1.2195, 0.97326, 0.80801},
    {1149.1683, 1149.1683, 1149.1683, 1149.1683, 1149.1683},
    {98.6029, 91.7032, 69.6594, 54.4484, 44.4828},
    {2552.1095, 2552.3711, 2560.2025, 2563.3104, 2562.8514},
    {151.6721, 151.5303, 152.6873, 153.7108, 154.163},
    {446.9249, 448.0838, 449.6336, 451.1852, 452.7367},
    {0.0076964, 6.0271e-05, 1.635, 2.4745, 2.0},
    {3.5133, 1.0, 6.2289, 11.0693, 13.5243},
    {11.8312, 12.5482, 7.3197, 2.7825, 0.67193},
    {1.3621, 0.78899, 0.8307, 0.75276, 0.6645},
    {6.1775, 5.9537, 4.7131, 3.8403, 3.2605},
    {5.3399, 5.5706, 4.8236, 4.1538, 3.8277},
}};
constexpr std::array<double, 5> closed_loop_tss{3298.8582, 3294.6425, 3286.0132, 3278.8674, 3272.5516};
constexpr std::array<double, 10> closed_loop_settler{12.5016, 18.1183, 29.548, 69.0015, 356.2825,
                                                     356.2825, 356.2825, 356.2825, 356.2825, 6399.2981};

void compare_tanks(const plant_output& out, const tank_table& table, const std::array<double, 5>& tss,
                   const std::string& label) {
    ASSERT_EQ(out.trains.size(), 1U);
    ASSERT_EQ(out.trains[0].zones.size(), 5U);
    for (std::size_t tank = 0; tank < 5; ++tank) {
        const zone_output& z = out.trains[0].zones[tank];
        for (std::size_t k = 0; k < asm1::component_count; ++k) {
            expect_near_published(z.c[k], table[k][tank],
                                  label + " tank " + std::to_string(tank + 1) + " " + std::string{asm1::component_name(k)});
        }
        expect_near_published(z.tss_g_per_m3, tss[tank], label + " tank " + std::to_string(tank + 1) + " TSS");
    }
}

void compare_settler(const plant_output& out, const std::array<double, 10>& table, const std::string& label) {
    for (std::size_t j = 0; j < settler_layers; ++j) {
        expect_near_published(out.trains[0].clarifier.tss_g_per_m3[j], table[j],
                              label + " settler layer " + std::to_string(j + 1) + " (from the top) TSS");
    }
}

TEST(Bsm1SteadyState, OpenLoopReactorsMatchTheBenchmark) {
    const plant_model model{bsm1().plant, bsm1().influent};
    const plant_output out = model.outputs(bsm1_steady_state().data(), 0.0, initial_controls(bsm1().plant));
    compare_tanks(out, open_loop, open_loop_tss, "open loop");
}

TEST(Bsm1SteadyState, OpenLoopSettlerAndEffluentMatchTheBenchmark) {
    const plant_model model{bsm1().plant, bsm1().influent};
    const plant_output out = model.outputs(bsm1_steady_state().data(), 0.0, initial_controls(bsm1().plant));
    compare_settler(out, open_loop_settler, "open loop");
    for (std::size_t k = 0; k < asm1::component_count; ++k) {
        expect_near_published(out.effluent[k], open_loop_effluent[k],
                              "open-loop effluent " + std::string{asm1::component_name(k)});
    }
    expect_near_published(out.effluent_tss_g_per_m3, 12.496950, "open-loop effluent TSS");
    // Q_e = Q_in - Q_w = 18 061 m3/d (bsm2-python bsm1_ol_test.py, MATLAB reference).
    EXPECT_NEAR(out.effluent_m3_per_d, 18061.0, 1e-6);
    // Sludge blanket with the benchmark's rule (threshold 3000 g/m3): 0.447178539974702 m
    // (bsm2-python bsm1_ol_test.py, MATLAB reference).
    expect_near_published(out.trains[0].clarifier.blanket_m, 0.447178539974702, "blanket height, benchmark rule");
}

TEST(Bsm1SteadyState, OpenLoopEnergyMatchesTheUpdatedBenchmarkFormulas) {
    // Updated BSM1 criteria (Alex et al. 2008, section 6; perf_plant.m by U. Jeppsson, IEA Lund):
    // AE = S_O,sat/(1.8*1000) * sum V_i KLa_i = 3341.39 kWh/d, PE = 0.004 Q_a + 0.008 Q_r +
    // 0.05 Q_w = 388.17 kWh/d, ME = 24 * 0.005 * (V_1 + V_2) = 240 kWh/d; AE and PE as in the
    // bsm2-python data/evaluation_ss.csv (3341.3867 and 388.17).
    const plant_model model{bsm1().plant, bsm1().influent};
    const plant_output out = model.outputs(bsm1_steady_state().data(), 0.0, initial_controls(bsm1().plant));
    EXPECT_NEAR(out.energy.aeration_kw * 24.0, 3341.3867, 0.01);
    EXPECT_NEAR(out.energy.pumping_kw * 24.0, 388.17, 0.01);
    EXPECT_NEAR(out.energy.mixing_kw * 24.0, 240.0, 1e-9);
}

TEST(Bsm1SteadyState, DefaultControllersReachThePublishedClosedLoopState) {
    scenario s = bsm1();
    s.plant.trains[0].zones[4].aeration.mode = aeration_mode::do_loop;
    s.plant.trains[0].recycle.mode = recycle_mode::nitrate_loop;
    steady_state_result r;
    const std::vector<double> x = initial_state(s, &r);
    ASSERT_TRUE(r.converged) << r.error;
    const plant_model model{s.plant, s.influent};
    const plant_output out = model.outputs(x.data(), 0.0, initial_controls(s.plant));
    compare_tanks(out, closed_loop, closed_loop_tss, "closed loop");
    compare_settler(out, closed_loop_settler, "closed loop");
    // The loops hold their set points with the manipulated variables inside their ranges.
    EXPECT_GT(out.trains[0].zones[4].kla_per_d, 0.0);
    EXPECT_LT(out.trains[0].zones[4].kla_per_d, 360.0);
    EXPECT_GT(out.trains[0].recycle_m3_per_d, 0.0);
    EXPECT_LT(out.trains[0].recycle_m3_per_d, 92230.0);
}

} // namespace
