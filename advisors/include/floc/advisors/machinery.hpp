// The parts every advisor is built from, written once:
//  - output shaping: NaN guard, clamp to bounds, rate limit;
//  - output memory with hold-last-good-then-fallback timing;
//  - a PI controller with anti-windup, bumpless start and irregular sample times;
//  - a rolling window of time-weighted bucket means (daily mean flow, nitrate trend).
// All of it is plain data and pure functions: the caller keeps the state.
#pragma once

#include "floc/advisors/advice.hpp"

#include <array>
#include <cstdint>
#include <optional>

namespace floc::advisors {

// --- Output shaping ---------------------------------------------------------------------------

struct shaped_output {
    double value = 0.0;
    bool clamped_low = false; // the bound, not the wanted value, decided
    bool clamped_high = false;
    bool rate_limited = false; // the rate limit, not the wanted value, decided
};

// Moves from `previous` toward `wanted` by at most `max_step` (>= 0), then clamps to [lo, hi].
// The bounds win over the rate limit (a bound that moved is obeyed at once). A NaN `wanted`
// keeps `previous`; a NaN `previous` means "no previous value" (no rate limit). lo <= hi.
[[nodiscard]] shaped_output shape_output(double wanted, double previous, double max_step, double lo,
                                         double hi);

// --- Output memory, hold and fallback ---------------------------------------------------------

// What an advisor remembers of its published output. Part of every advisor's state.
struct output_memory {
    bool has_value = false;     // something has been published
    double value = 0.0;         // the last published value
    double at_s = 0.0;          // when
    bool has_good = false;      // a value has been computed from good inputs
    double good_value = 0.0;    // the last such value
    double good_at_s = 0.0;     // when
    bool last_was_good = false; // the last step computed from good inputs (else held/fallback)
};

struct hold_policy {
    double hold_for_s = 1800.0; // hold the last good value this long after inputs go bad
    double fallback = 0.0;      // then publish this safe value
};

// The value to publish when the inputs are bad at `now_s`: the last good value while it is
// younger than `hold_for_s`, else the fallback. Adds the matching reasons.
struct held_output {
    double value = 0.0;
    advice_quality quality = advice_quality::fallback;
};
[[nodiscard]] held_output hold_or_fallback(const output_memory& m, double now_s,
                                           const hold_policy& p, reason_list& reasons);

// Records a published value. `good` = computed from good inputs.
void remember(output_memory& m, double value, double now_s, bool good);

// Seconds since the last published value (0 when none or when time went backwards).
[[nodiscard]] double since_last_s(const output_memory& m, double now_s);

// --- PI controller ----------------------------------------------------------------------------

struct pi_tuning {
    double gain = 1.0;            // output change per unit of error
    double integral_time_s = 0.0; // <= 0: proportional only
};

// The controller's state. `integral` is in output units.
struct pi_memory {
    bool primed = false;
    double integral = 0.0;
    double at_s = 0.0; // plant time of the last step
};

// One proposed step: output = proportional + integral + feedforward.
struct pi_proposal {
    double wanted = 0.0;
    double proportional = 0.0;
    double integral_free = 0.0; // the integral if the output is not limited
    double dt_s = 0.0;          // the time step used (0 when irregular)
};

// Steps longer than this restart the controller bumplessly instead of integrating over the gap.
inline constexpr double default_pi_max_gap_s = 3600.0;

// Bumpless (re)start: sets the integral so that the output is `output` for this error.
[[nodiscard]] pi_memory pi_start(double output, double error, double feedforward,
                                 const pi_tuning& t, double now_s);

// Proposes the next output. dt = now - last step; dt <= 0 (a repeat, or time going back)
// integrates nothing. The memory must be primed (use pi_start first).
[[nodiscard]] pi_proposal pi_propose(const pi_tuning& t, const pi_memory& m, double error,
                                     double feedforward, double now_s);

// After the caller has shaped the proposal into `applied`: anti-windup by conditional
// integration with tracking. Unlimited: the integral integrates freely. Limited (clamped or
// rate-limited): it integrates only as far as makes the unlimited output equal `applied`, and
// never further than free integration would, so a long saturated period stores no excess and
// the output leaves the limit as soon as the error reverses.
[[nodiscard]] pi_memory pi_accept(const pi_memory& m, const pi_proposal& p, double applied,
                                  double feedforward, double now_s);

// --- Rolling window ---------------------------------------------------------------------------

inline constexpr std::size_t window_buckets = 24;

// Time-weighted means in `window_buckets` buckets covering a window (1 h each for a daily
// mean, 2.5 min each for a 1-h trend). Flat, so that the caller can persist it.
struct rolling_window {
    double bucket_s = 0.0;                    // width of one bucket; 0 = empty window
    std::int64_t newest = 0;                  // index (plant time / bucket_s) of the newest bucket
    double last_at_s = 0.0;                   // plant time of the last sample
    std::array<double, window_buckets> sum{}; // value x weight
    std::array<double, window_buckets> weight{}; // seconds
};

// Adds a sample taken at `at_s`, weighted by the time since the previous sample (clamped to
// 1 s .. one bucket). A window of a different length is restarted.
void window_add(rolling_window& w, double window_s, double value, double at_s);

// Time-weighted mean of the buckets younger than the window at `now_s`; empty when none.
[[nodiscard]] std::optional<double> window_mean(const rolling_window& w, double now_s);

// Seconds of data inside the window at `now_s`.
[[nodiscard]] double window_coverage_s(const rolling_window& w, double now_s);

// Least-squares slope (value per second) of the bucket means inside the window at `now_s`,
// empty unless at least 3 buckets with data span at least half the window.
[[nodiscard]] std::optional<double> window_slope_per_s(const rolling_window& w, double now_s);

} // namespace floc::advisors

namespace floc::advisors {

// Adds the reasons that shaping decided (clamped to a bound, rate-limited).
void note_shaping(const shaped_output& s, reason_list& reasons);

} // namespace floc::advisors
