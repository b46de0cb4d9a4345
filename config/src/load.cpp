#include "loader.hpp"

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <fstream>
#include <limits>
#include <sstream>

namespace floc::config {

std::string diagnostic::message() const {
    std::string out = file;
    if (at.line > 0) {
        out += ":" + std::to_string(at.line) + ":" + std::to_string(at.column);
    }
    out += ": ";
    if (!path.empty()) {
        out += path + ": ";
    }
    out += "found " + found + "; expected " + expected;
    return out;
}

namespace detail {
namespace {

constexpr double inf = std::numeric_limits<double>::infinity();

std::string list_names(const std::map<std::string, source_pos, std::less<>>& names,
                       std::size_t max_names = 8) {
    std::string out;
    std::size_t i = 0;
    for (const auto& [name, pos] : names) {
        if (i == max_names) {
            out += ", ...";
            break;
        }
        out += (i == 0 ? "" : ", ") + quote(name);
        ++i;
    }
    return out.empty() ? std::string{"none defined"} : out;
}

std::string at_line(source_pos p) { return "line " + std::to_string(p.line); }

} // namespace

bool loader::claim(std::map<std::string, source_pos, std::less<>>& registry, const std::string& name,
                   source_pos at, const std::string& path, std::string_view what) {
    const auto [it, inserted] = registry.emplace(name, at);
    if (!inserted) {
        diags.error(at, path, quote(name) + ", already the name of a " + std::string{what} +
                                  " at " + at_line(it->second),
                    "a name not used before");
    }
    return inserted;
}

signal_ref loader::signal(table_reader& t, std::string_view key, need n, signal_source source,
                          units::quantity kind) {
    signal_ref ref;
    const std::optional<std::string> name = t.string(key, n);
    if (!name) {
        return ref;
    }
    ref.at = t.pos_of(key);
    if (broken_signals.count(*name) != 0) {
        return ref;  // its definition was already reported
    }
    const bool tags_ok = source != signal_source::lab_only;
    const bool lab_ok = source != signal_source::tag_only;
    std::map<std::string, source_pos, std::less<>> candidates;
    if (tags_ok) {
        for (const tag& g : cfg.tags) {
            if (g.quantity() == kind) {
                candidates.emplace(g.name, g.at);
            }
        }
    }
    if (lab_ok) {
        for (const lab_entry& e : cfg.lab) {
            if (e.kind == kind) {
                candidates.emplace(e.name, e.at);
            }
        }
    }
    const std::string what = !lab_ok ? "a [[tag]]" : !tags_ok ? "a [[lab_entry]]" : "a [[tag]] or [[lab_entry]]";
    const std::string expected = "the name of " + what + " measuring " +
                                 std::string{units::quantity_name(kind)} + " (candidates: " +
                                 list_names(candidates) + ")";
    const tag* tg = cfg.find_tag(*name);
    const lab_entry* lab = cfg.find_lab(*name);
    if ((tg == nullptr && lab == nullptr) || (tg != nullptr && !tags_ok) || (lab != nullptr && !lab_ok)) {
        const std::string found = tg != nullptr    ? quote(*name) + ", which is a tag"
                                  : lab != nullptr ? quote(*name) + ", which is a lab entry"
                                                   : quote(*name) + ", which is not defined";
        diags.error(ref.at, t.path_of(key), found, expected);
        return ref;
    }
    const units::quantity actual = tg != nullptr ? tg->quantity() : lab->kind;
    if (actual != kind) {
        diags.error(ref.at, t.path_of(key),
                    quote(*name) + ", which measures " + std::string{units::quantity_name(actual)},
                    expected);
        return ref;
    }
    ref.name = *name;
    ref.is_lab = lab != nullptr;
    ref.index = tg != nullptr ? static_cast<std::size_t>(tg - cfg.tags.data())
                              : static_cast<std::size_t>(lab - cfg.lab.data());
    return ref;
}

std::optional<std::string> loader::train(table_reader& t, std::string_view key, need n) {
    std::optional<std::string> name = t.string(key, n);
    if (!name) {
        return name;
    }
    const bool known = std::any_of(cfg.zones.begin(), cfg.zones.end(),
                                   [&](const zone& z) { return z.train == *name; });
    if (!known) {
        std::map<std::string, source_pos, std::less<>> trains;
        for (const zone& z : cfg.zones) {
            trains.emplace(z.train, z.at);
        }
        diags.error(t.pos_of(key), t.path_of(key), quote(*name) + ", which no [[zone]] belongs to",
                    "the train of a [[zone]] (trains: " + list_names(trains) + ")");
        return std::nullopt;
    }
    return name;
}

advisor_common loader::common(table_reader& t, bool has_period) {
    advisor_common c;
    c.at = t.pos();
    if (has_period) {
        c.period_s = t.quantity("period", units::quantity::duration, 10.0, 86400.0, need::optional)
                         .value_or(c.period_s);
    }
    c.hold_for_s = t.quantity("hold_for", units::quantity::duration, 0.0, 7 * 86400.0,
                              need::optional)
                       .value_or(c.hold_for_s);
    return c;
}

// --- [site], [display] -------------------------------------------------------------------------

void read_site_and_display(loader& l, table_reader& root) {
    root.table("site", need::required, [&](table_reader& t) {
        l.cfg.site.name = t.string("name", need::required).value_or("");
        l.cfg.site.description = t.string("description", need::optional).value_or("");
    });

    display_config& d = l.cfg.display;
    root.table("display", need::optional, [&](table_reader& t) {
        d.system = t.choice<units::unit_system>(
                        "units", {{"si", units::unit_system::si},
                                  {"us_customary", units::unit_system::us_customary}},
                        need::optional)
                       .value_or(units::unit_system::si);
        for (std::size_t i = 0; i < units::quantity_count; ++i) {
            const auto q = static_cast<units::quantity>(i);
            if (q == units::quantity::state || q == units::quantity::dimensionless) {
                continue;
            }
            d.unit_of.at(i) = t.unit_symbol(units::quantity_name(q), q, need::optional);
        }
    });
    for (std::size_t i = 0; i < units::quantity_count; ++i) {
        if (d.unit_of.at(i) == nullptr) {
            d.unit_of.at(i) = &units::default_display_unit(static_cast<units::quantity>(i), d.system);
        }
    }
}

// --- [[plc]], [[tag]] --------------------------------------------------------------------------

namespace {

void read_plc(loader& l, table_reader& t) {
    using units::quantity;
    plc_connection p;
    p.at = t.pos_of("name");
    p.name = t.name("name", need::required).value_or("");
    if (!p.name.empty()) {
        l.claim(l.plc_names, p.name, p.at, t.path_of("name"), "[[plc]]");
    }
    p.host = t.string("host", need::required).value_or("");
    if (t.has("host") && p.host.empty()) {
        t.diags().error(t.pos_of("host"), t.path_of("host"), "an empty host",
                        "an IPv4 address or a host name");
    }
    p.port = static_cast<std::uint16_t>(t.integer("port", 1, 65535, need::optional).value_or(502));
    p.unit_id = static_cast<std::uint8_t>(t.integer("unit_id", 0, 255, need::optional).value_or(1));
    p.connect_timeout_s = t.quantity("connect_timeout", quantity::duration, 0.1, 60.0, need::optional)
                              .value_or(p.connect_timeout_s);
    p.response_timeout_s = t.quantity("response_timeout", quantity::duration, 0.05, 60.0, need::optional)
                               .value_or(p.response_timeout_s);
    p.byte_timeout_s = t.quantity("byte_timeout", quantity::duration, 0.01, 10.0, need::optional)
                           .value_or(p.byte_timeout_s);
    p.poll_period_s = t.quantity("poll_period", quantity::duration, 0.1, 3600.0, need::optional)
                          .value_or(p.poll_period_s);
    p.reconnect_min_s = t.quantity("reconnect_min", quantity::duration, 0.1, 3600.0, need::optional)
                            .value_or(p.reconnect_min_s);
    p.reconnect_max_s = t.quantity("reconnect_max", quantity::duration, 0.1, 3600.0, need::optional)
                            .value_or(p.reconnect_max_s);
    if (p.reconnect_min_s > p.reconnect_max_s) {
        t.diags().error(t.pos_of("reconnect_min"), t.path_of("reconnect_min"),
                        "reconnect_min above reconnect_max", "reconnect_min <= reconnect_max");
    }
    p.max_registers_per_read = static_cast<std::uint16_t>(
        t.integer("max_registers_per_read", 1, 125, need::optional).value_or(125));
    p.max_gap_registers =
        static_cast<std::uint16_t>(t.integer("max_gap_registers", 0, 124, need::optional).value_or(8));
    l.cfg.plcs.push_back(std::move(p));
}

void read_tag(loader& l, table_reader& t) {
    tag g;
    g.at = t.pos_of("name");
    const std::optional<std::string> name = t.name("name", need::required);
    g.description = t.string("description", need::optional).value_or("");

    // The connection: required when there are several.
    if (const std::optional<std::string> plc = t.string("plc", l.cfg.plcs.size() > 1 ? need::required
                                                                                      : need::optional)) {
        const auto it = std::find_if(l.cfg.plcs.begin(), l.cfg.plcs.end(),
                                     [&](const plc_connection& p) { return p.name == *plc; });
        if (it == l.cfg.plcs.end()) {
            t.diags().error(t.pos_of("plc"), t.path_of("plc"), quote(*plc) + ", which is not defined",
                            "the name of a [[plc]] (defined: " + list_names(l.plc_names) + ")");
        } else {
            g.plc = static_cast<std::size_t>(it - l.cfg.plcs.begin());
        }
    } else if (l.cfg.plcs.empty() && !l.plc_key_present) {
        t.diags().error(t.pos(), t.path(), "a tag but no [[plc]] connection",
                        "a [[plc]] table that the tag is read from");
    }

    std::optional<std::int64_t> fc = t.integer("function", 0, 255, need::required);
    if (fc && (*fc < 1 || *fc > 4)) {
        const bool write = *fc == 5 || *fc == 6 || *fc == 15 || *fc == 16 || *fc == 22 || *fc == 23;
        t.diags().error(t.pos_of("function"), t.path_of("function"),
                        "function code " + std::to_string(*fc) + (write ? ", a write function" : ""),
                        "a read function code: 1 (coils), 2 (discrete inputs), 3 (holding "
                        "registers) or 4 (input registers); floc never writes to a PLC");
        fc.reset();
    }
    g.function = static_cast<read_function>(fc.value_or(4));
    g.address = static_cast<std::uint16_t>(t.integer("address", 0, 65535, need::required).value_or(0));
    g.address_at = t.pos_of("address");

    const bool bit_table = g.function == read_function::coils ||
                           g.function == read_function::discrete_inputs;
    const std::optional<data_type> type = t.choice<data_type>(
        "type",
        {{"bit", data_type::bit}, {"int16", data_type::int16}, {"uint16", data_type::uint16},
         {"int32", data_type::int32}, {"uint32", data_type::uint32}, {"float32", data_type::float32}},
        bit_table ? need::optional : need::required);
    g.type = type.value_or(bit_table ? data_type::bit : data_type::uint16);
    if (type && bit_table != (g.type == data_type::bit)) {
        t.diags().error(t.pos_of("type"), t.path_of("type"),
                        quote(to_string(g.type)) + " with function " + std::to_string(static_cast<int>(g.function)),
                        bit_table ? "\"bit\" (functions 1 and 2 read single bits)"
                                  : "a register type (int16, uint16, int32, uint32 or float32) for "
                                    "functions 3 and 4");
    }
    if (t.has("word_order")) {
        g.order = t.choice<word_order>("word_order",
                                       {{"abcd", word_order::abcd}, {"badc", word_order::badc},
                                        {"cdab", word_order::cdab}, {"dcba", word_order::dcba}},
                                       need::optional)
                      .value_or(word_order::abcd);
        if (g.width() != 2) {
            t.diags().error(t.pos_of("word_order"), t.path_of("word_order"),
                            "a word order for the 16-bit type " + quote(to_string(g.type)),
                            "word_order only on int32, uint32 or float32 tags");
        }
    }
    if (t.has("bit")) {
        g.bit = static_cast<std::uint8_t>(t.integer("bit", 0, 15, need::optional).value_or(0));
        if (g.type != data_type::int16 && g.type != data_type::uint16) {
            t.diags().error(t.pos_of("bit"), t.path_of("bit"),
                            "a bit number on a " + quote(to_string(g.type)) + " tag",
                            "bit only on int16 or uint16 register tags");
        }
    }

    const bool is_state = g.type == data_type::bit || g.bit.has_value();
    const std::optional<units::quantity> q = t.choice<units::quantity>(
        "quantity",
        {{"flow", units::quantity::flow},
         {"concentration", units::quantity::concentration},
         {"length", units::quantity::length},
         {"volume", units::quantity::volume},
         {"temperature", units::quantity::temperature},
         {"duration", units::quantity::duration},
         {"velocity", units::quantity::velocity},
         {"settled_volume", units::quantity::settled_volume},
         {"sludge_volume_index", units::quantity::sludge_volume_index},
         {"rate", units::quantity::rate},
         {"power", units::quantity::power},
         {"mass_rate", units::quantity::mass_rate},
         {"dimensionless", units::quantity::dimensionless},
         {"state", units::quantity::state}},
        is_state ? need::optional : need::required);
    if (is_state) {
        if (q && *q != units::quantity::state) {
            t.diags().error(t.pos_of("quantity"), t.path_of("quantity"),
                            quote(units::quantity_name(*q)) + " on a bit tag", "\"state\"");
        }
        if (t.has("unit")) {
            (void)t.string("unit", need::optional);
            t.diags().error(t.pos_of("unit"), t.path_of("unit"), "a unit on a bit tag",
                            "no unit: bits are on/off");
        }
        g.unit = &units::canonical_unit(units::quantity::state);
    } else if (q) {
        if (*q == units::quantity::state) {
            t.diags().error(t.pos_of("quantity"), t.path_of("quantity"),
                            "\"state\" on a register tag without a bit",
                            "a measured quantity, or a bit number for a flag");
        }
        g.unit = t.unit_symbol("unit", *q, need::required);
    } else {
        (void)t.string("unit", need::optional);
    }

    g.scale = t.number("scale", -1e9, 1e9, need::optional).value_or(1.0);
    if (g.scale == 0.0) {
        t.diags().error(t.pos_of("scale"), t.path_of("scale"), "a scale of 0", "a non-zero scale");
    }
    g.offset = t.number("offset", -1e9, 1e9, need::optional).value_or(0.0);
    if (const auto period = t.quantity("poll_period", units::quantity::duration, 0.1, 3600.0,
                                       need::optional)) {
        g.poll_period_s = *period;
    }

    // Conditioning limits, in the tag's own quantity; plain numbers are in the tag's unit.
    const std::size_t plc_index = std::min(g.plc, l.cfg.plcs.empty() ? 0 : l.cfg.plcs.size() - 1);
    const double period_s = g.poll_period_s.value_or(
        l.cfg.plcs.empty() ? 5.0 : l.cfg.plcs[plc_index].poll_period_s);
    g.stale_after_s = t.quantity("stale_after", units::quantity::duration, 0.1, 86400.0,
                                 need::optional)
                          .value_or(std::max(30.0, 3.0 * period_s));
    if (g.stale_after_s < period_s) {
        const units::unit& seconds = units::canonical_unit(units::quantity::duration);
        t.diags().error(t.pos_of("stale_after"), t.path_of("stale_after"),
                        units::format(g.stale_after_s, seconds) + ", shorter than the poll period (" +
                            units::format(period_s, seconds) + ")",
                        "stale_after at least one poll period, or every reading would be stale");
    }
    const bool unit_known = g.unit != nullptr;
    if (!unit_known) {
        t.skip({"range", "frozen_after", "frozen_tolerance", "max_change_per_minute", "filter",
                "median_samples", "ema_time_constant"});
    }
    if (unit_known && !is_state) {
        const units::quantity kind = g.unit->kind;
        if (const auto range = t.quantity_range("range", kind, need::required, g.unit)) {
            g.valid_min = range->first;
            g.valid_max = range->second;
        }
        if (const auto frozen = t.quantity("frozen_after", units::quantity::duration, 1.0,
                                           30 * 86400.0, need::optional)) {
            g.frozen_after_s = *frozen;
        }
        g.frozen_tolerance = t.quantity("frozen_tolerance", kind, 0.0, inf, need::optional, g.unit,
                                        measure::difference)
                                 .value_or(0.0);
        if (const auto spike = t.quantity("max_change_per_minute", kind, 0.0, inf, need::optional,
                                          g.unit, measure::difference)) {
            g.max_change_per_minute = *spike;
        }
        g.filter = t.choice<filter_kind>("filter",
                                         {{"none", filter_kind::none},
                                          {"median", filter_kind::median},
                                          {"ema", filter_kind::ema}},
                                         need::optional)
                       .value_or(filter_kind::none);
        g.median_samples =
            static_cast<std::uint32_t>(t.integer("median_samples", 3, 31, need::optional).value_or(5));
        if (g.median_samples % 2 == 0) {
            t.diags().error(t.pos_of("median_samples"), t.path_of("median_samples"),
                            "an even window of " + std::to_string(g.median_samples),
                            "an odd number of samples (3, 5, 7, ...)");
        }
        g.ema_time_constant_s = t.quantity("ema_time_constant", units::quantity::duration, 0.1,
                                           86400.0, need::optional)
                                    .value_or(60.0);
    }

    if (name) {
        g.name = *name;
        l.claim(l.signal_names, g.name, g.at, t.path_of("name"), "tag or lab entry");
        if (!unit_known) {
            l.broken_signals.insert(g.name);
        }
    }
    if (g.unit == nullptr) {
        g.unit = &units::canonical_unit(units::quantity::dimensionless);
    }
    l.cfg.tags.push_back(std::move(g));
}

} // namespace

void read_plcs_and_tags(loader& l, table_reader& root) {
    l.plc_key_present = root.has("plc");
    root.each_table("plc", [&](table_reader& t, std::size_t) { read_plc(l, t); });
    root.each_table("tag", [&](table_reader& t, std::size_t) { read_tag(l, t); });
}

// --- [[lab_entry]] -----------------------------------------------------------------------------

namespace {

// `checks`, `check_tolerance`, `check_relative_tolerance`: the entry is a check reading of a tag.
void read_probe_check(loader& l, table_reader& t, lab_entry& e) {
    if (!t.has("checks")) {
        for (const std::string_view key : {"check_tolerance", "check_relative_tolerance"}) {
            if (t.has(key)) {
                t.diags().error(t.pos_of(key), t.path_of(key),
                                std::string{key} + " on an entry that checks no tag",
                                "checks = \"TAG\" naming the [[tag]] this entry is a check reading "
                                "of, or no " + std::string{key});
            }
        }
        t.skip({"check_tolerance", "check_relative_tolerance"});
        return;
    }
    probe_check c;
    c.tag = l.signal(t, "checks", need::required, signal_source::tag_only, e.kind);
    if (!c.tag.empty()) {
        const auto [it, inserted] = l.checked_tags.emplace(
            c.tag.name, std::pair{e.name.empty() ? t.path() : e.name, c.tag.at});
        if (!inserted) {
            t.diags().error(c.tag.at, t.path_of("checks"),
                            quote(c.tag.name) + ", already checked by lab entry " +
                                quote(it->second.first) + " at line " +
                                std::to_string(it->second.second.line),
                            "one check entry per tag");
        }
    }
    const units::unit* plain = e.kind == units::quantity::dimensionless
                                   ? &units::canonical_unit(units::quantity::dimensionless)
                                   : nullptr;
    const std::optional<double> tolerance =
        t.quantity("check_tolerance", e.kind, -inf, inf, need::required, plain, measure::difference);
    if (tolerance && !(*tolerance > 0.0)) {
        t.diags().error(t.pos_of("check_tolerance"), t.path_of("check_tolerance"),
                        "a tolerance of " +
                            units::format(*tolerance, units::canonical_unit(e.kind)),
                        "a difference above 0, " + describe_quantity_example(e.kind));
    }
    c.tolerance = tolerance.value_or(0.0);
    c.relative_tolerance =
        t.quantity("check_relative_tolerance", units::quantity::dimensionless, 0.0, 1.0,
                   need::optional, &units::canonical_unit(units::quantity::dimensionless))
            .value_or(0.0);
    if (!c.tag.empty()) {
        e.check = std::move(c);
    }
}

} // namespace

void read_lab(loader& l, table_reader& root) {
    root.each_table("lab_entry", [&](table_reader& t, std::size_t) {
        lab_entry e;
        e.at = t.pos_of("name");
        const std::optional<std::string> name = t.name("name", need::required);
        e.description = t.string("description", need::optional).value_or("");
        const std::optional<units::quantity> q = t.choice<units::quantity>(
            "quantity",
            {{"concentration", units::quantity::concentration},
             {"settled_volume", units::quantity::settled_volume},
             {"sludge_volume_index", units::quantity::sludge_volume_index},
             {"temperature", units::quantity::temperature},
             {"length", units::quantity::length},
             {"flow", units::quantity::flow},
             {"volume", units::quantity::volume},
             {"dimensionless", units::quantity::dimensionless}},
            need::required);
        if (q) {
            e.kind = *q;
            if (const auto range = t.quantity_range("range", *q, need::required)) {
                e.valid_min = range->first;
                e.valid_max = range->second;
            }
        } else {
            t.skip({"range", "checks", "check_tolerance", "check_relative_tolerance"});
            if (name) {
                l.broken_signals.insert(*name);
            }
        }
        e.max_age_s = t.quantity("max_age", units::quantity::duration, 60.0, 90 * 86400.0,
                                 need::optional)
                          .value_or(e.max_age_s);
        if (name) {
            e.name = *name;
            l.claim(l.signal_names, e.name, e.at, t.path_of("name"), "tag or lab entry");
        }
        if (q) {
            read_probe_check(l, t, e);
        }
        l.cfg.lab.push_back(std::move(e));
    });
}

// --- [[zone]], [[clarifier]] -------------------------------------------------------------------

void read_plant(loader& l, table_reader& root) {
    root.each_table("zone", [&](table_reader& t, std::size_t) {
        zone z;
        z.at = t.pos_of("name");
        z.name = t.name("name", need::required).value_or("");
        if (!z.name.empty()) {
            l.claim(l.zone_names, z.name, z.at, t.path_of("name"), "[[zone]]");
        }
        z.train = t.name("train", need::required).value_or("");
        z.kind = t.choice<zone_kind>("kind",
                                     {{"anoxic", zone_kind::anoxic},
                                      {"aerobic", zone_kind::aerobic},
                                      {"anaerobic", zone_kind::anaerobic}},
                                     need::required)
                     .value_or(zone_kind::aerobic);
        z.volume_m3 = t.quantity("volume", units::quantity::volume, 1.0, 1e7, need::required)
                          .value_or(0.0);
        l.cfg.zones.push_back(std::move(z));
    });
    root.each_table("clarifier", [&](table_reader& t, std::size_t) {
        clarifier c;
        c.at = t.pos_of("name");
        c.name = t.name("name", need::required).value_or("");
        if (!c.name.empty()) {
            l.claim(l.clarifier_names, c.name, c.at, t.path_of("name"), "[[clarifier]]");
        }
        c.train = t.name("train", need::optional).value_or("");
        c.area_m2 = t.quantity("area", units::quantity::area, 1.0, 1e6, need::required).value_or(0.0);
        c.side_water_depth_m =
            t.quantity("side_water_depth", units::quantity::length, 0.5, 20.0, need::required)
                .value_or(0.0);
        l.cfg.clarifiers.push_back(std::move(c));
    });
}

} // namespace detail

namespace {

load_result finish(diagnostics& diags, detail::loader& l, bool parsed) {
    load_result result;
    if (parsed && !diags.any()) {
        detail::check_registers(l);
    }
    result.errors = diags.take_sorted();
    if (result.errors.empty()) {
        result.config = std::move(l.cfg);
    }
    return result;
}

} // namespace

load_result load_text(std::string_view text, std::string_view source_name) {
    diagnostics diags{std::string{source_name}};
    detail::loader l{diags};
    l.cfg.source_file = std::string{source_name};
    const bool parsed = read_document(text, diags, [&](table_reader& root) {
        const std::optional<std::int64_t> version =
            root.integer("config_version", 0, 1000000, need::required);
        if (version && *version != schema_version) {
            diags.error(root.pos_of("config_version"), "config_version",
                        "version " + std::to_string(*version),
                        "config_version = " + std::to_string(schema_version) +
                            ", the schema this flocd reads");
        }
        detail::read_site_and_display(l, root);
        detail::read_plcs_and_tags(l, root);
        detail::read_lab(l, root);
        detail::read_plant(l, root);
        detail::read_services(l, root);
        detail::read_advisors(l, root);
    });
    return finish(diags, l, parsed);
}

load_result load_file(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in) {
        load_result r;
        r.unreadable = true;
        r.errors.push_back(diagnostic{path, {}, "", "a file that cannot be opened (" +
                                                        std::string{std::strerror(errno)} + ")",
                                      "a readable config file"});
        return r;
    }
    std::ostringstream text;
    text << in.rdbuf();
    if (in.bad()) {
        load_result r;
        r.unreadable = true;
        r.errors.push_back(diagnostic{path, {}, "", "a read error", "a readable config file"});
        return r;
    }
    return load_text(text.str(), path);
}

} // namespace floc::config
