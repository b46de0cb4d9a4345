#include "floc/config/table_reader.hpp"

#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <variant>

namespace floc::config {
namespace {

const toml::table& as_table(const void* p) { return *static_cast<const toml::table*>(p); }

source_pos to_pos(const toml::source_region& r) {
    return source_pos{r.begin.line, r.begin.column};
}

std::string format_double(double v) {
    std::array<char, 32> buf{};
    const int n = std::snprintf(buf.data(), buf.size(), "%.10g", v);
    return std::string{buf.data(), n > 0 ? static_cast<std::size_t>(n) : 0U};
}

// A short description of what a node is, for "found ..." texts.
std::string describe(const toml::node& n) {
    switch (n.type()) {
    case toml::node_type::string:
        return "the string " + quote(n.as_string()->get());
    case toml::node_type::integer:
        return "the integer " + std::to_string(n.as_integer()->get());
    case toml::node_type::floating_point:
        return "the number " + format_double(n.as_floating_point()->get());
    case toml::node_type::boolean:
        return n.as_boolean()->get() ? "true" : "false";
    case toml::node_type::table:
        return "a table";
    case toml::node_type::array:
        return "an array";
    case toml::node_type::date:
    case toml::node_type::time:
    case toml::node_type::date_time:
        return "a date/time";
    case toml::node_type::none:
        break;
    }
    return "nothing";
}

bool valid_name(std::string_view s) {
    if (s.empty() || s.size() > 64) {
        return false;
    }
    const auto letter = [](char c) { return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z'); };
    const auto digit = [](char c) { return c >= '0' && c <= '9'; };
    if (!letter(s.front())) {
        return false;
    }
    return std::all_of(s.begin(), s.end(), [&](char c) {
        return letter(c) || digit(c) || c == '_' || c == '-' || c == '.';
    });
}

std::string join(const std::vector<std::string_view>& words) {
    std::string out;
    for (std::size_t i = 0; i < words.size(); ++i) {
        if (i > 0) {
            out += (i + 1 == words.size()) ? " or " : ", ";
        }
        out += quote(words[i]);
    }
    return out;
}

std::string unit_of_text(const units::unit& u) {
    return with_article(std::string{units::quantity_name(u.kind)} + " unit");
}

// The known word within two edits of `word`, if exactly one is nearest (Levenshtein distance).
std::optional<std::string_view> nearest(std::string_view word, const std::vector<std::string_view>& known) {
    const auto distance = [](std::string_view a, std::string_view b) {
        std::vector<std::size_t> row(b.size() + 1);
        for (std::size_t j = 0; j <= b.size(); ++j) {
            row[j] = j;
        }
        for (std::size_t i = 1; i <= a.size(); ++i) {
            std::size_t diagonal = row[0];
            row[0] = i;
            for (std::size_t j = 1; j <= b.size(); ++j) {
                const std::size_t up = row[j];
                row[j] = std::min({row[j] + 1, row[j - 1] + 1, diagonal + (a[i - 1] == b[j - 1] ? 0U : 1U)});
                diagonal = up;
            }
        }
        return row[b.size()];
    };
    std::optional<std::string_view> best;
    std::size_t best_distance = 3;
    for (const std::string_view k : known) {
        const std::size_t d = distance(word, k);
        if (d < best_distance) {
            best = k;
            best_distance = d;
        }
    }
    return best;
}

} // namespace

// --- diagnostics -------------------------------------------------------------------------------

void diagnostics::error(source_pos at, std::string path, std::string found, std::string expected) {
    list_.push_back(diagnostic{file_, at, std::move(path), std::move(found), std::move(expected)});
}

std::vector<diagnostic> diagnostics::take_sorted() {
    std::stable_sort(list_.begin(), list_.end(), [](const diagnostic& a, const diagnostic& b) {
        if (a.at.line != b.at.line) {
            return a.at.line < b.at.line;
        }
        return a.at.column < b.at.column;
    });
    return std::move(list_);
}

std::string quote(std::string_view s) {
    std::string out = "\"";
    for (const char c : s) {
        if (c == '"' || c == '\\') {
            out += '\\';
        }
        if (static_cast<unsigned char>(c) < 0x20) {
            out += '?';
            continue;
        }
        out += c;
    }
    out += '"';
    return out;
}

std::string with_article(std::string_view noun) {
    const bool vowel = !noun.empty() && std::string_view{"aeiou"}.find(noun.front()) != std::string_view::npos;
    return (vowel ? "an " : "a ") + std::string{noun};
}

std::string describe_quantity_example(units::quantity kind) {
    using units::quantity;
    switch (kind) {
    case quantity::flow: return "a flow with its unit, like \"450 m3/h\" or \"2.1 MGD\"";
    case quantity::concentration: return "a concentration with its unit, like \"2.0 mg/L\"";
    case quantity::length: return "a length with its unit, like \"0.6 m\" or \"2 ft\"";
    case quantity::area: return "an area with its unit, like \"380 m2\" or \"4100 ft2\"";
    case quantity::volume: return "a volume with its unit, like \"900 m3\" or \"0.24 MG\"";
    case quantity::mass: return "a mass with its unit, like \"120 kg\" or \"260 lb\"";
    case quantity::mass_rate: return "a mass rate with its unit, like \"850 kg/d\" or \"1900 lb/d\"";
    case quantity::temperature: return "a temperature with its unit, like \"15 degC\" or \"59 degF\"";
    case quantity::duration: return "a duration with its unit, like \"500 ms\", \"30 s\", \"10 min\" or \"7 d\"";
    case quantity::velocity: return "a velocity with its unit, like \"1.2 m/h\"";
    case quantity::solids_flux: return "a solids flux with its unit, like \"120 kg/m2/d\"";
    case quantity::settled_volume: return "a settled volume with its unit, like \"250 mL/L\"";
    case quantity::sludge_volume_index: return "a sludge volume index with its unit, like \"120 mL/g\"";
    case quantity::rate: return "a rate with its unit, like \"240 1/d\"";
    case quantity::power: return "a power with its unit, like \"30 kW\"";
    case quantity::dimensionless: return "a plain number";
    case quantity::state: return "on or off";
    }
    return "a value with its unit";
}

// --- table_reader ------------------------------------------------------------------------------

table_reader::table_reader(const void* table, std::string path, diagnostics& diags)
    : table_(table), path_(std::move(path)), diags_(diags) {}

bool table_reader::has(std::string_view key) const {
    return as_table(table_).get(key) != nullptr;
}

source_pos table_reader::pos() const { return to_pos(as_table(table_).source()); }

source_pos table_reader::pos_of(std::string_view key) const {
    const toml::node* n = as_table(table_).get(key);
    return n != nullptr ? to_pos(n->source()) : pos();
}

std::string table_reader::path_of(std::string_view key) const {
    return path_.empty() ? std::string{key} : path_ + "." + std::string{key};
}

const void* table_reader::node(std::string_view key) {
    known_.emplace(key);
    return as_table(table_).get(key);
}

void table_reader::missing(std::string_view key, std::string expected) {
    diags_.error(pos(), path_of(key), "no key " + quote(key) + " in " +
                                          (path_.empty() ? std::string{"the top level"} : path_),
                 std::move(expected));
}

std::optional<std::string> table_reader::string(std::string_view key, need n) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, "a string");
        }
        return std::nullopt;
    }
    if (!node_ptr->is_string()) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr), "a string");
        return std::nullopt;
    }
    return node_ptr->as_string()->get();
}

std::optional<std::string> table_reader::name(std::string_view key, need n) {
    std::optional<std::string> s = string(key, n);
    if (s && !valid_name(*s)) {
        diags_.error(pos_of(key), path_of(key), "the name " + quote(*s),
                     "a name of 1 to 64 letters, digits, '_', '-' or '.', starting with a letter");
        return std::nullopt;
    }
    return s;
}

std::optional<std::int64_t> table_reader::integer(std::string_view key, std::int64_t min,
                                                  std::int64_t max, need n) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    const std::string expected =
        "an integer from " + std::to_string(min) + " to " + std::to_string(max);
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, expected);
        }
        return std::nullopt;
    }
    if (!node_ptr->is_integer()) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr), expected);
        return std::nullopt;
    }
    const std::int64_t v = node_ptr->as_integer()->get();
    if (v < min || v > max) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr), expected);
        return std::nullopt;
    }
    return v;
}

std::optional<double> table_reader::number(std::string_view key, double min, double max, need n) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    const std::string expected = "a number from " + format_double(min) + " to " + format_double(max);
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, expected);
        }
        return std::nullopt;
    }
    double v = 0.0;
    if (node_ptr->is_integer()) {
        v = static_cast<double>(node_ptr->as_integer()->get());
    } else if (node_ptr->is_floating_point()) {
        v = node_ptr->as_floating_point()->get();
    } else {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr), expected);
        return std::nullopt;
    }
    if (!std::isfinite(v) || v < min || v > max) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr), expected);
        return std::nullopt;
    }
    return v;
}

std::optional<bool> table_reader::boolean(std::string_view key, need n) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, "true or false");
        }
        return std::nullopt;
    }
    if (!node_ptr->is_boolean()) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr), "true or false");
        return std::nullopt;
    }
    return node_ptr->as_boolean()->get();
}

namespace {

// Reads one quantity node; returns the canonical value or an error text pair.
struct quantity_problem {
    std::string found;
    std::string expected;
};

std::variant<double, quantity_problem> read_quantity_node(const toml::node& n, units::quantity kind,
                                                          const units::unit* bare_unit,
                                                          measure m) {
    // A difference (a tolerance, a step, a rate of change) scales but does not shift:
    // "1.8 degF" as a difference is 1 degC, as a temperature it is -16.8 degC.
    const auto convert = [m](double v, const units::unit& u) {
        return m == measure::difference ? v * u.factor : units::to_canonical(v, u);
    };
    const std::string expected = describe_quantity_example(kind) + " (units: " +
                                 units::symbols_of(kind) + ")";
    if (n.is_integer() || n.is_floating_point()) {
        const double v = n.is_integer() ? static_cast<double>(n.as_integer()->get())
                                        : n.as_floating_point()->get();
        if (bare_unit != nullptr && std::isfinite(v)) {
            return convert(v, *bare_unit);
        }
        if (kind == units::quantity::dimensionless && std::isfinite(v)) {
            return v;
        }
        return quantity_problem{describe(n) + " without a unit", expected};
    }
    if (!n.is_string()) {
        return quantity_problem{describe(n), expected};
    }
    const auto parsed = units::parse_quantity(n.as_string()->get());
    if (const auto* err = std::get_if<std::string>(&parsed)) {
        return quantity_problem{*err, expected};
    }
    const auto& qv = std::get<units::quantity_value>(parsed);
    if (qv.as_written->kind != kind) {
        return quantity_problem{quote(n.as_string()->get()) + ", " +
                                    unit_of_text(*qv.as_written),
                                expected};
    }
    return convert(qv.value, *qv.as_written);
}

} // namespace

std::optional<double> table_reader::quantity(std::string_view key, units::quantity kind, double min,
                                             double max, need n, const units::unit* bare_unit,
                                             measure m) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, describe_quantity_example(kind));
        }
        return std::nullopt;
    }
    const auto r = read_quantity_node(*node_ptr, kind, bare_unit, m);
    if (const auto* p = std::get_if<quantity_problem>(&r)) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), p->found, p->expected);
        return std::nullopt;
    }
    const double v = std::get<double>(r);
    if (v < min || v > max) {
        const units::unit& canon = units::canonical_unit(kind);
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr),
                     "a value from " + units::format(min, canon, 6) + " to " +
                         units::format(max, canon, 6));
        return std::nullopt;
    }
    return v;
}

std::optional<std::pair<double, double>> table_reader::quantity_range(std::string_view key,
                                                                      units::quantity kind, need n,
                                                                      const units::unit* bare_unit) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    const std::string expected = "two values [low, high], each " + describe_quantity_example(kind);
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, expected);
        }
        return std::nullopt;
    }
    const toml::array* arr = node_ptr->as_array();
    if (arr == nullptr || arr->size() != 2) {
        diags_.error(to_pos(node_ptr->source()), path_of(key),
                     arr == nullptr ? describe(*node_ptr)
                                    : "an array of " + std::to_string(arr->size()) + " values",
                     expected);
        return std::nullopt;
    }
    std::array<double, 2> v{};
    for (std::size_t i = 0; i < 2; ++i) {
        const toml::node& element = *arr->get(i);
        const auto r = read_quantity_node(element, kind, bare_unit, measure::absolute);
        if (const auto* p = std::get_if<quantity_problem>(&r)) {
            diags_.error(to_pos(element.source()), path_of(key) + "[" + std::to_string(i) + "]",
                         p->found, p->expected);
            return std::nullopt;
        }
        v.at(i) = std::get<double>(r);
    }
    if (v[0] > v[1]) {
        const units::unit& canon = units::canonical_unit(kind);
        diags_.error(to_pos(node_ptr->source()), path_of(key),
                     "low " + units::format(v[0], canon) + " above high " + units::format(v[1], canon),
                     "[low, high] with low <= high");
        return std::nullopt;
    }
    return std::pair{v[0], v[1]};
}

const units::unit* table_reader::unit_symbol(std::string_view key,
                                             std::optional<units::quantity> kind, need n) {
    const std::string expected =
        kind ? with_article(std::string{units::quantity_name(*kind)} + " unit") + " (" +
                   units::symbols_of(*kind) + ")"
             : std::string{"a unit symbol, like \"mg/L\", \"m3/h\", \"gpm\" or \"degF\""};
    const std::optional<std::string> s = string(key, n);
    if (!s) {
        return nullptr;
    }
    const units::unit* u = units::find_unit(*s);
    if (u == nullptr) {
        diags_.error(pos_of(key), path_of(key), "unknown unit " + quote(*s), expected);
        return nullptr;
    }
    if (kind && u->kind != *kind) {
        diags_.error(pos_of(key), path_of(key), quote(*s) + ", " + unit_of_text(*u), expected);
        return nullptr;
    }
    return u;
}

std::optional<std::size_t> table_reader::choice_index(std::string_view key,
                                                      const std::vector<std::string_view>& words,
                                                      need n) {
    const std::string expected = "one of " + join(words);
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, expected);
        }
        return std::nullopt;
    }
    if (!node_ptr->is_string()) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr), expected);
        return std::nullopt;
    }
    const std::string& s = node_ptr->as_string()->get();
    for (std::size_t i = 0; i < words.size(); ++i) {
        if (words[i] == s) {
            return i;
        }
    }
    diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr), expected);
    return std::nullopt;
}

std::optional<std::vector<std::string>> table_reader::string_list(std::string_view key, need n) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, "an array of strings");
        }
        return std::nullopt;
    }
    const toml::array* arr = node_ptr->as_array();
    if (arr == nullptr) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr),
                     "an array of strings");
        return std::nullopt;
    }
    std::vector<std::string> out;
    bool good = true;
    for (std::size_t i = 0; i < arr->size(); ++i) {
        const toml::node& element = *arr->get(i);
        if (!element.is_string()) {
            diags_.error(to_pos(element.source()), path_of(key) + "[" + std::to_string(i) + "]",
                         describe(element), "a string");
            good = false;
            continue;
        }
        out.push_back(element.as_string()->get());
    }
    if (!good) {
        return std::nullopt;
    }
    return out;
}

std::vector<source_pos> table_reader::list_positions(std::string_view key) const {
    std::vector<source_pos> out;
    const toml::node* n = as_table(table_).get(key);
    if (n != nullptr && n->is_array()) {
        for (const toml::node& element : *n->as_array()) {
            out.push_back(to_pos(element.source()));
        }
    }
    return out;
}

void table_reader::table(std::string_view key, need n,
                         const std::function<void(table_reader&)>& read) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    if (node_ptr == nullptr) {
        if (n == need::required) {
            missing(key, "a table [" + path_of(key) + "]");
        }
        return;
    }
    if (!node_ptr->is_table()) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr),
                     "a table [" + path_of(key) + "]");
        return;
    }
    table_reader sub{node_ptr->as_table(), path_of(key), diags_};
    read(sub);
    sub.finish();
}

void table_reader::each_table(std::string_view key,
                              const std::function<void(table_reader&, std::size_t)>& read) {
    const auto* node_ptr = static_cast<const toml::node*>(node(key));
    if (node_ptr == nullptr) {
        return;
    }
    const toml::array* arr = node_ptr->as_array();
    if (arr == nullptr || !arr->is_array_of_tables()) {
        diags_.error(to_pos(node_ptr->source()), path_of(key), describe(*node_ptr),
                     "tables written as [[" + path_of(key) + "]]");
        return;
    }
    for (std::size_t i = 0; i < arr->size(); ++i) {
        table_reader sub{arr->get(i)->as_table(), path_of(key) + "[" + std::to_string(i) + "]",
                         diags_};
        read(sub, i);
        sub.finish();
    }
}

void table_reader::skip(std::initializer_list<std::string_view> keys) {
    for (const std::string_view k : keys) {
        known_.emplace(k);
    }
}

void table_reader::finish() {
    std::vector<std::string_view> known(known_.begin(), known_.end());
    for (const auto& [k, v] : as_table(table_)) {
        if (known_.find(k.str()) != known_.end()) {
            continue;
        }
        std::string expected = known.empty() ? std::string{"no keys here"}
                                             : "one of the known keys: " + join(known);
        if (const std::optional<std::string_view> close = nearest(k.str(), known)) {
            expected = "a known key (did you mean " + quote(*close) + "?): " + join(known);
        }
        diags_.error(to_pos(k.source()), path_of(k.str()), "the unknown key " + quote(k.str()),
                     expected);
    }
}

bool read_document(std::string_view text, diagnostics& diags,
                   const std::function<void(table_reader&)>& read) {
    // Debian's toml++ library is built with exceptions; a parse error is caught right here and
    // turned into a diagnostic, so nothing leaves this module by exception.
    toml::table document;
    try {
        document = toml::parse(text, diags.file());
    } catch (const toml::parse_error& e) {
        diags.error(to_pos(e.source()), "", "invalid TOML: " + std::string{e.description()},
                    "a valid TOML v1.0 document");
        return false;
    }
    table_reader root{&document, "", diags};
    read(root);
    root.finish();
    return true;
}

} // namespace floc::config
