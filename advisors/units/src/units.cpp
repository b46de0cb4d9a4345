#include "floc/units.hpp"

#include <array>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <vector>

namespace floc::units {
namespace {

// Exact definitions, NIST Special Publication 811 (2008), Appendix B (B.6 and B.8):
// the international foot and inch, the avoirdupois pound, the US gallon (231 cubic inches).
constexpr double metre_per_foot = 0.3048;
constexpr double metre_per_inch = 0.0254;
constexpr double kg_per_pound = 0.45359237;
constexpr double m3_per_gallon = 231.0 * metre_per_inch * metre_per_inch * metre_per_inch;
constexpr double m2_per_square_foot = metre_per_foot * metre_per_foot;
constexpr double m3_per_cubic_foot = m2_per_square_foot * metre_per_foot;
// Standard acceleration of gravity (exact) for the pound-force; horsepower = 550 ft lbf/s.
constexpr double newton_per_pound_force = kg_per_pound * 9.80665;
constexpr double watt_per_horsepower = 550.0 * metre_per_foot * newton_per_pound_force;

constexpr double minutes_per_day = 1440.0;
constexpr double hours_per_day = 24.0;
constexpr double seconds_per_day = 86400.0;

using q = quantity;

// The table. The first unit of each quantity is its canonical unit. Aliases are separate rows
// pointing at the same factor; `symbol` of an alias row is the alias, `name` tells what it is.
constexpr std::array unit_table{
    // dimensionless
    unit{"1", q::dimensionless, 1.0, 0.0, "dimensionless"},
    unit{"%", q::dimensionless, 0.01, 0.0, "percent"},
    // flow, canonical m3/d
    unit{"m3/d", q::flow, 1.0, 0.0, "cubic metre per day"},
    unit{"m3/h", q::flow, hours_per_day, 0.0, "cubic metre per hour"},
    unit{"m3/s", q::flow, seconds_per_day, 0.0, "cubic metre per second"},
    unit{"L/s", q::flow, seconds_per_day / 1000.0, 0.0, "litre per second"},
    unit{"ML/d", q::flow, 1000.0, 0.0, "megalitre per day"},
    unit{"gpm", q::flow, m3_per_gallon * minutes_per_day, 0.0, "US gallon per minute"},
    unit{"gpd", q::flow, m3_per_gallon, 0.0, "US gallon per day"},
    unit{"MGD", q::flow, m3_per_gallon * 1.0e6, 0.0, "million US gallons per day"},
    unit{"cfs", q::flow, m3_per_cubic_foot * seconds_per_day, 0.0, "cubic foot per second"},
    // concentration, canonical g/m3 (numerically mg/L)
    unit{"mg/L", q::concentration, 1.0, 0.0, "milligram per litre"},
    unit{"g/m3", q::concentration, 1.0, 0.0, "gram per cubic metre"},
    unit{"g/L", q::concentration, 1000.0, 0.0, "gram per litre"},
    unit{"kg/m3", q::concentration, 1000.0, 0.0, "kilogram per cubic metre"},
    // length, canonical m
    unit{"m", q::length, 1.0, 0.0, "metre"},
    unit{"cm", q::length, 0.01, 0.0, "centimetre"},
    unit{"mm", q::length, 0.001, 0.0, "millimetre"},
    unit{"ft", q::length, metre_per_foot, 0.0, "foot"},
    unit{"in", q::length, metre_per_inch, 0.0, "inch"},
    // area, canonical m2
    unit{"m2", q::area, 1.0, 0.0, "square metre"},
    unit{"ft2", q::area, m2_per_square_foot, 0.0, "square foot"},
    // volume, canonical m3
    unit{"m3", q::volume, 1.0, 0.0, "cubic metre"},
    unit{"L", q::volume, 0.001, 0.0, "litre"},
    unit{"ML", q::volume, 1000.0, 0.0, "megalitre"},
    unit{"gal", q::volume, m3_per_gallon, 0.0, "US gallon"},
    unit{"MG", q::volume, m3_per_gallon * 1.0e6, 0.0, "million US gallons"},
    unit{"ft3", q::volume, m3_per_cubic_foot, 0.0, "cubic foot"},
    // mass, canonical kg
    unit{"kg", q::mass, 1.0, 0.0, "kilogram"},
    unit{"g", q::mass, 0.001, 0.0, "gram"},
    unit{"t", q::mass, 1000.0, 0.0, "tonne"},
    unit{"lb", q::mass, kg_per_pound, 0.0, "pound (avoirdupois)"},
    // mass rate, canonical kg/d
    unit{"kg/d", q::mass_rate, 1.0, 0.0, "kilogram per day"},
    unit{"kg/h", q::mass_rate, hours_per_day, 0.0, "kilogram per hour"},
    unit{"t/d", q::mass_rate, 1000.0, 0.0, "tonne per day"},
    unit{"lb/d", q::mass_rate, kg_per_pound, 0.0, "pound per day"},
    // temperature, canonical degC
    unit{"degC", q::temperature, 1.0, 0.0, "degree Celsius"},
    unit{"K", q::temperature, 1.0, -273.15, "kelvin"},
    unit{"degF", q::temperature, 1.0 / 1.8, -32.0 / 1.8, "degree Fahrenheit"},
    // duration, canonical s
    unit{"s", q::duration, 1.0, 0.0, "second"},
    unit{"ms", q::duration, 0.001, 0.0, "millisecond"},
    unit{"min", q::duration, 60.0, 0.0, "minute"},
    unit{"h", q::duration, 3600.0, 0.0, "hour"},
    unit{"d", q::duration, seconds_per_day, 0.0, "day"},
    // velocity, canonical m/d (an overflow rate in m3/(m2 d) is the same thing)
    unit{"m/d", q::velocity, 1.0, 0.0, "metre per day"},
    unit{"m/h", q::velocity, hours_per_day, 0.0, "metre per hour"},
    unit{"m3/m2/d", q::velocity, 1.0, 0.0, "cubic metre per square metre per day"},
    unit{"ft/h", q::velocity, metre_per_foot * hours_per_day, 0.0, "foot per hour"},
    unit{"gpd/ft2", q::velocity, m3_per_gallon / m2_per_square_foot, 0.0,
         "US gallon per day per square foot"},
    // solids flux, canonical kg/(m2 d)
    unit{"kg/m2/d", q::solids_flux, 1.0, 0.0, "kilogram per square metre per day"},
    unit{"kg/m2/h", q::solids_flux, hours_per_day, 0.0, "kilogram per square metre per hour"},
    unit{"lb/ft2/d", q::solids_flux, kg_per_pound / m2_per_square_foot, 0.0,
         "pound per square foot per day"},
    // settled sludge volume after 30 min (SV30)
    unit{"mL/L", q::settled_volume, 1.0, 0.0, "millilitre per litre"},
    // sludge volume index
    unit{"mL/g", q::sludge_volume_index, 1.0, 0.0, "millilitre per gram"},
    // specific rate, canonical 1/d
    unit{"1/d", q::rate, 1.0, 0.0, "per day"},
    unit{"1/h", q::rate, hours_per_day, 0.0, "per hour"},
    unit{"1/min", q::rate, minutes_per_day, 0.0, "per minute"},
    unit{"1/s", q::rate, seconds_per_day, 0.0, "per second"},
    // power, canonical kW
    unit{"kW", q::power, 1.0, 0.0, "kilowatt"},
    unit{"W", q::power, 0.001, 0.0, "watt"},
    unit{"hp", q::power, watt_per_horsepower / 1000.0, 0.0, "horsepower (550 ft lbf/s)"},
    // on/off state
    unit{"on/off", q::state, 1.0, 0.0, "state"},
};

// Other accepted spellings.
struct alias {
    std::string_view spelling;
    std::string_view symbol;
};
constexpr std::array aliases{
    alias{"m³/d", "m3/d"},   alias{"m³/h", "m3/h"},       alias{"m³/s", "m3/s"},
    alias{"l/s", "L/s"},     alias{"gal/min", "gpm"},     alias{"gal/d", "gpd"},
    alias{"mgd", "MGD"},     alias{"ft3/s", "cfs"},       alias{"mg/l", "mg/L"},
    alias{"g/m³", "g/m3"},   alias{"g/l", "g/L"},         alias{"kg/m³", "kg/m3"},
    alias{"m²", "m2"},       alias{"ft²", "ft2"},         alias{"sq ft", "ft2"},
    alias{"m³", "m3"},       alias{"l", "L"},             alias{"ft³", "ft3"},
    alias{"°C", "degC"},     alias{"°F", "degF"},         alias{"kg/(m2 d)", "kg/m2/d"},
    alias{"mL/l", "mL/L"},   alias{"ml/L", "mL/L"},       alias{"ml/l", "mL/L"},
    alias{"ml/g", "mL/g"},   alias{"m3/(m2 d)", "m3/m2/d"}, alias{"lb/(ft2 d)", "lb/ft2/d"},
    alias{"sec", "s"},       alias{"hr", "h"},            alias{"day", "d"},
    alias{"days", "d"},      alias{"d-1", "1/d"},         alias{"h-1", "1/h"},
};

constexpr std::array<std::string_view, quantity_count> quantity_names{
    "dimensionless", "flow",   "concentration", "length",         "area",
    "volume",        "mass",   "mass_rate",     "temperature",    "duration",
    "velocity",      "solids_flux", "settled_volume", "sludge_volume_index", "rate",
    "power",         "state",
};

struct display_pair {
    std::string_view si;
    std::string_view us;
};
// Default display/register units per quantity; config can override per quantity.
constexpr std::array<display_pair, quantity_count> display_units{{
    {"1", "1"},         {"m3/h", "gpm"},    {"mg/L", "mg/L"},       {"m", "ft"},
    {"m2", "ft2"},      {"m3", "MG"},       {"kg", "lb"},           {"kg/d", "lb/d"},
    {"degC", "degF"},   {"s", "s"},         {"m/h", "ft/h"},        {"kg/m2/d", "lb/ft2/d"},
    {"mL/L", "mL/L"},   {"mL/g", "mL/g"},   {"1/d", "1/d"},         {"kW", "kW"},
    {"on/off", "on/off"},
}};

const unit* find_symbol(std::string_view symbol) {
    for (const unit& u : unit_table) {
        if (u.symbol == symbol) {
            return &u;
        }
    }
    return nullptr;
}

struct per_quantity_index {
    std::array<std::vector<const unit*>, quantity_count> lists;
    per_quantity_index() {
        for (const unit& u : unit_table) {
            lists.at(static_cast<std::size_t>(u.kind)).push_back(&u);
        }
    }
};

const per_quantity_index& index() {
    static const per_quantity_index idx;
    return idx;
}

std::string_view trim(std::string_view s) {
    while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) {
        s.remove_prefix(1);
    }
    while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) {
        s.remove_suffix(1);
    }
    return s;
}

} // namespace

std::string_view quantity_name(quantity kind) {
    return quantity_names.at(static_cast<std::size_t>(kind));
}

std::optional<quantity> quantity_from_name(std::string_view name) {
    for (std::size_t i = 0; i < quantity_names.size(); ++i) {
        if (quantity_names.at(i) == name) {
            return static_cast<quantity>(i);
        }
    }
    return std::nullopt;
}

const unit& canonical_unit(quantity kind) {
    return *index().lists.at(static_cast<std::size_t>(kind)).front();
}

const unit& default_display_unit(quantity kind, unit_system system) {
    const display_pair& pair = display_units.at(static_cast<std::size_t>(kind));
    return *find_symbol(system == unit_system::si ? pair.si : pair.us);
}

const unit* find_unit(std::string_view symbol) {
    if (const unit* u = find_symbol(symbol)) {
        return u;
    }
    for (const alias& a : aliases) {
        if (a.spelling == symbol) {
            return find_symbol(a.symbol);
        }
    }
    return nullptr;
}

std::span<const unit* const> units_of(quantity kind) {
    const auto& list = index().lists.at(static_cast<std::size_t>(kind));
    return {list.data(), list.size()};
}

std::string symbols_of(quantity kind) {
    std::string out;
    for (const unit* u : units_of(kind)) {
        if (!out.empty()) {
            out += ", ";
        }
        out += u->symbol;
    }
    return out;
}

std::variant<quantity_value, std::string> parse_quantity(std::string_view text) {
    const std::string_view trimmed = trim(text);
    if (trimmed.empty()) {
        return std::string{"an empty text; expected a number and a unit, like \"3.5 mg/L\""};
    }
    const char* first = trimmed.data();
    const char* last = trimmed.data() + trimmed.size();
    if (*first == '+') {
        ++first;  // from_chars does not take a leading '+'
    }
    double value = 0.0;
    const auto [end, ec] = std::from_chars(first, last, value);
    if (ec != std::errc{} || end == first) {
        return "\"" + std::string{trimmed} + "\" does not start with a number";
    }
    if (!std::isfinite(value)) {
        return "\"" + std::string{trimmed} + "\" is not a finite number";
    }
    const std::string_view symbol = trim(std::string_view{end, static_cast<std::size_t>(last - end)});
    if (symbol.empty()) {
        return "\"" + std::string{trimmed} + "\" has no unit; write it with its unit, like \"" +
               std::string{trimmed} + " mg/L\"";
    }
    const unit* u = find_unit(symbol);
    if (u == nullptr) {
        return "unknown unit \"" + std::string{symbol} + "\"";
    }
    return quantity_value{value, u};
}

std::string format(double canonical_value, const unit& u, int digits) {
    std::array<char, 64> buf{};
    const int n = std::snprintf(buf.data(), buf.size(), "%.*g", digits, from_canonical(canonical_value, u));
    std::string out{buf.data(), n > 0 ? static_cast<std::size_t>(n) : 0U};
    if (u.kind != quantity::dimensionless || u.symbol != "1") {
        out += ' ';
        out += u.symbol;
    }
    return out;
}

} // namespace floc::units
