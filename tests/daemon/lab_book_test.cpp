// Lab entries: range checks, acknowledgements, sample times, persistence.
#include "floc/config/load.hpp"
#include "floc/plc/decode.hpp"
#include "lab_book.hpp"

#include <gtest/gtest.h>

#include <bit>
#include <cmath>

namespace {

using namespace floc;
using registers::lab_status;

config::plant_config load() {
    auto r = config::load_file(std::string{FLOC_SOURCE_DIR} + "/config/examples/marrowby-si.toml");
    if (!r.ok()) {
        throw std::runtime_error("example does not load");
    }
    return std::move(*r.config);
}

registers::lab_write value_write(std::size_t entry, double v) {
    registers::lab_write w;
    w.entry = entry;
    w.value = v;
    return w;
}

constexpr std::uint32_t hmi = 0x7F000001U;

TEST(LabBook, AcceptsInRangeAndRefusesTheRest) {
    const auto cfg = load();
    app::lab_book book{cfg};
    ASSERT_EQ(cfg.lab[0].name, "a_mlss");  // range 300..12000 mg/L
    EXPECT_EQ(book.apply(value_write(0, 3200.0), hmi, true, 1000.0), lab_status::accepted);
    EXPECT_EQ(book.apply(value_write(0, 20000.0), hmi, true, 1100.0), lab_status::out_of_range);
    EXPECT_EQ(book.apply(value_write(0, std::nan("")), hmi, true, 1200.0), lab_status::not_a_number);
    EXPECT_EQ(book.apply(value_write(0, 3300.0), hmi, false, 1300.0), lab_status::not_allowed);
    // the accepted value stays
    ASSERT_TRUE(book.current(0).has_value());
    EXPECT_DOUBLE_EQ(book.current(0)->value, 3200.0);
    EXPECT_EQ(book.info(0, 1300.0).entries, 1);
    EXPECT_EQ(book.info(0, 1300.0).status, lab_status::not_allowed);
}

TEST(LabBook, SampleTimeComesFromMinutesAgo) {
    const auto cfg = load();
    app::lab_book book{cfg};
    registers::lab_write ago;
    ago.entry = 0;
    ago.kind = registers::lab_write::what::minutes_ago;
    ago.minutes_ago = 90;
    book.apply(ago, hmi, true, 10000.0);
    EXPECT_EQ(book.info(0, 10000.0).pending_minutes_ago, 90);
    book.apply(value_write(0, 2800.0), hmi, true, 10000.0);
    EXPECT_DOUBLE_EQ(book.current(0)->sample_time_s, 10000.0 - 90 * 60.0);
    EXPECT_EQ(book.info(0, 10000.0).pending_minutes_ago, 0);  // used once
    EXPECT_NEAR(book.info(0, 10000.0).sample_age_s, 5400.0, 1e-9);
}

TEST(LabBook, OldSamplesAreNotFresh) {
    const auto cfg = load();
    app::lab_book book{cfg};
    book.apply(value_write(0, 2800.0), hmi, true, 0.0);
    EXPECT_TRUE(book.fresh(0, 36 * 3600.0).has_value());          // max_age 36 h
    EXPECT_FALSE(book.fresh(0, 36 * 3600.0 + 1.0).has_value());
}

TEST(LabBook, SurvivesSaveAndLoad) {
    const auto cfg = load();
    app::lab_book book{cfg};
    book.apply(value_write(0, 3100.0), hmi, true, 500.0);
    book.apply(value_write(4, 250.0), 0x0A000005U, true, 600.0);  // a_sv30, mL/L
    store::state_document doc;
    book.save(doc);
    const auto text = store::to_text(doc);
    const auto parsed = store::parse_state(text, "state");
    ASSERT_TRUE(std::holds_alternative<store::state_document>(parsed));
    app::lab_book again{cfg};
    again.load(std::get<store::state_document>(parsed));
    ASSERT_TRUE(again.current(0).has_value());
    EXPECT_DOUBLE_EQ(again.current(0)->value, 3100.0);
    EXPECT_DOUBLE_EQ(again.current(0)->sample_time_s, 500.0);
    ASSERT_TRUE(again.current(4).has_value());
    EXPECT_EQ(again.current(4)->entered_by, 0x0A000005U);
    EXPECT_FALSE(again.current(1).has_value());
    EXPECT_EQ(again.info(0, 500.0).entries, 1);
}

} // namespace
