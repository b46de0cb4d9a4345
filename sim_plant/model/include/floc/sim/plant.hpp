// The simulated plant: one or more trains sharing the influent, each a series of completely mixed
// zones (ASM1) with an internal nitrate recycle, return and waste sludge, and a layered secondary
// clarifier; the PLC's own loops (PI from a DO set point to KLa per aerated zone, PI from an
// anoxic nitrate set point to the internal recycle flow); the benchmark's energy figures.
//
// Pure: the model is (state vector, plant time, PLC controls) -> derivatives and outputs. Plant time
// inside the model is in days, the time unit of the ASM1 rates and of the flows (m3/d).
#pragma once

#include "floc/sim/asm1.hpp"
#include "floc/sim/influent.hpp"
#include "floc/sim/oxygen.hpp"
#include "floc/sim/settler.hpp"

#include <array>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

namespace floc::sim {

inline constexpr std::size_t no_index = std::numeric_limits<std::size_t>::max();

enum class zone_kind : std::uint8_t { anoxic, aerobic, anaerobic };

// A PI law with back-calculation anti-windup, as the PLC runs it (its scan is far faster than the
// process, so the law is integrated as a continuous one): u = clamp(offset + gain*e + I),
// dI/dt = gain/Ti * e + (u - u_unclamped)/Tt.
struct pi_spec {
    double gain = 0.0;             // output units per unit of error
    double integral_time_d = 1.0;
    double tracking_time_d = 0.0;  // 0: the integral time
    double offset = 0.0;           // output at zero error and zero integral
    double out_min = 0.0;
    double out_max = 0.0;
};

enum class aeration_mode : std::uint8_t { fixed_kla, do_loop };

struct aeration_spec {
    aeration_mode mode = aeration_mode::fixed_kla;
    double kla_per_d = 0.0;          // fixed KLa (at the oxygen spec's reference temperature)
    double do_setpoint_g_per_m3 = 2.0;
    pi_spec loop;                    // output KLa, 1/d; limits = the blowers' range
};

struct zone_spec {
    std::string name;
    zone_kind kind = zone_kind::aerobic;
    double volume_m3 = 1000.0;
    aeration_spec aeration;
};

enum class recycle_mode : std::uint8_t { fixed_flow, nitrate_loop };

struct recycle_spec {
    std::size_t from_zone = no_index;  // no_index: the last zone
    std::size_t to_zone = 0;
    recycle_mode mode = recycle_mode::fixed_flow;
    double flow_m3_per_d = 0.0;
    std::size_t measured_zone = 0;     // the nitrate loop's zone
    double nitrate_setpoint_g_per_m3 = 1.0;
    pi_spec loop;                      // output flow, m3/d
};

enum class ras_mode : std::uint8_t { fixed_flow, flow_ratio };

struct ras_spec {
    ras_mode mode = ras_mode::fixed_flow;
    double flow_m3_per_d = 0.0;
    double ratio = 1.0;  // RAS / train influent, with flow_ratio
};

enum class waste_source : std::uint8_t { underflow, mixed_liquor };

struct was_spec {
    double flow_m3_per_d = 0.0;
    waste_source from = waste_source::underflow;
};

struct train_spec {
    std::string name;
    double influent_share = 1.0;  // fraction of the plant influent
    std::vector<zone_spec> zones;
    recycle_spec recycle;
    ras_spec ras;
    was_spec was;
    clarifier_spec clarifier;

    [[nodiscard]] std::size_t recycle_from() const {
        return recycle.from_zone == no_index ? zones.size() - 1 : recycle.from_zone;
    }
};

struct plant_spec {
    std::vector<train_spec> trains;
    asm1::parameters biology;
    oxygen_spec oxygen;
};

// What the PLC holds and a bench operator may change while the plant runs: set points, fixed
// outputs, loop modes, and the availability of blowers and pumps.
struct zone_controls {
    aeration_mode mode = aeration_mode::fixed_kla;
    double kla_per_d = 0.0;
    double do_setpoint_g_per_m3 = 2.0;
};

struct train_controls {
    ras_mode ras = ras_mode::fixed_flow;
    double ras_flow_m3_per_d = 0.0;
    double ras_ratio = 1.0;
    double was_flow_m3_per_d = 0.0;
    recycle_mode recycle = recycle_mode::fixed_flow;
    double recycle_flow_m3_per_d = 0.0;
    double nitrate_setpoint_g_per_m3 = 1.0;
    bool blowers_available = true;  // false: a blower trip or a power failure
    bool pumps_available = true;    // false: a power failure (RAS, WAS, recycle stop)
    std::vector<zone_controls> zones;
};

struct plant_controls {
    std::vector<train_controls> trains;
};

[[nodiscard]] plant_controls initial_controls(const plant_spec& spec);

// Indices of the integrated quantities kept beside the concentrations.
enum accumulator : std::size_t {
    acc_od_in = 0,         // oxygen demand in with the influent, g (see asm1::oxygen_demand)
    acc_od_effluent,       // ... out with the effluent, g
    acc_od_waste,          // ... out with the waste sludge, g
    acc_n_in,              // total nitrogen in, g N
    acc_n_effluent,
    acc_n_waste,
    acc_oxygen_transferred,  // oxygen supplied by aeration, g O2
    acc_n2_produced,         // nitrate reduced to N2 gas, g N
    acc_aeration_kwh,        // benchmark aeration energy, kWh
    acc_pumping_kwh,         // benchmark pumping energy, kWh
    acc_mixing_kwh,          // benchmark mixing energy, kWh
    accumulator_count,
};

// Where each part of the plant sits in the state vector.
class state_layout {
public:
    explicit state_layout(const plant_spec& spec);

    [[nodiscard]] std::size_t zone(std::size_t train, std::size_t zone) const {
        return trains_[train].zones + zone * asm1::component_count;
    }
    [[nodiscard]] std::size_t layer(std::size_t train, std::size_t layer) const {
        return trains_[train].settler + layer * asm1::component_count;
    }
    // Integral states of the PLC loops (present for every zone and train, so that a loop can be
    // switched on at run time).
    [[nodiscard]] std::size_t do_integral(std::size_t train, std::size_t zone) const {
        return trains_[train].do_integrals + zone;
    }
    [[nodiscard]] std::size_t recycle_integral(std::size_t train) const { return trains_[train].recycle_integral; }
    [[nodiscard]] std::size_t accumulators() const { return accumulators_; }
    [[nodiscard]] std::size_t size() const { return size_; }

private:
    struct train_offsets {
        std::size_t zones = 0;
        std::size_t settler = 0;
        std::size_t do_integrals = 0;
        std::size_t recycle_integral = 0;
    };
    std::vector<train_offsets> trains_;
    std::size_t accumulators_ = 0;
    std::size_t size_ = 0;
};

// --- Outputs -------------------------------------------------------------------------------------
struct zone_output {
    asm1::vector c{};
    double tss_g_per_m3 = 0.0;
    double kla_per_d = 0.0;             // actual, after temperature correction and availability
    double do_saturation_g_per_m3 = 0.0;
    double oxygen_transfer_g_per_m3_per_d = 0.0;
    double flow_m3_per_d = 0.0;         // through the zone
};

struct clarifier_output {
    layer_states layers{};
    std::array<double, settler_layers> tss_g_per_m3{};
    double blanket_m = 0.0;
    double feed_tss_g_per_m3 = 0.0;
    double feed_m3_per_d = 0.0;
    double effluent_m3_per_d = 0.0;
    double underflow_m3_per_d = 0.0;
    double solids_kg = 0.0;
};

struct train_output {
    influent_sample influent;     // this train's share
    double ras_m3_per_d = 0.0;
    double was_m3_per_d = 0.0;
    double recycle_m3_per_d = 0.0;
    double effluent_m3_per_d = 0.0;
    bool blowers_running = false;
    std::vector<zone_output> zones;
    clarifier_output clarifier;
    asm1::vector effluent{};      // top layer
    asm1::vector underflow{};     // bottom layer (RAS and, from the underflow, WAS)
    double mixed_liquor_solids_kg = 0.0;
};

struct energy_output {
    double aeration_kw = 0.0;
    double pumping_kw = 0.0;
    double mixing_kw = 0.0;
    double aeration_kwh = 0.0;  // since plant time 0
    double pumping_kwh = 0.0;
    double mixing_kwh = 0.0;
};

struct plant_output {
    double t_d = 0.0;
    influent_sample influent;      // the whole plant's
    std::vector<train_output> trains;
    asm1::vector effluent{};       // flow-weighted over the trains
    double effluent_m3_per_d = 0.0;
    double effluent_tss_g_per_m3 = 0.0;
    energy_output energy;
    std::array<double, accumulator_count> totals{};
};

class plant_model {
public:
    plant_model(plant_spec spec, const influent_spec& influent);

    [[nodiscard]] const plant_spec& spec() const { return spec_; }
    [[nodiscard]] const state_layout& layout() const { return layout_; }
    [[nodiscard]] const influent_generator& influent() const { return influent_; }

    // dx/dt at plant time `t_d` (days).
    void derivatives(const double* x, double* dxdt, double t_d, const plant_controls& u) const;
    // Every output at (x, t_d).
    [[nodiscard]] plant_output outputs(const double* x, double t_d, const plant_controls& u) const;

    // A start state: every zone and layer at `zone_guess`, integrals and totals at zero.
    [[nodiscard]] std::vector<double> uniform_state(const asm1::vector& zone_guess) const;

    // Total oxygen demand (g) and nitrogen (g N) held in the zones and the clarifiers.
    [[nodiscard]] double oxygen_demand_inventory(const double* x) const;
    [[nodiscard]] double nitrogen_inventory(const double* x) const;

private:
    struct operating_point;
    void operate(const double* x, double t_d, const plant_controls& u, std::size_t train,
                 const influent_sample& plant_in, operating_point& op) const;

    plant_spec spec_;
    state_layout layout_;
    influent_generator influent_;
};

} // namespace floc::sim
