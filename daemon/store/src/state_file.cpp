#include "floc/store/state_file.hpp"

#include <toml++/toml.h>

#include <sstream>

namespace floc::store {

double state_document::number(std::string_view section, std::string_view key, double fallback) const {
    const auto s = sections.find(section);
    if (s == sections.end()) {
        return fallback;
    }
    const auto v = s->second.find(key);
    if (v == s->second.end() || !std::holds_alternative<double>(v->second)) {
        return fallback;
    }
    return std::get<double>(v->second);
}

std::string state_document::text(std::string_view section, std::string_view key, std::string fallback) const {
    const auto s = sections.find(section);
    if (s == sections.end()) {
        return fallback;
    }
    const auto v = s->second.find(key);
    if (v == s->second.end() || !std::holds_alternative<std::string>(v->second)) {
        return fallback;
    }
    return std::get<std::string>(v->second);
}

std::vector<double> state_document::numbers(std::string_view section, std::string_view key) const {
    const auto s = sections.find(section);
    if (s == sections.end()) {
        return {};
    }
    const auto v = s->second.find(key);
    if (v == s->second.end() || !std::holds_alternative<std::vector<double>>(v->second)) {
        return {};
    }
    return std::get<std::vector<double>>(v->second);
}

std::string to_text(const state_document& doc) {
    toml::table root;
    root.insert("state_format", state_format_version);
    toml::table sections;
    for (const auto& [name, section] : doc.sections) {
        toml::table t;
        for (const auto& [key, value] : section) {
            if (const auto* d = std::get_if<double>(&value)) {
                t.insert(key, *d);
            } else if (const auto* s = std::get_if<std::string>(&value)) {
                t.insert(key, *s);
            } else {
                toml::array a;
                for (const double x : std::get<std::vector<double>>(value)) {
                    a.push_back(x);
                }
                t.insert(key, std::move(a));
            }
        }
        sections.insert(name, std::move(t));
    }
    root.insert("section", std::move(sections));
    std::ostringstream out;
    out << "# flocd state: advisor states and lab entries. Written by flocd; do not edit while it runs.\n"
        << root << "\n";
    return out.str();
}

std::variant<state_document, std::string> parse_state(std::string_view text, std::string_view source_name) {
    toml::table root;
    try {
        root = toml::parse(text, source_name);
    } catch (const toml::parse_error& e) {
        return std::string{source_name} + ":" + std::to_string(e.source().begin.line) + ":" +
               std::to_string(e.source().begin.column) + ": " + std::string{e.description()};
    }
    const auto version = root["state_format"].value<std::int64_t>();
    if (!version || *version != state_format_version) {
        return std::string{source_name} + ": state_format " +
               (version ? std::to_string(*version) : std::string{"missing"}) + ", expected " +
               std::to_string(state_format_version);
    }
    state_document doc;
    const toml::table* sections = root["section"].as_table();
    if (sections == nullptr) {
        return doc;
    }
    for (const auto& [name, node] : *sections) {
        const toml::table* t = node.as_table();
        if (t == nullptr) {
            continue;
        }
        state_section& out = doc.sections[std::string{name.str()}];
        for (const auto& [key, v] : *t) {
            if (const auto d = v.value<double>()) {  // integers read as numbers too
                out[std::string{key.str()}] = *d;
            } else if (const auto s = v.value<std::string>()) {
                out[std::string{key.str()}] = *s;
            } else if (const toml::array* a = v.as_array()) {
                std::vector<double> list;
                for (const toml::node& x : *a) {
                    list.push_back(x.value<double>().value_or(0.0));
                }
                out[std::string{key.str()}] = std::move(list);
            }
        }
    }
    return doc;
}

} // namespace floc::store
