#include "floc/conditioning/probe_check.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace floc::conditioning {
namespace {

constexpr double nan = std::numeric_limits<double>::quiet_NaN();

// Two history points further apart than this many steps leave a gap (flocd was not running).
constexpr double max_gap_steps = 3.0;

quality worse(quality a, quality b) {
    return static_cast<std::uint8_t>(a) >= static_cast<std::uint8_t>(b) ? a : b;
}

} // namespace

double probe_history_step_s(const config::lab_entry& entry) {
    return std::max(min_history_step_s, entry.max_age_s / static_cast<double>(max_history_points));
}

std::string_view to_string(check_outcome o) {
    switch (o) {
    case check_outcome::agrees:
        return "agrees";
    case check_outcome::disagrees:
        return "disagrees";
    case check_outcome::probe_unusable:
        return "probe_unusable";
    case check_outcome::no_probe_value:
        return "no_probe_value";
    }
    return "?";
}

void record(const config::lab_entry& entry, probe_check_state& s, const signal& own, double now_s) {
    std::vector<history_point>& h = s.history;
    const double step_s = probe_history_step_s(entry);
    if (!h.empty() && now_s < h.back().time_s) {
        h.clear(); // the plant clock went back: the old points are of another time line
    }
    if (h.empty() || now_s - h.back().time_s >= step_s) {
        h.push_back(history_point{now_s, own.has_value ? own.value : nan, own.q});
    }
    // A check older than max_age is not judged, so older points are not needed (one step more
    // keeps the point before the oldest sample time that can still be judged).
    const double keep_from_s = now_s - entry.max_age_s - step_s;
    const auto first_kept = std::find_if(
        h.begin(), h.end(), [&](const history_point& p) { return p.time_s >= keep_from_s; });
    h.erase(h.begin(), first_kept);
    if (h.size() > max_history_points) {
        h.erase(h.begin(), h.begin() + static_cast<std::ptrdiff_t>(h.size() - max_history_points));
    }
}

probe_value probe_value_at(const config::lab_entry& entry, const probe_check_state& s, double t_s) {
    const std::vector<history_point>& h = s.history;
    const double step_s = probe_history_step_s(entry);
    if (h.empty() || t_s < h.front().time_s) {
        return {}; // older than the history
    }
    const auto after = std::upper_bound(
        h.begin(), h.end(), t_s, [](double t, const history_point& p) { return t < p.time_s; });
    const history_point& before = *(after - 1);
    if (before.time_s == t_s) {
        return {true, before.value, before.q};
    }
    if (after == h.end()) {
        if (t_s - before.time_s <= step_s) {
            return {true, before.value, before.q};
        }
        return {}; // later than the history
    }
    if (after->time_s - before.time_s > max_gap_steps * step_s) {
        return {}; // in a gap
    }
    const quality q = worse(before.q, after->q);
    if (q == quality::bad) {
        return {true, nan, quality::bad};
    }
    const double w = (t_s - before.time_s) / (after->time_s - before.time_s);
    return {true, before.value + w * (after->value - before.value), q};
}

check_verdict judge(const config::lab_entry& entry, const probe_check_state& s,
                    const check_reading& c) {
    check_verdict v;
    v.check = c;
    v.probe = nan;
    v.difference = nan;
    const config::probe_check rule = entry.check.value_or(config::probe_check{});
    v.tolerance = rule.tolerance + rule.relative_tolerance * std::abs(c.value);
    const probe_value p = probe_value_at(entry, s, c.sample_time_s);
    if (!p.found) {
        v.outcome = check_outcome::no_probe_value;
        return v;
    }
    if (p.q == quality::bad || !std::isfinite(p.value)) {
        v.outcome = check_outcome::probe_unusable;
        return v;
    }
    v.probe = p.value;
    v.difference = p.value - c.value;
    v.outcome =
        std::abs(v.difference) > v.tolerance ? check_outcome::disagrees : check_outcome::agrees;
    return v;
}

signal apply(const config::lab_entry& entry, const probe_check_state& s, const signal& own,
             double now_s) {
    signal out = own;
    const bool disagrees = s.verdict && s.verdict->outcome == check_outcome::disagrees &&
                           now_s - s.verdict->check.sample_time_s <= entry.max_age_s;
    if (disagrees && own.q != quality::bad) {
        out.q = quality::bad;
        out.why = reason::check_disagrees;
    }
    return out;
}

signal check_probe(const config::lab_entry& entry, probe_check_state& s, const signal& own,
                   const std::optional<check_reading>& latest, double now_s,
                   std::optional<check_verdict>& judged) {
    judged.reset();
    record(entry, s, own, now_s);
    if (!latest || now_s - latest->sample_time_s > entry.max_age_s) {
        s.verdict.reset(); // no check reading, or only one too old to count
    } else if (!s.verdict || s.verdict->check != *latest) {
        s.verdict = judge(entry, s, *latest);
        judged = s.verdict;
    }
    return apply(entry, s, own, now_s);
}

} // namespace floc::conditioning
