#include "floc/sim/lab.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

namespace floc::sim {
namespace {

constexpr double nan = std::numeric_limits<double>::quiet_NaN();
// Explicit steps: at most half a layer height at the largest settling velocity (see lab.hpp).
constexpr double courant = 0.5;

double solids_g(const std::vector<double>& tss, double layer_volume_m3) {
    return std::accumulate(tss.begin(), tss.end(), 0.0) * layer_volume_m3;
}

} // namespace

settling_test settle_batch(const settling_spec& s, double threshold, double mlss,
                           const settleometer_spec& column) {
    settling_test out;
    const std::size_t n = std::max<std::size_t>(column.layers, 1);
    const double h = column.height_m / static_cast<double>(n);
    const double layer_volume_m3 = column.volume_l / 1000.0 / static_cast<double>(n);
    const double x0 = std::max(mlss, 0.0);
    std::vector<double> x(n, x0);
    std::vector<double> down(n, 0.0);
    out.solids_start_g = solids_g(x, layer_volume_m3);
    // Velocities in m/d, time in days.
    const double duration_d = column.duration_s / 86400.0;
    const double v_max = std::max({s.v0_m_per_d, s.v0_max_m_per_d, 1e-9});
    const auto steps = static_cast<std::size_t>(std::ceil(duration_d / (courant * h / v_max)));
    const double dt_d = steps > 0 ? duration_d / static_cast<double>(steps) : 0.0;
    const double x_min = s.f_ns * x0;
    for (std::size_t step = 0; step < steps; ++step) {
        // Feed layer 0: the thickening rule at every boundary.
        gravity_flux(s, x.data(), n, 0, x_min, down.data());
        double from_above = 0.0;
        for (std::size_t j = 0; j < n; ++j) {
            x[j] += dt_d * (from_above - down[j]) / h; // never below half of x[j] (courant)
            from_above = down[j];
        }
    }
    out.interface_m = interface_height(x.data(), n, column.height_m, threshold);
    out.settled_volume_ml_per_l = out.interface_m / column.height_m * 1000.0;
    out.solids_end_g = solids_g(x, layer_volume_m3);
    out.tss_g_per_m3 = std::move(x);
    return out;
}

std::string_view to_string(lab_figure f) {
    switch (f) {
    case lab_figure::mlss:
        return "mlss";
    case lab_figure::ras_tss:
        return "ras_tss";
    case lab_figure::was_tss:
        return "was_tss";
    case lab_figure::effluent_tss:
        return "effluent_tss";
    case lab_figure::influent_bod5:
        return "influent_bod5";
    case lab_figure::sv30:
        return "sv30";
    case lab_figure::temperature:
        return "temperature";
    }
    return "?";
}

units::quantity quantity_of(lab_figure f) {
    switch (f) {
    case lab_figure::sv30:
        return units::quantity::settled_volume;
    case lab_figure::temperature:
        return units::quantity::temperature;
    case lab_figure::mlss:
    case lab_figure::ras_tss:
    case lab_figure::was_tss:
    case lab_figure::effluent_tss:
    case lab_figure::influent_bod5:
        break;
    }
    return units::quantity::concentration;
}

bool needs_train(lab_figure f) {
    return f == lab_figure::mlss || f == lab_figure::ras_tss || f == lab_figure::was_tss ||
           f == lab_figure::sv30;
}

bool may_have_train(lab_figure f) {
    return needs_train(f) || f == lab_figure::effluent_tss;
}

bool may_be_composite(lab_figure f) {
    return f == lab_figure::influent_bod5 || f == lab_figure::effluent_tss;
}

std::size_t mixed_liquor_zone(const train_spec& t) {
    for (std::size_t z = t.zones.size(); z > 0; --z) {
        if (t.zones[z - 1].kind == zone_kind::aerobic) {
            return z - 1;
        }
    }
    return t.zones.empty() ? 0 : t.zones.size() - 1;
}

double influent_bod5(const asm1::stoichiometry& s, const asm1::vector& c) {
    return asm1::bod5(s, c, influent_bod5_factor);
}

double lab_value(const plant_spec& spec, const plant_output& out, lab_figure f, std::size_t train) {
    const train_spec* t =
        train < spec.trains.size() && train < out.trains.size() ? &spec.trains[train] : nullptr;
    const train_output* o = t != nullptr ? &out.trains[train] : nullptr;
    const auto zone_tss = [&](std::size_t z) {
        return z < o->zones.size() ? o->zones[z].tss_g_per_m3 : nan;
    };
    switch (f) {
    case lab_figure::influent_bod5:
        return influent_bod5(spec.biology.stoich, out.influent.c);
    case lab_figure::temperature:
        return out.influent.temperature_c;
    case lab_figure::effluent_tss:
        if (train == no_index) {
            return out.effluent_tss_g_per_m3;
        }
        return o != nullptr ? o->clarifier.tss_g_per_m3.front() : nan;
    case lab_figure::mlss:
        return o != nullptr ? zone_tss(mixed_liquor_zone(*t)) : nan;
    case lab_figure::ras_tss:
        return o != nullptr ? o->clarifier.tss_g_per_m3.back() : nan;
    case lab_figure::was_tss:
        if (o == nullptr) {
            return nan;
        }
        return t->was.from == waste_source::mixed_liquor ? zone_tss(t->zones.size() - 1)
                                                         : o->clarifier.tss_g_per_m3.back();
    case lab_figure::sv30: {
        const double mlss = o != nullptr ? zone_tss(mixed_liquor_zone(*t)) : nan;
        if (!std::isfinite(mlss)) {
            return nan;
        }
        return settle_batch(t->clarifier.settling, t->clarifier.blanket_threshold_g_per_m3, mlss)
            .settled_volume_ml_per_l;
    }
    }
    return nan;
}

double lab_pacing_flow(const plant_output& out, lab_figure f, std::size_t train) {
    const bool have_train = train < out.trains.size();
    if (f == lab_figure::effluent_tss) {
        return have_train ? out.trains[train].effluent_m3_per_d : out.effluent_m3_per_d;
    }
    return out.influent.flow_m3_per_d;
}

} // namespace floc::sim
