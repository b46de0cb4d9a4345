// Signal conditioning: turns each raw reading of a tag into a value with a quality and a
// reason, per the tag's limits (valid range, stale, frozen, spike, filter). Pure: the caller
// passes the time of every sample and keeps the state.
#pragma once

#include "floc/config/config.hpp"

#include <array>
#include <cstdint>
#include <optional>
#include <string_view>

namespace floc::conditioning {

// How far a conditioned value can be trusted.
enum class quality : std::uint8_t {
    good = 0,       // a fresh reading that passed every check
    uncertain = 1,  // the last good value, still young: the latest read failed or was a spike
    bad = 2,        // no usable value: never read, stale, out of range, not a number, frozen,
                    // or a check reading disagrees
};

// Why a value has its quality. The numbers are stable: they are published on the registers.
enum class reason : std::uint8_t {
    ok = 0,
    no_data = 1,       // never read successfully
    read_failed = 2,   // the latest read failed (link down, timeout, exception reply)
    not_a_number = 3,  // the PLC sent NaN or infinity
    below_range = 4,   // below the tag's valid range
    above_range = 5,   // above the tag's valid range
    spike = 6,         // changed faster than max_change_per_minute
    frozen = 7,        // unchanged within frozen_tolerance for frozen_after
    stale = 8,         // no good reading for stale_after
    check_disagrees = 9, // the latest check reading differs from the probe by more than its
                         // tolerance (probe_check.hpp)
};

// The highest reason number in use (for tables that list them all).
inline constexpr reason last_reason = reason::check_disagrees;

[[nodiscard]] std::string_view to_string(quality q);
[[nodiscard]] std::string_view to_string(reason r);

// One reading as the poller delivers it.
struct sample {
    double time_s = 0.0;          // when it was read (the daemon's clock, seconds)
    bool read_ok = false;         // false: the read itself failed
    double value = 0.0;           // canonical unit of the tag's quantity (0/1 for states)
};

// What a tag looks like after conditioning.
struct signal {
    double value = 0.0;       // conditioned (filtered) value, canonical unit; the last good one
                              // when quality is not good; NaN if there never was one
    double raw = 0.0;         // the latest reading as received (NaN if none)
    quality q = quality::bad;
    reason why = reason::no_data;
    double last_good_s = 0.0; // time of the last good reading (meaningless without one)
    bool has_value = false;   // a good reading has been seen at least once

    [[nodiscard]] bool usable() const { return q != quality::bad; }
};

inline constexpr std::size_t max_median_samples = 31;

// Everything conditioning remembers about one tag. Plain data.
struct state {
    signal out;
    // accepted values for the median filter (ring buffer)
    std::array<double, max_median_samples> window{};
    std::uint32_t window_count = 0;
    std::uint32_t window_next = 0;
    double ema = 0.0;
    double last_accepted = 0.0;     // last accepted raw value (before filtering)
    double last_accepted_s = 0.0;
    // frozen-probe detection
    double frozen_reference = 0.0;
    double frozen_since_s = 0.0;
    bool frozen_started = false;
    // spike handling: a new level is accepted when it persists
    std::uint32_t spike_count = 0;
    double spike_level = 0.0;
};

// Readings in a row at a new level after which a "spike" is accepted as a real step.
inline constexpr std::uint32_t spike_confirm_samples = 3;

// Feeds one sample. Samples must come in time order.
[[nodiscard]] state update(const config::tag& tag, const state& previous, const sample& in);

// Re-evaluates a state at `now_s` without a new sample (e.g. on a timer): a value whose last
// good reading is older than stale_after becomes bad/stale.
[[nodiscard]] signal assess(const config::tag& tag, const state& s, double now_s);

} // namespace floc::conditioning
