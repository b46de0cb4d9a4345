// Probe checks: a check reading (a portable meter or a grab sample analysed in the lab) compared
// with what the online probe showed when the sample was taken, the trade's defence against a
// slowly drifting probe (common practice). The values here are invented; the boundaries are the
// rule's own: a difference exactly at the tolerance agrees, a check older than the history or
// taken while the probe was bad is not compared, a later agreeing check clears a disagreement,
// and a check older than max_age counts no more.
#include "floc/conditioning/probe_check.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <optional>

namespace {

using namespace floc;
using conditioning::check_outcome;
using conditioning::check_reading;
using conditioning::check_verdict;
using conditioning::probe_check_state;
using conditioning::quality;
using conditioning::reason;
using conditioning::signal;

constexpr double minute = 60.0;
constexpr double hour = 3600.0;

// A nitrate check entry: 1 mg/L absolute tolerance, max_age 12 h (one history point a minute).
config::lab_entry check_entry(double tolerance = 1.0, double relative = 0.0) {
    config::lab_entry e;
    e.name = "no3_check";
    e.kind = units::quantity::concentration;
    e.valid_min = 0.0;
    e.valid_max = 30.0;
    e.max_age_s = 12 * hour;
    config::probe_check c;
    c.tag.name = "no3";
    c.tolerance = tolerance;
    c.relative_tolerance = relative;
    e.check = c;
    return e;
}

signal good(double v) {
    signal s;
    s.value = v;
    s.raw = v;
    s.q = quality::good;
    s.why = reason::ok;
    s.has_value = true;
    return s;
}

signal with(signal s, quality q, reason why) {
    s.q = q;
    s.why = why;
    return s;
}

// Records `value_at(t)` once a minute from `from_s` to `to_s` (inclusive).
template <class F>
void record_minutes(const config::lab_entry& e, probe_check_state& s, double from_s, double to_s,
                    F value_at) {
    for (double t = from_s; t <= to_s; t += minute) {
        conditioning::record(e, s, value_at(t), t);
    }
}

TEST(ProbeHistory, OnePointPerStepAndBounded) {
    const auto e = check_entry();
    EXPECT_DOUBLE_EQ(conditioning::probe_history_step_s(e), 60.0);
    probe_check_state s;
    for (double t = 0.0; t < 10 * minute; t += 5.0) { // a poll every 5 s
        conditioning::record(e, s, good(4.0), t);
    }
    EXPECT_EQ(s.history.size(), 10U); // 0, 60, ..., 540 s
    // A day at one point a minute keeps only max_age and a step of it.
    record_minutes(e, s, 10 * minute, 24 * hour, [](double) { return good(4.0); });
    EXPECT_LE(s.history.size(), 12U * 60U + 2U);
    EXPECT_GE(s.history.front().time_s, 24 * hour - 12 * hour - minute);
    // A long max_age spreads the points, capped in number.
    auto long_entry = e;
    long_entry.max_age_s = 30 * 86400.0;
    EXPECT_DOUBLE_EQ(conditioning::probe_history_step_s(long_entry),
                     30 * 86400.0 / static_cast<double>(conditioning::max_history_points));
}

TEST(ProbeHistory, AClockThatGoesBackClearsIt) {
    const auto e = check_entry();
    probe_check_state s;
    record_minutes(e, s, 0.0, 30 * minute, [](double) { return good(4.0); });
    conditioning::record(e, s, good(5.0), 10 * minute);
    ASSERT_EQ(s.history.size(), 1U);
    EXPECT_DOUBLE_EQ(s.history.front().value, 5.0);
}

TEST(ProbeValue, InterpolatesBetweenTheTwoPointsAroundTheSampleTime) {
    const auto e = check_entry();
    probe_check_state s;
    record_minutes(e, s, 0.0, 60 * minute,
                   [](double t) { return good(4.0 + t / hour); }); // +1 mg/L/h
    const auto at_point = conditioning::probe_value_at(e, s, 30 * minute);
    ASSERT_TRUE(at_point.found);
    EXPECT_DOUBLE_EQ(at_point.value, 4.5);
    const auto between = conditioning::probe_value_at(e, s, 30 * minute + 30.0);
    ASSERT_TRUE(between.found);
    EXPECT_NEAR(between.value, 4.5 + 30.0 / hour, 1e-12);
    EXPECT_EQ(between.q, quality::good);
    // Up to a step after the last point: the last point; later, or before the first: none.
    EXPECT_TRUE(conditioning::probe_value_at(e, s, 60 * minute + 59.0).found);
    EXPECT_FALSE(conditioning::probe_value_at(e, s, 62 * minute).found);
    EXPECT_FALSE(conditioning::probe_value_at(e, s, -1.0).found);
}

TEST(ProbeValue, AGapInTheHistoryHasNoValue) {
    const auto e = check_entry();
    probe_check_state s;
    conditioning::record(e, s, good(4.0), 0.0);
    conditioning::record(e, s, good(4.0), 10 * minute); // flocd was not running in between
    EXPECT_FALSE(conditioning::probe_value_at(e, s, 5 * minute).found);
}

TEST(ProbeCheck, ExactlyAtTheToleranceAgreesJustAboveDisagrees) {
    const auto e = check_entry(1.0);
    probe_check_state s;
    record_minutes(e, s, 0.0, 20 * minute, [](double) { return good(5.0); });
    // 5.0 - 4.0 = 1.0, exact in binary: at the tolerance, not beyond it.
    const check_verdict at = conditioning::judge(e, s, check_reading{4.0, 10 * minute});
    EXPECT_EQ(at.outcome, check_outcome::agrees);
    EXPECT_DOUBLE_EQ(at.difference, 1.0);
    EXPECT_DOUBLE_EQ(at.tolerance, 1.0);
    EXPECT_DOUBLE_EQ(at.probe, 5.0);
    const check_verdict above = conditioning::judge(e, s, check_reading{3.875, 10 * minute});
    EXPECT_EQ(above.outcome, check_outcome::disagrees);
    EXPECT_DOUBLE_EQ(above.difference, 1.125);
    // A probe reading low disagrees as much as one reading high.
    EXPECT_EQ(conditioning::judge(e, s, check_reading{6.125, 10 * minute}).outcome,
              check_outcome::disagrees);
}

TEST(ProbeCheck, TheRelativePartScalesWithTheCheckReading) {
    const auto e = check_entry(0.25, 0.125); // 0.25 mg/L + 12.5 % of the check
    probe_check_state s;
    record_minutes(e, s, 0.0, 20 * minute, [](double) { return good(9.0); });
    // check 8: tolerance 0.25 + 1.0 = 1.25 >= 1.0
    const check_verdict v = conditioning::judge(e, s, check_reading{8.0, 10 * minute});
    EXPECT_DOUBLE_EQ(v.tolerance, 1.25);
    EXPECT_EQ(v.outcome, check_outcome::agrees);
    // check 2 at a probe of 3: tolerance 0.5 < 1.0
    probe_check_state low;
    record_minutes(e, low, 0.0, 20 * minute, [](double) { return good(3.0); });
    EXPECT_EQ(conditioning::judge(e, low, check_reading{2.0, 10 * minute}).outcome,
              check_outcome::disagrees);
}

TEST(ProbeCheck, ACheckOlderThanTheHistoryIsNotCompared) {
    const auto e = check_entry();
    probe_check_state s;
    record_minutes(e, s, 2 * hour, 3 * hour, [](double) { return good(9.0); });
    const check_verdict v = conditioning::judge(e, s, check_reading{4.0, 1 * hour});
    EXPECT_EQ(v.outcome, check_outcome::no_probe_value);
    EXPECT_TRUE(std::isnan(v.probe));
    EXPECT_TRUE(std::isnan(v.difference));
    // ... and leaves the probe as it is.
    std::optional<check_verdict> judged;
    const signal out =
        conditioning::check_probe(e, s, good(9.0), check_reading{4.0, 1 * hour}, 3 * hour, judged);
    ASSERT_TRUE(judged.has_value());
    EXPECT_EQ(judged->outcome, check_outcome::no_probe_value);
    EXPECT_EQ(out.q, quality::good);
}

TEST(ProbeCheck, AProbeBadAtTheSampleTimeIsNotCompared) {
    const auto e = check_entry();
    probe_check_state s;
    record_minutes(e, s, 0.0, 60 * minute, [](double t) {
        const signal v = good(9.0);
        return t >= 20 * minute && t <= 30 * minute ? with(v, quality::bad, reason::read_failed)
                                                    : v;
    });
    EXPECT_EQ(conditioning::judge(e, s, check_reading{4.0, 25 * minute}).outcome,
              check_outcome::probe_unusable);
    // Between a bad point and a good one: not compared either.
    EXPECT_EQ(conditioning::judge(e, s, check_reading{4.0, 30 * minute + 30.0}).outcome,
              check_outcome::probe_unusable);
    // An uncertain point (the last good value, still young) is compared.
    probe_check_state u;
    record_minutes(e, u, 0.0, 60 * minute,
                   [](double) { return with(good(9.0), quality::uncertain, reason::read_failed); });
    EXPECT_EQ(conditioning::judge(e, u, check_reading{4.0, 25 * minute}).outcome,
              check_outcome::disagrees);
}

TEST(ProbeCheck, ADisagreeingCheckMarksTheProbeBadUntilALaterCheckAgrees) {
    const auto e = check_entry();
    probe_check_state s;
    const auto drifting = [](double t) { return good(4.0 + 2.0 * t / hour); }; // +2 mg/L per hour
    double t = 0.0;
    std::optional<check_verdict> judged;
    for (; t <= 60 * minute; t += minute) {
        const signal out = conditioning::check_probe(e, s, drifting(t), std::nullopt, t, judged);
        EXPECT_EQ(out.q, quality::good);
        EXPECT_FALSE(judged.has_value());
    }
    // At 61 min a grab sample taken at 50 min is entered: 4.0, where the probe showed 5.667.
    const check_reading grab{4.0, 50 * minute};
    signal out = conditioning::check_probe(e, s, drifting(t), grab, t, judged);
    ASSERT_TRUE(judged.has_value());
    EXPECT_EQ(judged->outcome, check_outcome::disagrees);
    EXPECT_NEAR(judged->probe, 4.0 + 2.0 * 50.0 / 60.0, 1e-12);
    EXPECT_EQ(out.q, quality::bad);
    EXPECT_EQ(out.why, reason::check_disagrees);
    EXPECT_DOUBLE_EQ(out.value, drifting(t).value); // the value stays what the probe says
    // The same reading is judged once; the probe stays bad while it counts.
    t += minute;
    out = conditioning::check_probe(e, s, drifting(t), grab, t, judged);
    EXPECT_FALSE(judged.has_value());
    EXPECT_EQ(out.why, reason::check_disagrees);
    // A signal already bad keeps its own reason.
    const signal stale = with(drifting(t), quality::bad, reason::stale);
    EXPECT_EQ(conditioning::check_probe(e, s, stale, grab, t, judged).why, reason::stale);
    // Uncertain (a failed read, the last value young) is overruled: that value is off too.
    const signal held = with(drifting(t), quality::uncertain, reason::read_failed);
    EXPECT_EQ(conditioning::check_probe(e, s, held, grab, t, judged).why, reason::check_disagrees);
    // After recalibration a new check agrees with the probe: back to the probe's own quality.
    t += minute;
    const check_reading after{drifting(t).value - 0.5, t};
    out = conditioning::check_probe(e, s, drifting(t), after, t, judged);
    ASSERT_TRUE(judged.has_value());
    EXPECT_EQ(judged->outcome, check_outcome::agrees);
    EXPECT_EQ(out.q, quality::good);
    EXPECT_EQ(out.why, reason::ok);
}

TEST(ProbeCheck, ADisagreeingCheckCountsUntilMaxAge) {
    auto e = check_entry();
    e.max_age_s = 2 * hour;
    probe_check_state s;
    std::optional<check_verdict> judged;
    double t = 0.0;
    for (; t <= 30 * minute; t += minute) {
        (void)conditioning::check_probe(e, s, good(6.0), std::nullopt, t, judged);
    }
    const check_reading grab{4.0, 30 * minute};
    for (; t <= 30 * minute + 2 * hour; t += minute) {
        EXPECT_EQ(conditioning::check_probe(e, s, good(6.0), grab, t, judged).why,
                  reason::check_disagrees)
            << t;
    }
    // Older than max_age: the probe is its own again.
    const signal out = conditioning::check_probe(e, s, good(6.0), grab, t, judged);
    EXPECT_EQ(out.q, quality::good);
    EXPECT_FALSE(s.verdict.has_value());
    EXPECT_FALSE(judged.has_value());
}

TEST(ProbeCheck, NoCheckLeavesTheSignalUntouched) {
    const auto e = check_entry();
    probe_check_state s;
    std::optional<check_verdict> judged;
    const signal in = with(good(3.0), quality::uncertain, reason::spike);
    const signal out = conditioning::check_probe(e, s, in, std::nullopt, 0.0, judged);
    EXPECT_EQ(out.q, in.q);
    EXPECT_EQ(out.why, in.why);
    EXPECT_DOUBLE_EQ(out.value, in.value);
    EXPECT_FALSE(judged.has_value());
    // A check already older than max_age when it arrives is not judged.
    const signal later =
        conditioning::check_probe(e, s, good(9.0), check_reading{1.0, 0.0}, 13 * hour, judged);
    EXPECT_FALSE(judged.has_value());
    EXPECT_EQ(later.q, quality::good);
}

TEST(ProbeCheck, TheReasonHasItsStableNumberAndName) {
    EXPECT_EQ(static_cast<int>(reason::check_disagrees), 9);
    EXPECT_EQ(conditioning::last_reason, reason::check_disagrees);
    EXPECT_EQ(conditioning::to_string(reason::check_disagrees), "check disagrees");
    EXPECT_EQ(conditioning::to_string(check_outcome::disagrees), "disagrees");
}

} // namespace
