// Deterministic random numbers for the simulator: SplitMix64 (Steele, Lea, Flood 2014) and
// Box-Muller normals. Identical on every platform and standard library, so that a seed
// reproduces a run exactly. Stateful generators live in the simulation state, never globally.
#pragma once

#include <cmath>
#include <cstdint>

namespace floc::sim {

inline constexpr double pi = 3.14159265358979323846;

// One SplitMix64 output for a given input: a stateless hash, used to derive values from
// (seed, day, stream) without keeping a generator.
[[nodiscard]] constexpr std::uint64_t mix64(std::uint64_t z) {
    z += 0x9e3779b97f4a7c15ULL;
    z = (z ^ (z >> 30U)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27U)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31U);
}

// Uniform in (0, 1) from 64 random bits.
[[nodiscard]] constexpr double to_unit_interval(std::uint64_t bits) {
    return (static_cast<double>(bits >> 11U) + 0.5) * (1.0 / 9007199254740992.0);
}

// A hashed uniform for (seed, a, b).
[[nodiscard]] constexpr double hashed_uniform(std::uint64_t seed, std::uint64_t a, std::uint64_t b) {
    return to_unit_interval(mix64(seed ^ mix64(a * 0x100000001b3ULL + mix64(b))));
}

class random_stream {
public:
    explicit random_stream(std::uint64_t seed = 0) : state_(seed) {}

    std::uint64_t next() {
        state_ += 0x9e3779b97f4a7c15ULL;
        std::uint64_t z = state_;
        z = (z ^ (z >> 30U)) * 0xbf58476d1ce4e5b9ULL;
        z = (z ^ (z >> 27U)) * 0x94d049bb133111ebULL;
        return z ^ (z >> 31U);
    }
    double uniform() { return to_unit_interval(next()); }
    // Standard normal (Box-Muller, one value per call).
    double normal() {
        const double u1 = uniform();
        const double u2 = uniform();
        return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * pi * u2);
    }

private:
    std::uint64_t state_;
};

} // namespace floc::sim
