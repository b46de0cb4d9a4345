// flocd replay: the timestamp and CSV readers, the replay loop against the live conditioning and
// the pure advisors, units at the edges, and the program as a process (files, exit codes).
#include "floc/advisors/aeration.hpp"
#include "floc/advisors/ras.hpp"
#include "floc/config/load.hpp"
#include "journal_record.hpp"
#include "process.hpp"
#include "replay.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <sstream>
#include <string>
#include <vector>

namespace {

using namespace floc;
using namespace floc::app::replay;
using advisors::advice_quality;
using advisors::reason;
using advisors::signal_quality;
namespace fs = std::filesystem;

const std::string source_dir{FLOC_SOURCE_DIR};
const std::string flocd{FLOCD_PATH};
const std::string si_config = source_dir + "/config/examples/marrowby-si.toml";
const std::string us_config = source_dir + "/config/examples/marrowby-us.toml";
const std::string data_dir = source_dir + "/tests/daemon/data/replay/";

config::plant_config load(const std::string& path) {
    auto r = config::load_file(path);
    if (!r.ok()) {
        throw std::runtime_error(path + " does not load");
    }
    return std::move(*r.config);
}

// One run as the sink saw it, copied.
struct recorded {
    std::string key;
    double plant_s = 0.0;
    std::string time;
    std::uint32_t line = 0;
    bool between_rows = false;
    bool changed = false;
    advisors::advice advice;
    std::vector<std::pair<std::string, advisors::reading>> inputs;
    std::string csv;

    [[nodiscard]] signal_quality input(const std::string& name) const {
        for (const auto& [n, r] : inputs) {
            if (n == name) {
                return r.quality;
            }
        }
        ADD_FAILURE() << key << " has no input " << name;
        return signal_quality::missing;
    }
};

struct outcome {
    summary sum;
    std::vector<recorded> runs;

    [[nodiscard]] std::vector<recorded> of(const std::string& key) const {
        std::vector<recorded> out;
        for (const recorded& r : runs) {
            if (r.key == key) {
                out.push_back(r);
            }
        }
        return out;
    }
};

outcome replay_text(const config::plant_config& cfg, const std::string& csv, options o = {}) {
    o.input_name = o.input_name == "input" ? "history.csv" : o.input_name;
    std::istringstream in{csv};
    outcome out;
    replayer r{cfg, in, o};
    if (r.start()) {
        r.run_rows([&](const run& x) {
            out.runs.push_back(recorded{x.outcome.key, x.plant_time_s, x.time, x.line,
                                        x.between_rows, x.outcome.changed, x.outcome.advice,
                                        x.outcome.inputs, r.csv_row(x)});
        });
    }
    out.sum = r.result();
    return out;
}

// A history built row by row: the time in plain seconds, then the cells.
class history {
public:
    explicit history(std::vector<std::string> columns) : columns_(std::move(columns)) {
        text_ = "time";
        for (const auto& c : columns_) {
            text_ += "," + c;
        }
        text_ += "\n";
    }
    void row(double t_s, const std::vector<std::string>& cells) {
        std::ostringstream line;
        line << t_s;
        for (const auto& c : cells) {
            line << "," << c;
        }
        text_ += line.str() + "\n";
    }
    [[nodiscard]] const std::string& text() const { return text_; }

private:
    std::vector<std::string> columns_;
    std::string text_;
};

std::string num(double v) {
    std::ostringstream s;
    s.precision(10);
    s << v;
    return s.str();
}

bool has_reason(const advisors::advice& a, reason r) {
    return a.reasons.has(r);
}

// The advisor engine's documented mapping of conditioning onto advisor input qualities
// (DEVELOPERS.md: good and uncertain are usable; stale, frozen, missing and bad are not).
signal_quality expected_quality(const conditioning::signal& s) {
    if (s.q != conditioning::quality::bad) {
        return signal_quality::good;
    }
    switch (s.why) {
    case conditioning::reason::no_data:
        return signal_quality::missing;
    case conditioning::reason::stale:
        return signal_quality::stale;
    case conditioning::reason::frozen:
        return signal_quality::frozen;
    default:
        return signal_quality::bad;
    }
}

// --- timestamps ---------------------------------------------------------------------------------
// Reference values: POSIX seconds since the epoch as computed by Python's calendar.timegm
// (a general-purpose reference library): 2026-03-04 05:06:07 = 1772600767,
// 2024-02-29 23:59:59 = 1709251199, 1969-12-31 23:00:00 = -3600.

TEST(ReplayTime, ReadsIsoWithAndWithoutZoneAndPlainSeconds) {
    const auto local = parse_time("2026-03-04 05:06:07");
    ASSERT_TRUE(local);
    EXPECT_DOUBLE_EQ(local->seconds, 1772600767.0);
    EXPECT_EQ(local->format.style, time_style::local);
    EXPECT_EQ(local->format.separator, ' ');

    const auto utc = parse_time("2026-03-04T05:06:07Z");
    ASSERT_TRUE(utc);
    EXPECT_DOUBLE_EQ(utc->seconds, 1772600767.0);
    EXPECT_EQ(utc->format.style, time_style::zoned);
    EXPECT_EQ(utc->format.separator, 'T');

    const auto plus_one = parse_time("2026-03-04T06:06:07+01:00");
    ASSERT_TRUE(plus_one);
    EXPECT_DOUBLE_EQ(plus_one->seconds, 1772600767.0);
    const auto minus = parse_time("2026-03-04T00:06:07-0500");
    ASSERT_TRUE(minus);
    EXPECT_DOUBLE_EQ(minus->seconds, 1772600767.0);

    const auto no_seconds = parse_time("2026-03-04 05:06");
    ASSERT_TRUE(no_seconds);
    EXPECT_DOUBLE_EQ(no_seconds->seconds, 1772600767.0 - 7.0);
    const auto fraction = parse_time(" 2026-03-04 05:06:07.250 ");
    ASSERT_TRUE(fraction);
    EXPECT_DOUBLE_EQ(fraction->seconds, 1772600767.25);
    EXPECT_TRUE(fraction->format.fraction);
    const auto date = parse_time("2026-03-04");
    ASSERT_TRUE(date);
    EXPECT_DOUBLE_EQ(date->seconds, 1772600767.0 - (5 * 3600 + 6 * 60 + 7));
    const auto leap = parse_time("2024-02-29 23:59:59");
    ASSERT_TRUE(leap);
    EXPECT_DOUBLE_EQ(leap->seconds, 1709251199.0);
    const auto before_epoch = parse_time("1969-12-31 23:00:00");
    ASSERT_TRUE(before_epoch);
    EXPECT_DOUBLE_EQ(before_epoch->seconds, -3600.0);

    const auto seconds = parse_time("1200.5");
    ASSERT_TRUE(seconds);
    EXPECT_DOUBLE_EQ(seconds->seconds, 1200.5);
    EXPECT_EQ(seconds->format.style, time_style::seconds);
}

TEST(ReplayTime, RefusesWhatIsNoTime) {
    for (const char* bad :
         {"", "yesterday", "2026-02-30 00:00:00", "2025-02-29", "2026-03-04 24:00:00",
          "2026-03-04 05:60:00", "2026-03-04X05:06:07", "2026-03-04 05:06:07+25:00",
          "2026-03-04 05:06:07 UTC", "2026-3-4 05:06:07", "NaN", "inf", "12 s"}) {
        EXPECT_FALSE(parse_time(bad)) << bad;
    }
}

TEST(ReplayTime, WritesTimesBackAsTheyWereWritten) {
    for (const char* text :
         {"2026-03-04 05:06:07", "2026-03-04T05:06:07Z", "2026-03-04T05:06:07.250Z",
          "2024-02-29 23:59:59", "1969-12-31 23:00:00", "1200.5", "86400"}) {
        const auto t = parse_time(text);
        ASSERT_TRUE(t) << text;
        EXPECT_EQ(format_time(t->seconds, t->format), text);
    }
    // An offset is written back as the same instant in UTC.
    const auto t = parse_time("2026-03-04T06:06:07+01:00");
    ASSERT_TRUE(t);
    EXPECT_EQ(format_time(t->seconds, t->format), "2026-03-04T05:06:07Z");
}

// --- CSV ----------------------------------------------------------------------------------------
// RFC 4180, "Common Format and MIME Type for Comma-Separated Values (CSV) Files", section 2.

std::vector<std::vector<csv_cell>> records_of(const std::string& text,
                                              std::string* error = nullptr) {
    std::istringstream in{text};
    csv_reader r{in};
    std::vector<std::vector<csv_cell>> out;
    std::vector<csv_cell> cells;
    while (r.next(cells)) {
        out.push_back(cells);
    }
    if (error != nullptr) {
        *error = r.error();
    }
    return out;
}

TEST(ReplayCsv, SplitsQuotedCellsAfterRfc4180) {
    // 2.6: fields with commas, quotes and line breaks are enclosed in quotes; 2.7: a quote
    // inside is doubled; 2.1: CRLF line ends.
    const auto r =
        records_of("time,\"a, b\",c\r\n1,\"say \"\"hi\"\"\",\"two\r\nlines\"\r\n2,,x\r\n");
    ASSERT_EQ(r.size(), 3U);
    ASSERT_EQ(r[0].size(), 3U);
    EXPECT_EQ(r[0][1].text, "a, b");
    EXPECT_EQ(r[1][1].text, "say \"hi\"");
    EXPECT_EQ(r[1][2].text, "two\nlines");
    EXPECT_EQ(r[2][1].text, "");
    EXPECT_EQ(r[2][2].text, "x");
    EXPECT_EQ(r[2][2].line, 4U); // the quoted line break took a line
    EXPECT_EQ(r[2][2].column, 4U);
    EXPECT_EQ(r[1][2].line, 2U);
    EXPECT_EQ(r[1][2].column, 16U);
}

TEST(ReplayCsv, SkipsBlankAndCommentLinesAndAByteOrderMark) {
    const auto r = records_of("\xEF\xBB\xBFtime,x\n\n# exported by a historian\n1,2\n   \n2,3\n");
    ASSERT_EQ(r.size(), 3U);
    EXPECT_EQ(r[0][0].text, "time");
    EXPECT_EQ(r[1][0].line, 4U);
    EXPECT_EQ(r[2][1].text, "3");
}

TEST(ReplayCsv, TakesSemicolonsAndDecimalCommasFromTheHeader) {
    std::istringstream in{"time;a_influent_flow\n1;4500,5\n"};
    csv_reader r{in};
    std::vector<csv_cell> cells;
    ASSERT_TRUE(r.next(cells));
    EXPECT_EQ(r.delimiter(), ';');
    ASSERT_TRUE(r.next(cells));
    ASSERT_EQ(cells.size(), 2U);
    const auto v = parse_number(cells[1].text, r.delimiter());
    ASSERT_TRUE(v);
    EXPECT_DOUBLE_EQ(*v, 4500.5);
    EXPECT_FALSE(parse_number("4500,5", ','));
}

TEST(ReplayCsv, ReportsAQuoteThatNeverCloses) {
    std::string error;
    const auto r = records_of("time,x\n1,\"open\n2,3\n", &error);
    EXPECT_EQ(r.size(), 1U);
    EXPECT_NE(error.find("2:3: found a quoted cell that is never closed"), std::string::npos)
        << error;
}

TEST(ReplayCsv, ReadsNumbersAndNothingElse) {
    EXPECT_EQ(parse_number(" 12.5 ", ','), 12.5);
    EXPECT_EQ(parse_number("+3", ','), 3.0);
    EXPECT_EQ(parse_number("-1e3", ','), -1000.0);
    EXPECT_EQ(parse_number(".5", ','), 0.5);
    for (const char* bad :
         {"", "nan", "NaN", "inf", "-inf", "1.2.3", "12 mg/L", "0x10", "+-1", "bad"}) {
        EXPECT_FALSE(parse_number(bad, ',')) << bad;
    }
}

TEST(ReplayCsv, QuotesOnlyWhatNeedsIt) {
    EXPECT_EQ(csv_quote("plain text; with semicolons"), "plain text; with semicolons");
    EXPECT_EQ(csv_quote("a, b"), "\"a, b\"");
    EXPECT_EQ(csv_quote("say \"hi\""), "\"say \"\"hi\"\"\"");
    EXPECT_EQ(csv_quote("two\nlines"), "\"two\nlines\"");
}

// --- the header -------------------------------------------------------------------------------

TEST(ReplayHeader, AnUnknownColumnStopsTheReplayWithItsPosition) {
    const auto cfg = load(si_config);
    const auto r = replay_text(cfg, "time,a_influent_flow,a_oxic1_dox\n0,4500,1.8\n");
    EXPECT_TRUE(r.sum.fatal);
    EXPECT_TRUE(r.runs.empty());
    ASSERT_EQ(r.sum.messages.size(), 1U);
    EXPECT_NE(r.sum.messages[0].find(
                  "history.csv:1:22: column \"a_oxic1_dox\": found no tag or lab entry"),
              std::string::npos)
        << r.sum.messages[0];
    EXPECT_NE(r.sum.messages[0].find("--ignore-unknown"), std::string::npos);
}

TEST(ReplayHeader, IgnoreUnknownSkipsSuchColumnsWithANote) {
    const auto cfg = load(si_config);
    options o;
    o.ignore_unknown = true;
    const auto r =
        replay_text(cfg, "time,a_influent_flow,operator_notes\n0,4500,\"tank 2, drained\"\n", o);
    EXPECT_FALSE(r.sum.fatal);
    EXPECT_TRUE(r.sum.clean());
    EXPECT_FALSE(r.runs.empty());
    bool noted = false;
    for (const auto& n : r.sum.notes) {
        noted = noted || n.find("\"operator_notes\" names no tag or lab entry: ignored") !=
                             std::string::npos;
    }
    EXPECT_TRUE(noted);
}

TEST(ReplayHeader, RefusesRepeatedColumnsAndUnitsOfTheWrongQuantity) {
    const auto cfg = load(si_config);
    const auto r = replay_text(
        cfg,
        "time,a_influent_flow,a_influent_flow,a_oxic1_do [m3/d],a_blanket [furlong]\n0,1,2,3,4\n");
    EXPECT_TRUE(r.sum.fatal);
    ASSERT_EQ(r.sum.messages.size(), 3U);
    EXPECT_NE(r.sum.messages[0].find("1:22: column \"a_influent_flow\": found a second column"),
              std::string::npos)
        << r.sum.messages[0];
    EXPECT_NE(r.sum.messages[1].find(
                  "1:38: column \"a_oxic1_do\": found the flow unit \"m3/d\"; expected a "
                  "concentration unit"),
              std::string::npos)
        << r.sum.messages[1];
    EXPECT_NE(r.sum.messages[2].find("found unknown unit \"furlong\"; expected a length unit"),
              std::string::npos)
        << r.sum.messages[2];
}

TEST(ReplayHeader, NeedsAtLeastOneTagOrLabColumnAndSomeHeader) {
    const auto cfg = load(si_config);
    EXPECT_TRUE(replay_text(cfg, "time\n0\n").sum.fatal);
    const auto empty = replay_text(cfg, "# nothing but a comment\n\n");
    EXPECT_TRUE(empty.sum.fatal);
    ASSERT_FALSE(empty.sum.messages.empty());
    EXPECT_NE(empty.sum.messages[0].find("found no header line"), std::string::npos);
}

// --- rows and cells ---------------------------------------------------------------------------

TEST(ReplayRows, ABadCellIsSkippedWithItsLineAndColumnAndTheReplayGoesOn) {
    const auto cfg = load(si_config);
    const auto r = replay_text(cfg, "time,a_influent_flow,a_oxic1_do\n"
                                    "0,4500,1.8\n"
                                    "60,4500,1.8.1\n"
                                    "120,4500,1.8\n");
    EXPECT_EQ(r.sum.rows_read, 3U);
    EXPECT_EQ(r.sum.rows_rejected, 0U);
    EXPECT_EQ(r.sum.cells_rejected, 1U);
    EXPECT_FALSE(r.sum.clean());
    ASSERT_EQ(r.sum.messages.size(), 1U);
    EXPECT_EQ(r.sum.messages[0],
              "history.csv:3:9: a_oxic1_do: found \"1.8.1\"; expected a number in mg/L (or "
              "empty: no reading; NaN: not a number; bad: a failed read); the cell is skipped");
    EXPECT_EQ(r.of("aeration.a_oxic1").size(), 3U); // every row still ran
}

TEST(ReplayRows, RowsOutOfOrderOrWithoutATimeAreSkipped) {
    const auto cfg = load(si_config);
    const auto r = replay_text(cfg, "time,a_influent_flow\n"
                                    "0,4500\n"
                                    "120,4500\n"
                                    "60,4500\n"
                                    "120,4500\n"
                                    "noon,4500\n"
                                    "2026-03-04 05:06:07,4500\n"
                                    "180,4500,,\n"
                                    "240,4500,7\n");
    EXPECT_EQ(r.sum.rows_read, 8U);
    EXPECT_EQ(r.sum.rows_rejected, 5U);
    ASSERT_EQ(r.sum.messages.size(), 5U);
    EXPECT_EQ(r.sum.messages[0],
              "history.csv:4:1: time: found \"60\", not after 120 (line 3); expected rows in "
              "increasing time; the row is skipped");
    EXPECT_NE(r.sum.messages[1].find("history.csv:5:1: time: found \"120\", not after 120"),
              std::string::npos);
    EXPECT_NE(
        r.sum.messages[2].find("history.csv:6:1: time: found \"noon\"; expected an ISO 8601 time"),
        std::string::npos);
    EXPECT_NE(r.sum.messages[3].find(
                  "history.csv:7:1: time: found a time without a zone (\"2026-03-04 05:06:07\"); "
                  "expected plain seconds like every row since line 2"),
              std::string::npos)
        << r.sum.messages[3];
    // Trailing empty cells are fine; a value beyond the header's columns is not.
    EXPECT_NE(r.sum.messages[4].find("history.csv:9:10: found 3 cells; expected at most 2"),
              std::string::npos)
        << r.sum.messages[4];
    EXPECT_EQ(*r.sum.last_time, "180");
}

TEST(ReplayRows, ReportsTheFirstProblemsAndCountsTheRest) {
    const auto cfg = load(si_config);
    std::string text = "time,a_influent_flow\n";
    for (int i = 0; i < 30; ++i) {
        text += std::to_string(i * 60) + ",lots\n";
    }
    options o;
    o.max_messages = 5;
    const auto r = replay_text(cfg, text, o);
    EXPECT_EQ(r.sum.cells_rejected, 30U);
    EXPECT_EQ(r.sum.messages.size(), 5U);
    EXPECT_EQ(r.sum.messages_dropped, 25U);
    const std::string shown = summary_text(r.sum, "history.csv", "advice.csv");
    EXPECT_NE(shown.find("history.csv: 25 more problem(s) not shown"), std::string::npos) << shown;
    EXPECT_NE(shown.find("30 rows read, 0 rows and 30 cells rejected"), std::string::npos) << shown;
}

TEST(ReplayRows, LabValuesAreSamplesAtTheirRowsTimeAndRangeChecked) {
    const auto cfg = load(si_config);
    // a_mlss: 300 to 12000 mg/L, max_age 36 h.
    const auto r =
        replay_text(cfg, "time,a_influent_flow,a_ras_flow,a_mlss,a_ras_tss,a_sv30,a_blanket\n"
                         "0,4500,2700,,,,0.8\n"
                         "300,4500,2700,3000,8000,300,0.8\n"
                         "600,4500,2700,50000,,,0.8\n");
    EXPECT_EQ(r.sum.cells_rejected, 1U);
    ASSERT_EQ(r.sum.messages.size(), 1U);
    EXPECT_EQ(r.sum.messages[0],
              "history.csv:4:15: a_mlss: found 50000 mg/L; expected a value from 300 to 12000 "
              "mg/L (the lab entry's range); not entered");
    const auto ras = r.of("ras.A");
    ASSERT_EQ(ras.size(), 3U);
    EXPECT_EQ(ras[0].input("mlss"), signal_quality::missing);
    EXPECT_EQ(ras[0].advice.quality, advice_quality::fallback);
    EXPECT_EQ(ras[1].input("mlss"), signal_quality::good);
    EXPECT_EQ(ras[1].advice.quality, advice_quality::good);
    EXPECT_EQ(ras[2].input("mlss"),
              signal_quality::good); // the refused value left the sample in place
    EXPECT_DOUBLE_EQ(ras[2].inputs[2].second.value, 3000.0);
    EXPECT_DOUBLE_EQ(ras[2].inputs[2].second.sampled_at_s, 300.0);
}

// An empty cell is no reading, NaN a not-a-number reading, "bad" a failed read: the replay's
// inputs are exactly what floc::conditioning makes of the same samples.
TEST(ReplayRows, MarksAgreeWithTheLiveConditioning) {
    const auto cfg = load(si_config);
    const config::tag& t = *cfg.find_tag("a_oxic1_do"); // stale_after 30 s (default)
    // Rows 10 s apart; aeration.a_oxic1 runs every minute.
    const std::vector<std::string> cells{"1.80", "",     "bad", "1.81", "NaN", "", "",
                                         "",     "1.82", "",    "1.83", "bad", "", "",
                                         "",     "",     "",    "",     ""};
    std::string text = "time,a_influent_flow,a_oxic1_do\n";
    for (std::size_t i = 0; i < cells.size(); ++i) {
        text += std::to_string(i * 10) + ",4500," + cells[i] + "\n";
    }
    const auto r = replay_text(cfg, text);
    ASSERT_TRUE(r.sum.clean());
    conditioning::state s;
    std::vector<signal_quality> expected;
    for (std::size_t i = 0; i < cells.size(); ++i) {
        const double now = static_cast<double>(i) * 10.0;
        if (cells[i] == "bad") {
            s = conditioning::update(t, s, {now, false, 0.0});
        } else if (cells[i] == "NaN") {
            s = conditioning::update(t, s, {now, true, std::nan("")});
        } else if (!cells[i].empty()) {
            s = conditioning::update(t, s, {now, true, std::stod(cells[i])});
        }
        if (i % 6 == 0) {
            expected.push_back(expected_quality(conditioning::assess(t, s, now)));
        }
    }
    const auto runs = r.of("aeration.a_oxic1");
    ASSERT_EQ(runs.size(), expected.size());
    for (std::size_t k = 0; k < runs.size(); ++k) {
        EXPECT_EQ(runs[k].input("dissolved_oxygen"), expected[k]) << "run at " << runs[k].time;
    }
    // The pattern itself: good at 0 s; NaN (40 s) is bad at once; "bad" (110 s) keeps the value
    // of 100 s usable while it is young (120 s, uncertain); at 180 s it is 80 s old: stale.
    EXPECT_EQ(expected, (std::vector<signal_quality>{signal_quality::good, signal_quality::bad,
                                                     signal_quality::good, signal_quality::stale}));
}

// --- the advisors over time -------------------------------------------------------------------

// Train B's zone 1 runs the nitrate/DO rules, which need its DO probe: period 5 min, hold_for
// 30 min (default), the probe's frozen_after 1 h (config/examples/marrowby-si.toml).
std::string train_b_history(double hours, const std::function<std::string(double)>& do_cell) {
    history h{{"b_influent_flow", "b_oxic1_do", "b_oxic2_no3", "b_temperature"}};
    for (double t = 0.0; t < hours * 3600.0; t += 60.0) {
        h.row(t, {num(4400.0 + 100.0 * std::sin(t / 3000.0)), do_cell(t),
                  num(7.0 + 0.5 * std::sin(t / 1800.0)), num(14.0 + 0.1 * std::sin(t / 5000.0))});
    }
    return h.text();
}

std::string moving_do(double t) {
    return num(1.9 + 0.05 * std::sin(t / 600.0));
}

TEST(ReplayAdvisors, AFrozenProbeHoldsTheAdviceThenFallsBack) {
    const auto cfg = load(si_config);
    const auto& zone = cfg.aeration.at(2);
    ASSERT_EQ(zone.zone, "b_oxic1");
    ASSERT_DOUBLE_EQ(zone.common.hold_for_s, 1800.0);
    ASSERT_DOUBLE_EQ(*cfg.find_tag("b_oxic1_do")->frozen_after_s, 3600.0);
    // The probe sticks at 2.000 mg/L from 1 h on: conditioning calls it frozen at 2 h.
    const auto r = replay_text(
        cfg, train_b_history(4.0, [](double t) { return t < 3600.0 ? moving_do(t) : "2.000"; }));
    ASSERT_TRUE(r.sum.clean());
    const auto runs = r.of("aeration.b_oxic1");
    ASSERT_EQ(runs.size(), 48U);
    double last_good = -1.0;
    double first_held = -1.0;
    double first_fallback = -1.0;
    for (const recorded& x : runs) {
        if (x.plant_s < 7200.0) {
            EXPECT_EQ(x.advice.quality, advice_quality::good) << x.time;
            EXPECT_EQ(x.input("dissolved_oxygen"), signal_quality::good) << x.time;
            last_good = x.plant_s;
            continue;
        }
        EXPECT_EQ(x.input("dissolved_oxygen"), signal_quality::frozen) << x.time;
        EXPECT_TRUE(has_reason(x.advice, reason::input_bad)) << x.time;
        if (x.advice.quality == advice_quality::held) {
            EXPECT_LT(first_fallback, 0.0) << "held after fallback at " << x.time;
            EXPECT_TRUE(has_reason(x.advice, reason::holding_last_good));
            first_held = first_held < 0.0 ? x.plant_s : first_held;
        } else {
            EXPECT_EQ(x.advice.quality, advice_quality::fallback) << x.time;
            EXPECT_TRUE(has_reason(x.advice, reason::fallback_value));
            EXPECT_DOUBLE_EQ(x.advice.value, zone.params.fallback_g_per_m3);
            first_fallback = first_fallback < 0.0 ? x.plant_s : first_fallback;
        }
    }
    EXPECT_DOUBLE_EQ(last_good, 6900.0);
    EXPECT_DOUBLE_EQ(first_held, 7200.0);
    // hold_for after the last good advice, at the advisor's next run.
    EXPECT_GE(first_fallback - last_good, 1800.0);
    EXPECT_LE(first_fallback - last_good, 1800.0 + 300.0);
}

TEST(ReplayAdvisors, ANotANumberStretchIsBadThenTheAdviceRecovers) {
    const auto cfg = load(si_config);
    const auto r =
        replay_text(cfg, train_b_history(5.0, [](double t) {
                        return t >= 3600.0 && t < 10800.0 ? std::string{"NaN"} : moving_do(t);
                    }));
    ASSERT_TRUE(r.sum.clean());
    bool held = false;
    bool fallback = false;
    for (const recorded& x : r.of("aeration.b_oxic1")) {
        if (x.plant_s >= 3600.0 && x.plant_s < 10800.0) {
            EXPECT_EQ(x.input("dissolved_oxygen"), signal_quality::bad) << x.time;
            EXPECT_NE(x.advice.quality, advice_quality::good) << x.time;
            held = held || x.advice.quality == advice_quality::held;
            fallback = fallback || x.advice.quality == advice_quality::fallback;
            if (x.plant_s >= 3300.0 + 1800.0 + 300.0) {
                EXPECT_EQ(x.advice.quality, advice_quality::fallback) << x.time;
            }
        } else {
            EXPECT_EQ(x.input("dissolved_oxygen"), signal_quality::good) << x.time;
            EXPECT_EQ(x.advice.quality, advice_quality::good) << x.time;
        }
    }
    EXPECT_TRUE(held);
    EXPECT_TRUE(fallback);
}

// A drifting anoxic nitrate probe caught by a grab sample (README.md, "Probe checks"): the
// check column a_anoxic_no3_check (tolerance 1 mg/L, max_age 12 h in marrowby-si.toml) is a
// sample taken at its row's time. The probe drifts upwards by 2 mg/L per hour from 1 h on; the
// sample at 100 min finds the true value, 1.33 mg/L below the probe: the probe is bad
// (check_disagrees) from that row on, and the recycle advice of train A, which uses it, is held
// and then falls back (hold_for 30 min). The probe is recalibrated at 140 min; the next sample,
// at 150 min, agrees and the advice is good again. Invented data.
TEST(ReplayAdvisors, ADriftingProbeIsCaughtByACheckAndClearedByTheNextOne) {
    const auto cfg = load(si_config);
    const config::lab_entry* check = cfg.find_lab("a_anoxic_no3_check");
    ASSERT_NE(check, nullptr);
    ASSERT_TRUE(check->check.has_value());
    ASSERT_EQ(check->check->tag.name, "a_anoxic_no3");
    ASSERT_DOUBLE_EQ(check->check->tolerance, 1.0);
    ASSERT_DOUBLE_EQ(cfg.recycle.at(0).common.hold_for_s, 1800.0);
    const auto truth = [](double t) { return 1.2 + 0.05 * std::sin(t / 600.0); };
    const auto drift = [](double t) { return t >= 3600.0 && t < 8400.0 ? 2.0 * (t - 3600.0) / 3600.0 : 0.0; };
    history h{{"a_influent_flow", "a_anoxic_no3", "a_anoxic_no3_check"}};
    for (double t = 0.0; t < 4 * 3600.0; t += 60.0) {
        const bool sample = t == 6000.0 || t == 9000.0;
        h.row(t, {num(4400.0 + 100.0 * std::sin(t / 3000.0)), num(truth(t) + drift(t)),
                  sample ? num(truth(t)) : ""});
    }
    std::istringstream in{h.text()};
    replayer r{cfg, in, options{}};
    ASSERT_TRUE(r.start());
    std::vector<std::pair<double, app::probe_check_event>> checks;
    std::vector<recorded> runs;
    r.run_rows(
        [&](const run& x) {
            if (x.outcome.key == "recycle.A") {
                runs.push_back(recorded{x.outcome.key, x.plant_time_s, x.time, x.line, x.between_rows,
                                        x.outcome.changed, x.outcome.advice, x.outcome.inputs, ""});
            }
        },
        [&](const app::probe_check_event& e, double plant_s) { checks.emplace_back(plant_s, e); });
    ASSERT_TRUE(r.result().clean());
    EXPECT_EQ(r.result().probe_checks, 2U);
    EXPECT_EQ(r.result().probe_checks_disagreed, 1U);

    // Each check is judged at its own row, against the probe's value at the sample time.
    ASSERT_EQ(checks.size(), 2U);
    EXPECT_DOUBLE_EQ(checks[0].first, 6000.0);
    EXPECT_EQ(checks[0].second.verdict.outcome, conditioning::check_outcome::disagrees);
    EXPECT_NEAR(checks[0].second.verdict.check.value, truth(6000.0), 1e-6);
    // The probe's median (5 samples) trails the drift by two minutes: 1.33 - 0.07 mg/L above.
    EXPECT_NEAR(checks[0].second.verdict.difference, drift(6000.0 - 120.0), 0.02);
    EXPECT_DOUBLE_EQ(checks[0].second.verdict.tolerance, 1.0);
    EXPECT_DOUBLE_EQ(checks[1].first, 9000.0);
    EXPECT_EQ(checks[1].second.verdict.outcome, conditioning::check_outcome::agrees);
    const auto journal = app::probe_check_record(checks[0].second, r.shown()).str();
    EXPECT_NE(journal.find("\"event\":\"probe_check\""), std::string::npos) << journal;
    EXPECT_NE(journal.find("\"tag\":\"a_anoxic_no3\""), std::string::npos) << journal;
    EXPECT_NE(journal.find("\"agrees\":false"), std::string::npos) << journal;

    ASSERT_EQ(runs.size(), 48U);  // every 5 min for 4 h
    bool held = false;
    bool fallback = false;
    for (const recorded& x : runs) {
        if (x.plant_s >= 6000.0 && x.plant_s < 9000.0) {
            EXPECT_EQ(x.input("nitrate"), signal_quality::bad) << x.time;
            EXPECT_TRUE(has_reason(x.advice, reason::input_bad)) << x.time;
            held = held || x.advice.quality == advice_quality::held;
            fallback = fallback || x.advice.quality == advice_quality::fallback;
            if (x.plant_s >= 6000.0 + 1800.0 + 300.0) {
                EXPECT_EQ(x.advice.quality, advice_quality::fallback) << x.time;
            }
        } else {
            // Before the check the drift went unnoticed: the advice kept trusting the probe.
            EXPECT_EQ(x.input("nitrate"), signal_quality::good) << x.time;
            EXPECT_EQ(x.advice.quality, advice_quality::good) << x.time;
        }
    }
    EXPECT_TRUE(held);
    EXPECT_TRUE(fallback);
}

// A steady history gives, run for run, what the pure advisor gives for the same inputs at the
// same plant times: the replay adds nothing of its own.
TEST(ReplayAdvisors, ASteadyHistoryGivesWhatThePureAdvisorsGive) {
    const auto cfg = load(si_config);
    history h{{"a_influent_flow", "a_ras_flow", "a_blanket", "a_mlss", "a_ras_tss", "a_sv30",
               "a_oxic1_do", "a_oxic2_nh4", "a_oxic2_no3", "a_temperature"}};
    for (int i = 0; i < 180; ++i) {
        const bool lab = i == 0;
        h.row(i * 60.0, {"4500", "2700", "0.8", lab ? "3000" : "", lab ? "8000" : "",
                         lab ? "300" : "", "1.8", "1.6", "8", "14"});
    }
    const auto r = replay_text(cfg, h.text());
    ASSERT_TRUE(r.sum.clean());

    const config::ras_advisor& rc = cfg.ras.at(0);
    advisors::ras_state rs;
    const auto ras = r.of("ras.A");
    ASSERT_EQ(ras.size(), 36U);
    for (const recorded& x : ras) {
        const double now = x.plant_s;
        advisors::ras_inputs in;
        in.flow = advisors::good(4500.0, now);
        in.ras_flow = advisors::good(2700.0, now);
        in.mlss = advisors::good(3000.0, 0.0);
        in.ras_solids = advisors::good(8000.0, 0.0);
        in.sv30 = advisors::good(300.0, 0.0);
        in.blanket = advisors::good(0.8, now);
        const auto step = advisors::step_ras(rc.params, in, rs, now);
        rs = step.state;
        EXPECT_DOUBLE_EQ(x.advice.value, step.out.value) << x.time;
        EXPECT_EQ(x.advice.quality, step.out.quality) << x.time;
        EXPECT_EQ(x.advice.explanation, step.out.explanation) << x.time;
    }

    const config::aeration_advisor& ac = cfg.aeration.at(0);
    advisors::aeration_state as;
    const auto aeration = r.of("aeration.a_oxic1");
    ASSERT_EQ(aeration.size(), 180U);
    for (const recorded& x : aeration) {
        const double now = x.plant_s;
        advisors::aeration_inputs in;
        in.dissolved_oxygen = advisors::good(1.8, now);
        in.ammonia = advisors::good(1.6, now);
        in.nitrate = advisors::good(8.0, now);
        in.flow = advisors::good(4500.0, now);
        in.temperature = advisors::good(14.0, now);
        const auto step = advisors::step_aeration(ac.params, in, as, now);
        as = step.state;
        EXPECT_DOUBLE_EQ(x.advice.value, step.out.value) << x.time;
        EXPECT_EQ(x.advice.explanation, step.out.explanation) << x.time;
    }
    // The ammonia loop moved the advice: the comparison covered a controller at work.
    EXPECT_GT(aeration.back().advice.value, aeration.front().advice.value);
}

TEST(ReplayAdvisors, AdvisorsDueBetweenSparseRowsRunOnStaleInputs) {
    const auto cfg = load(si_config);
    // aeration.a_oxic1 every minute; rows 5 min apart, then a 2 h gap.
    history h{{"a_influent_flow", "a_oxic1_do", "a_oxic2_nh4", "a_oxic2_no3", "a_temperature"}};
    for (const double t : {0.0, 300.0, 600.0, 600.0 + 7200.0}) {
        h.row(t, {"4500", "1.8", "1.6", "8", "14"});
    }
    const auto r = replay_text(cfg, h.text());
    const auto runs = r.of("aeration.a_oxic1");
    // Every minute from 0 to 7800 s: 131 runs, most of them between rows.
    ASSERT_EQ(runs.size(), 131U);
    EXPECT_GT(r.sum.runs_between_rows, 100U);
    EXPECT_FALSE(runs[0].between_rows);
    EXPECT_TRUE(runs[1].between_rows);
    EXPECT_EQ(runs[1].time, "60");
    EXPECT_EQ(runs[1].line, 3U);                             // the row that came next
    EXPECT_EQ(runs[1].input("flow"), signal_quality::stale); // 60 s old, stale_after 30 s
    EXPECT_EQ(runs[1].advice.quality, advice_quality::held);
    EXPECT_EQ(runs[5].time, "300");
    EXPECT_FALSE(runs[5].between_rows);
    EXPECT_EQ(runs[5].advice.quality, advice_quality::good);
    // Deep in the gap the hold has run out.
    EXPECT_EQ(runs[100].advice.quality, advice_quality::fallback);
    EXPECT_EQ(runs.back().advice.quality, advice_quality::good);
    EXPECT_EQ(r.sum.gaps_not_filled, 0U);
    bool noted = false;
    for (const auto& n : r.sum.notes) {
        noted = noted || n.find("longer than stale_after of a_influent_flow") != std::string::npos;
    }
    EXPECT_TRUE(noted);
}

TEST(ReplayAdvisors, AGapLongerThanMaxGapIsNotFilled) {
    const auto cfg = load(si_config);
    history h{{"a_influent_flow", "a_oxic1_do", "a_oxic2_nh4", "a_oxic2_no3", "a_temperature"}};
    for (const double t : {0.0, 60.0, 60.0 + 3 * 86400.0, 120.0 + 3 * 86400.0}) {
        h.row(t, {"4500", "1.8", "1.6", "8", "14"});
    }
    options o;
    o.max_gap_s = 86400.0;
    const auto r = replay_text(cfg, h.text(), o);
    EXPECT_EQ(r.of("aeration.a_oxic1").size(), 4U);
    EXPECT_EQ(r.sum.runs_between_rows, 0U);
    EXPECT_EQ(r.sum.gaps_not_filled, 1U);
    EXPECT_DOUBLE_EQ(r.sum.longest_gap_s, 3 * 86400.0);
}

TEST(ReplayAdvisors, FromWarmsUpAndToStops) {
    const auto cfg = load(si_config);
    history h{{"a_influent_flow", "a_oxic1_do", "a_oxic2_nh4", "a_oxic2_no3", "a_temperature"}};
    for (int i = 0; i <= 60; ++i) {
        h.row(i * 60.0, {"4500", "1.8", "1.6", "8", "14"});
    }
    const auto all = replay_text(cfg, h.text());
    options o;
    o.from = parse_time("1200");
    o.to = parse_time("2400");
    const auto part = replay_text(cfg, h.text(), o);
    const auto runs = part.of("aeration.a_oxic1");
    ASSERT_EQ(runs.size(), 21U);
    EXPECT_EQ(runs.front().time, "1200");
    EXPECT_EQ(runs.back().time, "2400");
    EXPECT_TRUE(part.sum.stopped_at_to);
    EXPECT_EQ(part.sum.rows_before_from, 20U);
    EXPECT_EQ(part.sum.rows_read, 41U);
    EXPECT_EQ(*part.sum.first_time, "1200");
    // Warmed up: the advice at 1200 s is the one the whole replay gives there.
    const auto whole = all.of("aeration.a_oxic1");
    EXPECT_DOUBLE_EQ(runs.front().advice.value, whole.at(20).advice.value);
    EXPECT_FALSE(runs.front().advice.reasons.has(reason::started_from_fallback));
}

TEST(ReplayAdvisors, ChangesOnlyWritesTheRunsWhoseAdviceChanged) {
    const auto cfg = load(si_config);
    history h{{"a_influent_flow", "a_oxic1_do", "a_oxic2_nh4", "a_oxic2_no3", "a_temperature"}};
    for (int i = 0; i < 60; ++i) {
        h.row(i * 60.0, {"4500", "1.8", "1.0", "8", "14"}); // ammonia on target: the advice settles
    }
    const auto all = replay_text(cfg, h.text());
    options o;
    o.changes_only = true;
    const auto changes = replay_text(cfg, h.text(), o);
    std::size_t changed = 0;
    for (const recorded& x : all.runs) {
        changed += x.changed ? 1U : 0U;
    }
    EXPECT_EQ(changes.runs.size(), changed);
    EXPECT_LT(changes.runs.size(), all.runs.size());
    EXPECT_EQ(changes.sum.runs, all.sum.runs);
    for (const recorded& x : changes.runs) {
        EXPECT_TRUE(x.changed);
    }
}

// --- units at the edges -----------------------------------------------------------------------
// Exact definitions (NIST Special Publication 811, 2008 edition, Appendix B): 1 US gallon =
// 3.785411784 L; 1 ft = 0.3048 m; t/degF = 1.8 t/degC + 32.
constexpr double m3_per_gallon = 3.785411784e-3;
constexpr double m3_per_d_per_gpm = m3_per_gallon * 1440.0;
constexpr double m3_per_d_per_mgd = m3_per_gallon * 1.0e6;
constexpr double m_per_ft = 0.3048;

struct plant_moment {
    double flow_m3_per_d, ras_m3_per_d, blanket_m, temperature_degC, nitrate, ammonia, oxygen;
};

plant_moment moment(double t) {
    const double d = 1.0 + 0.3 * std::sin(2.0 * M_PI * (t / 3600.0 - 8.0) / 24.0);
    return {4500.0 * d,
            2700.0,
            0.8 + 0.1 * std::sin(t / 7000.0),
            14.0 + 0.2 * std::sin(t / 9000.0),
            7.0 + std::sin(t / 3000.0),
            1.2 + 0.5 * std::sin(t / 4000.0),
            1.9 + 0.05 * std::sin(t / 600.0)};
}

// Six hours of train A, in SI units and in US customary ones (flow in MGD through the header's
// unit, RAS flow in gpm, blanket in ft, temperature in degF: the US config's tag units).
std::string train_a(bool us) {
    history h{{us ? "a_influent_flow [MGD]" : "a_influent_flow", "a_ras_flow", "a_blanket",
               "a_temperature", "a_anoxic_no3", "a_oxic2_no3", "a_oxic2_nh4", "a_oxic1_do",
               "a_mlss", "a_ras_tss", "a_sv30"}};
    for (double t = 0.0; t < 6 * 3600.0; t += 60.0) {
        const plant_moment m = moment(t);
        const bool lab = t == 0.0;
        h.row(t, {num(us ? m.flow_m3_per_d / m3_per_d_per_mgd : m.flow_m3_per_d),
                  num(us ? m.ras_m3_per_d / m3_per_d_per_gpm : m.ras_m3_per_d),
                  num(us ? m.blanket_m / m_per_ft : m.blanket_m),
                  num(us ? 1.8 * m.temperature_degC + 32.0 : m.temperature_degC),
                  num(m.nitrate / 7.0), num(m.nitrate), num(m.ammonia), num(m.oxygen),
                  lab ? "3000" : "", lab ? "8500" : "", lab ? "320" : ""});
    }
    return h.text();
}

TEST(ReplayUnits, TheUsConfigGivesTheSiConfigsAdviceForTheSamePlant) {
    const auto si = load(si_config);
    const auto us = load(us_config);
    ASSERT_EQ(std::string{us.find_tag("a_ras_flow")->unit->symbol}, "gpm");
    ASSERT_EQ(std::string{us.find_tag("a_temperature")->unit->symbol}, "degF");
    ASSERT_EQ(std::string{us.find_tag("a_blanket")->unit->symbol}, "ft");
    ASSERT_EQ(std::string{app::shown_unit(us.display, units::quantity::concentration).symbol},
              "mg/L");
    const auto a = replay_text(si, train_a(false));
    const auto b = replay_text(us, train_a(true));
    ASSERT_TRUE(a.sum.clean());
    ASSERT_TRUE(b.sum.clean());
    ASSERT_EQ(a.runs.size(), b.runs.size());
    std::size_t compared = 0;
    for (std::size_t i = 0; i < a.runs.size(); ++i) {
        const recorded& x = a.runs[i];
        const recorded& y = b.runs[i];
        ASSERT_EQ(x.key, y.key);
        ASSERT_EQ(x.time, y.time);
        if (x.key.ends_with(".B") || x.key.find(".b_") != std::string::npos) {
            continue; // train B has no readings here
        }
        // The US file's plant is written with rounded figures (4844 ft2 for 450 m2, 6600 gpm
        // for 1500 m3/h, ...): advice agrees to a fraction of a percent.
        EXPECT_NEAR(x.advice.value, y.advice.value, 5e-3 * std::max(1.0, std::abs(x.advice.value)))
            << x.key << " at " << x.time;
        EXPECT_EQ(x.advice.quality, y.advice.quality) << x.key << " at " << x.time;
        ++compared;
    }
    EXPECT_GT(compared, 300U);
}

TEST(ReplayUnits, AUnitInTheHeaderConvertsTheColumn) {
    const auto cfg = load(si_config);
    const auto m3 = replay_text(cfg, train_a(false));
    std::string mgd = train_a(false);
    // The same history with the influent flow written in MGD.
    std::istringstream lines{mgd};
    std::string text;
    std::string line;
    std::getline(lines, line);
    text = "time,a_influent_flow [MGD]" + line.substr(line.find(',', line.find(',') + 1)) + "\n";
    while (std::getline(lines, line)) {
        const auto c1 = line.find(',');
        const auto c2 = line.find(',', c1 + 1);
        text += line.substr(0, c1 + 1) +
                num(std::stod(line.substr(c1 + 1, c2 - c1 - 1)) / m3_per_d_per_mgd) +
                line.substr(c2) + "\n";
    }
    const auto converted = replay_text(cfg, text);
    ASSERT_TRUE(converted.sum.clean());
    ASSERT_EQ(m3.runs.size(), converted.runs.size());
    for (std::size_t i = 0; i < m3.runs.size(); ++i) {
        EXPECT_NEAR(m3.runs[i].advice.value, converted.runs[i].advice.value,
                    1e-6 * std::max(1.0, std::abs(m3.runs[i].advice.value)))
            << m3.runs[i].key << " at " << m3.runs[i].time;
    }
}

TEST(ReplayUnits, OutputInUsUnitsOnRequest) {
    const auto cfg = load(si_config);
    options o;
    o.units = units::unit_system::us_customary;
    const auto us = replay_text(cfg, train_a(false), o);
    const auto si = replay_text(cfg, train_a(false));
    ASSERT_EQ(us.runs.size(), si.runs.size());
    // Same advice; the CSV carries it in US units, the explanation too.
    for (std::size_t i = 0; i < us.runs.size(); ++i) {
        EXPECT_DOUBLE_EQ(us.runs[i].advice.value, si.runs[i].advice.value);
    }
    const auto waste = us.of("waste.A");
    ASSERT_FALSE(waste.empty());
    EXPECT_NE(waste.back().csv.find(",gpm,"), std::string::npos) << waste.back().csv;
    const auto waste_si = si.of("waste.A");
    EXPECT_NE(waste_si.back().csv.find(",m3/h,"), std::string::npos) << waste_si.back().csv;
    EXPECT_NE(waste.back().advice.explanation.find("gpd"), std::string::npos)
        << waste.back().advice.explanation;
}

TEST(ReplayUnits, ZonedTimesBecomePlantLocalTimeAndAreWrittenInUtc) {
    const auto cfg = load(si_config);
    options o;
    o.utc_offset_s = [](double) { return 3600.0; }; // a plant one hour east of Greenwich
    const auto r = replay_text(
        cfg, "time,a_influent_flow\n2026-03-04T06:30:00Z\n2026-03-04T06:31:00Z,4500\n", o);
    ASSERT_EQ(r.sum.rows_read, 2U);
    const auto waste = r.of("waste.A");
    ASSERT_FALSE(waste.empty());
    EXPECT_EQ(waste.front().time, "2026-03-04T06:30:00Z");
    EXPECT_DOUBLE_EQ(waste.front().plant_s, 1772605800.0 + 3600.0); // 07:30 at the plant
}

// --- the output CSV ---------------------------------------------------------------------------

TEST(ReplayOutput, OneRfc4180RowPerRun) {
    const auto cfg = load(si_config);
    const auto r = replay_text(cfg, "time,a_influent_flow,a_ras_flow,a_blanket\n"
                                    "2026-03-04 07:00:00,4500,2700,0.8\n");
    ASSERT_FALSE(r.runs.empty());
    EXPECT_EQ(replayer::csv_header(),
              "time,advisor,value,unit,min,max,quality,changed,reasons,reason_names,explanation");
    const auto ras = r.of("ras.A");
    ASSERT_EQ(ras.size(), 1U);
    // The explanation holds commas: it is quoted, and the row reads back as 11 cells.
    std::istringstream in{std::string{replayer::csv_header()} + "\n" + ras[0].csv + "\n"};
    csv_reader back{in};
    std::vector<csv_cell> cells;
    ASSERT_TRUE(back.next(cells));
    ASSERT_TRUE(back.next(cells));
    ASSERT_EQ(cells.size(), 11U) << ras[0].csv;
    EXPECT_EQ(cells[0].text, "2026-03-04 07:00:00");
    EXPECT_EQ(cells[1].text, "ras.A");
    EXPECT_EQ(cells[2].text, "0.7"); // the fallback ratio: no MLSS yet
    EXPECT_EQ(cells[3].text, "1");
    EXPECT_EQ(cells[6].text, "fallback");
    EXPECT_EQ(cells[7].text, "1");
    EXPECT_EQ(cells[8].text, "1;3");
    EXPECT_EQ(cells[9].text, "input_bad;fallback_value");
    EXPECT_EQ(cells[10].text, ras[0].advice.explanation);
    EXPECT_NE(cells[10].text.find(", "), std::string::npos);
}

// --- flocd replay as a process ----------------------------------------------------------------

class temp_dir {
public:
    temp_dir() {
        std::string pattern = (fs::temp_directory_path() / "floc-replay-XXXXXX").string();
        if (mkdtemp(pattern.data()) == nullptr) {
            throw std::runtime_error("mkdtemp failed");
        }
        path_ = pattern;
    }
    ~temp_dir() {
        std::error_code ec;
        fs::remove_all(path_, ec);
    }
    temp_dir(const temp_dir&) = delete;
    temp_dir& operator=(const temp_dir&) = delete;
    [[nodiscard]] std::string operator/(const std::string& name) const {
        return (path_ / name).string();
    }

private:
    fs::path path_;
};

std::string read_file(const std::string& path) {
    std::ifstream in{path, std::ios::binary};
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

std::vector<std::string> lines_of(const std::string& text) {
    std::vector<std::string> out;
    std::istringstream in{text};
    std::string line;
    while (std::getline(in, line)) {
        out.push_back(line);
    }
    return out;
}

floc::test::process_result flocd_replay(std::vector<std::string> args,
                                        const std::string& input = {}) {
    args.insert(args.begin(), {flocd, "replay"});
    return floc::test::run_process(args, std::chrono::seconds{60}, input);
}

TEST(FlocdReplay, HelpDescribesTheFilesAndTheCautions) {
    const auto r = flocd_replay({"--help"});
    EXPECT_EQ(r.exit_code, 0);
    for (const char* s :
         {"--input", "--output", "--units", "--from", "--to", "--journal", "--changes-only",
          "--ignore-unknown", "--max-gap", "TZ", "NaN", "FILE:LINE:COLUMN", "advisory only",
          "licensed operator", "local permits"}) {
        EXPECT_NE(r.out.find(s), std::string::npos) << s;
    }
    const auto top = floc::test::run_process({flocd, "--help"});
    EXPECT_NE(top.out.find("flocd replay"), std::string::npos) << top.out;
}

TEST(FlocdReplay, ReplaysTwoHoursOfMarrowbyIntoAdviceAndAJournal) {
    temp_dir dir;
    const auto r =
        flocd_replay({"--config", si_config, "--input", data_dir + "marrowby-2h.csv", "--output",
                      dir / "advice.csv", "--journal", dir / "journal.jsonl"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.err.find("120 rows read, 0 rows and 0 cells rejected"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("2026-03-04 07:00:00 to 2026-03-04 08:59:00 (2 h)"), std::string::npos)
        << r.err;
    const auto rows = lines_of(read_file(dir / "advice.csv"));
    ASSERT_GT(rows.size(), 1U);
    EXPECT_EQ(rows[0], replayer::csv_header());
    // 120 one-minute rows: a_oxic1 and a_oxic2 every minute (120 each), b zones, recycle and RAS
    // every 5 min (24 each), waste.A every 15 min (8) and waste.B every 5 min (24).
    EXPECT_EQ(rows.size(), 1U + 2 * 120 + 6 * 24 + 8 + 24);
    std::size_t a_oxic1 = 0;
    for (const auto& row : rows) {
        a_oxic1 += row.find(",aeration.a_oxic1,") != std::string::npos ? 1U : 0U;
    }
    EXPECT_EQ(a_oxic1, 120U);
    EXPECT_EQ(rows[1].rfind("2026-03-04 07:00:00,aeration.a_oxic1,", 0), 0U) << rows[1];
    EXPECT_EQ(rows.back().rfind("2026-03-04 08:59:00,", 0), 0U) << rows.back();
    EXPECT_FALSE(fs::exists(dir / "advice.csv.partial"));
    const auto journal = lines_of(read_file(dir / "journal.jsonl"));
    ASSERT_GE(journal.size(), 3U);
    EXPECT_NE(journal.front().find("\"event\":\"start\""), std::string::npos);
    EXPECT_NE(journal.back().find("\"event\":\"stop\""), std::string::npos);
    EXPECT_NE(journal[1].find("\"site\":\"Marrowby WRW\""), std::string::npos);
    EXPECT_NE(journal[1].find("\"event\":\"advice\""), std::string::npos);
    EXPECT_NE(journal[1].find("\"plant_time_s\":1772607600"), std::string::npos) << journal[1];
}

TEST(FlocdReplay, ReadsStandardInputAndWritesStandardOutput) {
    const std::string history = read_file(data_dir + "marrowby-2h.csv");
    const auto r = flocd_replay({"--config", si_config, "--input", "-", "--output", "-",
                                 "--changes-only", "--to", "2026-03-04 07:09:30"},
                                history);
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto rows = lines_of(r.out);
    ASSERT_GT(rows.size(), 10U);
    EXPECT_EQ(rows[0], replayer::csv_header());
    for (const auto& row : rows) {
        EXPECT_EQ(row.rfind("2026-03-04 07:1", 0), std::string::npos) << row;
    }
    EXPECT_EQ(rows.back().rfind("2026-03-04 07:0", 0), 0U) << rows.back();
    EXPECT_NE(r.err.find("stopped at --to"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("written to standard output"), std::string::npos) << r.err;
}

TEST(FlocdReplay, BadCellsAndRowsAreReportedAndExit65AfterTheWholeReplay) {
    temp_dir dir;
    const auto r = flocd_replay({"--config", si_config, "--input", data_dir + "bad-cells.csv",
                                 "--output", dir / "advice.csv"});
    EXPECT_EQ(r.exit_code, 65) << r.err;
    const std::string file = data_dir + "bad-cells.csv";
    EXPECT_NE(r.err.find(file + ":4:26: a_oxic1_do: found \"1.8.1\"; expected a number in mg/L"),
              std::string::npos)
        << r.err;
    EXPECT_NE(
        r.err.find(
            file +
            ":6:1: time: found \"2026-03-04 07:01:30\", not after 2026-03-04 07:02:00 (line 5)"),
        std::string::npos)
        << r.err;
    EXPECT_NE(
        r.err.find(file +
                   ":7:30: a_mlss: found 50000 mg/L; expected a value from 300 to 12000 mg/L"),
        std::string::npos)
        << r.err;
    EXPECT_NE(r.err.find(file + ":8:1: time: found \"yesterday\""), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("7 rows read, 2 rows and 2 cells rejected"), std::string::npos) << r.err;
    // The rest was replayed and written: rows at 07:00, 07:01, 07:02, 07:03 and 07:04.
    const auto rows = lines_of(read_file(dir / "advice.csv"));
    std::size_t a_oxic1 = 0;
    for (const auto& row : rows) {
        a_oxic1 += row.find(",aeration.a_oxic1,") != std::string::npos ? 1U : 0U;
    }
    EXPECT_EQ(a_oxic1, 5U);
}

TEST(FlocdReplay, AWrongHeaderWritesNothingAndExits65) {
    temp_dir dir;
    const auto r = flocd_replay({"--config", si_config, "--input", data_dir + "unknown-column.csv",
                                 "--output", dir / "advice.csv"});
    EXPECT_EQ(r.exit_code, 65);
    EXPECT_NE(r.err.find("unknown-column.csv:1:22: column \"a_oxic1_dox\""), std::string::npos)
        << r.err;
    EXPECT_FALSE(fs::exists(dir / "advice.csv"));
    EXPECT_FALSE(fs::exists(dir / "advice.csv.partial"));
}

TEST(FlocdReplay, ExitCodesForTheCommandLineAndTheFiles) {
    temp_dir dir;
    const std::string input = data_dir + "marrowby-2h.csv";
    EXPECT_EQ(flocd_replay({"--config", si_config, "--input", input}).exit_code, 64); // no --output
    EXPECT_EQ(flocd_replay({"--config", si_config, "--output", dir / "a.csv"}).exit_code, 64);
    EXPECT_EQ(flocd_replay({"--input", input, "--output", dir / "a.csv", "--units", "imperial"})
                  .exit_code,
              64);
    EXPECT_EQ(
        flocd_replay({"--input", input, "--output", dir / "a.csv", "--from", "soon"}).exit_code,
        64);
    EXPECT_EQ(
        flocd_replay({"--input", input, "--output", dir / "a.csv", "--max-gap", "3"}).exit_code,
        64);
    EXPECT_EQ(flocd_replay({"--input", input, "--output", dir / "a.csv", "--frobnicate"}).exit_code,
              64);
    const auto missing = flocd_replay(
        {"--config", si_config, "--input", dir / "none.csv", "--output", dir / "a.csv"});
    EXPECT_EQ(missing.exit_code, 66);
    EXPECT_NE(missing.err.find("cannot read"), std::string::npos) << missing.err;
    EXPECT_EQ(
        flocd_replay({"--config", dir / "none.toml", "--input", input, "--output", dir / "a.csv"})
            .exit_code,
        66);
    EXPECT_EQ(flocd_replay({"--config", source_dir + "/tests/config/broken/several-errors.toml",
                            "--input", input, "--output", dir / "a.csv"})
                  .exit_code,
              78);
    const auto nowhere = flocd_replay(
        {"--config", si_config, "--input", input, "--output", dir / "no/such/dir/a.csv"});
    EXPECT_EQ(nowhere.exit_code, 73);
    EXPECT_NE(nowhere.err.find("cannot create"), std::string::npos) << nowhere.err;
    EXPECT_EQ(flocd_replay({"--config", si_config, "--input", input, "--output", dir / "a.csv",
                            "--journal", dir / "no/such/dir/j.jsonl"})
                  .exit_code,
              73);
    EXPECT_FALSE(fs::exists(dir / "a.csv"));
    const auto empty =
        flocd_replay({"--config", si_config, "--input", "-", "--output", dir / "a.csv"},
                     "time,a_influent_flow\n");
    EXPECT_EQ(empty.exit_code, 65);
    EXPECT_NE(empty.err.find("found no data rows"), std::string::npos) << empty.err;
}

} // namespace

// --- a history from the simulated plant -------------------------------------------------------

// flocsim's headless trend names each sensor "sensor.TAG[unit]" after the example config's tags:
// the time and those columns, renamed "TAG [unit]", make a historian export of Marrowby.
TEST(FlocdReplay, ReplaysTheSimulatedPlantsTrend) {
    temp_dir dir;
    const auto sim = floc::test::run_process(
        {FLOCSIM_PATH, "--scenario", source_dir + "/sim_plant/scenarios/marrowby.toml", "--for",
         "12h", "--csv", dir / "trend.csv", "--csv-interval", "1min", "--quiet"},
        std::chrono::seconds{120});
    ASSERT_EQ(sim.exit_code, 0) << sim.err;
    std::ifstream trend{dir / "trend.csv"};
    csv_reader reader{trend};
    std::vector<csv_cell> cells;
    ASSERT_TRUE(reader.next(cells));
    std::vector<std::size_t> keep{0};
    std::string text = "time";
    for (std::size_t i = 1; i < cells.size(); ++i) {
        const std::string& name = cells[i].text;
        if (name.rfind("sensor.", 0) == 0 && name.back() == ']') {
            const auto open = name.find('[');
            keep.push_back(i);
            text += "," + name.substr(7, open - 7) + " " + name.substr(open);
        }
    }
    ASSERT_GE(keep.size(), 15U) << "sensor columns in the trend";
    text += "\n";
    std::size_t rows = 0;
    while (reader.next(cells)) {
        for (std::size_t k = 0; k < keep.size(); ++k) {
            text += (k == 0 ? "" : ",") +
                    (keep[k] < cells.size() ? cells[keep[k]].text : std::string{});
        }
        text += "\n";
        ++rows;
    }
    ASSERT_GE(rows, 12U * 60U);
    const auto cfg = load(si_config);
    const auto r = replay_text(cfg, text);
    EXPECT_TRUE(r.sum.clean()) << summary_text(r.sum, "trend", "-");
    const auto do1 = r.of("aeration.a_oxic1");
    ASSERT_GE(do1.size(), 12U * 60U);
    std::size_t good = 0;
    for (const recorded& x : do1) {
        good += x.advice.quality == advice_quality::good ? 1U : 0U;
        EXPECT_GE(x.advice.value, x.advice.min);
        EXPECT_LE(x.advice.value, x.advice.max);
    }
    // The simulated probes read well: after the first row (no readings yet) the cascade runs on
    // good inputs throughout.
    EXPECT_GE(good, do1.size() - 1U);
    EXPECT_EQ(do1.back().input("ammonia"), signal_quality::good);
    EXPECT_EQ(do1.back().input("flow"), signal_quality::good);
}
