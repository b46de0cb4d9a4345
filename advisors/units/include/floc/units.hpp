// Physical quantities and units. Inside floc every value is held in one canonical unit per
// quantity (SI, or a unit accepted for use with SI such as the day); US customary and other units
// are converted only at the edges: config files, Modbus registers, display.
#pragma once

#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <variant>

namespace floc::units {

// The kinds of quantity floc knows. Values are stable (they appear in the register map).
enum class quantity : std::uint8_t {
    dimensionless = 0,     // ratios, fractions, gains
    flow = 1,              // canonical m3/d
    concentration = 2,     // canonical g/m3 (= mg/L)
    length = 3,            // canonical m
    area = 4,              // canonical m2
    volume = 5,            // canonical m3
    mass = 6,              // canonical kg
    mass_rate = 7,         // canonical kg/d
    temperature = 8,       // canonical degC
    duration = 9,          // canonical s
    velocity = 10,         // canonical m/d (overflow rate, settling velocity)
    solids_flux = 11,      // canonical kg/(m2 d)
    settled_volume = 12,   // canonical mL/L (SV30)
    sludge_volume_index = 13, // canonical mL/g (SVI)
    rate = 14,             // canonical 1/d (KLa, specific rates)
    power = 15,            // canonical kW
    state = 16,            // on/off; no unit
};

inline constexpr std::size_t quantity_count = 17;

// One unit: value_in_canonical = value * factor + offset.
struct unit {
    std::string_view symbol;  // the spelling floc prints, e.g. "m3/d"
    quantity kind;
    double factor;
    double offset;
    std::string_view name;    // e.g. "US gallon per minute"
};

enum class unit_system : std::uint8_t { si = 0, us_customary = 1 };

// "flow", "concentration", ...
[[nodiscard]] std::string_view quantity_name(quantity q);
[[nodiscard]] std::optional<quantity> quantity_from_name(std::string_view name);

// The canonical (internal) unit of a quantity.
[[nodiscard]] const unit& canonical_unit(quantity q);

// The default display/register unit of a quantity in a unit system.
[[nodiscard]] const unit& default_display_unit(quantity q, unit_system system);

// Looks a unit up by symbol or accepted alias ("m³/d", "°F", "gal/min"). Case-sensitive:
// "MG" (million gallons) and "mg" (milligram) differ.
[[nodiscard]] const unit* find_unit(std::string_view symbol);

// Every unit of one quantity, canonical first.
[[nodiscard]] std::span<const unit* const> units_of(quantity q);

// A short list of symbols for error messages: "m3/d, m3/h, L/s, gpm, MGD, ...".
[[nodiscard]] std::string symbols_of(quantity q);

[[nodiscard]] constexpr double to_canonical(double value, const unit& u) {
    return value * u.factor + u.offset;
}
[[nodiscard]] constexpr double from_canonical(double value, const unit& u) {
    return (value - u.offset) / u.factor;
}
// Converts between two units of the same quantity.
[[nodiscard]] constexpr double convert(double value, const unit& from, const unit& to) {
    return from_canonical(to_canonical(value, from), to);
}

// A number with its unit, read from text such as "12.5 mg/L", "0.35 MG" or "-4 degC".
struct quantity_value {
    double value;       // in `as_written`
    const unit* as_written;
    [[nodiscard]] double canonical() const { return to_canonical(value, *as_written); }
};

// Parses "<number> <unit>". On failure returns a message saying what is wrong.
[[nodiscard]] std::variant<quantity_value, std::string> parse_quantity(std::string_view text);

// Formats a canonical value in `u` with `digits` significant digits, e.g. "1.25 MGD".
[[nodiscard]] std::string format(double canonical_value, const unit& u, int digits = 4);

} // namespace floc::units
