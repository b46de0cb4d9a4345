// What `flocd replay` reads: timestamps as historians and spreadsheets write them, and CSV
// records (RFC 4180) with the line and column of every cell for error messages. Pure: text or a
// stream in, values out; no files, clocks or time zones (the caller supplies UTC offsets).
#pragma once

#include <cstdint>
#include <iosfwd>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace floc::app::replay {

// How a timestamp was written. Every row of one file uses the same style.
enum class time_style : std::uint8_t {
    local,   // ISO 8601 date and time without a zone: the plant's local time, as written
    zoned,   // ISO 8601 with "Z" or an offset (+01:00): an instant, held as Unix seconds (UTC)
    seconds, // a plain number of seconds on the plant clock
};

struct time_format {
    time_style style = time_style::local;
    char separator = ' ';  // between date and time in ISO styles: ' ' or 'T'
    bool fraction = false; // written with fractional seconds (then printed to the millisecond)
};

struct timestamp {
    // local: seconds since 1970-01-01 00:00 of the plant's calendar (as if it were UTC);
    // zoned: Unix seconds; seconds: as written.
    double seconds = 0.0;
    time_format format;
};

// Parses "2026-03-04 05:06:07", "2026-03-04T05:06:07Z", "2026-03-04T06:06:07+01:00",
// "2026-03-04 05:06", "2026-03-04 05:06:07.250", "2026-03-04" (midnight) or "1200.5".
// Nothing when the text is none of these (or names an impossible date or time).
[[nodiscard]] std::optional<timestamp> parse_time(std::string_view text);

// Writes `seconds` (in the style's scale, see timestamp) in the format. Zoned times are written
// in UTC with "Z".
[[nodiscard]] std::string format_time(double seconds, const time_format& format);

// What a time text must look like, for messages.
inline constexpr std::string_view time_expected =
    "an ISO 8601 time like 2026-03-04 05:06:07 or 2026-03-04T05:06:07Z, or plain seconds";

// One cell of a CSV record, with where it starts in the input (1-based).
struct csv_cell {
    std::string text; // unquoted, with "" turned into "
    std::uint32_t line = 0;
    std::uint32_t column = 0;
};

// Splits a CSV stream into records after RFC 4180: cells separated by the delimiter, quoted
// cells may hold the delimiter, quotes ("") and line breaks; CRLF or LF line ends. Blank lines
// and lines starting with '#' are skipped, and a UTF-8 byte-order mark at the start is ignored.
// The delimiter is taken from the first record (the header): ',' unless that line has no comma
// but a ';' or a tab, as spreadsheets set to a decimal comma write.
class csv_reader {
public:
    explicit csv_reader(std::istream& in) : in_(in) {}

    csv_reader(const csv_reader&) = delete;
    csv_reader& operator=(const csv_reader&) = delete;

    // The next record into `cells`. False at the end of the input; then `error()` tells whether
    // the input ended inside a quoted cell or could not be read.
    bool next(std::vector<csv_cell>& cells);

    [[nodiscard]] char delimiter() const { return delimiter_; }
    [[nodiscard]] const std::string& error() const { return error_; }
    [[nodiscard]] bool read_failed() const { return read_failed_; }
    // The line the last record started on.
    [[nodiscard]] std::uint32_t line() const { return record_line_; }

private:
    bool read_line(std::string& out);

    std::istream& in_;
    char delimiter_ = 0; // decided on the first record
    std::uint32_t line_ = 0;
    std::uint32_t record_line_ = 0;
    std::string error_;
    bool read_failed_ = false;
};

// A number as written in a cell: optional sign, digits with '.' (or ',' when the file's
// delimiter is not a comma), an optional exponent. Nothing for anything else, NaN included.
[[nodiscard]] std::optional<double> parse_number(std::string_view text, char delimiter);

// Text with the spaces and tabs at both ends removed.
[[nodiscard]] std::string_view trim(std::string_view text);

// A cell as RFC 4180 wants it: quoted when it holds the delimiter, a quote or a line break.
[[nodiscard]] std::string csv_quote(std::string_view text);

} // namespace floc::app::replay
