#include "floc/conditioning/conditioning.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace floc::conditioning {
namespace {

constexpr double nan = std::numeric_limits<double>::quiet_NaN();

bool is_state_tag(const config::tag& t) { return t.quantity() == units::quantity::state; }

double median_of(const state& s) {
    std::array<double, max_median_samples> copy{};
    const std::size_t n = s.window_count;
    std::copy_n(s.window.begin(), n, copy.begin());
    const auto mid = copy.begin() + static_cast<std::ptrdiff_t>(n / 2);
    std::nth_element(copy.begin(), mid, copy.begin() + static_cast<std::ptrdiff_t>(n));
    return *mid;
}

// Adds an accepted value to the filter and returns the filtered value.
double filter(const config::tag& t, state& s, double v, double time_s) {
    switch (t.filter) {
    case config::filter_kind::median: {
        const std::uint32_t size = std::min<std::uint32_t>(t.median_samples, max_median_samples);
        s.window.at(s.window_next % size) = v;
        s.window_next = (s.window_next + 1) % size;
        s.window_count = std::min(s.window_count + 1, size);
        return median_of(s);
    }
    case config::filter_kind::ema: {
        if (!s.out.has_value) {
            s.ema = v;
        } else {
            // Exact discretisation of a first-order lag for irregular sample intervals.
            const double dt = std::max(0.0, time_s - s.last_accepted_s);
            const double alpha = 1.0 - std::exp(-dt / std::max(t.ema_time_constant_s, 1e-9));
            s.ema += alpha * (v - s.ema);
        }
        return s.ema;
    }
    case config::filter_kind::none:
        break;
    }
    return v;
}

// The value shown while a reading is not usable: the last good value, or NaN.
void hold(state& s, quality q, reason why) {
    s.out.q = q;
    s.out.why = why;
    if (!s.out.has_value) {
        s.out.value = nan;
        s.out.q = quality::bad;
    }
}

// A failed or rejected reading: uncertain while the last good one is young, else bad.
void hold_if_young(const config::tag& t, state& s, double now_s, reason why) {
    const bool young = s.out.has_value && now_s - s.out.last_good_s < t.stale_after_s;
    hold(s, young ? quality::uncertain : quality::bad, young ? why : (s.out.has_value ? reason::stale : why));
}

} // namespace

std::string_view to_string(quality q) {
    switch (q) {
    case quality::good: return "good";
    case quality::uncertain: return "uncertain";
    case quality::bad: return "bad";
    }
    return "?";
}

std::string_view to_string(reason r) {
    switch (r) {
    case reason::ok: return "ok";
    case reason::no_data: return "no data";
    case reason::read_failed: return "read failed";
    case reason::not_a_number: return "not a number";
    case reason::below_range: return "below range";
    case reason::above_range: return "above range";
    case reason::spike: return "spike";
    case reason::frozen: return "frozen";
    case reason::stale: return "stale";
    case reason::check_disagrees: return "check disagrees";
    }
    return "?";
}

state update(const config::tag& t, const state& previous, const sample& in) {
    state s = previous;
    if (!in.read_ok) {
        s.out.raw = nan;
        hold_if_young(t, s, in.time_s, reason::read_failed);
        return s;
    }
    const double v = in.value;
    s.out.raw = v;
    if (!std::isfinite(v)) {
        hold(s, quality::bad, reason::not_a_number);
        return s;
    }
    if (is_state_tag(t)) {
        s.out.value = v;
        s.out.q = quality::good;
        s.out.why = reason::ok;
        s.out.last_good_s = in.time_s;
        s.out.has_value = true;
        return s;
    }
    if (v < t.valid_min || v > t.valid_max) {
        hold(s, quality::bad, v < t.valid_min ? reason::below_range : reason::above_range);
        s.frozen_started = false;
        return s;
    }

    // Spike: a step faster than the limit is held back until it persists.
    if (t.max_change_per_minute && s.out.has_value) {
        const double dt_min = std::max(in.time_s - s.last_accepted_s, 1e-3) / 60.0;
        const double rate = std::abs(v - s.last_accepted) / dt_min;
        if (rate > *t.max_change_per_minute) {
            const bool same_level = s.spike_count > 0 &&
                                    std::abs(v - s.spike_level) <= *t.max_change_per_minute;
            s.spike_count = same_level ? s.spike_count + 1 : 1;
            s.spike_level = same_level ? s.spike_level : v;
            if (s.spike_count < spike_confirm_samples) {
                hold_if_young(t, s, in.time_s, reason::spike);
                return s;
            }
            // A persistent new level is a real change: restart the filter there.
            s.window_count = 0;
            s.window_next = 0;
            s.ema = v;
        }
    }
    s.spike_count = 0;

    // Frozen probe: the reading stays within the tolerance for too long.
    bool frozen = false;
    if (t.frozen_after_s) {
        if (!s.frozen_started || std::abs(v - s.frozen_reference) > t.frozen_tolerance) {
            s.frozen_started = true;
            s.frozen_reference = v;
            s.frozen_since_s = in.time_s;
        }
        frozen = in.time_s - s.frozen_since_s >= *t.frozen_after_s;
    }

    s.out.value = filter(t, s, v, in.time_s);
    s.last_accepted = v;
    s.last_accepted_s = in.time_s;
    s.out.has_value = true;
    if (frozen) {
        s.out.q = quality::bad;
        s.out.why = reason::frozen;
        return s;
    }
    s.out.q = quality::good;
    s.out.why = reason::ok;
    s.out.last_good_s = in.time_s;
    return s;
}

signal assess(const config::tag& t, const state& s, double now_s) {
    signal out = s.out;
    if (out.has_value && out.q != quality::bad && now_s - out.last_good_s >= t.stale_after_s) {
        out.q = quality::bad;
        out.why = reason::stale;
    }
    return out;
}

} // namespace floc::conditioning
