// [hmi_server], [storage], [clock].
#include "loader.hpp"

#include <arpa/inet.h>

#include <algorithm>

namespace floc::config::detail {
namespace {

std::optional<std::uint32_t> parse_ipv4(const std::string& s) {
    in_addr a{};
    if (inet_pton(AF_INET, s.c_str(), &a) != 1) {
        return std::nullopt;
    }
    return ntohl(a.s_addr);
}

// "192.168.10.0/24" or "192.168.10.7"
std::optional<ipv4_network> parse_network(const std::string& s) {
    const std::size_t slash = s.find('/');
    const std::optional<std::uint32_t> address = parse_ipv4(s.substr(0, slash));
    if (!address) {
        return std::nullopt;
    }
    ipv4_network n{*address, 32};
    if (slash != std::string::npos) {
        const std::string bits = s.substr(slash + 1);
        if (bits.empty() || bits.size() > 2 ||
            !std::all_of(bits.begin(), bits.end(), [](char c) { return c >= '0' && c <= '9'; })) {
            return std::nullopt;
        }
        const int prefix = std::stoi(bits);
        if (prefix > 32) {
            return std::nullopt;
        }
        n.prefix = static_cast<std::uint8_t>(prefix);
    }
    return n;
}

std::vector<ipv4_network> read_networks(table_reader& t, std::string_view key,
                                        std::vector<ipv4_network> fallback) {
    const std::optional<std::vector<std::string>> list = t.string_list(key, need::optional);
    if (!list) {
        return fallback;
    }
    std::vector<ipv4_network> out;
    const std::vector<source_pos> where = t.list_positions(key);
    for (std::size_t i = 0; i < list->size(); ++i) {
        const std::optional<ipv4_network> n = parse_network((*list)[i]);
        if (!n) {
            t.diags().error(where.at(i), t.path_of(key) + "[" + std::to_string(i) + "]",
                            quote((*list)[i]),
                            "an IPv4 address or network, like \"192.168.10.20\" or \"10.4.0.0/16\"");
            continue;
        }
        out.push_back(*n);
    }
    return out;
}

} // namespace

void read_services(loader& l, table_reader& root) {
    hmi_server_config& h = l.cfg.hmi;
    root.table("hmi_server", need::optional, [&](table_reader& t) {
        h.at = t.pos();
        if (const std::optional<std::string> bind = t.string("bind", need::optional)) {
            if (parse_ipv4(*bind)) {
                h.bind = *bind;
            } else {
                t.diags().error(t.pos_of("bind"), t.path_of("bind"), quote(*bind),
                                "an IPv4 address to listen on, like \"0.0.0.0\" or \"127.0.0.1\"");
            }
        }
        h.port = static_cast<std::uint16_t>(t.integer("port", 1, 65535, need::optional).value_or(h.port));
        h.allow = read_networks(t, "allow", h.allow);
        h.lab_writers = read_networks(t, "lab_writers", h.lab_writers);
        const std::vector<source_pos> writer_pos = t.list_positions("lab_writers");
        for (std::size_t i = 0; i < h.lab_writers.size() && t.has("lab_writers"); ++i) {
            const ipv4_network& w = h.lab_writers[i];
            const bool reachable = std::any_of(h.allow.begin(), h.allow.end(), [&](const ipv4_network& a) {
                return a.prefix <= w.prefix && a.contains(w.address);
            });
            if (!reachable && i < writer_pos.size()) {
                t.diags().error(writer_pos[i], t.path_of("lab_writers") + "[" + std::to_string(i) + "]",
                                quote(format_network(w)) + ", outside every network in allow",
                                "a lab writer inside `allow`, or it could never connect");
            }
        }
        h.max_connections = static_cast<std::uint32_t>(
            t.integer("max_connections", 1, 256, need::optional).value_or(h.max_connections));
        h.idle_timeout_s = t.quantity("idle_timeout", units::quantity::duration, 1.0, 86400.0,
                                      need::optional)
                               .value_or(h.idle_timeout_s);
        h.float_order = t.choice<word_order>("float_word_order",
                                             {{"abcd", word_order::abcd}, {"badc", word_order::badc},
                                              {"cdab", word_order::cdab}, {"dcba", word_order::dcba}},
                                             need::optional)
                            .value_or(h.float_order);
        t.table("layout", need::optional, [&](table_reader& s) {
            register_layout_config& g = h.layout;
            g.at = s.pos();
            const auto base = [&](std::string_view key, std::size_t i, std::uint16_t fallback) {
                g.base_at.at(i) = s.pos_of(key);
                return static_cast<std::uint16_t>(s.integer(key, 0, 65535, need::optional).value_or(fallback));
            };
            g.status_at = base("status_at", 0, g.status_at);
            g.advice_at = base("advice_at", 1, g.advice_at);
            g.inputs_at = base("inputs_at", 2, g.inputs_at);
            g.lab_at = base("lab_at", 3, g.lab_at);
        });
    });

    storage_config& s = l.cfg.storage;
    root.table("storage", need::optional, [&](table_reader& t) {
        const auto path = [&](std::string_view key, std::string& into) {
            if (const std::optional<std::string> p = t.string(key, need::optional)) {
                if (p->empty()) {
                    t.diags().error(t.pos_of(key), t.path_of(key), "an empty path", "a file or directory path");
                } else {
                    into = *p;
                }
            }
        };
        path("state_dir", s.state_dir);
        path("journal", s.journal);
        s.log = t.choice<log_sink>("log",
                                   {{"console", log_sink::console},
                                    {"file", log_sink::file},
                                    {"journald", log_sink::journald}},
                                   need::optional)
                    .value_or(s.log);
        path("log_file", s.log_file);
        s.log_level = t.choice<std::string>("log_level",
                                            {{"trace", "trace"}, {"debug", "debug"}, {"info", "info"},
                                             {"warn", "warn"}, {"error", "error"}},
                                            need::optional)
                          .value_or(s.log_level);
    });

    clock_config& c = l.cfg.clock;
    root.table("clock", need::optional, [&](table_reader& t) {
        c.source = t.choice<clock_source>("source",
                                          {{"system", clock_source::system},
                                           {"plc_tag", clock_source::plc_tag}},
                                          need::optional)
                       .value_or(c.source);
        c.tag = l.signal(t, "tag", c.source == clock_source::plc_tag ? need::required : need::optional,
                         signal_source::tag_only, units::quantity::duration);
        if (c.source == clock_source::system && t.has("tag")) {
            t.diags().error(t.pos_of("tag"), t.path_of("tag"), "a clock tag with source \"system\"",
                            "source = \"plc_tag\" to take plant time from the tag, or no tag");
        }
    });
}

} // namespace floc::config::detail
