#include "floc/sim/asm1.hpp"

#include <algorithm>
#include <cmath>

namespace floc::sim::asm1 {
namespace {

constexpr std::array<std::string_view, component_count> names{
    "S_I", "S_S", "X_I", "X_S", "X_BH", "X_BA", "X_P", "S_O", "S_NO", "S_NH", "S_ND", "X_ND", "S_ALK"};

double corrected(double value, double theta, double delta_c) {
    return theta == 1.0 ? value : value * std::pow(theta, delta_c);
}

} // namespace

std::string_view component_name(std::size_t c) { return names.at(c); }

std::optional<std::size_t> component_from_name(std::string_view name) {
    for (std::size_t i = 0; i < component_count; ++i) {
        if (names.at(i) == name) {
            return i;
        }
    }
    return std::nullopt;
}

bool is_particulate(std::size_t c) {
    return c == x_i || c == x_s || c == x_bh || c == x_ba || c == x_p || c == x_nd;
}

std::string_view component_unit(std::size_t c) { return c == s_alk ? "mol/m3" : "g/m3"; }

kinetics at_temperature(const parameters& p, double temperature_c) {
    const double d = temperature_c - p.reference_temperature_c;
    kinetics k = p.at_reference;
    k.mu_h = corrected(k.mu_h, p.theta.mu_h, d);
    k.b_h = corrected(k.b_h, p.theta.b_h, d);
    k.k_h = corrected(k.k_h, p.theta.k_h, d);
    k.k_x = corrected(k.k_x, p.theta.k_x, d);
    k.mu_a = corrected(k.mu_a, p.theta.mu_a, d);
    k.b_a = corrected(k.b_a, p.theta.b_a, d);
    k.k_a = corrected(k.k_a, p.theta.k_a, d);
    return k;
}

std::array<double, process_count> process_rates(const kinetics& k, const vector& raw) {
    vector c{};
    for (std::size_t i = 0; i < component_count; ++i) {
        c[i] = std::max(raw[i], 0.0);
    }
    const double monod_s = c[s_s] / (k.k_s + c[s_s]);
    const double o_h = c[s_o] / (k.k_oh + c[s_o]);
    const double inhibit_o_h = k.k_oh / (k.k_oh + c[s_o]);
    const double no_h = c[s_no] / (k.k_no + c[s_no]);
    const double x_bh_c = c[x_bh];
    // Hydrolysis saturates in X_S/X_BH; with no heterotrophs there is no hydrolysis.
    const double ratio = x_bh_c > 0.0 ? c[x_s] / x_bh_c : 0.0;
    const double hydrolysis = x_bh_c > 0.0 ? k.k_h * ratio / (k.k_x + ratio) *
                                                 (o_h + k.eta_h * inhibit_o_h * no_h) * x_bh_c
                                           : 0.0;
    std::array<double, process_count> rho{};
    rho[0] = k.mu_h * monod_s * o_h * x_bh_c;
    rho[1] = k.mu_h * monod_s * inhibit_o_h * no_h * k.eta_g * x_bh_c;
    rho[2] = k.mu_a * c[s_nh] / (k.k_nh + c[s_nh]) * c[s_o] / (k.k_oa + c[s_o]) * c[x_ba];
    rho[3] = k.b_h * x_bh_c;
    rho[4] = k.b_a * c[x_ba];
    rho[5] = k.k_a * c[s_nd] * x_bh_c;
    rho[6] = hydrolysis;
    rho[7] = c[x_s] > 0.0 ? hydrolysis * c[x_nd] / c[x_s] : 0.0;
    return rho;
}

void conversion_rates(const stoichiometry& s, const std::array<double, process_count>& rho,
                      vector& r) {
    const double growth_h = rho[0] + rho[1];
    const double decay = rho[3] + rho[4];
    r[s_i] = 0.0;
    r[s_s] = -growth_h / s.y_h + rho[6];
    r[x_i] = 0.0;
    r[x_s] = (1.0 - s.f_p) * decay - rho[6];
    r[x_bh] = growth_h - rho[3];
    r[x_ba] = rho[2] - rho[4];
    r[x_p] = s.f_p * decay;
    r[s_o] = -(1.0 - s.y_h) / s.y_h * rho[0] - (4.57 - s.y_a) / s.y_a * rho[2];
    r[s_no] = -(1.0 - s.y_h) / (2.86 * s.y_h) * rho[1] + rho[2] / s.y_a;
    r[s_nh] = -s.i_xb * growth_h - (s.i_xb + 1.0 / s.y_a) * rho[2] + rho[5];
    r[s_nd] = -rho[5] + rho[7];
    r[x_nd] = (s.i_xb - s.f_p * s.i_xp) * decay - rho[7];
    r[s_alk] = -s.i_xb / 14.0 * rho[0] +
               ((1.0 - s.y_h) / (14.0 * 2.86 * s.y_h) - s.i_xb / 14.0) * rho[1] -
               (s.i_xb / 14.0 + 1.0 / (7.0 * s.y_a)) * rho[2] + rho[5] / 14.0;
}

double denitrification_rate(const stoichiometry& s, const std::array<double, process_count>& rho) {
    return (1.0 - s.y_h) / (2.86 * s.y_h) * rho[1];
}

double tss(const parameters& p, const vector& c) {
    return p.tss_per_cod * (c[x_i] + c[x_s] + c[x_bh] + c[x_ba] + c[x_p]);
}

double total_cod(const vector& c) {
    return c[s_i] + c[s_s] + c[x_i] + c[x_s] + c[x_bh] + c[x_ba] + c[x_p];
}

double tkn(const stoichiometry& s, const vector& c) {
    return c[s_nh] + c[s_nd] + c[x_nd] + s.i_xb * (c[x_bh] + c[x_ba]) + s.i_xp * (c[x_p] + c[x_i]);
}

double total_nitrogen(const stoichiometry& s, const vector& c) { return tkn(s, c) + c[s_no]; }

double bod5(const stoichiometry& s, const vector& c, double factor) {
    return factor * (c[s_s] + c[x_s] + (1.0 - s.f_p) * (c[x_bh] + c[x_ba]));
}

double oxygen_demand(const vector& c) { return total_cod(c) - c[s_o] - 4.57 * c[s_no]; }

} // namespace floc::sim::asm1
