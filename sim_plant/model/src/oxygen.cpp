#include "floc/sim/oxygen.hpp"

#include <cmath>

namespace floc::sim {

double do_saturation_benson_krause(double temperature_c) {
    // ln C* = A0 + A1/T + A2/T^2 + A3/T^3 + A4/T^4 (T in kelvin), fresh water.
    const double t = temperature_c + 273.15;
    const double ln_c = -139.34411 + 1.575701e5 / t - 6.642308e7 / (t * t) +
                        1.243800e10 / (t * t * t) - 8.621949e11 / (t * t * t * t);
    return std::exp(ln_c);
}

double do_saturation_benson_krause(double temperature_c, double pressure_kpa) {
    const double t = temperature_c + 273.15;
    const double p_atm = pressure_kpa / 101.325;
    // Vapour pressure of water (atm) and the second virial coefficient term of oxygen.
    const double u = std::exp(11.8571 - 3840.70 / t - 216961.0 / (t * t));
    const double theta = 0.000975 - 1.426e-5 * temperature_c + 6.436e-8 * temperature_c * temperature_c;
    const double factor = p_atm * ((1.0 - u / p_atm) * (1.0 - theta * p_atm)) / ((1.0 - u) * (1.0 - theta));
    return do_saturation_benson_krause(temperature_c) * factor;
}

double standard_pressure_kpa(double elevation_m) {
    // p = p0 (1 - L h / T0)^(g M / (R L)), L = 0.0065 K/m, T0 = 288.15 K.
    return 101.325 * std::pow(1.0 - 2.25577e-5 * elevation_m, 5.25588);
}

double oxygen_spec::saturation(double temperature_c) const {
    if (rule == saturation_rule::fixed) {
        return fixed_saturation_g_per_m3;
    }
    return beta * do_saturation_benson_krause(temperature_c, pressure_kpa);
}

double oxygen_spec::kla_factor(double temperature_c) const {
    return kla_theta == 1.0 ? 1.0 : std::pow(kla_theta, temperature_c - kla_reference_temperature_c);
}

} // namespace floc::sim
