#include "replay_input.hpp"

#include <charconv>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <istream>

namespace floc::app::replay {
namespace {

constexpr double day_s = 86400.0;

bool is_digit(char c) {
    return c >= '0' && c <= '9';
}

// Reads exactly `n` digits at `pos`; advances `pos`.
std::optional<int> digits(std::string_view s, std::size_t& pos, std::size_t n) {
    if (pos + n > s.size()) {
        return std::nullopt;
    }
    int v = 0;
    for (std::size_t i = 0; i < n; ++i) {
        const char c = s[pos + i];
        if (!is_digit(c)) {
            return std::nullopt;
        }
        v = v * 10 + (c - '0');
    }
    pos += n;
    return v;
}

bool take(std::string_view s, std::size_t& pos, char c) {
    if (pos < s.size() && s[pos] == c) {
        ++pos;
        return true;
    }
    return false;
}

// Days since 1970-01-01 of a valid calendar date.
std::optional<double> days_of(int y, int m, int d) {
    const std::chrono::year_month_day ymd{std::chrono::year{y},
                                          std::chrono::month{static_cast<unsigned>(m)},
                                          std::chrono::day{static_cast<unsigned>(d)}};
    if (!ymd.ok()) {
        return std::nullopt;
    }
    return static_cast<double>(std::chrono::sys_days{ymd}.time_since_epoch().count());
}

std::optional<timestamp> parse_iso(std::string_view s) {
    std::size_t pos = 0;
    const auto y = digits(s, pos, 4);
    if (!y || !take(s, pos, '-')) {
        return std::nullopt;
    }
    const auto mo = digits(s, pos, 2);
    if (!mo || !take(s, pos, '-')) {
        return std::nullopt;
    }
    const auto d = digits(s, pos, 2);
    if (!d) {
        return std::nullopt;
    }
    const auto days = days_of(*y, *mo, *d);
    if (!days) {
        return std::nullopt;
    }
    timestamp t;
    t.seconds = *days * day_s;
    if (pos == s.size()) {
        return t; // a date alone: midnight, local
    }
    if (s[pos] != 'T' && s[pos] != 't' && s[pos] != ' ') {
        return std::nullopt;
    }
    t.format.separator = s[pos] == ' ' ? ' ' : 'T';
    ++pos;
    const auto h = digits(s, pos, 2);
    if (!h || !take(s, pos, ':')) {
        return std::nullopt;
    }
    const auto mi = digits(s, pos, 2);
    if (!mi || *h > 23 || *mi > 59) {
        return std::nullopt;
    }
    double sec = 0.0;
    if (take(s, pos, ':')) {
        const auto whole = digits(s, pos, 2);
        if (!whole || *whole > 59) {
            return std::nullopt;
        }
        sec = *whole;
        if (take(s, pos, '.') || take(s, pos, ',')) {
            double scale = 0.1;
            const std::size_t first = pos;
            while (pos < s.size() && is_digit(s[pos])) {
                sec += (s[pos] - '0') * scale;
                scale /= 10.0;
                ++pos;
            }
            if (pos == first) {
                return std::nullopt;
            }
            t.format.fraction = true;
        }
    }
    t.seconds += *h * 3600.0 + *mi * 60.0 + sec;
    if (pos == s.size()) {
        return t;
    }
    if (s[pos] == 'Z' || s[pos] == 'z') {
        ++pos;
        t.format.style = time_style::zoned;
    } else if (s[pos] == '+' || s[pos] == '-') {
        const double sign = s[pos] == '+' ? 1.0 : -1.0;
        ++pos;
        const auto oh = digits(s, pos, 2);
        if (!oh || *oh > 23) {
            return std::nullopt;
        }
        int om = 0;
        if (pos < s.size()) {
            take(s, pos, ':');
            const auto m = digits(s, pos, 2);
            if (!m || *m > 59) {
                return std::nullopt;
            }
            om = *m;
        }
        t.seconds -= sign * (*oh * 3600.0 + om * 60.0);
        t.format.style = time_style::zoned;
    }
    if (pos != s.size()) {
        return std::nullopt;
    }
    return t;
}

} // namespace

std::string_view trim(std::string_view text) {
    const auto first = text.find_first_not_of(" \t");
    if (first == std::string_view::npos) {
        return {};
    }
    const auto last = text.find_last_not_of(" \t");
    return text.substr(first, last - first + 1);
}

std::optional<double> parse_number(std::string_view text, char delimiter) {
    std::string_view s = trim(text);
    if (s.size() > 1 && s.front() == '+' && s[1] != '-') {
        s.remove_prefix(1);
    }
    std::string decimal_comma;
    if (delimiter != ',' && s.find(',') != std::string_view::npos &&
        s.find('.') == std::string_view::npos) {
        decimal_comma.assign(s);
        decimal_comma.at(decimal_comma.find(',')) = '.';
        s = decimal_comma;
    }
    if (s.empty() || (!is_digit(s.front()) && s.front() != '-' && s.front() != '.')) {
        return std::nullopt; // refuses "nan", "inf" and words
    }
    double v = 0.0;
    const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
    if (ec != std::errc{} || end != s.data() + s.size() || !std::isfinite(v)) {
        return std::nullopt;
    }
    return v;
}

std::optional<timestamp> parse_time(std::string_view text) {
    const std::string_view s = trim(text);
    if (s.size() >= 10 && s[4] == '-') {
        return parse_iso(s);
    }
    if (const auto v = parse_number(s, ',')) {
        timestamp t;
        t.seconds = *v;
        t.format.style = time_style::seconds;
        return t;
    }
    return std::nullopt;
}

std::string format_time(double seconds, const time_format& format) {
    if (format.style == time_style::seconds || !std::isfinite(seconds)) {
        char buf[64];
        const auto [end, ec] =
            std::to_chars(buf, buf + sizeof buf, seconds, std::chars_format::fixed);
        return ec == std::errc{} ? std::string(buf, end) : std::string{"nan"};
    }
    const long long unit = format.fraction ? 1000 : 1;
    const auto ticks = static_cast<long long>(std::llround(seconds * static_cast<double>(unit)));
    const long long per_day = 86400LL * unit;
    long long day = ticks / per_day;
    long long rest = ticks % per_day;
    if (rest < 0) {
        rest += per_day;
        --day;
    }
    const std::chrono::year_month_day ymd{std::chrono::sys_days{std::chrono::days{day}}};
    const long long sec = rest / unit;
    char buf[64];
    int n = std::snprintf(buf, sizeof buf, "%04d-%02u-%02u%c%02lld:%02lld:%02lld",
                          static_cast<int>(ymd.year()), static_cast<unsigned>(ymd.month()),
                          static_cast<unsigned>(ymd.day()), format.separator, sec / 3600,
                          (sec / 60) % 60, sec % 60);
    std::string out(buf, static_cast<std::size_t>(std::max(n, 0)));
    if (format.fraction) {
        n = std::snprintf(buf, sizeof buf, ".%03lld", rest % unit);
        out.append(buf, static_cast<std::size_t>(std::max(n, 0)));
    }
    if (format.style == time_style::zoned) {
        out += 'Z';
    }
    return out;
}

bool csv_reader::read_line(std::string& out) {
    if (!std::getline(in_, out)) {
        read_failed_ = in_.bad();
        return false;
    }
    ++line_;
    if (!out.empty() && out.back() == '\r') {
        out.pop_back();
    }
    if (line_ == 1 && out.starts_with("\xEF\xBB\xBF")) {
        out.erase(0, 3);
    }
    return true;
}

bool csv_reader::next(std::vector<csv_cell>& cells) {
    cells.clear();
    std::string line;
    do {
        if (!read_line(line)) {
            return false;
        }
    } while (trim(line).empty() || line.front() == '#');
    record_line_ = line_;
    if (delimiter_ == 0) {
        std::size_t commas = 0;
        std::size_t semicolons = 0;
        std::size_t tabs = 0;
        bool quoted = false;
        for (const char c : line) {
            quoted = c == '"' ? !quoted : quoted;
            commas += !quoted && c == ',' ? 1U : 0U;
            semicolons += !quoted && c == ';' ? 1U : 0U;
            tabs += !quoted && c == '\t' ? 1U : 0U;
        }
        delimiter_ = commas > 0 ? ',' : semicolons > 0 ? ';' : tabs > 0 ? '\t' : ',';
    }
    csv_cell cell;
    cell.line = line_;
    cell.column = 1;
    bool in_quotes = false;
    bool was_quoted = false;
    std::size_t i = 0;
    while (true) {
        if (i >= line.size()) {
            if (!in_quotes) {
                cells.push_back(std::move(cell));
                return true;
            }
            const std::uint32_t opened_line = cell.line;
            const std::uint32_t opened_column = cell.column;
            if (!read_line(line)) {
                if (!read_failed_) {
                    error_ =
                        std::to_string(opened_line) + ":" + std::to_string(opened_column) +
                        ": found a quoted cell that is never closed; expected a closing quote (\")";
                }
                return false;
            }
            cell.text += '\n';
            i = 0;
            continue;
        }
        const char c = line[i];
        if (in_quotes) {
            if (c == '"') {
                if (i + 1 < line.size() && line[i + 1] == '"') {
                    cell.text += '"';
                    i += 2;
                    continue;
                }
                in_quotes = false;
            } else {
                cell.text += c;
            }
            ++i;
            continue;
        }
        if (c == delimiter_) {
            cells.push_back(std::move(cell));
            cell = csv_cell{};
            cell.line = line_;
            cell.column = static_cast<std::uint32_t>(i + 2);
            was_quoted = false;
            ++i;
            continue;
        }
        if (c == '"' && !was_quoted && trim(cell.text).empty()) {
            in_quotes = true;
            was_quoted = true;
            cell.text.clear();
            ++i;
            continue;
        }
        cell.text += c;
        ++i;
    }
}

std::string csv_quote(std::string_view text) {
    if (text.find_first_of(",\"\r\n") == std::string_view::npos) {
        return std::string{text};
    }
    std::string out = "\"";
    for (const char c : text) {
        out += c;
        if (c == '"') {
            out += '"';
        }
    }
    out += '"';
    return out;
}

} // namespace floc::app::replay
