#include "replay.hpp"

#include "exit_codes.hpp"
#include "journal_record.hpp"

#include "floc/advisors/text.hpp"
#include "floc/plc/decode.hpp"

#include <algorithm>
#include <cerrno>
#include <charconv>
#include <chrono>
#include <cmath>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <sstream>
#include <variant>

namespace floc::app::replay {
namespace {

std::string lower(std::string_view s) {
    std::string out{s};
    std::transform(out.begin(), out.end(), out.begin(), [](char c) {
        return c >= 'A' && c <= 'Z' ? static_cast<char>(c - 'A' + 'a') : c;
    });
    return out;
}

bool is_not_a_number(std::string_view word) {
    return word == "nan" || word == "-nan" || word == "+nan" || word == "inf" || word == "-inf" ||
           word == "+inf" || word == "infinity" || word == "-infinity";
}

// Words historians and spreadsheets write for a reading that failed.
bool is_failed_read(std::string_view word) {
    return word == "bad" || word == "error" || word == "fail" || word == "failed";
}

std::string quoted(std::string_view s) {
    return "\"" + std::string{s} + "\"";
}

std::string number_text(double v) {
    if (!std::isfinite(v)) {
        return "";
    }
    char buf[64];
    const auto [end, ec] = std::to_chars(buf, buf + sizeof buf, v, std::chars_format::general, 6);
    return ec == std::errc{} ? std::string(buf, end) : std::string{};
}

std::string expected_value(const units::unit& u) {
    return "a number in " +
           (u.symbol.empty() || u.symbol == "1" ? std::string{"plain numbers"}
                                                : std::string{u.symbol}) +
           " (or empty: no reading; NaN: not a number; bad: a failed read)";
}

} // namespace

replayer::replayer(const config::plant_config& cfg, std::istream& in, options o)
    : shown_(cfg), input_display_(cfg.display), o_(std::move(o)), csv_(in), engine_(shown_),
      labs_(shown_), checks_(shown_), states_(shown_.tags.size()), signals_(shown_.tags.size()),
      gap_signals_(shown_.tags.size()) {
    if (o_.units) {
        const units::unit_system sys = *o_.units;
        shown_.display.system = sys;
        for (std::size_t q = 0; q < units::quantity_count; ++q) {
            shown_.display.unit_of.at(q) =
                &units::default_display_unit(static_cast<units::quantity>(q), sys);
        }
        for (auto& a : shown_.aeration) {
            a.params.text_units = sys;
        }
        for (auto& a : shown_.recycle) {
            a.params.text_units = sys;
        }
        for (auto& a : shown_.ras) {
            a.params.text_units = sys;
        }
        for (auto& a : shown_.waste) {
            a.params.text_units = sys;
        }
    }
    for (std::size_t i = 0; i < engine_.size(); ++i) {
        sum_.advisors.push_back(advisor_tally{engine_.key(i), 0, 0, {}});
    }
}

void replayer::report(const csv_cell& at, const std::string& text) {
    if (sum_.messages.size() < o_.max_messages) {
        sum_.messages.push_back(o_.input_name + ":" + std::to_string(at.line) + ":" +
                                std::to_string(at.column) + ": " + text);
    } else {
        ++sum_.messages_dropped;
    }
}

void replayer::reject_row(const csv_cell& at, const std::string& what) {
    ++sum_.rows_rejected;
    report(at, what + "; the row is skipped");
}

bool replayer::start() {
    if (!csv_.next(cells_)) {
        sum_.fatal = true;
        sum_.read_failed = csv_.read_failed();
        sum_.messages.push_back(o_.input_name +
                                (csv_.error().empty()
                                     ? ": found no header line; expected a first line naming the "
                                       "time column and then tags or lab entries"
                                     : ":" + csv_.error()));
        return false;
    }
    std::vector<bool> tag_seen(shown_.tags.size(), false);
    std::vector<bool> lab_seen(shown_.lab.size(), false);
    bool any = false;
    const auto header_error = [&](const csv_cell& at, const std::string& text) {
        sum_.fatal = true;
        sum_.messages.push_back(o_.input_name + ":" + std::to_string(at.line) + ":" +
                                std::to_string(at.column) + ": " + text);
    };
    columns_.assign(cells_.size(), column{});
    for (std::size_t i = 1; i < cells_.size(); ++i) {
        const csv_cell& cell = cells_[i];
        column& c = columns_[i];
        std::string_view name = trim(cell.text);
        std::string_view unit_text;
        if (name.ends_with(']')) {
            if (const auto open = name.rfind('['); open != std::string_view::npos) {
                unit_text = trim(name.substr(open + 1, name.size() - open - 2));
                name = trim(name.substr(0, open));
            }
        }
        c.name = std::string{name};
        if (name.empty()) {
            continue; // an unnamed column (a spreadsheet's trailing separator): nothing to read
        }
        const config::tag* t = shown_.find_tag(name);
        const config::lab_entry* e = t == nullptr ? shown_.find_lab(name) : nullptr;
        if (t == nullptr && e == nullptr) {
            if (o_.ignore_unknown) {
                sum_.notes.push_back("column " + quoted(name) +
                                     " names no tag or lab entry: ignored");
                continue;
            }
            header_error(
                cell, "column " + quoted(name) + ": found no tag or lab entry of that name in " +
                          shown_.source_file + "; expected the name of one (or --ignore-unknown)");
            continue;
        }
        const units::quantity kind = t != nullptr ? t->quantity() : e->kind;
        if (!unit_text.empty()) {
            const units::unit* u = units::find_unit(unit_text);
            if (u == nullptr || u->kind != kind) {
                header_error(cell, "column " + quoted(name) + ": found " +
                                       (u == nullptr
                                            ? "unknown unit " + quoted(unit_text)
                                            : "the " + std::string{units::quantity_name(u->kind)} +
                                                  " unit " + quoted(unit_text)) +
                                       "; expected a " + std::string{units::quantity_name(kind)} +
                                       " unit (" + units::symbols_of(kind) + ")");
                continue;
            }
            c.header_unit = u;
        }
        if (t != nullptr) {
            c.kind = column::what::tag;
            c.index = static_cast<std::size_t>(t - shown_.tags.data());
            c.unit = c.header_unit != nullptr ? c.header_unit : t->unit;
        } else {
            c.kind = column::what::lab;
            c.index = static_cast<std::size_t>(e - shown_.lab.data());
            c.unit =
                c.header_unit != nullptr ? c.header_unit : &shown_unit(input_display_, e->kind);
        }
        std::vector<bool>& seen = c.kind == column::what::tag ? tag_seen : lab_seen;
        if (seen.at(c.index)) {
            header_error(cell, "column " + quoted(name) +
                                   ": found a second column for it; expected one column per "
                                   "tag or lab entry");
            continue;
        }
        seen.at(c.index) = true;
        any = true;
    }
    if (!any && !sum_.fatal) {
        header_error(cells_.front(),
                     "found no column naming a tag or lab entry of " + shown_.source_file +
                         "; expected a header of the time column and then tag or lab entry names");
    }
    if (sum_.fatal) {
        return false;
    }
    std::string unread;
    for (std::size_t i = 0; i < shown_.tags.size(); ++i) {
        unread += tag_seen[i] ? "" : (unread.empty() ? "" : ", ") + shown_.tags[i].name;
    }
    for (std::size_t i = 0; i < shown_.lab.size(); ++i) {
        unread += lab_seen[i] ? "" : (unread.empty() ? "" : ", ") + shown_.lab[i].name;
    }
    if (!unread.empty()) {
        sum_.notes.push_back("no column for " + unread +
                             ": never read, missing to the advisors that use them");
    }
    return true;
}

double replayer::plant_of(double order_s) const {
    if (format_ && format_->style == time_style::zoned && o_.utc_offset_s) {
        return order_s + o_.utc_offset_s(order_s);
    }
    return order_s;
}

double replayer::order_of(const timestamp& t) const {
    const bool rows_zoned = format_ && format_->style == time_style::zoned;
    const auto offset = [&](double unix_s) {
        return o_.utc_offset_s ? o_.utc_offset_s(unix_s) : 0.0;
    };
    if (rows_zoned && t.format.style == time_style::local) {
        return t.seconds - offset(t.seconds - offset(t.seconds)); // local time -> UTC
    }
    if (!rows_zoned && t.format.style == time_style::zoned) {
        return t.seconds + offset(t.seconds); // UTC -> local time
    }
    return t.seconds;
}

void replayer::feed_tag(const column& c, const csv_cell& cell, double order_s) {
    const std::string_view text = trim(cell.text);
    if (text.empty()) {
        return; // no reading in this row
    }
    const config::tag& t = shown_.tags.at(c.index);
    conditioning::sample s{order_s, true, 0.0};
    const std::string word = lower(text);
    if (is_not_a_number(word)) {
        s.value = std::nan("");
    } else if (is_failed_read(word)) {
        s.read_ok = false;
    } else if (t.quantity() == units::quantity::state &&
               (word == "on" || word == "true" || word == "off" || word == "false")) {
        s.value = word == "on" || word == "true" ? 1.0 : 0.0;
    } else if (const auto v = parse_number(text, csv_.delimiter())) {
        s.value = c.header_unit != nullptr ? units::to_canonical(*v, *c.header_unit)
                                           : plc::to_canonical(t, *v);
    } else {
        ++sum_.cells_rejected;
        report(cell, c.name + ": found " + quoted(text) + "; expected " + expected_value(*c.unit) +
                         "; the cell is skipped");
        return;
    }
    states_[c.index] = conditioning::update(t, states_[c.index], s);
}

void replayer::feed_lab(const column& c, const csv_cell& cell, double plant_s) {
    const std::string_view text = trim(cell.text);
    if (text.empty()) {
        return; // no sample taken at this row's time
    }
    const std::string word = lower(text);
    if (is_not_a_number(word) || is_failed_read(word)) {
        return; // no usable sample: as a not-a-number entry on the HMI, nothing is entered
    }
    const auto v = parse_number(text, csv_.delimiter());
    if (!v) {
        ++sum_.cells_rejected;
        report(cell, c.name + ": found " + quoted(text) + "; expected " + expected_value(*c.unit) +
                         "; the cell is skipped");
        return;
    }
    registers::lab_write w;
    w.entry = c.index;
    w.value = units::to_canonical(*v, *c.unit);
    if (labs_.apply(w, 0, true, plant_s) == registers::lab_status::out_of_range) {
        const config::lab_entry& e = shown_.lab.at(c.index);
        ++sum_.cells_rejected;
        report(cell, c.name + ": found " + std::string{text} + " " + std::string{c.unit->symbol} +
                         "; expected a value from " +
                         number_text(units::from_canonical(e.valid_min, *c.unit)) + " to " +
                         number_text(units::from_canonical(e.valid_max, *c.unit)) + " " +
                         std::string{c.unit->symbol} + " (the lab entry's range); not entered");
    }
}

void replayer::emit(std::vector<std::pair<std::size_t, advisor_outcome>> runs, const row_time& at,
                    bool between_rows, const run_sink& sink) {
    if (from_order_s_ && at.order_s < *from_order_s_) {
        return; // warm-up
    }
    const std::string time = format_time(at.order_s, *format_);
    for (const auto& [slot, outcome] : runs) {
        advisor_tally& t = sum_.advisors.at(slot);
        ++t.runs;
        t.changes += outcome.changed ? 1U : 0U;
        ++t.by_quality.at(
            std::min<std::size_t>(static_cast<std::size_t>(outcome.advice.quality), 3));
        ++sum_.runs;
        sum_.runs_between_rows += between_rows ? 1U : 0U;
        if (!o_.changes_only || outcome.changed) {
            ++sum_.runs_written;
            if (sink) {
                sink(run{outcome, at.plant_s, time, at.line, between_rows});
            }
        }
    }
}

void replayer::fill_gap(const row_time& now, const run_sink& sink) {
    const row_time& prev = *previous_;
    const double gap_s = now.order_s - prev.order_s;
    sum_.longest_gap_s = std::max(sum_.longest_gap_s, gap_s);
    if (gap_s > o_.max_gap_s) {
        // Taken as flocd not running: the advisors resume at this row.
        ++sum_.gaps_not_filled;
        return;
    }
    std::optional<double> last_due;
    while (const std::optional<double> due = engine_.next_due()) {
        const double at_s = prev.order_s + (*due - prev.plant_s);
        if (at_s >= now.order_s || (last_due && *due <= *last_due)) {
            break;
        }
        last_due = due;
        for (std::size_t i = 0; i < shown_.tags.size(); ++i) {
            gap_signals_[i] = conditioning::assess(shown_.tags[i], states_[i], at_s);
        }
        check_probes(gap_signals_, at_s, *due);
        const input_view in{gap_signals_, labs_, *due, at_s};
        emit(engine_.run_due(in, false), row_time{at_s, *due, now.line}, true, sink);
    }
}

void replayer::check_probes(std::vector<conditioning::signal>& signals, double order_s, double plant_s) {
    for (const probe_check_event& e : checks_.run(labs_, states_, order_s, plant_s, signals)) {
        ++sum_.probe_checks;
        sum_.probe_checks_disagreed +=
            e.verdict.outcome == conditioning::check_outcome::disagrees ? 1U : 0U;
        if (check_sink_) {
            check_sink_(e, plant_s);
        }
    }
}

bool replayer::read_row(const run_sink& sink) {
    if (!csv_.next(cells_)) {
        if (!csv_.error().empty()) {
            ++sum_.rows_rejected;
            sum_.messages.push_back(o_.input_name + ":" + csv_.error() +
                                    "; the rest of the input is skipped");
        }
        sum_.read_failed = csv_.read_failed();
        return false;
    }
    ++sum_.rows_read;
    const csv_cell& time_cell = cells_.front();
    const std::optional<timestamp> t = parse_time(time_cell.text);
    if (!t) {
        reject_row(time_cell, "time: found " + quoted(trim(time_cell.text)) + "; expected " +
                                  std::string{time_expected});
        return true;
    }
    if (!format_) {
        format_ = t->format;
        format_line_ = time_cell.line;
        from_order_s_ = o_.from ? std::optional<double>{order_of(*o_.from)} : std::nullopt;
        to_order_s_ = o_.to ? std::optional<double>{order_of(*o_.to)} : std::nullopt;
    } else if (t->format.style != format_->style) {
        const auto style_name = [](time_style s) {
            return s == time_style::zoned   ? "a time with a zone"
                   : s == time_style::local ? "a time without a zone"
                                            : "plain seconds";
        };
        reject_row(time_cell, "time: found " + std::string{style_name(t->format.style)} + " (" +
                                  quoted(trim(time_cell.text)) + "); expected " +
                                  style_name(format_->style) + " like every row since line " +
                                  std::to_string(format_line_));
        return true;
    }
    const row_time now{t->seconds, plant_of(t->seconds), time_cell.line};
    if (previous_ && now.order_s <= previous_->order_s) {
        reject_row(time_cell, "time: found " + quoted(trim(time_cell.text)) + ", not after " +
                                  format_time(previous_->order_s, *format_) + " (line " +
                                  std::to_string(previous_->line) +
                                  "); expected rows in increasing time");
        return true;
    }
    if (to_order_s_ && now.order_s > *to_order_s_) {
        --sum_.rows_read; // not part of the replay
        sum_.stopped_at_to = true;
        return false;
    }
    for (std::size_t i = columns_.size(); i < cells_.size(); ++i) {
        if (!trim(cells_[i].text).empty()) {
            reject_row(cells_[i], "found " + std::to_string(cells_.size()) +
                                      " cells; expected at most " +
                                      std::to_string(columns_.size()) + ", one per header column");
            return true;
        }
    }
    if (previous_) {
        intervals_s_.push_back(now.order_s - previous_->order_s);
        fill_gap(now, sink);
    }
    for (std::size_t i = 1; i < cells_.size() && i < columns_.size(); ++i) {
        const column& c = columns_[i];
        if (c.kind == column::what::tag) {
            feed_tag(c, cells_[i], now.order_s);
        } else if (c.kind == column::what::lab) {
            feed_lab(c, cells_[i], now.plant_s);
        }
    }
    for (std::size_t i = 0; i < shown_.tags.size(); ++i) {
        signals_[i] = conditioning::assess(shown_.tags[i], states_[i], now.order_s);
    }
    check_probes(signals_, now.order_s, now.plant_s);
    const input_view in{signals_, labs_, now.plant_s, now.order_s};
    emit(engine_.run_due(in, false), now, false, sink);
    if (from_order_s_ && now.order_s < *from_order_s_) {
        ++sum_.rows_before_from;
    } else {
        first_ = first_ ? first_ : now;
        sum_.first_time = sum_.first_time ? sum_.first_time : format_time(now.order_s, *format_);
        sum_.last_time = format_time(now.order_s, *format_);
        sum_.span_s = now.order_s - first_->order_s;
    }
    previous_ = now;
    return true;
}

void replayer::run_rows(const run_sink& sink, const probe_check_sink& checks) {
    if (sum_.fatal) {
        return;
    }
    check_sink_ = checks;
    while (read_row(sink)) {
    }
    finish();
}

void replayer::finish() {
    if (sum_.gaps_not_filled > 0) {
        sum_.notes.push_back(std::to_string(sum_.gaps_not_filled) +
                             " gap(s) between rows longer than " +
                             advisors::text_duration(o_.max_gap_s) +
                             " (--max-gap): taken as flocd not running, no advice in them");
    }
    if (intervals_s_.empty()) {
        return;
    }
    const auto mid = intervals_s_.begin() + static_cast<std::ptrdiff_t>(intervals_s_.size() / 2);
    std::nth_element(intervals_s_.begin(), mid, intervals_s_.end());
    const double typical_s = *mid;
    const column* tightest = nullptr;
    for (const column& c : columns_) {
        if (c.kind == column::what::tag &&
            (tightest == nullptr ||
             shown_.tags[c.index].stale_after_s < shown_.tags[tightest->index].stale_after_s)) {
            tightest = &c;
        }
    }
    if (tightest != nullptr && sum_.runs_between_rows > 0 &&
        typical_s > shown_.tags[tightest->index].stale_after_s) {
        sum_.notes.push_back(
            "rows are typically " + advisors::text_duration(typical_s) +
            " apart, longer than stale_after of " + tightest->name + " (" +
            advisors::text_duration(shown_.tags[tightest->index].stale_after_s) +
            "): between rows it goes stale and the advisors using it hold or fall back, as "
            "flocd would with readings that far apart");
    }
}

std::string_view replayer::csv_header() {
    return "time,advisor,value,unit,min,max,quality,changed,reasons,reason_names,explanation";
}

std::string replayer::csv_row(const run& r) const {
    const advisors::advice& a = r.outcome.advice;
    const units::unit& u = shown_unit(shown_.display, a.kind);
    std::string codes;
    std::string names;
    for (const advisors::reason code : a.reasons.codes()) {
        codes += (codes.empty() ? "" : ";") + std::to_string(static_cast<int>(code));
        names += (names.empty() ? "" : ";") + std::string{advisors::describe(code).name};
    }
    std::string out = csv_quote(r.time);
    out += ',' + csv_quote(r.outcome.key);
    out += ',' + number_text(units::from_canonical(a.value, u));
    out += ',' + csv_quote(u.symbol);
    out += ',' + number_text(units::from_canonical(a.min, u));
    out += ',' + number_text(units::from_canonical(a.max, u));
    out += ',' + std::string{advisors::to_string(a.quality)};
    out += r.outcome.changed ? ",1," : ",0,";
    out += codes + ',' + names + ',' + csv_quote(a.explanation);
    return out;
}

summary replay(const config::plant_config& cfg, std::istream& in, const options& o,
               const run_sink& sink) {
    replayer r{cfg, in, o};
    if (r.start()) {
        r.run_rows(sink);
    }
    return r.result();
}

std::string summary_text(const summary& s, std::string_view input_name,
                         std::string_view output_name) {
    std::ostringstream out;
    for (const std::string& m : s.messages) {
        out << m << "\n";
    }
    if (s.messages_dropped > 0) {
        out << input_name << ": " << s.messages_dropped << " more problem(s) not shown\n";
    }
    if (s.fatal) {
        out << "flocd replay: " << input_name << ": cannot be replayed\n";
        return out.str();
    }
    out << "flocd replay: " << input_name << ": " << s.rows_read << " rows read, "
        << s.rows_rejected << " rows and " << s.cells_rejected << " cells rejected";
    if (s.rows_before_from > 0) {
        out << ", " << s.rows_before_from << " rows before --from (warm-up only)";
    }
    if (s.stopped_at_to) {
        out << ", stopped at --to";
    }
    out << "\n";
    if (s.first_time) {
        out << "  time span   " << *s.first_time << " to " << *s.last_time << " ("
            << advisors::text_duration(s.span_s) << ")\n";
    }
    out << "  runs        " << s.runs << " advisor runs (" << s.runs_between_rows
        << " between rows), " << s.runs_written << " written to " << output_name << "\n";
    std::size_t width = 8;
    for (const advisor_tally& t : s.advisors) {
        width = std::max(width, t.key.size());
    }
    const auto cell = [](std::size_t n, std::size_t w) {
        std::string v = std::to_string(n);
        return std::string(w > v.size() ? w - v.size() : 0, ' ') + v;
    };
    std::string head = "advisor";
    head.resize(width, ' ');
    out << "  " << head << "     runs  changes     good     held fallback unavailable\n";
    for (const advisor_tally& t : s.advisors) {
        std::string key = t.key;
        key.resize(width, ' ');
        out << "  " << key << cell(t.runs, 9) << cell(t.changes, 9) << cell(t.by_quality[0], 9)
            << cell(t.by_quality[1], 9) << cell(t.by_quality[2], 9) << cell(t.by_quality[3], 12)
            << "\n";
    }
    if (s.probe_checks > 0) {
        out << "  probe checks " << s.probe_checks << " check reading(s) judged, "
            << s.probe_checks_disagreed << " disagreed with their probe\n";
    }
    if (s.longest_gap_s > 0.0) {
        out << "  longest gap between rows: " << advisors::text_duration(s.longest_gap_s) << "\n";
    }
    for (const std::string& n : s.notes) {
        out << "  note: " << n << "\n";
    }
    return out.str();
}

// --- the command line ---------------------------------------------------------------------------

namespace {

constexpr std::string_view usage_head =
    "Usage: flocd replay [--config FILE] --input HISTORY.csv --output ADVICE.csv [options]\n";

constexpr std::string_view help_text =
    R"(flocd replay - run the advisors over a historian export, at full speed

Usage: flocd replay [--config FILE] --input HISTORY.csv --output ADVICE.csv [options]

  --config FILE        the plant's config (default /etc/floc/flocd.toml)
  --input FILE         the history: a CSV file, or - for standard input
  --output FILE        the advice: a CSV file, written when the replay ends, or - for standard
                       output
  --units si|us        units of the output values and explanations (default: the config's
                       display units)
  --from TIME          write advice from TIME on; earlier rows still warm up the conditioning,
                       the lab book and the advisors
  --to TIME            stop reading at the first row after TIME
  --changes-only       write only the runs whose advice changed (value, quality or main reason)
  --journal FILE       also write the advice journal flocd would have written (JSON Lines)
  --ignore-unknown     skip columns that name no tag or lab entry (default: an error)
  --max-gap DURATION   fill gaps between rows up to DURATION with the advisors' runs, on stale
                       inputs as on line; a longer gap counts as flocd not running (default 1d)
  --help               this text

Input: a header line, then one row per time. The first column is the time: ISO 8601 without
a zone (2026-03-04 05:06:07, taken as the plant's local time), with a zone
(2026-03-04T05:06:07Z or +01:00, converted to the local time of the TZ environment variable,
as flocd does on line: elsewhere, run TZ=ZONE flocd replay ... with the plant's zone) or plain
seconds on the plant clock. Rows must be in increasing time. Every other column is named by a
tag or lab entry of the config, optionally with a unit: a_influent_flow or
"a_influent_flow [MGD]". Tag values are in the tag's unit (as the PLC delivers them), lab
values in the unit the HMI shows them in; a lab value is a sample taken at its row's time.
An empty cell is no reading; NaN is a not-a-number reading; bad, error or failed a failed read.
Separators: comma, or semicolon or tab with a decimal comma; quoting after RFC 4180.

Output: one row per advisor run: time (as in the input), advisor, value, unit, min, max,
quality, changed (1 or 0), reasons (codes), reason_names, explanation.

Bad data: a header that names no tag, an unknown or repeated column stops the replay. A bad
cell is skipped and a bad or out-of-order row is skipped, each reported as FILE:LINE:COLUMN
with what was found and expected; the replay goes on and exits 65 at the end. A summary goes
to standard error.

Exit codes: 0 ok, 64 bad command line, 65 bad data (header, rejected rows or cells, no rows),
66 input unreadable, 73 output or journal cannot be created, 74 write failed, 78 config
invalid.

CAUTION: advisory only. A licensed operator decides every set point; local permits, codes and
plant procedures prevail over any advice. A replay shows what floc would have advised; it
does not show what the plant would have done with that advice.
)";

int usage_error(std::ostream& err, const std::string& why) {
    err << "flocd replay: " << why << "\n" << usage_head << "Try 'flocd replay --help'.\n";
    return exit_usage;
}

struct cli {
    std::string config = "/etc/floc/flocd.toml";
    std::string input;
    std::string output;
    std::string journal;
    options o;
};

double local_utc_offset_s(double unix_s) {
    const auto t = static_cast<std::time_t>(std::floor(unix_s));
    std::tm local{};
    if (localtime_r(&t, &local) == nullptr) {
        return 0.0;
    }
    return static_cast<double>(local.tm_gmtoff);
}

double wall_now_s() {
    return std::chrono::duration<double>(std::chrono::system_clock::now().time_since_epoch())
        .count();
}

} // namespace

int run_replay(std::span<const std::string_view> args, std::ostream& out, std::ostream& err,
               const config_loader& load) {
    cli c;
    for (std::size_t i = 0; i < args.size(); ++i) {
        std::string_view a = args[i];
        std::optional<std::string_view> inline_value;
        if (const auto eq = a.find('='); a.starts_with("--") && eq != std::string_view::npos) {
            inline_value = a.substr(eq + 1);
            a = a.substr(0, eq);
        }
        const auto value = [&]() -> std::optional<std::string> {
            if (inline_value) {
                return std::string{*inline_value};
            }
            if (i + 1 >= args.size()) {
                return std::nullopt;
            }
            return std::string{args[++i]};
        };
        const auto time_value = [&](std::optional<timestamp>& into) -> bool {
            const auto v = value();
            if (!v) {
                return false;
            }
            into = parse_time(*v);
            return into.has_value();
        };
        if (a == "--help" || a == "-h") {
            out << help_text;
            return exit_ok;
        }
        if (a == "--config" || a == "--input" || a == "--output" || a == "--journal") {
            const auto v = value();
            if (!v || v->empty()) {
                return usage_error(err, std::string{a} + " needs a FILE");
            }
            (a == "--config"   ? c.config
             : a == "--input"  ? c.input
             : a == "--output" ? c.output
                               : c.journal) = *v;
        } else if (a == "--units") {
            const auto v = value();
            if (!v || (*v != "si" && *v != "us")) {
                return usage_error(err, "--units takes si or us");
            }
            c.o.units = *v == "us" ? units::unit_system::us_customary : units::unit_system::si;
        } else if (a == "--from" || a == "--to") {
            if (!time_value(a == "--from" ? c.o.from : c.o.to)) {
                return usage_error(err,
                                   std::string{a} + " takes a TIME: " + std::string{time_expected});
            }
        } else if (a == "--max-gap") {
            const auto v = value();
            const auto parsed = v ? units::parse_quantity(*v)
                                  : std::variant<units::quantity_value, std::string>{""};
            const auto* q = std::get_if<units::quantity_value>(&parsed);
            if (q == nullptr || q->as_written->kind != units::quantity::duration ||
                !(q->canonical() >= 0.0)) {
                return usage_error(
                    err, "--max-gap takes a duration with its unit, like 1d, 6h or \"90 min\"");
            }
            c.o.max_gap_s = q->canonical();
        } else if (a == "--changes-only" && !inline_value) {
            c.o.changes_only = true;
        } else if (a == "--ignore-unknown" && !inline_value) {
            c.o.ignore_unknown = true;
        } else {
            return usage_error(err, "unknown option '" + std::string{args[i]} + "'");
        }
    }
    if (c.input.empty() || c.output.empty()) {
        return usage_error(err, c.input.empty() ? "--input is required" : "--output is required");
    }
    if (c.o.from && c.o.to && c.o.from->format.style == c.o.to->format.style &&
        c.o.to->seconds < c.o.from->seconds) {
        return usage_error(err, "--to is before --from");
    }

    int code = exit_ok;
    const std::optional<config::plant_config> cfg = load(c.config, code);
    if (!cfg) {
        return code;
    }

    std::ifstream file;
    std::istream* in = &std::cin;
    c.o.input_name = c.input == "-" ? "stdin" : c.input;
    if (c.input != "-") {
        file.open(c.input, std::ios::binary);
        if (!file) {
            err << "flocd replay: cannot read " << c.input << ": "
                << std::generic_category().message(errno) << "\n";
            return exit_no_input;
        }
        in = &file;
    }
    tzset();
    c.o.utc_offset_s = local_utc_offset_s;

    replayer r{*cfg, *in, c.o};
    if (!r.start()) {
        err << summary_text(r.result(), c.o.input_name, c.output);
        return r.result().read_failed ? exit_io_error : exit_data;
    }

    // Written beside the target and renamed at the end, so that a failed replay leaves no half
    // file.
    const std::filesystem::path target = c.output;
    const std::filesystem::path partial = c.output + ".partial";
    std::ofstream out_file;
    std::ostream* advice = &out;
    if (c.output != "-") {
        out_file.open(partial, std::ios::binary | std::ios::trunc);
        if (!out_file) {
            err << "flocd replay: cannot create " << partial.string() << ": "
                << std::generic_category().message(errno) << "\n";
            return exit_cant_create;
        }
        advice = &out_file;
    }
    std::ofstream journal;
    if (!c.journal.empty()) {
        journal.open(c.journal, std::ios::binary | std::ios::trunc);
        if (!journal) {
            err << "flocd replay: cannot create " << c.journal << ": "
                << std::generic_category().message(errno) << "\n";
            std::error_code ec;
            std::filesystem::remove(partial, ec);
            return exit_cant_create;
        }
        const auto start = app::journal_line(
            store::json_object{}
                .add("event", "start")
                .add("detail", "flocd replay of " + c.o.input_name + " with " + c.config),
            wall_now_s(), std::nullopt, cfg->site.name);
        journal << start.str() << "\n";
    }

    *advice << replayer::csv_header() << "\n";
    std::optional<double> last_plant_s;
    const auto journal_check = [&](const probe_check_event& e, double plant_s) {
        if (journal.is_open()) {
            journal << app::journal_line(probe_check_record(e, r.shown()), wall_now_s(), plant_s,
                                         cfg->site.name)
                           .str()
                    << "\n";
        }
    };
    r.run_rows([&](const run& x) {
        *advice << r.csv_row(x) << "\n";
        last_plant_s = x.plant_time_s;
        if (journal.is_open() && x.outcome.changed) {
            journal << app::journal_line(advice_record(x.outcome, r.shown()), wall_now_s(),
                                         x.plant_time_s, cfg->site.name)
                           .str()
                    << "\n";
        }
    }, journal_check);
    const summary& s = r.result();
    if (journal.is_open()) {
        const auto stop = app::journal_line(
            store::json_object{}
                .add("event", "stop")
                .add("detail", "flocd replay finished: " + std::to_string(s.rows_read) + " rows"),
            wall_now_s(), last_plant_s, cfg->site.name);
        journal << stop.str() << "\n";
        journal.flush();
    }
    advice->flush();
    const bool written = advice->good() && (!journal.is_open() || journal.good());
    if (out_file.is_open()) {
        out_file.close();
        std::error_code ec;
        if (written && !out_file.fail()) {
            std::filesystem::rename(partial, target, ec);
        }
        if (!written || out_file.fail() || ec) {
            std::filesystem::remove(partial, ec);
            err << "flocd replay: cannot write " << target.string() << "\n";
            return exit_io_error;
        }
    } else if (!written) {
        err << "flocd replay: cannot write the output\n";
        return exit_io_error;
    }
    err << summary_text(s, c.o.input_name, c.output == "-" ? "standard output" : c.output);
    if (s.read_failed) {
        return exit_io_error;
    }
    if (s.rows_read == 0) {
        err << "flocd replay: " << c.o.input_name
            << ": found no data rows; expected rows under the header\n";
        return exit_data;
    }
    return s.clean() ? exit_ok : exit_data;
}

} // namespace floc::app::replay
