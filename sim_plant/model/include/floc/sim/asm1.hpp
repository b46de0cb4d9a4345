// Activated Sludge Model No. 1 (Henze, Grady, Gujer, Marais, Matsuo 1987, IAWPRC Scientific and
// Technical Report No. 1): 13 components, 8 processes, Arrhenius-type temperature corrections.
// Pure functions; concentrations in g/m3 (COD, N) and mol/m3 (alkalinity), rates per day.
#pragma once

#include <array>
#include <cstddef>
#include <optional>
#include <string_view>

namespace floc::sim::asm1 {

// Component indices, in the order of the report's matrix.
enum component : std::size_t {
    s_i = 0,   // soluble inert organic matter, g COD/m3
    s_s,       // readily biodegradable substrate, g COD/m3
    x_i,       // particulate inert organic matter, g COD/m3
    x_s,       // slowly biodegradable substrate, g COD/m3
    x_bh,      // active heterotrophic biomass, g COD/m3
    x_ba,      // active autotrophic biomass, g COD/m3
    x_p,       // particulate products of biomass decay, g COD/m3
    s_o,       // dissolved oxygen, g O2/m3 (negative COD)
    s_no,      // nitrate and nitrite nitrogen, g N/m3
    s_nh,      // ammonium plus ammonia nitrogen, g N/m3
    s_nd,      // soluble biodegradable organic nitrogen, g N/m3
    x_nd,      // particulate biodegradable organic nitrogen, g N/m3
    s_alk,     // alkalinity, mol/m3
};
inline constexpr std::size_t component_count = 13;
inline constexpr std::size_t process_count = 8;

using vector = std::array<double, component_count>;

// "S_I", "S_S", ... as written in the report.
[[nodiscard]] std::string_view component_name(std::size_t c);
[[nodiscard]] std::optional<std::size_t> component_from_name(std::string_view name);
[[nodiscard]] bool is_particulate(std::size_t c);
// The unit symbol of a component ("g/m3", or "mol/m3" for alkalinity).
[[nodiscard]] std::string_view component_unit(std::size_t c);

// Kinetic parameters at one temperature.
struct kinetics {
    double mu_h = 4.0;     // heterotrophic max. specific growth rate, 1/d
    double k_s = 10.0;     // half-saturation of S_S, g COD/m3
    double k_oh = 0.2;     // oxygen half-saturation for heterotrophs, g O2/m3
    double k_no = 0.5;     // nitrate half-saturation for denitrifiers, g N/m3
    double b_h = 0.3;      // heterotrophic decay, 1/d
    double eta_g = 0.8;    // anoxic growth correction
    double eta_h = 0.8;    // anoxic hydrolysis correction
    double k_h = 3.0;      // max. specific hydrolysis rate, g X_S/(g X_BH COD d)
    double k_x = 0.1;      // half-saturation for hydrolysis, g X_S/g X_BH COD
    double mu_a = 0.5;     // autotrophic max. specific growth rate, 1/d
    double k_nh = 1.0;     // ammonium half-saturation for autotrophs, g N/m3
    double b_a = 0.05;     // autotrophic decay, 1/d
    double k_oa = 0.4;     // oxygen half-saturation for autotrophs, g O2/m3
    double k_a = 0.05;     // ammonification rate, m3/(g COD d)
};

// Stoichiometric parameters (temperature independent).
struct stoichiometry {
    double y_h = 0.67;   // heterotrophic yield, g COD/g COD
    double y_a = 0.24;   // autotrophic yield, g COD/g N
    double f_p = 0.08;   // fraction of biomass to particulate products
    double i_xb = 0.08;  // g N/g COD in biomass
    double i_xp = 0.06;  // g N/g COD in products and inerts
};

// Temperature coefficients theta: k(T) = k(T_ref) * theta^(T - T_ref). 1.0 = no correction.
struct temperature_coefficients {
    double mu_h = 1.0, b_h = 1.0, k_h = 1.0, k_x = 1.0, mu_a = 1.0, b_a = 1.0, k_a = 1.0;
};

struct parameters {
    kinetics at_reference;              // kinetics at `reference_temperature_c`
    double reference_temperature_c = 15.0;
    temperature_coefficients theta;
    stoichiometry stoich;
    double tss_per_cod = 0.75;          // g SS/g COD for X_I, X_S, X_BH, X_BA, X_P
};

// Kinetics corrected to `temperature_c`.
[[nodiscard]] kinetics at_temperature(const parameters& p, double temperature_c);

// The eight process rates rho_1..rho_8 (g/m3/d) for concentrations `c` (negative values count
// as zero, as in the benchmark's implementation).
[[nodiscard]] std::array<double, process_count> process_rates(const kinetics& k, const vector& c);

// Conversion rates r_i = sum_j nu_ij rho_j of every component (g/m3/d; alkalinity mol/m3/d).
void conversion_rates(const stoichiometry& s, const std::array<double, process_count>& rho,
                      vector& r);

// Nitrate reduced to N2 gas by anoxic growth (process 2), g N/m3/d.
[[nodiscard]] double denitrification_rate(const stoichiometry& s,
                                          const std::array<double, process_count>& rho);

// Composite variables (as defined for the benchmark's evaluation).
[[nodiscard]] double tss(const parameters& p, const vector& c);            // g SS/m3
[[nodiscard]] double total_cod(const vector& c);                           // g COD/m3
[[nodiscard]] double tkn(const stoichiometry& s, const vector& c);         // g N/m3
[[nodiscard]] double total_nitrogen(const stoichiometry& s, const vector& c);  // TKN + S_NO
[[nodiscard]] double bod5(const stoichiometry& s, const vector& c, double factor = 0.25);

// The conserved oxygen-demand measure used in mass balances: organic COD minus dissolved
// oxygen minus nitrate at 4.57 g O2/g N (ammonium as the reference state of nitrogen).
[[nodiscard]] double oxygen_demand(const vector& c);
// Oxygen equivalent of N2 gas relative to ammonium: 4.57 - 2.86 g O2/g N.
inline constexpr double n2_oxygen_equivalent = 4.57 - 2.86;

} // namespace floc::sim::asm1
