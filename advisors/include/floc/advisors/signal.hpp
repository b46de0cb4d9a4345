// The inputs of an advisor: a conditioned measurement or a lab value, with its quality and the
// plant time it was sampled. Values are in the canonical unit of their quantity (floc/units.hpp).
#pragma once

#include <cmath>
#include <cstdint>
#include <string_view>

namespace floc::advisors {

// Quality of one input after the daemon's conditioning. Stable numbers (journal, registers).
enum class signal_quality : std::uint8_t {
    good = 0,    // usable
    bad = 1,     // out of its valid range, a refused spike, a read error
    stale = 2,   // no fresh value for longer than allowed; a lab value older than its max age
    frozen = 3,  // unchanged for too long: a stuck probe
    missing = 4, // never received, or not configured
};

[[nodiscard]] std::string_view to_string(signal_quality q);

struct reading {
    double value = 0.0; // canonical unit of the quantity
    signal_quality quality = signal_quality::missing;
    double sampled_at_s = 0.0; // plant time of the sample (lab: when taken)

    // Good and a finite number: the only kind of reading an advisor computes with.
    [[nodiscard]] bool usable() const {
        return quality == signal_quality::good && std::isfinite(value);
    }
};

// A good reading of `value` sampled at `at_s`.
[[nodiscard]] constexpr reading good(double value, double at_s) {
    return reading{value, signal_quality::good, at_s};
}

} // namespace floc::advisors
