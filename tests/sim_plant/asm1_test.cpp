// ASM1 stoichiometry and kinetics (Henze, Grady, Gujer, Marais, Matsuo 1987, Activated Sludge
// Model No. 1, IAWPRC Scientific and Technical Report No. 1, Table 6.1 matrix).
#include "floc/sim/asm1.hpp"

#include <gtest/gtest.h>

#include <cmath>

namespace {

using namespace floc::sim;

// The report's continuity check: every process conserves COD (oxygen as negative COD, nitrate
// at -4.57 g O2/g N, N2 gas at -1.71 g O2/g N relative to ammonium) and nitrogen (N2 leaving).
TEST(Asm1, EveryProcessConservesOxygenDemandAndNitrogen) {
    const asm1::stoichiometry s;
    for (std::size_t j = 0; j < asm1::process_count; ++j) {
        std::array<double, asm1::process_count> rho{};
        rho[j] = 1.0;
        asm1::vector r{};
        asm1::conversion_rates(s, rho, r);
        const double n2 = asm1::denitrification_rate(s, rho);
        EXPECT_NEAR(asm1::oxygen_demand(r), asm1::n2_oxygen_equivalent * n2, 1e-12) << "process " << j + 1;
        EXPECT_NEAR(asm1::total_nitrogen(s, r), -n2, 1e-12) << "process " << j + 1;
    }
}

TEST(Asm1, AlkalinityFollowsTheChargeOfTheNitrogenSpecies) {
    // Henze et al. 1987: alkalinity in mol/m3 changes by -1/14 per g N of ammonium consumed and
    // nitrate produced (nitrification), +1/14 per g N of nitrate reduced or ammonium released.
    const asm1::stoichiometry s;
    std::array<double, asm1::process_count> rho{};
    rho[2] = 1.0;  // autotrophic growth
    asm1::vector r{};
    asm1::conversion_rates(s, rho, r);
    EXPECT_NEAR(r[asm1::s_alk], (r[asm1::s_nh] - r[asm1::s_no]) / 14.0, 1e-12);
    rho = {};
    rho[1] = 1.0;  // anoxic heterotrophic growth
    asm1::conversion_rates(s, rho, r);
    EXPECT_NEAR(r[asm1::s_alk], (r[asm1::s_nh] - r[asm1::s_no]) / 14.0, 1e-12);
}

TEST(Asm1, RatesAreZeroWithoutBiomassAndIgnoreNegativeValues) {
    const asm1::kinetics k;
    asm1::vector c{};
    c[asm1::s_s] = 50.0;
    c[asm1::s_o] = 2.0;
    c[asm1::s_nh] = 20.0;
    c[asm1::x_s] = 100.0;
    for (const double rho : asm1::process_rates(k, c)) {
        EXPECT_EQ(rho, 0.0);
    }
    c[asm1::x_bh] = -5.0;  // a slightly negative state from the integrator counts as zero
    for (const double rho : asm1::process_rates(k, c)) {
        EXPECT_EQ(rho, 0.0);
    }
}

TEST(Asm1, AerobicGrowthRateByHand) {
    // rho_1 = mu_H S_S/(K_S+S_S) S_O/(K_OH+S_O) X_BH with the benchmark parameters.
    const asm1::kinetics k;
    asm1::vector c{};
    c[asm1::s_s] = 10.0;
    c[asm1::s_o] = 0.2;
    c[asm1::x_bh] = 2000.0;
    const auto rho = asm1::process_rates(k, c);
    EXPECT_NEAR(rho[0], 4.0 * 0.5 * 0.5 * 2000.0, 1e-9);
    EXPECT_NEAR(rho[3], 0.3 * 2000.0, 1e-9);
}

TEST(Asm1, TemperatureCorrectionReproducesTheTenDegreeValues) {
    // The benchmark family's 10 degC values (IWA BSM2 code, as in bsm2-python asm1_bsm2.py):
    // mu_H 3.0, b_H 0.2, mu_A 0.3, b_A 0.03, k_h 2.5, k_a 0.04 1/d; theta = (p15/p10)^(1/5).
    asm1::parameters p;
    p.theta = {1.0592, 1.0845, 1.0371, 1.0, 1.1076, 1.1076, 1.0456};
    const asm1::kinetics k10 = asm1::at_temperature(p, 10.0);
    EXPECT_NEAR(k10.mu_h, 3.0, 3.0 * 1e-3);
    EXPECT_NEAR(k10.b_h, 0.2, 0.2 * 1e-3);
    EXPECT_NEAR(k10.mu_a, 0.3, 0.3 * 1e-3);
    EXPECT_NEAR(k10.b_a, 0.03, 0.03 * 1e-3);
    EXPECT_NEAR(k10.k_h, 2.5, 2.5 * 1e-3);
    EXPECT_NEAR(k10.k_a, 0.04, 0.04 * 1e-3);
    const asm1::kinetics k15 = asm1::at_temperature(p, 15.0);
    EXPECT_DOUBLE_EQ(k15.mu_h, 4.0);
    EXPECT_GT(asm1::at_temperature(p, 20.0).mu_a, 0.5);
}

TEST(Asm1, CompositeVariablesOfTheConstantInfluent) {
    // BSM1 constant influent (Copp 2002): TSS = 0.75 (X_I + X_S + X_BH) = 211.2675 g/m3; COD
    // 381.19, TKN 54.43 g N/m3, BOD5 (factor 0.65) 193.5 (derived in shared/notes/bsm1-facts.md).
    const asm1::parameters p;
    const asm1::vector c{30, 69.5, 51.2, 202.32, 28.17, 0, 0, 0, 0, 31.56, 6.95, 10.59, 7};
    EXPECT_NEAR(asm1::tss(p, c), 211.2675, 1e-9);
    EXPECT_NEAR(asm1::total_cod(c), 381.19, 1e-9);
    EXPECT_NEAR(asm1::tkn(p.stoich, c), 54.43, 0.01);
    EXPECT_NEAR(asm1::bod5(p.stoich, c, 0.65), 193.5, 0.1);
}

} // namespace
