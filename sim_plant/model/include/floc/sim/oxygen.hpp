// Dissolved-oxygen saturation and oxygen transfer.
#pragma once

#include <cstdint>

namespace floc::sim {

// Saturation concentration of oxygen in fresh water in equilibrium with water-saturated air at
// 1 atm (101.325 kPa), g/m3, after Benson & Krause (1984), Limnology and Oceanography 29(3),
// 620-632, in the form used by APHA Standard Methods 4500-O. Valid for 0..40 degC.
[[nodiscard]] double do_saturation_benson_krause(double temperature_c);

// The same at barometric pressure `pressure_kpa`, with the water-vapour and second-virial
// corrections of the Standard Methods form.
[[nodiscard]] double do_saturation_benson_krause(double temperature_c, double pressure_kpa);

// Barometric pressure at `elevation_m` above sea level in the International Standard Atmosphere
// (troposphere), kPa.
[[nodiscard]] double standard_pressure_kpa(double elevation_m);

enum class saturation_rule : std::uint8_t {
    fixed,          // a constant saturation concentration (the benchmark fixes 8 g/m3)
    benson_krause,  // from the mixed-liquor temperature and the site pressure
};

struct oxygen_spec {
    saturation_rule rule = saturation_rule::benson_krause;
    double fixed_saturation_g_per_m3 = 8.0;
    double pressure_kpa = 101.325;
    double beta = 1.0;  // saturation in mixed liquor / in clean water
    // KLa values are given at this temperature; KLa(T) = KLa * theta^(T - T_ref).
    double kla_reference_temperature_c = 20.0;
    double kla_theta = 1.024;

    [[nodiscard]] double saturation(double temperature_c) const;
    [[nodiscard]] double kla_factor(double temperature_c) const;
};

} // namespace floc::sim
