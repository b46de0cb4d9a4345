// The simulated plant's laboratory: the figures an operator's daily lab sheet reports, taken from
// the model's state as a technician takes samples. Pure: plant outputs in, figures out.
//
// Sampling points and definitions:
//  * MLSS: the TSS of the train's last aerated zone (the aeration-tank outlet, where the mixed
//    liquor leaves for the clarifier; in a train whose zones are all unaerated, its last zone).
//    TSS is the benchmark's composite 0.75 (X_I + X_S + X_BH + X_BA + X_P) (scenario
//    `tss_per_cod`).
//  * RAS solids: the TSS of the clarifier underflow (its bottom layer), the stream the RAS pumps.
//  * WAS solids: the TSS of the stream the model wastes from: the underflow, or with
//    `[train.was] from = "mixed_liquor"` the train's last zone.
//  * Effluent TSS: the top layer of the train's clarifier, or for the whole plant the
//    flow-weighted mean of the trains' effluents.
//  * Influent BOD5: BOD5 = 0.65 (S_S + X_S + (1 - f_P)(X_BH + X_BA)) of the plant's influent, the
//    benchmark's definition for the influent (its influent quality index: Alex et al. 2008, BSM1
//    technical report section 6, as coded in the toolbox's perf_plant.m). The benchmark's effluent
//    BOD5 is the same sum with the factor 0.25 (asm1::bod5's default).
//  * SV30: the settled volume of the MLSS sample after 30 minutes in a settleometer (below).
//  * Temperature: the mixed liquor's, which in this model is the influent's.
#pragma once

#include "floc/sim/plant.hpp"
#include "floc/sim/settler.hpp"
#include "floc/units.hpp"

#include <cstddef>
#include <cstdint>
#include <string_view>
#include <vector>

namespace floc::sim {

// The settleometer: a 1 L graduated cylinder (the cylinder of the settled-sludge-volume and SVI
// tests, Standard Methods 2710 C and D, from memory) filled to 0.35 m (assumed), as a batch column
// of equal layers. Its mixed liquor settles with the clarifier's own Takacs velocity and flux rule
// (gravity_flux): no feed, no underflow, no effluent; the floor holds everything. The column has
// no clarification zone above a feed, so every layer boundary takes the thickening rule
// min(v_s(X_j) X_j, v_s(X_j+1) X_j+1) (Kynch's batch settling). The non-settleable floor is
// f_ns times the sample's TSS, as the clarifier takes it of its feed. 35 layers of 1 cm; explicit
// time steps of at most half a layer height at the largest settling velocity, so no layer can
// lose more than half its solids in a step and the solids stay positive and conserved.
struct settleometer_spec {
    double height_m = 0.35;
    double volume_l = 1.0;
    std::size_t layers = 35;
    double duration_s = 1800.0; // SV30
};

struct settling_test {
    double settled_volume_ml_per_l = 0.0; // interface height / column height x 1000
    double interface_m = 0.0;             // sludge interface above the floor
    std::vector<double> tss_g_per_m3;     // the column at the end, top first
    double solids_start_g = 0.0;          // solids in the cylinder before and after
    double solids_end_g = 0.0;
};

// Settles mixed liquor of `mlss_g_per_m3` for the column's duration with the settling parameters
// `s`; the interface is where the profile crosses `interface_threshold_g_per_m3` (the clarifier's
// blanket threshold) going down from the surface.
[[nodiscard]] settling_test settle_batch(const settling_spec& s,
                                         double interface_threshold_g_per_m3, double mlss_g_per_m3,
                                         const settleometer_spec& column = {});

// What a lab sheet entry reports.
enum class lab_figure : std::uint8_t {
    mlss,          // mg/L
    ras_tss,       // mg/L
    was_tss,       // mg/L
    effluent_tss,  // mg/L, the train's or the plant's
    influent_bod5, // mg/L, the plant's influent
    sv30,          // mL/L
    temperature,   // degC
};

// "mlss", "ras_tss", ... as written in scenario files.
[[nodiscard]] std::string_view to_string(lab_figure f);
// concentration, settled_volume or temperature.
[[nodiscard]] units::quantity quantity_of(lab_figure f);
// Figures of one train (MLSS, RAS and WAS solids, SV30); the effluent TSS may be a train's or the
// plant's; the influent BOD5 and the temperature are the plant's.
[[nodiscard]] bool needs_train(lab_figure f);
[[nodiscard]] bool may_have_train(lab_figure f);
// Figures that may be flow-proportional composites (influent and effluent samples).
[[nodiscard]] bool may_be_composite(lab_figure f);

// The zone the lab takes mixed liquor from: the last aerated zone of the train, else its last zone.
[[nodiscard]] std::size_t mixed_liquor_zone(const train_spec& t);

// BOD5 of an influent, with the benchmark's influent factor 0.65 (see above).
inline constexpr double influent_bod5_factor = 0.65;
[[nodiscard]] double influent_bod5(const asm1::stoichiometry& s, const asm1::vector& c);

// The figure now, in its canonical unit (mg/L, mL/L, degC); `train` is ignored by plant figures
// and no_index means the plant for the effluent TSS. NaN when the train does not exist.
[[nodiscard]] double lab_value(const plant_spec& spec, const plant_output& out, lab_figure f,
                               std::size_t train);
// The flow a flow-proportional composite of the figure is paced by (m3/d): the influent's for the
// influent BOD5, the effluent's (the train's or the plant's) for the effluent TSS.
[[nodiscard]] double lab_pacing_flow(const plant_output& out, lab_figure f, std::size_t train);

} // namespace floc::sim
