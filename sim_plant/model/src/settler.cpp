#include "floc/sim/settler.hpp"

#include <algorithm>
#include <cmath>

namespace floc::sim {

double settling_velocity(const settling_spec& s, double tss_g_per_m3, double x_min_g_per_m3) {
    const double x = tss_g_per_m3 - x_min_g_per_m3;
    const double v = s.v0_m_per_d * (std::exp(-s.r_h_m3_per_g * x) - std::exp(-s.r_p_m3_per_g * x));
    return std::clamp(v, 0.0, s.v0_max_m_per_d);
}

void gravity_flux(const settling_spec& s, const double* tss_g_per_m3, std::size_t n,
                  std::size_t feed_layer, double x_min_g_per_m3, double* down_g_per_m2_per_d) {
    if (n == 0) {
        return;
    }
    // First every layer's own flux v_s(X_j) X_j, then, going down, the flux across each boundary:
    // down[j + 1] still holds the own flux of layer j + 1 when down[j] is decided.
    for (std::size_t j = 0; j < n; ++j) {
        const double x = tss_g_per_m3[j];
        down_g_per_m2_per_d[j] = settling_velocity(s, x, x_min_g_per_m3) * x;
    }
    for (std::size_t j = 0; j + 1 < n; ++j) {
        const bool clarification = j < feed_layer && tss_g_per_m3[j + 1] <= s.x_t_g_per_m3;
        if (!clarification) {
            down_g_per_m2_per_d[j] = std::min(down_g_per_m2_per_d[j], down_g_per_m2_per_d[j + 1]);
        }
    }
    down_g_per_m2_per_d[n - 1] = 0.0;
}

double interface_height(const double* tss, std::size_t n, double depth_m, double threshold) {
    if (n == 0) {
        return 0.0;
    }
    const double h = depth_m / static_cast<double>(n);
    // Mid-height of layer j above the floor (layer 0 is the top).
    const auto mid = [&](std::size_t j) { return (static_cast<double>(n - 1 - j) + 0.5) * h; };
    for (std::size_t j = 0; j < n; ++j) {
        if (tss[j] < threshold) {
            continue;
        }
        if (j == 0) {
            return depth_m;
        }
        // Between the mid-heights of layer j (at or above the threshold) and j-1 (below it).
        const double frac = (tss[j] - threshold) / (tss[j] - tss[j - 1]);
        return mid(j) + frac * h;
    }
    return 0.0;
}

void settler_derivatives(const clarifier_spec& c, const asm1::parameters& p, const asm1::vector& feed,
                         const settler_flows& q, const double* layers, double* d_layers) {
    constexpr std::size_t n = settler_layers;
    constexpr std::size_t m = asm1::component_count;
    const double h = c.layer_height_m();
    const double v_up = q.effluent_m3_per_d / c.area_m2;
    const double v_dn = q.underflow_m3_per_d / c.area_m2;
    const double v_in = q.feed_m3_per_d / c.area_m2;
    const std::size_t f = c.feed_layer;
    const double x_min = c.settling.f_ns * asm1::tss(p, feed);

    std::array<double, n> tss{};
    for (std::size_t j = 0; j < n; ++j) {
        const double* x = layers + j * m;
        tss[j] = std::max(0.0, p.tss_per_cod * (x[asm1::x_i] + x[asm1::x_s] + x[asm1::x_bh] +
                                                x[asm1::x_ba] + x[asm1::x_p]));
    }
    std::array<double, n> down{};  // down[n-1] = 0: nothing settles through the floor
    gravity_flux(c.settling, tss.data(), n, f, x_min, down.data());

    for (std::size_t j = 0; j < n; ++j) {
        const double* x = layers + j * m;
        double* dx = d_layers + j * m;
        const double* above = j > 0 ? layers + (j - 1) * m : nullptr;
        const double* below = j + 1 < n ? layers + (j + 1) * m : nullptr;
        for (std::size_t k = 0; k < m; ++k) {
            double bulk = 0.0;
            if (j < f) {
                bulk = v_up * ((below != nullptr ? below[k] : 0.0) - x[k]);
            } else if (j == f) {
                bulk = v_in * feed[k] - (v_up + v_dn) * x[k];
            } else {
                bulk = v_dn * (above[k] - x[k]);
            }
            double gravity = 0.0;
            if (asm1::is_particulate(k)) {
                // Particulates move with the solids, in the composition of the layer they leave.
                const double out = tss[j] > 0.0 ? down[j] * std::max(x[k], 0.0) / tss[j] : 0.0;
                double in = 0.0;
                if (above != nullptr && tss[j - 1] > 0.0) {
                    in = down[j - 1] * std::max(above[k], 0.0) / tss[j - 1];
                }
                gravity = in - out;
            }
            dx[k] = (bulk + gravity) / h;
        }
    }
}

namespace {

double benchmark_height(const clarifier_spec& c, const std::array<double, settler_layers>& x) {
    constexpr std::size_t n = settler_layers;
    const double h = c.layer_height_m();
    const double thr = c.blanket_threshold_g_per_m3;
    std::size_t lowest_clear = n;  // the deepest layer below the threshold
    for (std::size_t j = 0; j < n; ++j) {
        if (x[j] < thr) {
            lowest_clear = j;
        }
    }
    if (lowest_clear == n) {
        return h * static_cast<double>(n);
    }
    const std::size_t level = n - 1 - lowest_clear;  // layers counted up from the floor
    const double lv = static_cast<double>(level);
    if (level == n - 1) {
        return lv * h + h * (x[0] / x[1]);
    }
    if (level == 0) {
        return h * (x[n - 1] + x[n - 2]) / (thr - x[n - 2]);
    }
    return lv * h + h * (x[n - 1 - level] + x[n - 2 - level]) / (x[n - level] - x[n - 2 - level]);
}

} // namespace

double blanket_height(const clarifier_spec& c, const std::array<double, settler_layers>& tss) {
    const double height =
        c.blanket == blanket_rule::benchmark
            ? benchmark_height(c, tss)
            : interface_height(tss.data(), tss.size(), c.depth_m, c.blanket_threshold_g_per_m3);
    if (!std::isfinite(height)) {
        return 0.0;
    }
    return std::clamp(height, 0.0, c.depth_m);
}

} // namespace floc::sim
