#include "floc/advisors/machinery.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

namespace floc::advisors {

// --- Output shaping ---------------------------------------------------------------------------

shaped_output shape_output(double wanted, double previous, double max_step, double lo, double hi) {
    shaped_output out;
    const bool has_previous = std::isfinite(previous);
    double v = wanted;
    if (!std::isfinite(v)) {
        v = has_previous ? previous : lo;
    }
    if (has_previous) {
        const double step = std::isfinite(max_step) ? std::max(max_step, 0.0) : 0.0;
        if (v > previous + step) {
            v = previous + step;
            out.rate_limited = true;
        } else if (v < previous - step) {
            v = previous - step;
            out.rate_limited = true;
        }
    }
    if (v < lo) {
        v = lo;
        out.clamped_low = true;
        out.rate_limited = false;
    } else if (v > hi) {
        v = hi;
        out.clamped_high = true;
        out.rate_limited = false;
    }
    out.value = v;
    return out;
}

// --- Output memory, hold and fallback ---------------------------------------------------------

held_output hold_or_fallback(const output_memory& m, double now_s, const hold_policy& p,
                             reason_list& reasons) {
    held_output out;
    if (m.has_good && now_s - m.good_at_s <= p.hold_for_s) {
        out.value = m.good_value;
        out.quality = advice_quality::held;
        reasons.add(reason::holding_last_good);
    } else {
        out.value = p.fallback;
        out.quality = advice_quality::fallback;
        reasons.add(reason::fallback_value);
    }
    return out;
}

void remember(output_memory& m, double value, double now_s, bool good) {
    m.has_value = true;
    m.value = value;
    m.at_s = now_s;
    if (good) {
        m.has_good = true;
        m.good_value = value;
        m.good_at_s = now_s;
    }
    m.last_was_good = good;
}

double since_last_s(const output_memory& m, double now_s) {
    if (!m.has_value) {
        return 0.0;
    }
    const double dt = now_s - m.at_s;
    return std::isfinite(dt) && dt > 0.0 ? dt : 0.0;
}

// --- PI controller ----------------------------------------------------------------------------

pi_memory pi_start(double output, double error, double feedforward, const pi_tuning& t,
                   double now_s) {
    pi_memory m;
    m.primed = true;
    m.integral = output - t.gain * error - feedforward;
    m.at_s = now_s;
    return m;
}

pi_proposal pi_propose(const pi_tuning& t, const pi_memory& m, double error, double feedforward,
                       double now_s) {
    pi_proposal p;
    const double dt = now_s - m.at_s;
    p.dt_s = std::isfinite(dt) && dt > 0.0 ? dt : 0.0;
    p.proportional = t.gain * error;
    p.integral_free = m.integral;
    if (t.integral_time_s > 0.0) {
        p.integral_free += t.gain * p.dt_s / t.integral_time_s * error;
    }
    p.wanted = p.proportional + p.integral_free + feedforward;
    return p;
}

pi_memory pi_accept(const pi_memory& m, const pi_proposal& p, double applied, double feedforward,
                    double now_s) {
    pi_memory next = m;
    next.primed = true;
    next.at_s = now_s;
    const double tolerance = 1e-12 * std::max(1.0, std::abs(p.wanted));
    if (std::abs(applied - p.wanted) <= tolerance) {
        next.integral = p.integral_free;
        return next;
    }
    const double tracking = applied - p.proportional - feedforward;
    const double lo = std::min(m.integral, p.integral_free);
    const double hi = std::max(m.integral, p.integral_free);
    next.integral = std::clamp(tracking, lo, hi);
    return next;
}

// --- Rolling window ---------------------------------------------------------------------------

namespace {

constexpr auto bucket_count = static_cast<std::int64_t>(window_buckets);

std::size_t slot_of(std::int64_t index) {
    return static_cast<std::size_t>(((index % bucket_count) + bucket_count) % bucket_count);
}

std::int64_t index_of(double at_s, double bucket_s) {
    return static_cast<std::int64_t>(std::floor(at_s / bucket_s));
}

// The bucket indices inside the window at `now_s` that can hold data: [first, last].
bool live_range(const rolling_window& w, double now_s, std::int64_t& first, std::int64_t& last) {
    if (w.bucket_s <= 0.0 || !std::isfinite(now_s)) {
        return false;
    }
    const std::int64_t now_index = index_of(now_s, w.bucket_s);
    first = std::max(w.newest - bucket_count + 1, now_index - bucket_count + 1);
    last = std::min(w.newest, now_index);
    return first <= last;
}

} // namespace

void window_add(rolling_window& w, double window_s, double value, double at_s) {
    if (!std::isfinite(value) || !std::isfinite(at_s) || !(window_s > 0.0)) {
        return;
    }
    const double bucket_s = window_s / static_cast<double>(window_buckets);
    const std::int64_t index = index_of(at_s, bucket_s);
    if (w.bucket_s != bucket_s) {
        w = rolling_window{};
        w.bucket_s = bucket_s;
        w.newest = index;
        w.last_at_s = at_s;
    }
    if (index > w.newest) {
        const std::int64_t from = std::max(w.newest + 1, index - bucket_count + 1);
        for (std::int64_t i = from; i <= index; ++i) {
            w.sum.at(slot_of(i)) = 0.0;
            w.weight.at(slot_of(i)) = 0.0;
        }
        w.newest = index;
    } else if (index <= w.newest - bucket_count) {
        return; // older than the window
    }
    const double gap = at_s - w.last_at_s;
    const double weight = std::clamp(std::isfinite(gap) ? gap : 1.0, 1.0, bucket_s);
    w.sum.at(slot_of(index)) += value * weight;
    w.weight.at(slot_of(index)) += weight;
    w.last_at_s = std::max(w.last_at_s, at_s);
}

std::optional<double> window_mean(const rolling_window& w, double now_s) {
    std::int64_t first = 0;
    std::int64_t last = 0;
    if (!live_range(w, now_s, first, last)) {
        return std::nullopt;
    }
    double sum = 0.0;
    double weight = 0.0;
    for (std::int64_t i = first; i <= last; ++i) {
        sum += w.sum.at(slot_of(i));
        weight += w.weight.at(slot_of(i));
    }
    if (weight <= 0.0) {
        return std::nullopt;
    }
    return sum / weight;
}

double window_coverage_s(const rolling_window& w, double now_s) {
    std::int64_t first = 0;
    std::int64_t last = 0;
    if (!live_range(w, now_s, first, last)) {
        return 0.0;
    }
    double weight = 0.0;
    for (std::int64_t i = first; i <= last; ++i) {
        weight += w.weight.at(slot_of(i));
    }
    return weight;
}

std::optional<double> window_slope_per_s(const rolling_window& w, double now_s) {
    std::int64_t first = 0;
    std::int64_t last = 0;
    if (!live_range(w, now_s, first, last)) {
        return std::nullopt;
    }
    std::vector<std::pair<double, double>> points;
    for (std::int64_t i = first; i <= last; ++i) {
        const double weight = w.weight.at(slot_of(i));
        if (weight > 0.0) {
            const double centre_s = (static_cast<double>(i) + 0.5) * w.bucket_s;
            points.emplace_back(centre_s, w.sum.at(slot_of(i)) / weight);
        }
    }
    const double window_s = w.bucket_s * static_cast<double>(window_buckets);
    if (points.size() < 3 || points.back().first - points.front().first < 0.5 * window_s) {
        return std::nullopt;
    }
    double mean_t = 0.0;
    double mean_v = 0.0;
    for (const auto& [t, v] : points) {
        mean_t += t;
        mean_v += v;
    }
    mean_t /= static_cast<double>(points.size());
    mean_v /= static_cast<double>(points.size());
    double num = 0.0;
    double den = 0.0;
    for (const auto& [t, v] : points) {
        num += (t - mean_t) * (v - mean_v);
        den += (t - mean_t) * (t - mean_t);
    }
    if (den <= 0.0) {
        return std::nullopt;
    }
    return num / den;
}

} // namespace floc::advisors

namespace floc::advisors {

void note_shaping(const shaped_output& s, reason_list& reasons) {
    if (s.clamped_low) {
        reasons.add(reason::clamped_to_minimum);
    }
    if (s.clamped_high) {
        reasons.add(reason::clamped_to_maximum);
    }
    if (s.rate_limited) {
        reasons.add(reason::rate_limited);
    }
}

} // namespace floc::advisors
