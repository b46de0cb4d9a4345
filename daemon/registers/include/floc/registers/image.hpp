// The register image flocd serves: the map's fields filled with the latest status, advice,
// conditioned inputs and lab entries, converted to display units. Pure; the server reads it and
// the daemon rewrites it after every poll and advice.
#pragma once

#include "floc/conditioning/conditioning.hpp"
#include "floc/registers/register_map.hpp"

#include <array>
#include <cstdint>
#include <limits>
#include <optional>
#include <span>
#include <vector>

namespace floc::registers {

// One advice as published (canonical units; figures in the units of their figure_info kind).
struct published_advice {
    double value = std::numeric_limits<double>::quiet_NaN();
    double min = std::numeric_limits<double>::quiet_NaN();
    double max = std::numeric_limits<double>::quiet_NaN();
    std::uint16_t quality = 3;  // 0 good, 1 held, 2 fallback, 3 unavailable
    std::array<std::uint16_t, 4> reasons{};
    double age_s = std::numeric_limits<double>::infinity();
    std::uint16_t changes = 0;
    std::array<double, 6> figures{std::numeric_limits<double>::quiet_NaN(), std::numeric_limits<double>::quiet_NaN(),
                                  std::numeric_limits<double>::quiet_NaN(), std::numeric_limits<double>::quiet_NaN(),
                                  std::numeric_limits<double>::quiet_NaN(), std::numeric_limits<double>::quiet_NaN()};
};

struct status_info {
    std::uint16_t heartbeat = 0;
    daemon_state state = daemon_state::starting;
    double uptime_s = 0.0;
    double plant_time_s = 0.0;
    std::array<double, status_offset::max_plcs> poll_age_s{
        std::numeric_limits<double>::infinity(), std::numeric_limits<double>::infinity(),
        std::numeric_limits<double>::infinity(), std::numeric_limits<double>::infinity()};
    std::array<bool, status_offset::max_plcs> link{};
    std::uint16_t config_generation = 0;
    bool journal_ok = true;
    bool state_ok = true;
};

struct lab_info {
    double value = std::numeric_limits<double>::quiet_NaN();  // canonical; NaN = none yet
    double sample_age_s = std::numeric_limits<double>::infinity();
    lab_status status = lab_status::none;
    std::uint16_t entries = 0;
    std::uint16_t pending_minutes_ago = 0;  // written by the operator before the next value
};

class image {
public:
    image(const register_map& map, const config::plant_config& cfg);

    [[nodiscard]] std::uint16_t at(std::uint16_t address) const { return words_.at(address); }
    [[nodiscard]] std::span<const std::uint16_t> words(std::uint16_t address, std::uint16_t count) const;

    void put_status(const status_info& s);
    void put_advice(std::size_t slot, const published_advice& a);
    void put_input(std::size_t tag, const conditioning::signal& s, double now_s);
    void put_lab(std::size_t entry, const lab_info& l);

private:
    void put_u16(std::uint32_t address, std::uint16_t v);
    void put_u32(std::uint32_t address, std::uint32_t v);
    void put_i16(std::uint32_t address, double display_value, double scale);
    void put_f32(std::uint32_t address, double display_value);
    [[nodiscard]] double display(double canonical, units::quantity q) const;

    const register_map& map_;
    const config::plant_config& cfg_;
    std::vector<std::uint16_t> words_;
};

// A write to the lab block, decoded. Which writes are accepted is decided here, once, for the
// server and the tests alike.
struct lab_write {
    std::size_t entry = 0;
    enum class what : std::uint8_t { value, minutes_ago } kind = what::value;
    double value = 0.0;                 // canonical unit of the entry's quantity (what::value)
    std::uint16_t minutes_ago = 0;      // what::minutes_ago
};

// Decodes a write of `values` at `address`. Accepted forms per lab slot: the float32 pair
// (function 16, 2 registers at +0), the scaled int16 (+2, 1 register), the sample age (+3,
// 1 register). Anything else is not a lab write (the server answers exception 02).
[[nodiscard]] std::optional<lab_write> decode_lab_write(const register_map& map,
                                                        const config::plant_config& cfg,
                                                        std::uint16_t address,
                                                        std::span<const std::uint16_t> values);

// Saturating conversions used for ages and counters.
[[nodiscard]] std::uint16_t saturate_u16(double v);

} // namespace floc::registers
