// Probe checks. A slowly drifting probe (a fouled membrane, calibration creep) passes every check
// conditioning makes of one tag alone: one probe cannot tell a drift from the process. Operators
// catch drift with a check reading, a portable meter or a grab sample analysed in the lab,
// compared with what the online probe showed when the sample was taken (common practice).
//
// A lab entry with `checks = "TAG"` is such a check reading. For each checked tag the caller keeps
// a probe_check_state: a bounded history of the tag's own conditioned values in plant time, and
// the verdict on the latest check reading. While that verdict says the two differ by more than
// the entry's tolerance, the tag's signal is bad with reason check_disagrees, until a newer check
// agrees or the check is older than the entry's max_age. Pure: plant time is a parameter.
#pragma once

#include "floc/conditioning/conditioning.hpp"
#include "floc/config/config.hpp"

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string_view>
#include <vector>

namespace floc::conditioning {

// The history keeps at most this many points; one a minute covers a max_age of two days, a
// longer max_age spreads them out (probe_history_step_s).
inline constexpr std::size_t max_history_points = 2880;
inline constexpr double min_history_step_s = 60.0;

// Plant seconds between two history points for a check entry: one a minute, or max_age spread
// over max_history_points when that is longer.
[[nodiscard]] double probe_history_step_s(const config::lab_entry& entry);

// The probe's own conditioned value at one plant time.
struct history_point {
    double time_s = 0.0; // plant time
    double value = 0.0;  // canonical unit of the tag's quantity (NaN when it never had one)
    quality q = quality::bad;
};

// A check reading: the lab value and the plant time its sample was taken.
struct check_reading {
    double value = 0.0; // canonical unit of the entry's quantity
    double sample_time_s = 0.0;

    friend bool operator==(const check_reading&, const check_reading&) = default;
};

enum class check_outcome : std::uint8_t {
    agrees = 0,         // |probe - check| <= tolerance
    disagrees = 1,      // |probe - check| > tolerance: the probe is marked bad
    probe_unusable = 2, // the probe was bad at the sample time: nothing to compare
    no_probe_value = 3, // the history does not reach the sample time (older than the history,
                        // in a gap of it, or later than its last point by more than a step)
};

[[nodiscard]] std::string_view to_string(check_outcome o);

// The judgement of one check reading against the history.
struct check_verdict {
    check_reading check;
    check_outcome outcome = check_outcome::no_probe_value;
    double probe = 0.0;      // the probe's value at the sample time (NaN when there is none)
    double difference = 0.0; // probe - check (NaN when not compared)
    double tolerance = 0.0;  // the allowed |difference| for this reading
};

// Everything the checks of one tag remember. Plain data; the caller keeps it.
struct probe_check_state {
    std::vector<history_point> history;   // oldest first, at most max_history_points
    std::optional<check_verdict> verdict; // on the latest check reading judged
};

// Adds the tag's own signal at plant time `now_s` to the history when a step has passed since
// the last point, and drops points older than max_age and a step. A plant clock that went back
// clears the history.
void record(const config::lab_entry& entry, probe_check_state& s, const signal& own, double now_s);

// The probe's value at plant time `t_s`: linear interpolation between the two history points
// around it (the point itself at an exact match; the last point when `t_s` is at most a step
// after it). Both points must be usable and at most three steps apart. `value` is NaN and `q`
// bad when the history does not reach `t_s`; `found` tells the two apart.
struct probe_value {
    bool found = false;
    double value = 0.0;
    quality q = quality::bad;
};
[[nodiscard]] probe_value probe_value_at(const config::lab_entry& entry, const probe_check_state& s,
                                         double t_s);

// Judges one check reading against the history. The tolerance is the entry's
// check_tolerance + check_relative_tolerance x |check value|; a difference exactly at the
// tolerance agrees.
[[nodiscard]] check_verdict judge(const config::lab_entry& entry, const probe_check_state& s,
                                  const check_reading& c);

// The tag's signal after its check: `own` unchanged, except that a good or uncertain signal is
// bad/check_disagrees while the verdict disagrees and its check is not older than max_age at
// `now_s`. A signal already bad keeps its own reason (it says more about the probe).
[[nodiscard]] signal apply(const config::lab_entry& entry, const probe_check_state& s,
                           const signal& own, double now_s);

// One round for one checked tag at plant time `now_s`: records `own`, judges `latest` when it
// differs from the reading last judged (and is not older than max_age), and returns the signal
// after the check. `judged` receives the new verdict when there was one. No check reading, or
// one older than max_age, clears the verdict.
[[nodiscard]] signal check_probe(const config::lab_entry& entry, probe_check_state& s,
                                 const signal& own, const std::optional<check_reading>& latest,
                                 double now_s, std::optional<check_verdict>& judged);

} // namespace floc::conditioning
