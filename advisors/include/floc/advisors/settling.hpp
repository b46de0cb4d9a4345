// Secondary clarifier: Vesilind settling, settling parameters from SVI, the limiting solids flux
// and the state-point check of solids flux theory.
//
// Vesilind:      v(X) = v0 exp(-k X)                          zone settling velocity
// Gravity flux:  Gg(X) = X v(X);  underflow flux Gu = u X with u = Qr / A
// Limiting flux: the local minimum of Gt = Gg + Gu on the thickening branch, where
//                dGg/dX = -u, i.e. v0 exp(-kX) (kX - 1) = u with kX > 2 (solved by bisection);
//                none when u >= v0 exp(-2) (the total flux then rises everywhere).
// State point (Keinath et al. 1977; Keinath 1985):
//   clarification: surface overflow rate SOR = Q / A must not exceed v(X);
//   thickening:    applied flux (Q + Qr) X / A must not exceed the limiting flux GL
//                  (only where GL lies at a concentration above X; below it the check is the
//                  clarification check).
// Assumptions of the method: steady state, one-dimensional flow, no compression, effluent and
// waste solids neglected. Units: X in g/m3 (= mg/L), velocities in m/d, fluxes in kg/(m2 d).
#pragma once

#include <cstdint>
#include <optional>
#include <string_view>

namespace floc::advisors {

struct vesilind {
    double v0_m_per_d = 0.0; // initial settling velocity at X -> 0
    double k_m3_per_g = 0.0; // concentration coefficient (L/g / 1000)
};

// Correlations giving v0 and k from a sludge volume index.
enum class svi_correlation : std::uint8_t {
    // Daigger (1995), Water Environment Research 67(1) 95-100 (citation as listed in
    // aquanova.cz/literature.htm, ref. 6): from the ordinary (unstirred) SVI, mL/g:
    // ln v [m/h] = 1.871 - (0.1646 + 0.001586 SVI) X [g/L]. Coefficients from memory, intercept
    // and SVI slope matched by a public re-implementation (see settling.cpp).
    daigger_1995 = 0,
    // Wahlberg & Keinath (1988), JWPCF 60(12) 2095-2100: from the STIRRED specific volume index
    // SSVI3.5, mL/g:  v0 [m/h] = 15.3 - 0.0615 SSVI;  k [L/g] = 0.426 - 0.00384 SSVI
    // + 0.0000543 SSVI^2 (coefficients from memory). Do not feed it an unstirred SVI.
    wahlberg_keinath_1988 = 1,
};

[[nodiscard]] std::string_view to_string(svi_correlation c);
// Whether the correlation expects the stirred SSVI3.5 (true) or the ordinary SVI (false).
[[nodiscard]] bool expects_stirred_svi(svi_correlation c);

struct settling_estimate {
    vesilind settling;
    bool valid = false;        // v0 > 0 and k > 0
    bool inside_data = false;  // SVI inside the range the correlation was fitted to
    double data_min_svi = 0.0; // that range, mL/g
    double data_max_svi = 0.0;
};

[[nodiscard]] settling_estimate settling_from_svi(svi_correlation c, double svi_ml_per_g);

[[nodiscard]] double settling_velocity_m_per_d(const vesilind& s, double x_g_per_m3);
[[nodiscard]] double gravity_flux_kg_per_m2_d(const vesilind& s, double x_g_per_m3);

struct limiting_flux {
    bool exists = false;                 // false: u >= v0 e^-2, the total flux has no minimum
    double flux_kg_per_m2_d = 0.0;       // GL
    double at_g_per_m3 = 0.0;            // the concentration where it occurs
    double max_underflow_g_per_m3 = 0.0; // GL / u: the thickest underflow the flux allows
};

[[nodiscard]] limiting_flux limiting_solids_flux(const vesilind& s, double underflow_m_per_d);

struct clarifier_loading {
    double flow_m3_per_d = 0.0;     // influent flow to the clarifier(s), Q
    double ras_flow_m3_per_d = 0.0; // return sludge flow, Qr
    double mlss_g_per_m3 = 0.0;     // X, the feed concentration
    double area_m2 = 0.0;           // total surface area of the clarifier(s)
};

struct state_point {
    double overflow_rate_m_per_d = 0.0;      // SOR = Q / A
    double solids_loading_kg_per_m2_d = 0.0; // SLR = applied flux = (Q + Qr) X / A
    double underflow_velocity_m_per_d = 0.0; // u = Qr / A
    double settling_velocity_m_per_d = 0.0;  // v(X)
    double underflow_solids_g_per_m3 = 0.0;  // mass balance (Q + Qr) X / Qr
    bool clarification_ok = false;           // SOR <= v(X)
    double clarification_margin = 0.0;       // 1 - SOR / v(X)
    limiting_flux limit;                     // at this u
    bool thickening_limits = false;          // GL exists at a concentration above X
    bool thickening_ok = false;              // SLR <= GL (true when thickening does not limit)
    double thickening_margin = 1.0;          // 1 - SLR / GL (1 when thickening does not limit)
    [[nodiscard]] bool inside() const { return clarification_ok && thickening_ok; }
};

[[nodiscard]] state_point evaluate_state_point(const vesilind& s, const clarifier_loading& load);

// The RAS flows, between `min_flow` and `max_flow`, at which thickening holds and the solids
// loading stays at or below `max_loading_kg_per_m2_d`: the lowest and the highest such flow
// (grid search then bisection at each end). Empty when no flow in the range qualifies.
struct ras_window {
    double lowest_m3_per_d = 0.0;
    double highest_m3_per_d = 0.0;
};
[[nodiscard]] std::optional<ras_window>
tolerated_ras_flows(const vesilind& s, const clarifier_loading& load, double min_flow_m3_per_d,
                    double max_flow_m3_per_d, double max_loading_kg_per_m2_d);

} // namespace floc::advisors
