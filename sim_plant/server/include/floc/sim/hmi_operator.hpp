// The operator stand-in of closed-loop bench runs. It reads a floc advisory server the way an HMI
// does (the status block and the advice slots of flocd's register map, function 03 only), and,
// when asked, applies each good advice to the simulated PLC's own set points after an acceptance
// delay in plant time, as an operator at the HMI would: the DO set point of a zone, the internal
// recycle flow (the advised ratio times the train's influent flow then), the RAS flow (or the
// ratio, when the PLC paces RAS by ratio) and the daily waste flow. flocd itself writes nothing.
// It also renders the advice table flocsim --show-advice prints. Pure: words in, decisions and
// text out; the serving loop does the reading (modbus_reader) and the applying.
#pragma once

#include "floc/config/config.hpp"
#include "floc/registers/register_map.hpp"
#include "floc/sim/modbus_reader.hpp"
#include "floc/sim/scenario.hpp"

#include <array>
#include <cstdint>
#include <deque>
#include <limits>
#include <optional>
#include <string>
#include <vector>

namespace floc::sim {

// One advice slot as read.
struct advice_seen {
    registers::advisor_kind kind = registers::advisor_kind::aeration;
    std::string subject; // zone or train, from the map
    units::quantity quantity = units::quantity::dimensionless;
    double value = std::numeric_limits<double>::quiet_NaN(); // canonical unit of `quantity`
    std::uint16_t quality = 3;              // 0 good, 1 held, 2 fallback, 3 unavailable
    std::array<std::uint16_t, 4> reasons{}; // main reason first; 0 = none
    std::uint16_t age_s = 65535;            // 65535 = longer or never
    std::uint16_t changes = 0;
};

// The status block and every advice slot, as read in one cycle.
struct advisory_seen {
    std::uint16_t heartbeat = 0;
    std::uint16_t state = 0; // registers::daemon_state
    double plant_time_s = 0.0;
    std::string error; // set when the registers do not look like flocd's layout
    std::vector<advice_seen> advice;
};

// The reads that cover the status block and the advice slots: function 03, at most 125
// registers each, whole slots per read.
[[nodiscard]] std::vector<register_read> advisory_reads(const registers::register_map& map);

// Decodes one cycle of those reads (`words`: one vector per read, as modbus_reader delivers).
[[nodiscard]] advisory_seen decode_advisory(const registers::register_map& map,
                                            const config::plant_config& cfg,
                                            const std::vector<register_read>& reads,
                                            const std::vector<std::vector<std::uint16_t>>& words);

// "day 2 07:35:00" for a plant time in seconds since the scenario started.
[[nodiscard]] std::string plant_clock_text(double t_s);

// `s` padded with spaces to `width` (never cut): a column of the advice table.
[[nodiscard]] std::string table_cell(std::string s, std::size_t width);

// A canonical value in the display unit of the advisory config with the unit: two decimals below
// 10, one below 100, none above ("2.60 mg/L", "31.2 mg/L", "2509 mg/L"; a ratio as "0.80 x flow");
// "-" when not finite.
[[nodiscard]] std::string display_text(const config::plant_config& cfg, units::quantity q,
                                       double canonical);

class operator_standin {
public:
    // `s` and `map` must outlive the stand-in. Without `delay_s` nothing is applied (the table
    // is still shown).
    operator_standin(const scenario& s, const registers::register_map& map,
                     const config::plant_config& cfg, std::optional<double> delay_s);
    operator_standin(const operator_standin&) = delete;
    operator_standin& operator=(const operator_standin&) = delete;

    // A reading taken at plant time `t_s`: every good advice whose value is new is queued, due
    // `delay_s` later. Held, fallback and unavailable advice is not taken.
    void observe(const advisory_seen& seen, double t_s);
    // Applies what is due at `t_s` to `u` (`out`: the plant now, for the flows the ratios pace).
    // Returns one line per set point changed (empty: nothing due).
    std::vector<std::string> apply_due(double t_s, const plant_output& out, plant_controls& u);
    // The plant time of the next application, or infinity.
    [[nodiscard]] double next_due_s() const;

    [[nodiscard]] bool applies() const { return delay_s_.has_value(); }
    [[nodiscard]] const std::optional<advisory_seen>& last() const { return last_; }
    // What the operator did with advice slot `slot`, for the table ("applied 2.1 mg/L at day 0
    // 01:30", "due day 0 01:40", "no zone a_oxic3 in this scenario").
    [[nodiscard]] std::string action(std::size_t slot) const;

private:
    struct target {
        bool found = false;
        setpoint_kind kind = setpoint_kind::do_setpoint;
        std::size_t train = 0;
        std::size_t zone = 0;
        std::string missing; // why there is no target
    };
    struct pending {
        double value = 0.0;
        double due_s = 0.0;
    };
    struct slot {
        target to;
        std::deque<pending> queue;
        double last_queued = std::numeric_limits<double>::quiet_NaN();
        std::string applied; // the last application, for the table
    };

    [[nodiscard]] target find_target(const registers::advice_slot& a) const;
    std::string apply(std::size_t index, double value, const plant_output& out, plant_controls& u,
                      double t_s);

    const scenario& scenario_;
    const registers::register_map& map_;
    const config::plant_config& cfg_;
    std::optional<double> delay_s_;
    std::vector<slot> slots_;
    std::optional<advisory_seen> last_;
};

// What the table shows besides the advice.
struct table_context {
    std::string source; // "127.0.0.1:15021"
    bool connected = false;
    std::string error;         // the last read's failure, when not connected
    std::string serving;       // flocsim's own address, "127.0.0.1:15020"
    double plant_time_s = 0.0; // flocsim's plant time
    std::string clock;         // flocsim's time mode, e.g. "lockstep 1 min"
    std::string lab; // the lab round's rows (lab_technician::render), shown below the advice
};

// The live advice table: a header with flocd's state, heartbeat and plant time, one row per
// advisor (advisor, value with unit, quality, main reason, age, and what the operator did), and
// the caution. Lines end in '\n'.
[[nodiscard]] std::string render_advice_table(const registers::register_map& map,
                                              const config::plant_config& cfg,
                                              const operator_standin& op, const table_context& ctx);

} // namespace floc::sim
