#include "lab_book.hpp"

#include <arpa/inet.h>

#include <cmath>

namespace floc::app {
namespace {

std::string section_of(const config::lab_entry& e) { return "lab." + e.name; }

std::string ipv4_text(std::uint32_t a) {
    return std::to_string(a >> 24U) + "." + std::to_string((a >> 16U) & 0xFFU) + "." +
           std::to_string((a >> 8U) & 0xFFU) + "." + std::to_string(a & 0xFFU);
}

std::uint32_t ipv4_of(const std::string& s) {
    in_addr a{};
    return inet_pton(AF_INET, s.c_str(), &a) == 1 ? ntohl(a.s_addr) : 0U;
}

} // namespace

lab_book::lab_book(const config::plant_config& cfg) : cfg_(cfg), entries_(cfg.lab.size()) {}

registers::lab_status lab_book::apply(const registers::lab_write& w, std::uint32_t client, bool allowed,
                                      double now_s) {
    slot& s = entries_.at(w.entry);
    const config::lab_entry& e = cfg_.lab.at(w.entry);
    if (!allowed) {
        s.status = registers::lab_status::not_allowed;
        return s.status;
    }
    if (w.kind == registers::lab_write::what::minutes_ago) {
        s.pending_minutes_ago = w.minutes_ago;
        return s.status;
    }
    if (!std::isfinite(w.value)) {
        s.status = registers::lab_status::not_a_number;
        return s.status;
    }
    if (w.value < e.valid_min || w.value > e.valid_max) {
        s.status = registers::lab_status::out_of_range;
        return s.status;
    }
    s.sample = lab_sample{w.value, now_s - 60.0 * s.pending_minutes_ago, now_s, client};
    s.pending_minutes_ago = 0;
    s.status = registers::lab_status::accepted;
    ++s.entries;
    return s.status;
}

std::optional<lab_sample> lab_book::fresh(std::size_t entry, double now_s) const {
    const auto& sample = entries_.at(entry).sample;
    if (!sample || now_s - sample->sample_time_s > cfg_.lab.at(entry).max_age_s) {
        return std::nullopt;
    }
    return sample;
}

registers::lab_info lab_book::info(std::size_t entry, double now_s) const {
    const slot& s = entries_.at(entry);
    registers::lab_info out;
    if (s.sample) {
        out.value = s.sample->value;
        out.sample_age_s = now_s - s.sample->sample_time_s;
    }
    out.status = s.status;
    out.entries = s.entries;
    out.pending_minutes_ago = s.pending_minutes_ago;
    return out;
}

void lab_book::save(store::state_document& doc) const {
    for (std::size_t i = 0; i < entries_.size(); ++i) {
        const slot& s = entries_[i];
        if (!s.sample) {
            continue;
        }
        store::state_section& out = doc.sections[section_of(cfg_.lab[i])];
        out["value"] = s.sample->value;
        out["sample_time_s"] = s.sample->sample_time_s;
        out["entered_at_s"] = s.sample->entered_at_s;
        out["entered_by"] = ipv4_text(s.sample->entered_by);
        out["entries"] = static_cast<double>(s.entries);
    }
}

void lab_book::load(const store::state_document& doc) {
    for (std::size_t i = 0; i < entries_.size(); ++i) {
        const config::lab_entry& e = cfg_.lab[i];
        const std::string name = section_of(e);
        if (!doc.has(name)) {
            continue;
        }
        const double v = doc.number(name, "value", std::nan(""));
        if (!std::isfinite(v) || v < e.valid_min || v > e.valid_max) {
            continue;
        }
        slot& s = entries_[i];
        s.sample = lab_sample{v, doc.number(name, "sample_time_s", 0.0), doc.number(name, "entered_at_s", 0.0),
                              ipv4_of(doc.text(name, "entered_by"))};
        s.entries = static_cast<std::uint16_t>(doc.number(name, "entries", 0.0));
    }
}

} // namespace floc::app
