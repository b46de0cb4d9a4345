// Secondary clarifier: the one-dimensional layer model of Takacs, Patry & Nolasco (1991),
// "A dynamic model of the clarification-thickening process", Water Research 25(10), 1263-1271,
// with the double-exponential settling velocity and the clarification-zone threshold rule, in the
// non-reactive form of the IWA benchmark (Alex et al. 2008, BSM1 technical report, section 2.3.3).
//
// Layers are numbered from the top (0 = effluent layer) to the bottom (underflow layer). Every
// layer carries all 13 ASM1 components; particulates move with the solids flux in the composition
// of the layer they leave, so the settler conserves COD and nitrogen exactly.
#pragma once

#include "floc/sim/asm1.hpp"

#include <array>
#include <cstddef>
#include <cstdint>
#include <string>

namespace floc::sim {

inline constexpr std::size_t settler_layers = 10;

struct settling_spec {
    double v0_max_m_per_d = 250.0;  // maximum practical settling velocity
    double v0_m_per_d = 474.0;      // maximum Vesilind settling velocity
    double r_h_m3_per_g = 0.000576; // hindered-zone parameter
    double r_p_m3_per_g = 0.00286;  // flocculant-zone parameter
    double f_ns = 0.00228;          // non-settleable fraction of the feed solids
    double x_t_g_per_m3 = 3000.0;   // threshold of the clarification-zone flux rule
};

// How the sludge-blanket height is read from the layer profile.
enum class blanket_rule : std::uint8_t {
    // The height above the floor where the TSS profile, taken as linear between layer mid-heights,
    // first reaches the threshold when going down from the surface. 0 when no layer reaches it,
    // the full depth when the top layer does.
    interpolated,
    // The formula of the IWA benchmark toolbox's settler output (sludge blanket level, 2011); kept
    // to compare with the benchmark's published figure.
    benchmark,
};

struct clarifier_spec {
    std::string name;
    double area_m2 = 1500.0;
    double depth_m = 4.0;
    std::size_t feed_layer = 4;  // 0-based from the top
    settling_spec settling;
    double blanket_threshold_g_per_m3 = 3000.0;
    blanket_rule blanket = blanket_rule::interpolated;

    [[nodiscard]] double layer_height_m() const { return depth_m / static_cast<double>(settler_layers); }
    [[nodiscard]] double volume_m3() const { return area_m2 * depth_m; }
};

// Takacs settling velocity (m/d) of solids at `tss` with the non-settleable floor `x_min`.
[[nodiscard]] double settling_velocity(const settling_spec& s, double tss_g_per_m3, double x_min_g_per_m3);

// Gravity flux of solids (g SS/m2/d) from each layer into the one below it, for layers of TSS
// `tss_g_per_m3` (top first): above `feed_layer`, while the layer below is at or under the
// threshold x_t (the clarification zone), J_j = v_s(X_j) X_j; elsewhere (the thickening zone)
// J_j = min(v_s(X_j) X_j, v_s(X_j+1) X_j+1); nothing settles through the floor, so the last flux is
// 0. `tss` and `down` hold `n` layers. Shared by the clarifier and the settleometer's batch
// column. (Pointers and counts: this header is also compiled as C++17, see CMakeLists.txt.)
void gravity_flux(const settling_spec& s, const double* tss_g_per_m3, std::size_t n,
                  std::size_t feed_layer, double x_min_g_per_m3, double* down_g_per_m2_per_d);

// The height above the floor (m) of the first crossing of `threshold` going down from the surface
// through a profile of `n` equal layers (top first), the profile taken as linear between the layer
// mid-heights; 0 when no layer reaches the threshold, the full depth when the top layer does.
// The clarifier's interpolated blanket rule and the settleometer's interface.
[[nodiscard]] double interface_height(const double* tss_g_per_m3, std::size_t n, double depth_m,
                                      double threshold_g_per_m3);

struct settler_flows {
    double feed_m3_per_d = 0.0;
    double effluent_m3_per_d = 0.0;   // leaves at the top
    double underflow_m3_per_d = 0.0;  // leaves at the bottom (RAS + WAS)
};

using layer_states = std::array<asm1::vector, settler_layers>;

// d(layer state)/dt for every layer, given the feed composition and flows.
void settler_derivatives(const clarifier_spec& c, const asm1::parameters& p, const asm1::vector& feed,
                         const settler_flows& q, const double* layers, double* d_layers);

// Sludge-blanket height above the floor (m) from the layer TSS, top first.
[[nodiscard]] double blanket_height(const clarifier_spec& c, const std::array<double, settler_layers>& tss);

} // namespace floc::sim
