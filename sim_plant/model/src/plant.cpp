#include "floc/sim/plant.hpp"

#include <algorithm>
#include <cmath>

namespace floc::sim {
namespace {

constexpr std::size_t m = asm1::component_count;
constexpr std::size_t max_zones = 16;  // per train; the scenario loader enforces it

// Benchmark energy coefficients (Alex et al. 2008, BSM1 technical report, section 6: updated
// aeration, pumping and mixing energy).
constexpr double pumping_kwh_per_m3_recycle = 0.004;
constexpr double pumping_kwh_per_m3_ras = 0.008;
constexpr double pumping_kwh_per_m3_was = 0.05;
constexpr double mixing_kw_per_m3 = 0.005;
constexpr double mixing_below_kla_per_d = 20.0;

void load(const double* x, asm1::vector& c) { std::copy(x, x + m, c.begin()); }

struct pi_result {
    double out = 0.0;
    double d_integral = 0.0;
};

// One PI step: `active` false means the output is forced to `forced` and the integral tracks it.
pi_result run_pi(const pi_spec& s, double error, double integral, bool active, double forced) {
    const double raw = s.offset + s.gain * error + integral;
    const double ti = s.integral_time_d > 0.0 ? s.integral_time_d : 1.0;
    const double tt = s.tracking_time_d > 0.0 ? s.tracking_time_d : ti;
    pi_result r;
    if (active) {
        r.out = std::clamp(raw, s.out_min, s.out_max);
        r.d_integral = s.gain / ti * error + (r.out - raw) / tt;
    } else {
        r.out = forced;
        r.d_integral = (forced - raw) / std::max(tt, ti);
    }
    return r;
}

} // namespace

plant_controls initial_controls(const plant_spec& spec) {
    plant_controls u;
    for (const train_spec& t : spec.trains) {
        train_controls tc;
        tc.ras = t.ras.mode;
        tc.ras_flow_m3_per_d = t.ras.flow_m3_per_d;
        tc.ras_ratio = t.ras.ratio;
        tc.was_flow_m3_per_d = t.was.flow_m3_per_d;
        tc.recycle = t.recycle.mode;
        tc.recycle_flow_m3_per_d = t.recycle.flow_m3_per_d;
        tc.nitrate_setpoint_g_per_m3 = t.recycle.nitrate_setpoint_g_per_m3;
        for (const zone_spec& z : t.zones) {
            tc.zones.push_back(zone_controls{z.aeration.mode, z.aeration.kla_per_d,
                                             z.aeration.do_setpoint_g_per_m3});
        }
        u.trains.push_back(std::move(tc));
    }
    return u;
}

state_layout::state_layout(const plant_spec& spec) {
    std::size_t at = 0;
    for (const train_spec& t : spec.trains) {
        train_offsets o;
        o.zones = at;
        at += t.zones.size() * m;
        o.settler = at;
        at += settler_layers * m;
        o.do_integrals = at;
        at += t.zones.size();
        o.recycle_integral = at;
        at += 1;
        trains_.push_back(o);
    }
    accumulators_ = at;
    size_ = at + accumulator_count;
}

struct plant_model::operating_point {
    double q_in = 0.0;
    asm1::vector c_in{};
    double temperature_c = 15.0;
    double q_ras = 0.0;
    double q_was = 0.0;
    double q_rec = 0.0;
    double q_feed = 0.0;
    double q_eff = 0.0;
    double q_under = 0.0;
    double d_rec_integral = 0.0;
    bool blowers_running = false;
    std::array<double, max_zones> kla{};
    std::array<double, max_zones> s_sat{};
    std::array<double, max_zones> q_zone{};
    std::array<double, max_zones> d_do_integral{};
};

plant_model::plant_model(plant_spec spec, const influent_spec& influent)
    : spec_(std::move(spec)), layout_(spec_), influent_(influent) {}

void plant_model::operate(const double* x, double t_d, const plant_controls& u, std::size_t ti,
                          const influent_sample& plant_in, operating_point& op) const {
    (void)t_d;
    const train_spec& t = spec_.trains[ti];
    const train_controls& tc = u.trains[ti];
    op.q_in = plant_in.flow_m3_per_d * t.influent_share;
    op.c_in = plant_in.c;
    op.temperature_c = plant_in.temperature_c;

    const bool pumps = tc.pumps_available;
    op.q_ras = pumps ? std::max(0.0, tc.ras == ras_mode::flow_ratio ? tc.ras_ratio * op.q_in
                                                                    : tc.ras_flow_m3_per_d)
                     : 0.0;
    op.q_was = pumps ? std::clamp(tc.was_flow_m3_per_d, 0.0, op.q_in) : 0.0;

    // Internal recycle: fixed flow or the nitrate loop.
    {
        const double no3 = x[layout_.zone(ti, t.recycle.measured_zone) + asm1::s_no];
        const bool loop = tc.recycle == recycle_mode::nitrate_loop && pumps;
        const pi_result r = run_pi(t.recycle.loop, tc.nitrate_setpoint_g_per_m3 - no3,
                                   x[layout_.recycle_integral(ti)], loop,
                                   pumps ? std::max(0.0, tc.recycle_flow_m3_per_d) : 0.0);
        op.q_rec = std::max(0.0, r.out);
        op.d_rec_integral = r.d_integral;
    }

    // Aeration: fixed KLa or the DO loop, per zone.
    const double kla_factor = spec_.oxygen.kla_factor(op.temperature_c);
    const double s_sat = spec_.oxygen.saturation(op.temperature_c);
    op.blowers_running = false;
    for (std::size_t z = 0; z < t.zones.size(); ++z) {
        const zone_controls& zc = tc.zones[z];
        const double so = x[layout_.zone(ti, z) + asm1::s_o];
        const bool loop = zc.mode == aeration_mode::do_loop && tc.blowers_available;
        const double fixed = tc.blowers_available ? std::max(0.0, zc.kla_per_d) : 0.0;
        const pi_result r = run_pi(t.zones[z].aeration.loop, zc.do_setpoint_g_per_m3 - so,
                                   x[layout_.do_integral(ti, z)], loop, fixed);
        op.kla[z] = std::max(0.0, r.out) * kla_factor;
        op.d_do_integral[z] = r.d_integral;
        op.s_sat[z] = s_sat;
        if (op.kla[z] > 0.0) {
            op.blowers_running = true;
        }
    }

    const std::size_t from = t.recycle_from();
    for (std::size_t z = 0; z < t.zones.size(); ++z) {
        const bool in_loop = z >= t.recycle.to_zone && z <= from;
        op.q_zone[z] = op.q_in + op.q_ras + (in_loop ? op.q_rec : 0.0);
    }
    if (t.was.from == waste_source::mixed_liquor) {
        op.q_feed = op.q_in + op.q_ras - op.q_was;
        op.q_under = op.q_ras;
    } else {
        op.q_feed = op.q_in + op.q_ras;
        op.q_under = op.q_ras + op.q_was;
    }
    op.q_eff = std::max(0.0, op.q_feed - op.q_under);
}

void plant_model::derivatives(const double* x, double* dxdt, double t_d, const plant_controls& u) const {
    const influent_sample in = influent_.at(t_d);
    const asm1::kinetics kin = asm1::at_temperature(spec_.biology, in.temperature_c);
    const asm1::stoichiometry& st = spec_.biology.stoich;
    double* acc = dxdt + layout_.accumulators();
    std::fill(acc, acc + accumulator_count, 0.0);

    operating_point op;
    asm1::vector c{};
    asm1::vector r{};
    asm1::vector mix{};
    for (std::size_t ti = 0; ti < spec_.trains.size(); ++ti) {
        const train_spec& t = spec_.trains[ti];
        operate(x, t_d, u, ti, in, op);
        const std::size_t nz = t.zones.size();
        const std::size_t from = t.recycle_from();
        const double* under = x + layout_.layer(ti, settler_layers - 1);
        const double* recycled = x + layout_.zone(ti, from);

        for (std::size_t z = 0; z < nz; ++z) {
            const double* xz = x + layout_.zone(ti, z);
            double* dz = dxdt + layout_.zone(ti, z);
            // Inflow mass per component, g/d.
            if (z == 0) {
                for (std::size_t k = 0; k < m; ++k) {
                    mix[k] = op.q_in * op.c_in[k] + op.q_ras * under[k];
                }
            } else {
                const double* prev = x + layout_.zone(ti, z - 1);
                for (std::size_t k = 0; k < m; ++k) {
                    mix[k] = op.q_zone[z - 1] * prev[k];
                }
                if (z - 1 == from) {  // the recycle leaves after the `from` zone
                    for (std::size_t k = 0; k < m; ++k) {
                        mix[k] -= op.q_rec * prev[k];
                    }
                }
            }
            if (z == t.recycle.to_zone) {
                for (std::size_t k = 0; k < m; ++k) {
                    mix[k] += op.q_rec * recycled[k];
                }
            }
            load(xz, c);
            const auto rho = asm1::process_rates(kin, c);
            asm1::conversion_rates(st, rho, r);
            const double v = t.zones[z].volume_m3;
            for (std::size_t k = 0; k < m; ++k) {
                dz[k] = (mix[k] - op.q_zone[z] * c[k]) / v + r[k];
            }
            const double transfer = op.kla[z] * (op.s_sat[z] - c[asm1::s_o]);
            dz[asm1::s_o] += transfer;
            dxdt[layout_.do_integral(ti, z)] = op.d_do_integral[z];
            acc[acc_oxygen_transferred] += transfer * v;
            acc[acc_n2_produced] += asm1::denitrification_rate(st, rho) * v;
            acc[acc_aeration_kwh] += op.s_sat[z] * v * op.kla[z] / (1.8 * 1000.0);
            if (op.kla[z] < mixing_below_kla_per_d) {
                acc[acc_mixing_kwh] += 24.0 * mixing_kw_per_m3 * v;
            }
        }
        dxdt[layout_.recycle_integral(ti)] = op.d_rec_integral;

        // Clarifier, fed by the last zone.
        asm1::vector feed{};
        load(x + layout_.zone(ti, nz - 1), feed);
        const settler_flows q{op.q_feed, op.q_eff, op.q_under};
        settler_derivatives(t.clarifier, spec_.biology, feed, q, x + layout_.layer(ti, 0),
                            dxdt + layout_.layer(ti, 0));

        // Totals.
        asm1::vector top{};
        load(x + layout_.layer(ti, 0), top);
        asm1::vector wasted{};
        load(t.was.from == waste_source::mixed_liquor ? x + layout_.zone(ti, nz - 1) : under, wasted);
        acc[acc_od_in] += op.q_in * asm1::oxygen_demand(op.c_in);
        acc[acc_n_in] += op.q_in * asm1::total_nitrogen(st, op.c_in);
        acc[acc_od_effluent] += op.q_eff * asm1::oxygen_demand(top);
        acc[acc_n_effluent] += op.q_eff * asm1::total_nitrogen(st, top);
        acc[acc_od_waste] += op.q_was * asm1::oxygen_demand(wasted);
        acc[acc_n_waste] += op.q_was * asm1::total_nitrogen(st, wasted);
        acc[acc_pumping_kwh] += pumping_kwh_per_m3_recycle * op.q_rec + pumping_kwh_per_m3_ras * op.q_ras +
                                pumping_kwh_per_m3_was * op.q_was;
    }
}

plant_output plant_model::outputs(const double* x, double t_d, const plant_controls& u) const {
    plant_output out;
    out.t_d = t_d;
    out.influent = influent_.at(t_d);
    const asm1::parameters& bio = spec_.biology;
    operating_point op;
    double eff_flow = 0.0;
    asm1::vector eff_mass{};
    for (std::size_t ti = 0; ti < spec_.trains.size(); ++ti) {
        const train_spec& t = spec_.trains[ti];
        operate(x, t_d, u, ti, out.influent, op);
        train_output to;
        to.influent.flow_m3_per_d = op.q_in;
        to.influent.temperature_c = op.temperature_c;
        to.influent.c = op.c_in;
        to.ras_m3_per_d = op.q_ras;
        to.was_m3_per_d = op.q_was;
        to.recycle_m3_per_d = op.q_rec;
        to.effluent_m3_per_d = op.q_eff;
        to.blowers_running = op.blowers_running;
        for (std::size_t z = 0; z < t.zones.size(); ++z) {
            zone_output zo;
            load(x + layout_.zone(ti, z), zo.c);
            zo.tss_g_per_m3 = asm1::tss(bio, zo.c);
            zo.kla_per_d = op.kla[z];
            zo.do_saturation_g_per_m3 = op.s_sat[z];
            zo.oxygen_transfer_g_per_m3_per_d = op.kla[z] * (op.s_sat[z] - zo.c[asm1::s_o]);
            zo.flow_m3_per_d = op.q_zone[z];
            to.mixed_liquor_solids_kg += zo.tss_g_per_m3 * t.zones[z].volume_m3 / 1000.0;
            out.energy.aeration_kw += op.s_sat[z] * t.zones[z].volume_m3 * op.kla[z] / (1.8 * 1000.0) / 24.0;
            if (op.kla[z] < mixing_below_kla_per_d) {
                out.energy.mixing_kw += mixing_kw_per_m3 * t.zones[z].volume_m3;
            }
            to.zones.push_back(zo);
        }
        out.energy.pumping_kw += (pumping_kwh_per_m3_recycle * op.q_rec + pumping_kwh_per_m3_ras * op.q_ras +
                                  pumping_kwh_per_m3_was * op.q_was) / 24.0;
        clarifier_output& co = to.clarifier;
        for (std::size_t j = 0; j < settler_layers; ++j) {
            load(x + layout_.layer(ti, j), co.layers[j]);
            co.tss_g_per_m3[j] = asm1::tss(bio, co.layers[j]);
            co.solids_kg += co.tss_g_per_m3[j] * t.clarifier.area_m2 * t.clarifier.layer_height_m() / 1000.0;
        }
        co.blanket_m = blanket_height(t.clarifier, co.tss_g_per_m3);
        co.feed_tss_g_per_m3 = to.zones.back().tss_g_per_m3;
        co.feed_m3_per_d = op.q_feed;
        co.effluent_m3_per_d = op.q_eff;
        co.underflow_m3_per_d = op.q_under;
        to.effluent = co.layers.front();
        to.underflow = co.layers.back();
        eff_flow += op.q_eff;
        for (std::size_t k = 0; k < m; ++k) {
            eff_mass[k] += op.q_eff * to.effluent[k];
        }
        out.trains.push_back(std::move(to));
    }
    out.effluent_m3_per_d = eff_flow;
    for (std::size_t k = 0; k < m; ++k) {
        out.effluent[k] = eff_flow > 0.0 ? eff_mass[k] / eff_flow
                                         : (out.trains.empty() ? 0.0 : out.trains.front().effluent[k]);
    }
    out.effluent_tss_g_per_m3 = asm1::tss(bio, out.effluent);
    const double* acc = x + layout_.accumulators();
    std::copy(acc, acc + accumulator_count, out.totals.begin());
    out.energy.aeration_kwh = acc[acc_aeration_kwh];
    out.energy.pumping_kwh = acc[acc_pumping_kwh];
    out.energy.mixing_kwh = acc[acc_mixing_kwh];
    return out;
}

std::vector<double> plant_model::uniform_state(const asm1::vector& zone_guess) const {
    std::vector<double> x(layout_.size(), 0.0);
    for (std::size_t ti = 0; ti < spec_.trains.size(); ++ti) {
        for (std::size_t z = 0; z < spec_.trains[ti].zones.size(); ++z) {
            std::copy(zone_guess.begin(), zone_guess.end(), x.begin() + static_cast<std::ptrdiff_t>(layout_.zone(ti, z)));
        }
        for (std::size_t j = 0; j < settler_layers; ++j) {
            std::copy(zone_guess.begin(), zone_guess.end(), x.begin() + static_cast<std::ptrdiff_t>(layout_.layer(ti, j)));
        }
    }
    return x;
}

namespace {

template <class F>
double inventory(const plant_spec& spec, const state_layout& layout, const double* x, F per_volume) {
    double total = 0.0;
    asm1::vector c{};
    for (std::size_t ti = 0; ti < spec.trains.size(); ++ti) {
        const train_spec& t = spec.trains[ti];
        for (std::size_t z = 0; z < t.zones.size(); ++z) {
            load(x + layout.zone(ti, z), c);
            total += per_volume(c) * t.zones[z].volume_m3;
        }
        const double layer_volume = t.clarifier.area_m2 * t.clarifier.layer_height_m();
        for (std::size_t j = 0; j < settler_layers; ++j) {
            load(x + layout.layer(ti, j), c);
            total += per_volume(c) * layer_volume;
        }
    }
    return total;
}

} // namespace

double plant_model::oxygen_demand_inventory(const double* x) const {
    return inventory(spec_, layout_, x, [](const asm1::vector& c) { return asm1::oxygen_demand(c); });
}

double plant_model::nitrogen_inventory(const double* x) const {
    const asm1::stoichiometry& s = spec_.biology.stoich;
    return inventory(spec_, layout_, x, [&](const asm1::vector& c) { return asm1::total_nitrogen(s, c); });
}

} // namespace floc::sim
