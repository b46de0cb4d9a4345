// The operator stand-in's lab round (flocsim --enter-lab). It takes the samples of the scenario's
// lab sheet from the simulated plant at their times (grab samples, or flow-proportional
// composites of aliquots taken every 15 plant minutes), and once a result's entry delay has
// passed it types it into flocd's lab entries as an operator at the HMI would, with flocd's own
// register map (floc::registers::build from the flocd config): first how many minutes ago the
// sample was taken (the slot's sample age, function 16), then the value as float32 in the
// config's display unit and word order (function 16), then it reads the slot back (function 03)
// for the acknowledgement. So flocd dates the sample at its sampling time, not at its entry.
//
// The minutes are counted on flocd's clock: its plant time as last read from its status block
// when flocd follows the PLC's time tag ([clock] source = "plc_tag", as on every bench), else
// flocsim's plant time. (The block trails flocd's clock by up to a tick of flocd, and the reading
// is up to a period old: a sample may be dated late by the polls of those two seconds.) A result is typed only while flocd's status block shows it running (or
// degraded) with this layout; of several results of one entry due together only the newest is
// typed. What flocd refuses (out of range, not allowed, not a number) is reported and dropped,
// never typed again; a typing that does not reach flocd (no connection, no reply) is tried again
// with the next reading of flocd, three times in all.
//
// Pure: plant outputs and what flocd shows in; register jobs and report lines out. The serving
// loop does the sampling at the instants asked for, the writing (modbus_lab_writer) and the log.
#pragma once

#include "floc/config/config.hpp"
#include "floc/registers/register_map.hpp"
#include "floc/sim/hmi_operator.hpp"
#include "floc/sim/lab_writer.hpp"
#include "floc/sim/scenario.hpp"

#include <cstdint>
#include <deque>
#include <limits>
#include <string>
#include <vector>

namespace floc::sim {

// Aliquots of the composite samples are taken on this grid of plant time.
inline constexpr double aliquot_interval_s = 900.0;
// Tries of a typing that does not reach flocd, in all.
inline constexpr unsigned max_typing_attempts = 3;
// Results of one entry waiting to be typed, at most (the oldest is dropped).
inline constexpr std::size_t max_pending_results = 64;

// The sheet against a flocd config: every entry names a [[lab_entry]] of the quantity of its
// figure. One file:line:col message per mismatch, in sheet order; empty when the sheet fits.
[[nodiscard]] std::vector<std::string> lab_sheet_problems(const lab_sheet_spec& sheet,
                                                          const config::plant_config& cfg);

// One result typed into flocd.
struct lab_typing {
    std::size_t entry = 0;     // on the sheet
    double value = 0.0;        // canonical unit of the figure
    double sampled_at_s = 0.0; // plant time
    std::uint16_t minutes_ago = 0;
    unsigned attempt = 1;
    register_job job; // the sample age, the value; the slot read back
};

class lab_technician {
public:
    // `s`, `map` and `cfg` must outlive the technician. Entries that do not fit `cfg` (see
    // lab_sheet_problems) are left out.
    lab_technician(const scenario& s, const registers::register_map& map,
                   const config::plant_config& cfg);
    lab_technician(const lab_technician&) = delete;
    lab_technician& operator=(const lab_technician&) = delete;

    // flocd's lab entries that are not on the sheet; they are not typed in. Probe check entries
    // (`checks` in the flocd config) are not lab-sheet results and are never listed.
    [[nodiscard]] std::vector<std::string> not_on_sheet() const;

    // The plant time of the next sample or aliquot (0 before the start sheet); infinity if none.
    [[nodiscard]] double next_sample_s() const;
    // Takes every sample and aliquot due by `t_s` from the plant as it is at `t_s` (the serving
    // loop stops at next_sample_s(), so each is taken at its time).
    void sample(double t_s, const plant_output& out);

    // The results to type now (`t_s`: flocsim's plant time), given what flocd's registers show.
    // Each is in flight until record() is given its outcome.
    [[nodiscard]] std::vector<lab_typing> take_due(double t_s, const advisory_seen& flocd);
    // What came of a typing: the line for the log, e.g. "lab entry a_mlss 3290 mg/L sampled
    // day 0 08:00:00: accepted, 120 min old in flocd".
    std::string record(const lab_typing& t, const job_outcome& o, double t_s);

    // The lab rows of the advice table: entry, last value typed, sampled at, what came of it.
    [[nodiscard]] std::string render() const;

private:
    struct result {
        double value = 0.0;
        double sampled_at_s = 0.0;
        double due_s = 0.0;
        unsigned attempts = 0; // tries that did not reach flocd
    };
    struct aliquot {
        double t_s = 0.0;
        double flow_m3_per_d = 0.0;
        double value = 0.0;
    };
    struct entry_state {
        const lab_sheet_entry* spec = nullptr;
        std::size_t flocd = 0;  // index of its [[lab_entry]] in the flocd config
        std::uint16_t slot = 0; // first register of its lab slot
        double next_sample_s = std::numeric_limits<double>::infinity();
        std::deque<aliquot> aliquots;
        std::deque<result> pending; // in sampling order
        bool in_flight = false;
        std::string last; // the last outcome, for the table
    };

    [[nodiscard]] double composite(const entry_state& e, double t_s, double grab) const;
    static double next_daily(const lab_sheet_entry& e, double after_s);

    const scenario& scenario_;
    const config::plant_config& cfg_;
    std::vector<entry_state> entries_;
    bool start_pending_ = false;
    double next_aliquot_s_ = std::numeric_limits<double>::infinity();
};

} // namespace floc::sim
