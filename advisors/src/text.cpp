#include "floc/advisors/text.hpp"

#include <array>
#include <cmath>
#include <cstdio>

namespace floc::advisors {

const units::unit& text_unit(units::quantity q, units::unit_system system) {
    return units::default_display_unit(q, system);
}

std::string text_number(double x, int digits) {
    std::array<char, 48> buf{};
    const double v = x == 0.0 ? 0.0 : x; // no "-0"
    // Whole numbers up to a billion print in full ("3000", not "3e+03").
    const bool full = std::abs(v) >= std::pow(10.0, digits) && std::abs(v) < 1e9;
    const int n = full ? std::snprintf(buf.data(), buf.size(), "%.0f", v)
                       : std::snprintf(buf.data(), buf.size(), "%.*g", digits, v);
    return {buf.data(), n > 0 ? static_cast<std::size_t>(n) : 0U};
}

std::string text(double canonical, units::quantity q, units::unit_system system, int digits) {
    const units::unit& u = text_unit(q, system);
    std::string out = text_number(units::from_canonical(canonical, u), digits);
    if (u.kind != units::quantity::dimensionless || u.symbol != "1") {
        out += ' ';
        out += u.symbol;
    }
    return out;
}

std::string text_difference(double canonical, units::quantity q, units::unit_system system,
                            int digits) {
    const units::unit& u = text_unit(q, system);
    std::string out = text_number(canonical / u.factor, digits);
    if (u.kind != units::quantity::dimensionless || u.symbol != "1") {
        out += ' ';
        out += u.symbol;
    }
    return out;
}

std::string text_duration(double seconds) {
    const double s = std::abs(seconds);
    if (s < 90.0) {
        return text_number(seconds, 2) + " s";
    }
    if (s < 90.0 * 60.0) {
        return text_number(std::round(seconds / 60.0), 3) + " min";
    }
    if (s < 48.0 * 3600.0) {
        return text_number(seconds / 3600.0, 2) + " h";
    }
    return text_number(seconds / 86400.0, 3) + " d";
}

} // namespace floc::advisors

namespace floc::advisors {

std::string text_daily_flow(double m3_per_d, units::unit_system system, int digits) {
    const units::unit& u = *units::find_unit(system == units::unit_system::si ? "m3/d" : "gpd");
    return text_number(units::from_canonical(m3_per_d, u), digits) + " " + std::string{u.symbol};
}

} // namespace floc::advisors
