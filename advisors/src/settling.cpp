#include "floc/advisors/settling.hpp"

#include <algorithm>
#include <array>
#include <cmath>

namespace floc::advisors {
namespace {

constexpr double hours_per_day = 24.0;
constexpr double litres_per_m3 = 1000.0;
constexpr double grams_per_kg = 1000.0;

bool thickening_holds(const vesilind& s, const clarifier_loading& load, double ras_flow,
                      double max_loading) {
    clarifier_loading at = load;
    at.ras_flow_m3_per_d = ras_flow;
    const state_point sp = evaluate_state_point(s, at);
    return sp.thickening_ok && sp.solids_loading_kg_per_m2_d <= max_loading;
}

} // namespace

std::string_view to_string(svi_correlation c) {
    switch (c) {
    case svi_correlation::daigger_1995:
        return "daigger_1995";
    case svi_correlation::wahlberg_keinath_1988:
        return "wahlberg_keinath_1988";
    }
    return "unknown";
}

bool expects_stirred_svi(svi_correlation c) {
    return c == svi_correlation::wahlberg_keinath_1988;
}

settling_estimate settling_from_svi(svi_correlation c, double svi) {
    settling_estimate e;
    double v0_m_per_h = 0.0;
    double k_l_per_g = 0.0;
    switch (c) {
    case svi_correlation::daigger_1995:
        v0_m_per_h = std::exp(1.871);
        k_l_per_g = 0.1646 + 0.001586 * svi;
        // Coefficients from memory; e^1.871 m/h = 21.3 ft/h and the SVI slope 0.001586 agree with a
        // public re-implementation that names no paper (see settling_test.cpp). The database is
        // 51 processes, 214 runs, over 1500 points (Daigger 1995 abstract, as seen in the copy at
        // scribd.com/document/525249552/Dai-Gger-1995); the SVI range it spans, roughly 35 to
        // 400 mL/g, is from memory of the paper's figures (not retrieved).
        e.data_min_svi = 35.0;
        e.data_max_svi = 400.0;
        break;
    case svi_correlation::wahlberg_keinath_1988:
        v0_m_per_h = 15.3 - 0.0615 * svi;
        k_l_per_g = 0.426 - 0.00384 * svi + 0.0000543 * svi * svi;
        // Coefficients from memory (no retrieved source found). Fitted to stirred SSVI3.5 of
        // roughly 35 to 220 mL/g (from memory, not retrieved); v0 vanishes at 249.
        e.data_min_svi = 35.0;
        e.data_max_svi = 220.0;
        break;
    }
    e.settling.v0_m_per_d = v0_m_per_h * hours_per_day;
    e.settling.k_m3_per_g = k_l_per_g / litres_per_m3;
    e.valid = std::isfinite(svi) && svi > 0.0 && e.settling.v0_m_per_d > 0.0 &&
              e.settling.k_m3_per_g > 0.0;
    e.inside_data = e.valid && svi >= e.data_min_svi && svi <= e.data_max_svi;
    return e;
}

double settling_velocity_m_per_d(const vesilind& s, double x) {
    return s.v0_m_per_d * std::exp(-s.k_m3_per_g * x);
}

double gravity_flux_kg_per_m2_d(const vesilind& s, double x) {
    return x * settling_velocity_m_per_d(s, x) / grams_per_kg;
}

limiting_flux limiting_solids_flux(const vesilind& s, double u) {
    limiting_flux out;
    if (!(s.v0_m_per_d > 0.0) || !(s.k_m3_per_g > 0.0) || !(u > 0.0) || !std::isfinite(u)) {
        return out;
    }
    const double k = s.k_m3_per_g;
    // h(X) = v0 e^{-kX}(kX - 1) - u falls from v0 e^-2 - u at X = 2/k toward -u.
    const auto h = [&](double x) { return s.v0_m_per_d * std::exp(-k * x) * (k * x - 1.0) - u; };
    double lo = 2.0 / k;
    if (h(lo) <= 0.0) {
        return out;
    }
    double hi = 2.0 * lo;
    for (int i = 0; i < 200 && h(hi) > 0.0; ++i) {
        hi *= 2.0;
    }
    // Newton's method inside the bracket [lo, hi] (h' = v0 k e^{-kX} (2 - kX) < 0 there), with a
    // bisection step whenever Newton would leave the bracket: a few iterations instead of ~40.
    double x = 0.5 * (lo + hi);
    for (int i = 0; i < 200 && hi - lo > 1e-12 * hi; ++i) {
        const double e = s.v0_m_per_d * std::exp(-k * x);
        const double hx = e * (k * x - 1.0) - u;
        if (hx == 0.0) {
            lo = hi = x;
            break;
        }
        (hx > 0.0 ? lo : hi) = x;
        const double slope = e * k * (2.0 - k * x);
        const double newton = slope < 0.0 ? x - hx / slope : lo - 1.0;
        const double next = newton > lo && newton < hi ? newton : 0.5 * (lo + hi);
        if (std::abs(next - x) <= 1e-13 * x) {
            x = next;
            break;
        }
        x = next;
    }
    out.exists = true;
    out.at_g_per_m3 = x;
    out.flux_kg_per_m2_d = gravity_flux_kg_per_m2_d(s, x) + u * x / grams_per_kg;
    out.max_underflow_g_per_m3 = out.flux_kg_per_m2_d * grams_per_kg / u;
    return out;
}

state_point evaluate_state_point(const vesilind& s, const clarifier_loading& load) {
    state_point sp;
    const double area = load.area_m2 > 0.0 ? load.area_m2 : 1.0;
    const double x = std::max(load.mlss_g_per_m3, 0.0);
    const double qr = std::max(load.ras_flow_m3_per_d, 0.0);
    sp.overflow_rate_m_per_d = load.flow_m3_per_d / area;
    sp.underflow_velocity_m_per_d = qr / area;
    sp.solids_loading_kg_per_m2_d = (load.flow_m3_per_d + qr) * x / area / grams_per_kg;
    sp.settling_velocity_m_per_d = settling_velocity_m_per_d(s, x);
    sp.underflow_solids_g_per_m3 = qr > 0.0 ? (load.flow_m3_per_d + qr) * x / qr : 0.0;
    sp.clarification_ok = sp.overflow_rate_m_per_d <= sp.settling_velocity_m_per_d;
    sp.clarification_margin = sp.settling_velocity_m_per_d > 0.0
                                  ? 1.0 - sp.overflow_rate_m_per_d / sp.settling_velocity_m_per_d
                                  : -1.0;
    sp.limit = limiting_solids_flux(s, sp.underflow_velocity_m_per_d);
    if (qr <= 0.0) {
        // No underflow: solids only accumulate; thickening cannot hold a steady state.
        sp.thickening_limits = true;
        sp.thickening_ok = false;
        sp.thickening_margin = -1.0;
        return sp;
    }
    sp.thickening_limits = sp.limit.exists && sp.limit.at_g_per_m3 > x;
    if (sp.thickening_limits) {
        sp.thickening_ok = sp.solids_loading_kg_per_m2_d <= sp.limit.flux_kg_per_m2_d;
        sp.thickening_margin = 1.0 - sp.solids_loading_kg_per_m2_d / sp.limit.flux_kg_per_m2_d;
    } else {
        sp.thickening_ok = true;
        sp.thickening_margin = 1.0;
    }
    return sp;
}

std::optional<ras_window> tolerated_ras_flows(const vesilind& s, const clarifier_loading& load,
                                              double min_flow, double max_flow,
                                              double max_loading) {
    if (!(max_flow > 0.0) || !(max_flow >= min_flow)) {
        return std::nullopt;
    }
    const double lo_flow = std::max(min_flow, max_flow * 1e-6);
    constexpr int grid = 256;
    std::array<bool, grid + 1> ok{};
    const auto flow_at = [&](int i) {
        return lo_flow + (max_flow - lo_flow) * static_cast<double>(i) / grid;
    };
    int first = -1;
    int last = -1;
    for (int i = 0; i <= grid; ++i) {
        ok.at(static_cast<std::size_t>(i)) = thickening_holds(s, load, flow_at(i), max_loading);
        if (ok.at(static_cast<std::size_t>(i))) {
            first = first < 0 ? i : first;
            last = i;
        }
    }
    if (first < 0) {
        return std::nullopt;
    }
    // Refine each edge between a failing and a passing grid point.
    const auto refine = [&](double failing, double passing) {
        for (int i = 0; i < 60; ++i) {
            const double mid = 0.5 * (failing + passing);
            (thickening_holds(s, load, mid, max_loading) ? passing : failing) = mid;
        }
        return passing;
    };
    ras_window w;
    w.lowest_m3_per_d = first == 0 ? flow_at(0) : refine(flow_at(first - 1), flow_at(first));
    w.highest_m3_per_d = last == grid ? flow_at(grid) : refine(flow_at(last + 1), flow_at(last));
    return w;
}

} // namespace floc::advisors
