// Minimum aerobic SRT for nitrification from nitrifier growth kinetics.
//
//   mu_max(T) = mu_max,20 theta_mu^(T-20)          (Arrhenius-type temperature correction)
//   b(T)      = b_20 theta_b^(T-20)
//   K_N(T)    = K_N,20 theta_K^(T-20)
//   mu_net    = mu_max(T) N / (K_N(T) + N) DO / (K_O + DO) - b(T)
//   SRT_min   = 1 / mu_net;     SRT_design = safety factor x SRT_min
// N is the ammonia concentration the aerobic zone must reach and DO its oxygen residual.
// Two parameter sets from Metcalf & Eddy, "Wastewater Engineering", 4th ed. (2003) Table 8-11
// and 5th ed. (2014) Table 8-14 (ammonia-oxidising bacteria). The 5th-edition values are as quoted
// in the public repository AnnaValls/ecoinvent (see nitrification.cpp); the 4th-edition values are
// from memory. Both are listed in README.md ("How each advice is computed").
#pragma once

#include <cstdint>
#include <string_view>

namespace floc::advisors {

enum class nitrifier_kinetics : std::uint8_t { metcalf_eddy_5th = 0, metcalf_eddy_4th = 1 };

struct kinetic_set {
    std::string_view name;
    double mu_max_per_d = 0.0; // at 20 degC
    double mu_theta = 1.0;
    double decay_per_d = 0.0; // endogenous decay b at 20 degC
    double decay_theta = 1.0;
    double ammonia_half_saturation_g_per_m3 = 0.0; // K_N at 20 degC, as N
    double ammonia_half_saturation_theta = 1.0;
    double oxygen_half_saturation_g_per_m3 = 0.0; // K_O
};

[[nodiscard]] const kinetic_set& kinetics_of(nitrifier_kinetics k);
[[nodiscard]] std::string_view to_string(nitrifier_kinetics k);

struct nitrifier_params {
    nitrifier_kinetics kinetics = nitrifier_kinetics::metcalf_eddy_5th;
    double safety_factor = 1.5;
    double ammonia_g_per_m3 = 1.0; // ammonia the aerobic zone must reach (as N)
    double oxygen_g_per_m3 = 2.0;  // DO residual in the aerobic zone
};

struct aerobic_srt {
    double mu_max_per_d = 0.0; // at the temperature
    double decay_per_d = 0.0;
    double ammonia_half_saturation_g_per_m3 = 0.0;
    double net_growth_per_d = 0.0; // mu_net
    bool sustainable = false;      // mu_net > 0
    double minimum_s = 0.0;        // 1 / mu_net (0 when not sustainable)
    double design_s = 0.0;         // safety factor x minimum
};

[[nodiscard]] aerobic_srt minimum_aerobic_srt(const nitrifier_params& p, double temperature_degC);

} // namespace floc::advisors
