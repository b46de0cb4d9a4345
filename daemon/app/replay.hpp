// `flocd replay`: runs the configured advisors over a historian export (a CSV of timestamped
// tag values) at full speed, through the same conditioning, lab book and advisor engine as the
// service, so that an engineer can see what floc would have advised before trusting it on line.
//
// The replayer is pure: a stream of CSV in, advisor runs out to a callback, a summary at the
// end. `run_replay` is the command line around it (files, exit codes, the journal).
#pragma once

#include "advisor_engine.hpp"
#include "floc/conditioning/conditioning.hpp"
#include "floc/config/config.hpp"
#include "lab_book.hpp"
#include "replay_input.hpp"

#include <array>
#include <functional>
#include <iosfwd>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace floc::app::replay {

struct options {
    std::string input_name = "input";        // in messages: the file name
    std::optional<units::unit_system> units; // units of the output and explanations; nothing:
                                             // the config's display units
    std::optional<timestamp> from;           // runs before it are not written (they warm up)
    std::optional<timestamp> to;             // rows after it are not read
    bool ignore_unknown = false;             // a column naming no tag or lab entry is skipped
    bool changes_only = false;               // write only runs whose advice changed
    double max_gap_s = 86400.0;              // longer gaps between rows are not filled
    // Plant local time of a zoned (UTC) instant: plant = unix + utc_offset_s(unix). Empty: the
    // plant runs on UTC.
    std::function<double(double unix_s)> utc_offset_s;
    std::size_t max_messages = 20; // rejected rows and cells reported one by one
};

// One advisor run, handed over as it happens.
struct run {
    const advisor_outcome& outcome;
    double plant_time_s = 0.0;
    std::string time;       // when it ran, in the input's time format
    std::uint32_t line = 0; // the input line of its row (for a run between rows: the next row)
    bool between_rows = false;
};

struct advisor_tally {
    std::string key;
    std::size_t runs = 0;
    std::size_t changes = 0;
    std::array<std::size_t, 4> by_quality{}; // good, held, fallback, unavailable
};

struct summary {
    std::size_t rows_read = 0; // data rows (the header, blank and comment lines aside)
    std::size_t rows_rejected = 0;
    std::size_t cells_rejected = 0;
    std::size_t rows_before_from = 0; // replayed as warm-up only
    bool stopped_at_to = false;
    std::optional<std::string> first_time; // of the replayed rows, as written
    std::optional<std::string> last_time;
    double span_s = 0.0;
    std::size_t runs = 0; // advisor runs from --from on
    std::size_t runs_between_rows = 0;
    std::size_t runs_written = 0;
    std::vector<advisor_tally> advisors;
    std::size_t probe_checks = 0;           // check readings judged against their probe
    std::size_t probe_checks_disagreed = 0; // of them, readings that disagreed
    std::size_t gaps_not_filled = 0; // gaps longer than max_gap_s
    double longest_gap_s = 0.0;
    bool fatal = false;                // the input cannot be replayed (its header is wrong)
    bool read_failed = false;          // the stream failed while reading
    std::vector<std::string> messages; // FILE:LINE:COL: problems, the first max_messages
    std::size_t messages_dropped = 0;
    std::vector<std::string> notes; // things worth knowing about the result

    [[nodiscard]] bool clean() const {
        return !fatal && !read_failed && rows_rejected == 0 && cells_rejected == 0 && rows_read > 0;
    }
};

using run_sink = std::function<void(const run&)>;
// A check reading judged against its probe, with the plant time it was judged at.
using probe_check_sink = std::function<void(const probe_check_event&, double plant_s)>;

class replayer {
public:
    replayer(const config::plant_config& cfg, std::istream& in, options o);

    replayer(const replayer&) = delete;
    replayer& operator=(const replayer&) = delete;
    replayer(replayer&&) = delete;
    replayer& operator=(replayer&&) = delete;

    // Reads and checks the header. False when the input cannot be replayed (see result()).
    bool start();
    // Replays every row (up to options::to), handing each run to be written to `sink` and each
    // check reading judged to `checks`.
    void run_rows(const run_sink& sink, const probe_check_sink& checks = {});

    [[nodiscard]] const summary& result() const { return sum_; }
    // The config the advisors run on: the given one, in the output's display units.
    [[nodiscard]] const config::plant_config& shown() const { return shown_; }

    // The output CSV: its header line and one row per run (RFC 4180, CRLF-free).
    [[nodiscard]] static std::string_view csv_header();
    [[nodiscard]] std::string csv_row(const run& r) const;

private:
    struct column {
        enum class what : std::uint8_t { ignored, tag, lab } kind = what::ignored;
        std::size_t index = 0;                    // into the config's tags or lab entries
        const units::unit* header_unit = nullptr; // "name [unit]" in the header
        const units::unit* unit = nullptr;        // the unit of its values
        std::string name;
    };
    struct row_time {
        double order_s = 0.0; // the input's own time (UTC for zoned input): conditioning's clock
        double plant_s = 0.0; // plant local time: the advisors' clock
        std::uint32_t line = 0;
    };

    bool read_row(const run_sink& sink);
    void reject_row(const csv_cell& at, const std::string& what);
    void report(const csv_cell& at, const std::string& text);
    void feed_tag(const column& c, const csv_cell& cell, double order_s);
    void feed_lab(const column& c, const csv_cell& cell, double plant_s);
    void fill_gap(const row_time& now, const run_sink& sink);
    void check_probes(std::vector<conditioning::signal>& signals, double order_s, double plant_s);
    void emit(std::vector<std::pair<std::size_t, advisor_outcome>> runs, const row_time& at,
              bool between_rows, const run_sink& sink);
    [[nodiscard]] double plant_of(double order_s) const;
    [[nodiscard]] double order_of(const timestamp& t) const;
    void finish();

    config::plant_config shown_;
    config::display_config input_display_; // the HMI's units, in which lab values are written
    options o_;
    csv_reader csv_;
    advisor_engine engine_;
    lab_book labs_;
    probe_checks checks_;
    probe_check_sink check_sink_;
    std::vector<conditioning::state> states_;
    std::vector<conditioning::signal> signals_;
    std::vector<conditioning::signal> gap_signals_;
    std::vector<column> columns_;
    std::vector<csv_cell> cells_;
    std::optional<time_format> format_;
    std::uint32_t format_line_ = 0;
    std::optional<double> from_order_s_;
    std::optional<double> to_order_s_;
    std::optional<row_time> previous_;
    std::optional<row_time> first_;
    std::vector<double> intervals_s_;
    summary sum_;
};

// Replays a whole input: start(), then run_rows().
summary replay(const config::plant_config& cfg, std::istream& in, const options& o,
               const run_sink& sink);

// The end-of-run summary for standard error.
[[nodiscard]] std::string summary_text(const summary& s, std::string_view input_name,
                                       std::string_view output_name);

// Loads and checks a config, printing its errors; nothing and the exit code on failure.
using config_loader =
    std::function<std::optional<config::plant_config>(const std::string& path, int& code)>;

// `args` are the words after "replay". Returns the exit code (exit_codes.hpp): 0; 64 bad command
// line; 65 bad data (a wrong header, rejected rows or cells, no data rows); 66 an input that
// cannot be read; 73 an output that cannot be created; 74 a write that failed; 78 a bad config.
[[nodiscard]] int run_replay(std::span<const std::string_view> args, std::ostream& out,
                             std::ostream& err, const config_loader& load);

} // namespace floc::app::replay
