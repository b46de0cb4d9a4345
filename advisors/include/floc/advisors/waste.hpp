// Daily waste sludge volume (WAS) of one train.
//
// Mode "srt" holds a target solids retention time on rolling averages over `averaging_days`:
//   M   = V X                              solids inventory (V: the train's zones, plus the
//                                          clarifiers at MLSS when include_clarifier_solids)
//   SRT = M / (Qw Xw + Qe Xe),  Qe = Q - Qw
//   Qw  = (M / SRT_target - Q Xe) / (Xw - Xe)    the waste flow that holds the target
// Mode "mlss" steers MLSS to a target: a PI on the MLSS error in solids mass per day, with the
// proportional part wasting the excess inventory over `mlss_horizon` and the integral finding
// the sludge production; the same mass balance turns wastage into a waste flow.
// Both modes:
//   - minimum aerobic SRT (nitrification.hpp) at the averaged temperature, times the safety
//     factor: the advice never drives the aerobic SRT (SRT x V_aerobic / V) below it, and says so
//     when the target is unsafe (the minimum is used instead);
//   - day-to-day change limit `max_daily_change` (a fraction of the advice in force at the start
//     of the plant day; the safety guard may always cut wastage further);
//   - bounds `waste_limits`, hold then fallback on missing data;
//   - computed once a day at `compute_at_minute` of the plant day (plant time = now_s, whose
//     day starts at a multiple of 86400 s), at the first step, and on demand (`recompute`);
//     between computations the day's advice is repeated.
//   - F/M = Q S0 / (V X f_VSS) reported when influent BOD (or COD) is known.
// Call step_waste() at a regular sampling period (minutes to an hour): every call adds the
// flows and any new lab sample to the day's record; lab samples count once (by sample time).
#pragma once

#include "floc/advisors/advice.hpp"
#include "floc/advisors/machinery.hpp"
#include "floc/advisors/nitrification.hpp"
#include "floc/advisors/signal.hpp"

#include <array>
#include <cstdint>
#include <vector>

namespace floc::advisors {

enum class waste_mode : std::uint8_t { srt = 0, mlss = 1 };

struct waste_params {
    waste_mode mode = waste_mode::srt;
    double target_srt_s = 10.0 * 86400.0;
    double target_mlss_g_per_m3 = 3000.0;
    std::uint32_t averaging_days = 7;
    double max_daily_change = 0.15;                // fraction of the advice in force
    std::uint32_t compute_at_minute = 7 * 60 + 30; // minute of the plant day
    double system_volume_m3 = 0.0;                 // all zones of the train
    double aerobic_volume_m3 = 0.0;                // its aerated zones
    double clarifier_volume_m3 = 0.0;              // its clarifiers (area x side water depth)
    bool include_clarifier_solids = false;
    nitrifier_params nitrifiers;
    double min_waste_m3_per_d = 0.0;
    double max_waste_m3_per_d = 1e9;
    double fallback_m3_per_d = 0.0;
    double hold_for_s = 2.0 * 86400.0;
    double mlss_horizon_s = 3.0 * 86400.0; // mlss mode: excess wasted over this time
    double mlss_integral_time_s = 10.0 * 86400.0;
    double mlvss_fraction = 0.8; // MLVSS / MLSS, for F/M
    units::unit_system text_units = units::unit_system::si;
};

struct waste_inputs {
    reading flow;           // influent flow of the train
    reading mlss;           // X (lab or probe)
    reading was_solids;     // Xw
    reading effluent_tss;   // optional: Xe
    reading was_flow;       // optional: metered waste flow, for the actual SRT
    reading temperature;    // optional: for the minimum aerobic SRT
    reading influent_bod;   // optional: for F/M
    bool recompute = false; // on-demand recomputation
};

// One plant day of samples: time-weighted sums for probe values, sample sums for lab values.
struct waste_day {
    std::int64_t day = 0; // floor(plant time / 86400)
    double flow_sum = 0.0, flow_weight = 0.0;
    double was_flow_sum = 0.0, was_flow_weight = 0.0;
    double temperature_sum = 0.0, temperature_weight = 0.0;
    double mlss_sum = 0.0, mlss_count = 0.0;
    double was_solids_sum = 0.0, was_solids_count = 0.0;
    double effluent_tss_sum = 0.0, effluent_tss_count = 0.0;
    double bod_sum = 0.0, bod_count = 0.0;
};

struct waste_state {
    output_memory out;
    std::vector<waste_day> days; // oldest first; at most averaging_days
    bool has_sample = false;
    double last_sample_at_s = 0.0;
    // Sample times of the last lab values counted (mlss, was_solids, effluent_tss, bod);
    // -1 = none. A lab value is counted once.
    std::array<double, 4> lab_sampled_at_s{-1.0, -1.0, -1.0, -1.0};
    std::int64_t computed_day = -1; // plant day of the last good daily computation
    std::int64_t base_day = -1;     // plant day whose starting advice is `base_value`
    double base_value = 0.0;
    pi_memory mlss_loop;
};

struct waste_result {
    advice out; // value: waste flow, m3/d
    waste_state state;
};

[[nodiscard]] waste_result step_waste(const waste_params& p, const waste_inputs& in,
                                      const waste_state& previous, double now_s);

// The mass balance on its own: the waste flow (m3/d) that holds `srt_s` for an inventory of
// `inventory_g` solids at influent flow Q, waste solids Xw and effluent solids Xe; and the SRT
// (s) a waste flow gives. Used by the advisor and by `flocd calc`.
[[nodiscard]] double waste_flow_for_srt(double inventory_g, double srt_s, double flow_m3_per_d,
                                        double was_solids_g_per_m3, double effluent_tss_g_per_m3);
[[nodiscard]] double srt_for_waste_flow(double inventory_g, double waste_m3_per_d,
                                        double flow_m3_per_d, double was_solids_g_per_m3,
                                        double effluent_tss_g_per_m3);
// F/M in 1/d: Q S0 / (V X f_VSS).
[[nodiscard]] double food_to_microorganism(double flow_m3_per_d, double bod_g_per_m3,
                                           double volume_m3, double mlss_g_per_m3,
                                           double mlvss_fraction);

} // namespace floc::advisors
