// Unit conversions, checked against published factors.
//
// Source of the reference factors: NIST Special Publication 811 (2008 edition), "Guide for the
// Use of the International System of Units (SI)", Appendix B.8 "Factors for units listed
// alphabetically". The digits used here were read from the transcription of that table in the
// CRAN package NISTunits (file R/NISTfactors.R); NIST prints factors to 7 significant digits, so
// each check allows a relative difference of 1e-6.
#include "floc/units.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <variant>

namespace {

using floc::units::find_unit;
using floc::units::quantity;
using floc::units::to_canonical;
using floc::units::unit;

constexpr double nist_rel = 1e-6;

const unit& u(std::string_view symbol) {
    const unit* p = find_unit(symbol);
    if (p == nullptr) {
        throw std::runtime_error("no unit " + std::string{symbol});
    }
    return *p;
}

void expect_rel(double actual, double expected, double rel) {
    EXPECT_NEAR(actual, expected, std::abs(expected) * rel) << "actual " << actual;
}

// --- NIST SP 811 (2008) Appendix B.8 ---------------------------------------------------------

TEST(NistSp811AppendixB8, GallonToCubicMetre) {
    // "gallon [U.S.] (gal) to cubic meter (m3): 3.785 412 E-03"
    expect_rel(to_canonical(1.0, u("gal")), 3.785412e-03, nist_rel);
}

TEST(NistSp811AppendixB8, GallonPerMinuteToCubicMetrePerSecond) {
    // "gallon [U.S.] per minute (gpm) to cubic meter per second: 6.309 020 E-05"
    // floc's canonical flow unit is m3/d, so divide by 86 400 s/d.
    expect_rel(to_canonical(1.0, u("gpm")) / 86400.0, 6.309020e-05, nist_rel);
}

TEST(NistSp811AppendixB8, GallonPerDayToCubicMetrePerSecond) {
    // "gallon [U.S.] per day (gal/d) to cubic meter per second: 4.381 264 E-08"
    expect_rel(to_canonical(1.0, u("gpd")) / 86400.0, 4.381264e-08, nist_rel);
}

TEST(NistSp811AppendixB8, MillionGallonsPerDay) {
    // Not a NIST row: 1 MGD = 10^6 US gallons per day, so 10^6 times the gal/d factor above.
    expect_rel(to_canonical(1.0, u("MGD")) / 86400.0, 1.0e6 * 4.381264e-08, nist_rel);
    expect_rel(to_canonical(1.0, u("MG")), 1.0e6 * 3.785412e-03, nist_rel);
}

TEST(NistSp811AppendixB8, FootAndInchToMetre) {
    // "foot (ft) to meter: 3.048 E-01" and "inch (in) to meter: 2.54 E-02" (both exact)
    EXPECT_DOUBLE_EQ(to_canonical(1.0, u("ft")), 0.3048);
    EXPECT_DOUBLE_EQ(to_canonical(1.0, u("in")), 0.0254);
}

TEST(NistSp811AppendixB8, SquareAndCubicFoot) {
    // "square foot (ft2) to square meter: 9.290 304 E-02"; "cubic foot (ft3) to cubic meter:
    // 2.831 685 E-02"
    expect_rel(to_canonical(1.0, u("ft2")), 9.290304e-02, nist_rel);
    expect_rel(to_canonical(1.0, u("ft3")), 2.831685e-02, nist_rel);
}

TEST(NistSp811AppendixB8, PoundToKilogram) {
    // "pound (avoirdupois) (lb) to kilogram: 4.535 924 E-01"
    expect_rel(to_canonical(1.0, u("lb")), 4.535924e-01, nist_rel);
    // mass rate: lb/d -> kg/d uses the same factor
    expect_rel(to_canonical(1.0, u("lb/d")), 4.535924e-01, nist_rel);
}

TEST(NistSp811AppendixB8, PoundPerSquareFootToKilogramPerSquareMetre) {
    // "pound per square foot (lb/ft2) to kilogram per square meter: 4.882 428 E+00";
    // floc's solids flux lb/(ft2 d) -> kg/(m2 d) has the same factor.
    expect_rel(to_canonical(1.0, u("lb/ft2/d")), 4.882428, nist_rel);
}

TEST(NistSp811AppendixB8, FootPerHourToMetrePerSecond) {
    // "foot per hour (ft/h) to meter per second: 8.466 667 E-05"; canonical velocity is m/d.
    expect_rel(to_canonical(1.0, u("ft/h")) / 86400.0, 8.466667e-05, nist_rel);
}

TEST(NistSp811AppendixB8, HorsepowerToWatt) {
    // "horsepower (550 ft lbf/s) (hp) to watt: 7.456 999 E+02"; canonical power is kW.
    expect_rel(to_canonical(1.0, u("hp")) * 1000.0, 7.456999e+02, nist_rel);
}

TEST(NistSp811AppendixB8, LitreAndMetricTon) {
    // "liter (L) to cubic meter: 1.0 E-03"; "ton, metric (t) to kilogram: 1.0 E+03"
    EXPECT_DOUBLE_EQ(to_canonical(1.0, u("L")), 1.0e-3);
    EXPECT_DOUBLE_EQ(to_canonical(1.0, u("t")), 1.0e3);
}

TEST(NistSp811AppendixB8, DegreeFahrenheitToCelsius) {
    // "degree Fahrenheit (°F) to degree Celsius (°C): t/°C = (t/°F - 32)/1.8"
    for (const double f : {-40.0, 32.0, 59.0, 68.0, 98.6, 212.0}) {
        EXPECT_NEAR(to_canonical(f, u("degF")), (f - 32.0) / 1.8, 1e-12) << f << " degF";
    }
    EXPECT_NEAR(to_canonical(-40.0, u("degF")), -40.0, 1e-12);
    EXPECT_NEAR(to_canonical(273.15, u("K")), 0.0, 1e-12);
}

// --- The table itself --------------------------------------------------------------------------

TEST(UnitTable, EveryQuantityHasACanonicalUnitWithFactorOne) {
    for (std::size_t i = 0; i < floc::units::quantity_count; ++i) {
        const auto q = static_cast<quantity>(i);
        const unit& c = floc::units::canonical_unit(q);
        EXPECT_EQ(c.kind, q) << floc::units::quantity_name(q);
        EXPECT_EQ(c.factor, 1.0) << c.symbol;
        EXPECT_EQ(c.offset, 0.0) << c.symbol;
        EXPECT_EQ(floc::units::quantity_from_name(floc::units::quantity_name(q)), q);
    }
}

TEST(UnitTable, DisplayUnitsMeasureTheirQuantity) {
    for (std::size_t i = 0; i < floc::units::quantity_count; ++i) {
        const auto q = static_cast<quantity>(i);
        EXPECT_EQ(floc::units::default_display_unit(q, floc::units::unit_system::si).kind, q);
        EXPECT_EQ(floc::units::default_display_unit(q, floc::units::unit_system::us_customary).kind, q);
    }
    EXPECT_EQ(floc::units::default_display_unit(quantity::flow, floc::units::unit_system::us_customary).symbol, "gpm");
    EXPECT_EQ(floc::units::default_display_unit(quantity::temperature, floc::units::unit_system::us_customary).symbol, "degF");
}

TEST(UnitTable, ConversionsRoundTrip) {
    for (std::size_t i = 0; i < floc::units::quantity_count; ++i) {
        for (const unit* each : floc::units::units_of(static_cast<quantity>(i))) {
            for (const double v : {-12.5, 0.0, 1.0, 3.7e4}) {
                const double back = floc::units::from_canonical(to_canonical(v, *each), *each);
                EXPECT_NEAR(back, v, 1e-9 * std::max(1.0, std::abs(v))) << each->symbol;
            }
        }
    }
}

TEST(UnitTable, ConvertBetweenUnits) {
    // 1 m3/h = 24 m3/d; 1000 gpm in MGD = 1.44 (1440 min per day)
    EXPECT_NEAR(floc::units::convert(1.0, u("m3/h"), u("m3/d")), 24.0, 1e-12);
    EXPECT_NEAR(floc::units::convert(1000.0, u("gpm"), u("MGD")), 1.44, 1e-12);
    EXPECT_NEAR(floc::units::convert(15.0, u("degC"), u("degF")), 59.0, 1e-12);
}

TEST(UnitTable, AliasesAndCase) {
    EXPECT_EQ(&u("°F"), &u("degF"));
    EXPECT_EQ(&u("m³/d"), &u("m3/d"));
    EXPECT_EQ(&u("gal/min"), &u("gpm"));
    EXPECT_EQ(&u("mg/l"), &u("mg/L"));
    // MG (million gallons) is not mg; the table is case-sensitive.
    EXPECT_EQ(find_unit("mg"), nullptr);
    EXPECT_EQ(find_unit("furlong"), nullptr);
}

// --- Parsing ---------------------------------------------------------------------------------

TEST(ParseQuantity, NumberAndUnit) {
    const auto r = floc::units::parse_quantity("  3.5 mg/L ");
    ASSERT_TRUE(std::holds_alternative<floc::units::quantity_value>(r));
    const auto& v = std::get<floc::units::quantity_value>(r);
    EXPECT_DOUBLE_EQ(v.value, 3.5);
    EXPECT_EQ(v.as_written->symbol, "mg/L");

    const auto t = floc::units::parse_quantity("-4 degC");
    ASSERT_TRUE(std::holds_alternative<floc::units::quantity_value>(t));
    EXPECT_DOUBLE_EQ(std::get<floc::units::quantity_value>(t).canonical(), -4.0);

    const auto g = floc::units::parse_quantity("+2.5e-1 MG");
    ASSERT_TRUE(std::holds_alternative<floc::units::quantity_value>(g));
    expect_rel(std::get<floc::units::quantity_value>(g).canonical(), 0.25e6 * 3.785411784e-3, 1e-12);

    const auto tight = floc::units::parse_quantity("500ms");
    ASSERT_TRUE(std::holds_alternative<floc::units::quantity_value>(tight));
    EXPECT_DOUBLE_EQ(std::get<floc::units::quantity_value>(tight).canonical(), 0.5);
}

TEST(ParseQuantity, ErrorsSayWhatIsWrong) {
    const auto message = [](std::string_view text) {
        const auto r = floc::units::parse_quantity(text);
        return std::holds_alternative<std::string>(r) ? std::get<std::string>(r) : std::string{"(parsed)"};
    };
    EXPECT_NE(message("").find("empty"), std::string::npos);
    EXPECT_NE(message("abc").find("does not start with a number"), std::string::npos);
    EXPECT_NE(message("3").find("has no unit"), std::string::npos);
    EXPECT_NE(message("3 furlongs").find("unknown unit \"furlongs\""), std::string::npos);
    EXPECT_NE(message("nan mg/L").find("not a finite number"), std::string::npos);
    EXPECT_NE(message("inf m").find("not a finite number"), std::string::npos);
}

TEST(Format, SignificantDigitsAndSymbol) {
    EXPECT_EQ(floc::units::format(1000.0, u("m3")), "1000 m3");
    EXPECT_EQ(floc::units::format(3785.411784, u("MG"), 3), "1 MG");
    EXPECT_EQ(floc::units::format(15.0, u("degF")), "59 degF");
    EXPECT_EQ(floc::units::format(0.25, u("1")), "0.25");
}

} // namespace
