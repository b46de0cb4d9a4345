// Return activated sludge (RAS) of one train: a base ratio from a mass balance or the
// settleometer, a PI trim on the sludge-blanket level, flow pacing, and the clarifier
// state-point check (settling.hpp).
//
//   mass balance:  R = X / (Xr - X)             solids balance around the clarifier, neglecting
//                                               effluent and waste solids (X = MLSS, Xr = RAS)
//   settleometer:  R = SV30 / (1000 - SV30)     SV30 in mL/L; the steady state of the operator
//                                               estimate Qr = (Q + Qr) x SSV fraction (Kerri et
//                                               al., Operation of Wastewater Treatment Plants)
//   trim:          PI on the blanket level outside [blanket_low, blanket_high]: above the band
//                  adds RAS, below it removes RAS; inside the band the error is zero.
//   advice:        ratio R = base + trim, bounded by `ratio_limits`, the pump limits at this
//                  flow and the RAS flows the clarifier tolerates; RAS flow = R x Q.
// The blanket is its height above the clarifier floor (a higher blanket = a deeper layer of
// sludge), so a higher blanket never gives less RAS.
#pragma once

#include "floc/advisors/advice.hpp"
#include "floc/advisors/machinery.hpp"
#include "floc/advisors/settling.hpp"
#include "floc/advisors/signal.hpp"

#include <cstdint>
#include <optional>

namespace floc::advisors {

enum class ras_method : std::uint8_t {
    automatic = 0, // mass balance when RAS solids are good, else the settleometer
    mass_balance = 1,
    settleometer = 2,
};

struct ras_params {
    ras_method method = ras_method::automatic;
    svi_correlation correlation = svi_correlation::daigger_1995;
    double blanket_low_m = 0.3; // target band of the blanket level
    double blanket_high_m = 0.9;
    double blanket_gain_per_m = 0.1; // ratio change per metre outside the band
    double blanket_integral_time_s = 7200.0;
    double min_ratio = 0.25;
    double max_ratio = 1.5;
    double pump_min_m3_per_d = 0.0;
    double pump_max_m3_per_d = 1e9;
    double max_change_per_hour = 0.1; // ratio units per hour
    double fallback_ratio = 0.75;
    double hold_for_s = 1800.0;
    double clarifier_area_m2 = 0.0; // total area of the clarifiers (0: no state point)
    double max_solids_loading_kg_per_m2_d = 8.0 * 24.0; // applied solids loading limit
    units::unit_system text_units = units::unit_system::si;
};

struct ras_inputs {
    reading flow;       // influent flow to the clarifiers
    reading ras_flow;   // optional: the RAS flow now (bumpless start, settleometer estimate)
    reading mlss;       // X
    reading ras_solids; // optional: Xr (mass balance)
    reading sv30;       // optional: 30-minute settled volume, mL/L (settleometer)
    reading svi;        // optional: SVI, or the stirred SSVI3.5 for wahlberg_keinath_1988
    reading blanket;    // optional: blanket height above the floor, m
};

struct ras_state {
    output_memory out;
    pi_memory trim;
    double last_trim = 0.0; // the trim of the last good blanket reading (kept while it is bad)
};

struct ras_result {
    advice out; // value: RAS ratio (dimensionless); figure "ras_flow" in m3/d
    ras_state state;
};

// The formulas on their own (empty when they do not apply).
[[nodiscard]] std::optional<double> ras_ratio_mass_balance(double mlss_g_per_m3,
                                                           double ras_solids_g_per_m3);
[[nodiscard]] std::optional<double> ras_ratio_settleometer(double sv30_ml_per_l);
// SVI = SV30 x 1000 / MLSS (mL/g from mL/L and mg/L).
[[nodiscard]] std::optional<double> svi_from_sv30(double sv30_ml_per_l, double mlss_g_per_m3);
// The operator's estimate: Qr = (Q + Qr_now) x settled fraction.
[[nodiscard]] double settleometer_ras_flow(double flow_m3_per_d, double ras_flow_now_m3_per_d,
                                           double settled_fraction);

[[nodiscard]] ras_result step_ras(const ras_params& p, const ras_inputs& in,
                                  const ras_state& previous, double now_s);

} // namespace floc::advisors
