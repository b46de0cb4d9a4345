// floc's advisory register map: every register the HMI can read (and the lab block it may
// write), laid out from the config. One description serves the register image, the server's
// write policy and `flocd --register-map`.
//
// CAUTION printed with the map: floc is advisory only; a licensed operator decides every set
// point; local permits, codes and plant procedures prevail.
#pragma once

#include "floc/config/config.hpp"
#include "floc/config/register_layout.hpp"

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace floc::registers {

// Version of the layout inside the blocks; published in the status block.
inline constexpr std::uint16_t layout_version = 1;

// A 16-bit value that could not be given (no data, not a number, out of int16 range).
inline constexpr std::int16_t int16_missing = -32768;

enum class word_type : std::uint8_t { int16, uint16, uint32, float32 };
enum class access : std::uint8_t { read_only, lab_write };

// The kinds of advisor, as published in each advice slot.
enum class advisor_kind : std::uint16_t { aeration = 1, recycle = 2, ras = 3, waste = 4 };

// One named register (or register pair) of the map.
struct field {
    std::uint16_t address = 0;     // 0-based PDU address (holding and input tables alike)
    word_type type = word_type::uint16;
    access acc = access::read_only;
    std::string name;              // e.g. "advice.3.value"
    std::string unit;              // display unit symbol, "" when none
    double int16_scale = 1.0;      // int16 fields: register = round(value * scale)
    std::string meaning;

    [[nodiscard]] std::uint16_t width() const {
        return type == word_type::uint32 || type == word_type::float32 ? 2 : 1;
    }
};

// One figure published beside an advice (advisor-specific, e.g. the RAS ratio).
struct figure_info {
    std::string name;
    units::quantity kind = units::quantity::dimensionless;
};

// What an advice slot publishes, per advisor.
struct advice_slot {
    advisor_kind kind = advisor_kind::aeration;
    std::string subject;           // the zone or train the advice is for
    units::quantity kind_of_value = units::quantity::concentration;
    double int16_scale = 1.0;
    std::array<figure_info, 6> figures{};
};

// Offsets inside each slot (see register_map.cpp for the meaning of each).
namespace advice_offset {
inline constexpr std::uint16_t value_int16 = 0, quality = 1, reason_1 = 2, reason_4 = 5, age_s = 6,
                               changes = 7, value = 8, min = 10, max = 12, min_int16 = 14,
                               max_int16 = 15, kind = 16, quantity = 17, scale_exponent = 18,
                               figures = 20;
}
namespace input_offset {
inline constexpr std::uint16_t value_int16 = 0, quality = 1, reason = 2, age_s = 3, value = 4, raw = 6;
}
namespace lab_offset {
inline constexpr std::uint16_t value = 0, value_int16 = 2, sample_minutes_ago = 3, status = 4,
                               entries = 5, age_min = 6, quantity = 7;
}
namespace status_offset {
inline constexpr std::uint16_t heartbeat = 0, daemon_state = 1, uptime_s = 2, plant_time_s = 4,
                               units = 6, advisors = 7, tags = 8, lab_entries = 9,
                               layout = 10, float_order = 11, poll_age_s = 12, plc_link = 16,
                               config_generation = 20, journal_status = 21, state_status = 22;
inline constexpr std::uint16_t max_plcs = 4;  // PLCs with a poll-age / link register
}

// Daemon states published in the status block.
enum class daemon_state : std::uint16_t { starting = 0, running = 1, degraded = 2, plc_down = 3, stopping = 4 };

// Lab write acknowledgements published in each lab slot.
enum class lab_status : std::uint16_t {
    none = 0, accepted = 1, out_of_range = 2, not_allowed = 3, not_a_number = 4, store_failed = 5
};

struct register_map {
    std::vector<field> fields;          // in address order
    std::vector<advice_slot> advice;    // in slot order
    std::array<config::register_block, 4> blocks{};

    [[nodiscard]] const field* find(std::uint16_t address) const;
    [[nodiscard]] std::uint16_t advice_base(std::size_t slot) const;
    [[nodiscard]] std::uint16_t input_base(std::size_t tag) const;
    [[nodiscard]] std::uint16_t lab_base(std::size_t entry) const;
    [[nodiscard]] std::uint16_t status_base() const;
};

// The map for a validated config.
[[nodiscard]] register_map build(const config::plant_config& cfg);

// The scale of an int16 register for values up to `max_abs`: the largest of 1000, 100, 10, 1,
// 0.1, 0.01 that keeps max_abs * scale within 32 000.
[[nodiscard]] double int16_scale_for(double max_abs);

// Printable forms for the HMI integrator.
[[nodiscard]] std::string to_markdown(const register_map& map, const config::plant_config& cfg);
[[nodiscard]] std::string to_csv(const register_map& map);

} // namespace floc::registers
