// Lab entries: range checks, acknowledgements, sample times, persistence; the probe checks of
// the check entries: one round for the service and the replay, carried over a reload by tag name
// and their verdicts across a restart.
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

// --- probe checks ------------------------------------------------------------------------------

struct probe_bench {
    explicit probe_bench(const config::plant_config& c)
        : cfg(c), states(c.tags.size()), signals(c.tags.size()) {
        const config::tag* t = cfg.find_tag("a_anoxic_no3");
        tag = static_cast<std::size_t>(t - cfg.tags.data());
        entry = static_cast<std::size_t>(cfg.find_lab("a_anoxic_no3_check") - cfg.lab.data());
    }
    // A poll of a_anoxic_no3 at `t` (conditioning's clock = plant time here), then a round.
    std::vector<app::probe_check_event> poll(app::probe_checks& checks, const app::lab_book& book, double t,
                                             double no3) {
        states[tag] = conditioning::update(cfg.tags[tag], states[tag], conditioning::sample{t, true, no3});
        return checks.run(book, states, t, t, signals);
    }
    // Ten minutes of the probe at 6 mg/L, then a grab sample of 4.5 mg/L from 600 s: disagrees.
    void disagree(app::probe_checks& checks, app::lab_book& book) {
        for (double t = 0.0; t <= 600.0; t += 60.0) {
            (void)poll(checks, book, t, 6.0);
        }
        book.apply(value_write(entry, 4.5), hmi, true, 600.0);
        (void)poll(checks, book, 660.0, 6.0);
    }
    const config::plant_config& cfg;
    std::vector<conditioning::state> states;
    std::vector<conditioning::signal> signals;
    std::size_t tag = 0;
    std::size_t entry = 0;
};

TEST(ProbeChecks, AGrabSampleOffByMoreThanTheToleranceMarksTheProbeBad) {
    const auto cfg = load();
    app::lab_book book{cfg};
    app::probe_checks checks{cfg};
    probe_bench b{cfg};
    for (double t = 0.0; t <= 600.0; t += 60.0) {
        EXPECT_TRUE(b.poll(checks, book, t, 6.0).empty());
        EXPECT_EQ(b.signals[b.tag].q, conditioning::quality::good);
    }
    // A sample of 4.5 mg/L taken at 600 s: 1.5 mg/L below the probe, tolerance 1 mg/L.
    book.apply(value_write(b.entry, 4.5), hmi, true, 600.0);
    const auto judged = b.poll(checks, book, 660.0, 6.0);
    ASSERT_EQ(judged.size(), 1U);
    EXPECT_EQ(judged[0].entry, b.entry);
    EXPECT_EQ(judged[0].tag, b.tag);
    EXPECT_EQ(judged[0].verdict.outcome, conditioning::check_outcome::disagrees);
    EXPECT_DOUBLE_EQ(judged[0].verdict.difference, 1.5);
    EXPECT_EQ(b.signals[b.tag].why, conditioning::reason::check_disagrees);
    // The other tags are left alone.
    EXPECT_EQ(b.signals[0].why, conditioning::reason::no_data);
}

TEST(ProbeChecks, AReloadKeepsHistoryAndVerdictByTagName) {
    const auto cfg = load();
    app::lab_book book{cfg};
    app::probe_checks checks{cfg};
    probe_bench b{cfg};
    b.disagree(checks, book);
    // A new config that renames the entry and widens its tolerance to 2 mg/L: judged again on
    // the adopted history, the same reading now agrees.
    auto wider = cfg;
    auto& e = wider.lab.at(b.entry);
    e.name = "a_anoxic_no3_grab";
    e.check->tolerance = 2.0;
    app::probe_checks reloaded{wider};
    reloaded.adopt(checks);
    const auto* s = reloaded.state_of_tag(b.tag);
    ASSERT_NE(s, nullptr);
    EXPECT_EQ(s->history.size(), checks.state_of_tag(b.tag)->history.size());
    ASSERT_TRUE(s->verdict.has_value());
    EXPECT_EQ(s->verdict->outcome, conditioning::check_outcome::agrees);
    EXPECT_DOUBLE_EQ(s->verdict->tolerance, 2.0);
    // The same config adopts the disagreement as it is.
    app::probe_checks same{cfg};
    same.adopt(checks);
    EXPECT_EQ(same.state_of_tag(b.tag)->verdict->outcome, conditioning::check_outcome::disagrees);
}

TEST(ProbeChecks, ADisagreementSurvivesARestartThroughTheStateFile) {
    const auto cfg = load();
    app::lab_book book{cfg};
    app::probe_checks checks{cfg};
    probe_bench b{cfg};
    b.disagree(checks, book);
    store::state_document doc;
    book.save(doc);
    checks.save(doc);
    const auto parsed = store::parse_state(store::to_text(doc), "state");
    ASSERT_TRUE(std::holds_alternative<store::state_document>(parsed));
    // After the restart the history is empty, but the saved verdict belongs to the saved check.
    app::lab_book book2{cfg};
    app::probe_checks checks2{cfg};
    book2.load(std::get<store::state_document>(parsed));
    checks2.load(std::get<store::state_document>(parsed));
    probe_bench b2{cfg};
    EXPECT_TRUE(b2.poll(checks2, book2, 720.0, 6.0).empty());  // not judged again
    EXPECT_EQ(b2.signals[b2.tag].why, conditioning::reason::check_disagrees);
    // A new check that agrees clears it.
    book2.apply(value_write(b2.entry, 5.5), hmi, true, 720.0);
    const auto judged = b2.poll(checks2, book2, 780.0, 6.0);
    ASSERT_EQ(judged.size(), 1U);
    EXPECT_EQ(judged[0].verdict.outcome, conditioning::check_outcome::agrees);
    EXPECT_EQ(b2.signals[b2.tag].q, conditioning::quality::good);
}

} // namespace
