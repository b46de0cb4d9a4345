// Test support for the operator stand-in: one advice as flocd publishes it in its advisory
// registers (floc::registers::image), in canonical units.
#pragma once

#include "floc/registers/image.hpp"

#include <cstdint>

namespace floc::sim::test {

[[nodiscard]] inline registers::published_advice published(double value, std::uint16_t quality,
                                                           std::uint16_t reason, double age_s) {
    registers::published_advice a;
    a.value = value;
    a.min = 0.0;
    a.max = 1e4;
    a.quality = quality;
    a.reasons = {reason, 0, 0, 0};
    a.age_s = age_s;
    return a;
}

} // namespace floc::sim::test
