#include "floc/advisors/nitrification.hpp"

#include <algorithm>
#include <cmath>

namespace floc::advisors {
namespace {

constexpr double seconds_per_day = 86400.0;

// Metcalf & Eddy 5th ed. (2014), Table 8-14 (p. 755), ammonia-oxidising bacteria, as quoted in
// the public repository AnnaValls/ecoinvent: dataModel/constants.js ("table 8-14 at 20 degC":
// mu_max,AOB 0.90 /d, b_AOB 0.17 /d, K_NH4 0.50 g N/m3, K_o,AOB 0.50 g/m3) and
// techs/nitrification.js (mu_max x 1.072^(T-20), b x 1.029^(T-20), K_NH4 used without a
// temperature correction, hence 1.0). Secondary source; the book itself was not retrieved.
constexpr kinetic_set me_5th{"metcalf_eddy_5th", 0.90, 1.072, 0.17, 1.029, 0.50, 1.0, 0.50};
// Metcalf & Eddy 4th ed. (2003), Table 8-11, nitrifying bacteria (from memory; no retrieved source
// for these values was found).
constexpr kinetic_set me_4th{"metcalf_eddy_4th", 0.75, 1.07, 0.08, 1.04, 0.74, 1.053, 0.50};

} // namespace

const kinetic_set& kinetics_of(nitrifier_kinetics k) {
    return k == nitrifier_kinetics::metcalf_eddy_4th ? me_4th : me_5th;
}

std::string_view to_string(nitrifier_kinetics k) {
    return kinetics_of(k).name;
}

aerobic_srt minimum_aerobic_srt(const nitrifier_params& p, double t) {
    const kinetic_set& k = kinetics_of(p.kinetics);
    aerobic_srt out;
    const double dt = t - 20.0;
    out.mu_max_per_d = k.mu_max_per_d * std::pow(k.mu_theta, dt);
    out.decay_per_d = k.decay_per_d * std::pow(k.decay_theta, dt);
    out.ammonia_half_saturation_g_per_m3 =
        k.ammonia_half_saturation_g_per_m3 * std::pow(k.ammonia_half_saturation_theta, dt);
    const double n = std::max(p.ammonia_g_per_m3, 0.0);
    const double o = std::max(p.oxygen_g_per_m3, 0.0);
    const double monod_n = n / (out.ammonia_half_saturation_g_per_m3 + n);
    const double monod_o = o / (k.oxygen_half_saturation_g_per_m3 + o);
    out.net_growth_per_d = out.mu_max_per_d * monod_n * monod_o - out.decay_per_d;
    out.sustainable = std::isfinite(out.net_growth_per_d) && out.net_growth_per_d > 0.0;
    if (out.sustainable) {
        out.minimum_s = seconds_per_day / out.net_growth_per_d;
        out.design_s = p.safety_factor * out.minimum_s;
    }
    return out;
}

} // namespace floc::advisors
