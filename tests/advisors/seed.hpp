// Seeds for the random tests: FLOC_TEST_SEED=<number> replays a run; otherwise a fresh seed,
// printed so that a failure can be replayed.
#pragma once

#include <gtest/gtest.h>

#include <cstdint>
#include <cstdlib>
#include <iostream>
#include <random>
#include <string>

namespace floc::test {

inline std::uint64_t test_seed() {
    static const std::uint64_t seed = [] {
        if (const char* s = std::getenv("FLOC_TEST_SEED"); s != nullptr && *s != '\0') {
            return static_cast<std::uint64_t>(std::strtoull(s, nullptr, 10));
        }
        return (static_cast<std::uint64_t>(std::random_device{}()) << 32U) ^ std::random_device{}();
    }();
    return seed;
}

// Records and prints the seed in the current test; returns a generator seeded from it and
// `salt` (so that tests in one run do not share a sequence).
inline std::mt19937_64 seeded(std::uint64_t salt) {
    const std::uint64_t seed = test_seed();
    testing::Test::RecordProperty("seed", std::to_string(seed));
    std::cout << "[ seed     ] FLOC_TEST_SEED=" << seed << "\n";
    return std::mt19937_64{seed ^ (salt * 0x9E3779B97F4A7C15ULL)};
}

} // namespace floc::test
