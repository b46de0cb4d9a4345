// The operator stand-in's lab round (floc/sim/lab_technician.hpp), in process and without sockets:
// the sheet against flocd's config, the sampling schedule, flow-proportional composites, what is
// written into flocd's lab slots (the register map of config/examples/marrowby-si.toml: the sample
// age at +3 and the float32 value at +0, function 16, then the slot read back with function 03),
// and what comes of each outcome. The lab block's layout and status codes are flocd's
// (daemon/registers/register-map.md).
#include "support.hpp"

#include "floc/config/load.hpp"
#include "floc/plc/decode.hpp"
#include "floc/registers/register_map.hpp"
#include "floc/sim/lab_technician.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <bit>
#include <cmath>
#include <limits>

namespace {

using namespace floc;
using namespace floc::sim;
namespace lo = registers::lab_offset;

config::plant_config example(const std::string& name) {
    auto r = config::load_file(std::string{FLOC_SOURCE_DIR} + "/config/examples/" + name);
    EXPECT_TRUE(r.ok());
    return std::move(*r.config);
}

// What flocd's status block shows: running at plant time `t_s`.
advisory_seen flocd_at(double t_s,
                       registers::daemon_state state = registers::daemon_state::running) {
    advisory_seen seen;
    seen.state = static_cast<std::uint16_t>(state);
    seen.plant_time_s = t_s;
    return seen;
}

// The slot flocd shows after an entry: status, entries, age.
job_outcome acknowledged(registers::lab_status status, std::uint16_t age_min) {
    job_outcome o;
    o.reached = true;
    o.exceptions = {0, 0};
    o.words.assign(config::lab_slot_registers, 0);
    o.words[lo::status] = static_cast<std::uint16_t>(status);
    o.words[lo::entries] = 1;
    o.words[lo::age_min] = age_min;
    return o;
}

const plant_output& marrowby_now() {
    static const plant_output out = [] {
        const scenario& s = test::marrowby();
        const plant_model model{s.plant, s.influent};
        return model.outputs(test::marrowby_steady_state().data(), 0.0, initial_controls(s.plant));
    }();
    return out;
}

struct round_fixture {
    config::plant_config cfg = example("marrowby-si.toml");
    registers::register_map map = registers::build(cfg);
};

TEST(LabRound, MarrowbysSheetFitsBothExampleConfigs) {
    const scenario& s = test::marrowby();
    for (const char* name : {"marrowby-si.toml", "marrowby-us.toml"}) {
        const config::plant_config cfg = example(name);
        EXPECT_TRUE(lab_sheet_problems(s.lab_sheet, cfg).empty()) << name;
        const registers::register_map map = registers::build(cfg);
        const lab_technician lab{s, map, cfg};
        EXPECT_TRUE(lab.not_on_sheet().empty()) << name;
    }
}

TEST(LabRound, ASheetThatDoesNotFitTheConfigIsReportedWithItsPlace) {
    scenario s = test::marrowby();
    s.lab_sheet.entries[0].name = "a_mlsss";
    s.lab_sheet.entries[4].figure = lab_figure::mlss; // a_sv30 is a settled volume
    round_fixture f;
    const std::vector<std::string> problems = lab_sheet_problems(s.lab_sheet, f.cfg);
    ASSERT_EQ(problems.size(), 2U);
    const lab_sheet_entry& first = s.lab_sheet.entries[0];
    EXPECT_EQ(
        problems[0].rfind(s.lab_sheet.source_file + ":" + std::to_string(first.at.line) + ":" +
                              std::to_string(first.at.column) +
                              ": lab_sheet.entry[0].name: found the lab entry \"a_mlsss\", not in ",
                          0),
        0U)
        << problems[0];
    EXPECT_NE(
        problems[0].find("expected the name of a lab entry of the flocd config (a_mlss, b_mlss,"),
        std::string::npos)
        << problems[0];
    EXPECT_NE(problems[1].find("lab_sheet.entry[4].name: found \"a_sv30\", a settled_volume entry"),
              std::string::npos)
        << problems[1];
    EXPECT_NE(problems[1].find("expected a lab entry of the quantity its source reports"),
              std::string::npos);
    // Such entries are left out of the round, and flocd's entries they meant are not typed in.
    const lab_technician lab{s, f.map, f.cfg};
    EXPECT_EQ(lab.not_on_sheet(), (std::vector<std::string>{"a_mlss", "a_sv30"}));
}

TEST(LabRound, TheStartSheetIsTypedInAtOnceWithTheSampleAgeFirst) {
    round_fixture f;
    const scenario& s = test::marrowby();
    lab_technician lab{s, f.map, f.cfg};
    EXPECT_EQ(lab.next_sample_s(), 0.0);
    // Nothing is due before the first sample.
    EXPECT_TRUE(lab.take_due(0.0, flocd_at(0.0)).empty());
    const plant_output& out = marrowby_now();
    lab.sample(0.0, out);
    // flocd at plant time 5 min: the sample is 5 minutes old.
    const std::vector<lab_typing> typed = lab.take_due(300.0, flocd_at(300.0));
    ASSERT_EQ(typed.size(), 8U);
    for (const lab_typing& t : typed) {
        const lab_sheet_entry& e = s.lab_sheet.entries[t.entry];
        std::size_t slot_index = 0;
        while (f.cfg.lab[slot_index].name != e.name) {
            ++slot_index;
        }
        const std::uint16_t slot = f.map.lab_base(slot_index);
        EXPECT_EQ(t.sampled_at_s, 0.0);
        EXPECT_EQ(t.minutes_ago, 5);
        EXPECT_EQ(t.attempt, 1U);
        EXPECT_DOUBLE_EQ(t.value, lab_value(s.plant, out, e.figure, e.train)) << e.name;
        ASSERT_EQ(t.job.writes.size(), 2U);
        EXPECT_EQ(t.job.writes[0].address, slot + lo::sample_minutes_ago);
        EXPECT_EQ(t.job.writes[0].values, std::vector<std::uint16_t>{5});
        EXPECT_EQ(t.job.writes[1].address, slot + lo::value);
        ASSERT_EQ(t.job.writes[1].values.size(), 2U);
        // The float32 in the config's display unit (mg/L, mL/L) and word order (abcd).
        const float typed_value = std::bit_cast<float>(plc::join_words(
            t.job.writes[1].values[0], t.job.writes[1].values[1], f.cfg.hmi.float_order));
        EXPECT_EQ(typed_value, static_cast<float>(t.value)) << e.name;
        EXPECT_EQ(t.job.read_back.function, 3);
        EXPECT_EQ(t.job.read_back.address, slot);
        EXPECT_EQ(t.job.read_back.count, config::lab_slot_registers);
    }
    // In flight until their outcomes come: not typed twice.
    EXPECT_TRUE(lab.take_due(301.0, flocd_at(301.0)).empty());
}

TEST(LabRound, TheMorningRoundIsDatedAtItsSamplingTime) {
    round_fixture f;
    const scenario& s = test::marrowby();
    lab_technician lab{s, f.map, f.cfg};
    const plant_output& out = marrowby_now();
    // The plant as the serving loop runs it: stopping at every sample and aliquot.
    std::size_t stops = 0;
    while (lab.next_sample_s() <= 8 * 3600.0 && stops < 1000) {
        lab.sample(lab.next_sample_s(), out);
        ++stops;
    }
    EXPECT_EQ(stops, 33U); // the start, aliquots at 0:15 ... 8:00 every 15 min
    for (lab_typing& t : lab.take_due(60.0, flocd_at(60.0))) {
        lab.record(t, acknowledged(registers::lab_status::accepted, 1), 60.0);
    }
    EXPECT_EQ(lab.next_sample_s(), 8 * 3600.0 + aliquot_interval_s);
    // Results of 08:00 are typed in at 10:00, minus the BOD5's (five days).
    EXPECT_TRUE(lab.take_due(10 * 3600.0 - 1.0, flocd_at(10 * 3600.0 - 1.0)).empty());
    const std::vector<lab_typing> typed = lab.take_due(10 * 3600.0, flocd_at(10 * 3600.0 - 30.0));
    ASSERT_EQ(typed.size(), 7U);
    for (const lab_typing& t : typed) {
        EXPECT_EQ(t.sampled_at_s, 8 * 3600.0);
        EXPECT_EQ(t.minutes_ago, 120); // 119.5 min on flocd's clock, rounded
        EXPECT_NE(s.lab_sheet.entries[t.entry].name, "influent_bod");
    }
}

TEST(LabRound, CompositesAreFlowProportional) {
    round_fixture f;
    scenario s = test::marrowby();
    lab_sheet_entry bod = s.lab_sheet.entries[7]; // influent BOD5, 24-h composite
    bod.sample_times_s = {0.0};                   // midnight
    bod.entry_delay_s = 0.0;
    s.lab_sheet.entries = {bod};
    s.lab_sheet.at_start = false;
    lab_technician lab{s, f.map, f.cfg};
    plant_output out;
    // An influent of BOD5 100 mg/L at 1000 m3/d for the first half day, 200 mg/L at 3000 m3/d
    // after: the flow-weighted mean of the day is (1000 x 100 + 3000 x 200) / 4000 = 175 mg/L.
    const auto influent = [&](double bod5, double flow) {
        out.influent.c = {};
        out.influent.c[asm1::s_s] = bod5 / influent_bod5_factor;
        out.influent.flow_m3_per_d = flow;
    };
    std::vector<double> typed;
    std::size_t stops = 0;
    while (lab.next_sample_s() <= 86400.0 && stops < 200) {
        const double t = lab.next_sample_s();
        if (t <= 43200.0) {
            influent(100.0, 1000.0);
        } else {
            influent(200.0, 3000.0);
        }
        lab.sample(t, out);
        for (lab_typing& x : lab.take_due(t, flocd_at(t))) {
            typed.push_back(x.value);
            lab.record(x, acknowledged(registers::lab_status::accepted, 0), t);
        }
        ++stops;
    }
    ASSERT_EQ(typed.size(), 2U);
    EXPECT_NEAR(typed[0], 100.0, 1e-9); // midnight of day 0: only the aliquot of 0:00
    EXPECT_NEAR(typed[1], 175.0, 1e-9); // 96 aliquots 0:15 ... 24:00
}

TEST(LabRound, OnlyTheNewestDueResultIsTyped) {
    round_fixture f;
    scenario s = test::marrowby();
    s.lab_sheet.entries.resize(1); // a_mlss
    s.lab_sheet.at_start = true;
    lab_technician lab{s, f.map, f.cfg};
    plant_output out = marrowby_now();
    lab.sample(0.0, out);
    out.trains[0].zones[2].tss_g_per_m3 = 3333.0;
    lab.sample(8 * 3600.0, out);
    // flocd is first seen running at 11:00: the start sheet is superseded by 08:00's.
    const std::vector<lab_typing> typed = lab.take_due(11 * 3600.0, flocd_at(11 * 3600.0));
    ASSERT_EQ(typed.size(), 1U);
    EXPECT_EQ(typed[0].value, 3333.0);
    EXPECT_EQ(typed[0].sampled_at_s, 8 * 3600.0);
    EXPECT_EQ(typed[0].minutes_ago, 180);
}

TEST(LabRound, NothingIsTypedWhileFlocdIsNotRunningOrBehindTheSample) {
    round_fixture f;
    scenario s = test::marrowby();
    s.lab_sheet.entries.resize(1);
    lab_technician lab{s, f.map, f.cfg};
    lab.sample(0.0, marrowby_now());
    EXPECT_TRUE(lab.take_due(10.0, flocd_at(10.0, registers::daemon_state::starting)).empty());
    EXPECT_TRUE(lab.take_due(10.0, flocd_at(10.0, registers::daemon_state::plc_down)).empty());
    advisory_seen other = flocd_at(10.0);
    other.error = "another layout";
    EXPECT_TRUE(lab.take_due(10.0, other).empty());
    // A degraded flocd (some input not good) takes lab entries.
    EXPECT_EQ(lab.take_due(10.0, flocd_at(10.0, registers::daemon_state::degraded)).size(), 1U);

    lab_technician later{s, f.map, f.cfg};
    plant_output out = marrowby_now();
    later.sample(0.0, out);
    for (lab_typing& t : later.take_due(0.0, flocd_at(0.0))) {
        later.record(t, acknowledged(registers::lab_status::accepted, 0), 0.0);
    }
    later.sample(8 * 3600.0, out);
    // Due at 10:00 on flocsim's clock, but flocd still shows 07:58: it waits.
    EXPECT_TRUE(later.take_due(10 * 3600.0, flocd_at(7 * 3600.0 + 58 * 60.0)).empty());
    EXPECT_EQ(later.take_due(10 * 3600.0, flocd_at(8 * 3600.0)).size(), 1U);
}

TEST(LabRound, OnAnotherClockTheAgeIsCountedInPlantTime) {
    round_fixture f;
    f.cfg.clock.source = config::clock_source::system;
    scenario s = test::marrowby();
    s.lab_sheet.entries.resize(1);
    lab_technician lab{s, f.map, f.cfg};
    lab.sample(0.0, marrowby_now());
    // flocd's own clock is the wall clock (seconds since 1970): the age is flocsim's 7 minutes.
    const std::vector<lab_typing> typed = lab.take_due(420.0, flocd_at(1.7e9));
    ASSERT_EQ(typed.size(), 1U);
    EXPECT_EQ(typed[0].minutes_ago, 7);
}

TEST(LabRound, WhatComesOfEachEntry) {
    round_fixture f;
    scenario s = test::marrowby();
    s.lab_sheet.entries.resize(3); // a_mlss, b_mlss, a_ras_tss
    lab_technician lab{s, f.map, f.cfg};
    lab.sample(0.0, marrowby_now());
    std::vector<lab_typing> typed = lab.take_due(120.0, flocd_at(120.0));
    ASSERT_EQ(typed.size(), 3U);

    // Accepted: the line says so, with the age flocd shows.
    const std::string ok =
        lab.record(typed[0], acknowledged(registers::lab_status::accepted, 2), 120.0);
    EXPECT_EQ(ok.rfind("lab entry a_mlss ", 0), 0U) << ok;
    EXPECT_NE(ok.find(" mg/L sampled day 0 00:00:00: accepted, 2 min old in flocd"),
              std::string::npos)
        << ok;

    // Out of range: reported and dropped, never typed again.
    const std::string range =
        lab.record(typed[1], acknowledged(registers::lab_status::out_of_range, 0), 120.0);
    EXPECT_NE(range.find("lab entry b_mlss "), std::string::npos) << range;
    EXPECT_NE(range.find(": refused: out of range"), std::string::npos) << range;

    // Not allowed from this address: flocd answers the sample-age write with exception 01.
    job_outcome refused = acknowledged(registers::lab_status::not_allowed, 65535);
    refused.exceptions = {1};
    const std::string not_allowed = lab.record(typed[2], refused, 120.0);
    EXPECT_NE(not_allowed.find(
                  "refused: exception 1 (illegal function) to the sample age write; flocd shows "
                  "refused: not allowed from this address"),
              std::string::npos)
        << not_allowed;
    EXPECT_TRUE(lab.take_due(200.0, flocd_at(200.0)).empty());

    const std::string table = lab.render();
    EXPECT_NE(table.find("lab a_mlss"), std::string::npos) << table;
    EXPECT_NE(table.find("day 0 08:00:00"), std::string::npos) << table; // its next sample
    EXPECT_NE(table.find("accepted, 2 min old in flocd"), std::string::npos) << table;
    EXPECT_NE(table.find("refused: out of range"), std::string::npos) << table;
}

TEST(LabRound, AnEntryThatDoesNotReachFlocdIsTriedThreeTimes) {
    round_fixture f;
    scenario s = test::marrowby();
    s.lab_sheet.entries.resize(1);
    lab_technician lab{s, f.map, f.cfg};
    lab.sample(0.0, marrowby_now());
    job_outcome lost;
    lost.error = "connection refused";
    for (unsigned attempt = 1; attempt <= max_typing_attempts; ++attempt) {
        const double t = 60.0 * attempt;
        std::vector<lab_typing> typed = lab.take_due(t, flocd_at(t));
        ASSERT_EQ(typed.size(), 1U) << attempt;
        EXPECT_EQ(typed[0].attempt, attempt);
        EXPECT_EQ(typed[0].sampled_at_s, 0.0);
        EXPECT_EQ(typed[0].minutes_ago, attempt); // still dated at its sampling time
        const std::string line = lab.record(typed[0], lost, t);
        if (attempt < max_typing_attempts) {
            EXPECT_NE(line.find("not typed in (connection refused); trying again (" +
                                std::to_string(attempt) + " of 3 tries)"),
                      std::string::npos)
                << line;
        } else {
            EXPECT_NE(line.find("not typed in after 3 tries (connection refused); dropped"),
                      std::string::npos)
                << line;
        }
    }
    EXPECT_TRUE(lab.take_due(600.0, flocd_at(600.0)).empty());
}

TEST(LabRound, ASheetWithoutEntriesSamplesNothing) {
    round_fixture f;
    const scenario s = test::load("carrick-fen");
    lab_technician lab{s, f.map, f.cfg};
    EXPECT_EQ(lab.next_sample_s(), std::numeric_limits<double>::infinity());
    const auto sheet_entries = std::count_if(f.cfg.lab.begin(), f.cfg.lab.end(),
                                             [](const config::lab_entry& l) { return !l.check; });
    EXPECT_EQ(lab.not_on_sheet().size(), static_cast<std::size_t>(sheet_entries));
    EXPECT_TRUE(lab.render().empty());
}

} // namespace
