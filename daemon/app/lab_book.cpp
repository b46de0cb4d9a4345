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

namespace floc::app {
namespace {

std::string check_section_of(const config::lab_entry& e) { return "probe_check." + e.name; }

} // namespace

probe_checks::probe_checks(const config::plant_config& cfg) : cfg_(cfg) {
    for (std::size_t i = 0; i < cfg.lab.size(); ++i) {
        if (cfg.lab[i].check) {
            checks_.push_back(checked{i, cfg.lab[i].check->tag.index, {}});
        }
    }
}

std::vector<probe_check_event> probe_checks::run(const lab_book& labs,
                                                 std::span<const conditioning::state> states,
                                                 double steady_now_s, double plant_now_s,
                                                 std::span<conditioning::signal> signals) {
    std::vector<probe_check_event> judged;
    for (checked& c : checks_) {
        const config::lab_entry& e = cfg_.lab.at(c.entry);
        const conditioning::signal own = conditioning::assess(cfg_.tags.at(c.tag), states[c.tag], steady_now_s);
        std::optional<conditioning::check_reading> latest;
        if (const auto& sample = labs.current(c.entry)) {
            latest = conditioning::check_reading{sample->value, sample->sample_time_s};
        }
        std::optional<conditioning::check_verdict> verdict;
        signals[c.tag] = conditioning::check_probe(e, c.state, own, latest, plant_now_s, verdict);
        if (verdict) {
            judged.push_back(probe_check_event{c.entry, c.tag, *verdict});
        }
    }
    return judged;
}

void probe_checks::adopt(const probe_checks& old) {
    for (checked& c : checks_) {
        const std::string& tag = cfg_.tags.at(c.tag).name;
        for (const checked& o : old.checks_) {
            if (old.cfg_.tags.at(o.tag).name != tag) {
                continue;
            }
            c.state = o.state;
            // The new config may have another tolerance: judge the reading again when the
            // history still reaches it.
            if (c.state.verdict) {
                const conditioning::check_verdict again =
                    conditioning::judge(cfg_.lab.at(c.entry), c.state, c.state.verdict->check);
                if (again.outcome != conditioning::check_outcome::no_probe_value) {
                    c.state.verdict = again;
                }
            }
        }
    }
}

const conditioning::probe_check_state* probe_checks::state_of_tag(std::size_t tag) const {
    for (const checked& c : checks_) {
        if (c.tag == tag) {
            return &c.state;
        }
    }
    return nullptr;
}

void probe_checks::save(store::state_document& doc) const {
    for (const checked& c : checks_) {
        if (!c.state.verdict) {
            continue;
        }
        const conditioning::check_verdict& v = *c.state.verdict;
        store::state_section& out = doc.sections[check_section_of(cfg_.lab.at(c.entry))];
        out["tag"] = cfg_.tags.at(c.tag).name;
        out["check"] = v.check.value;
        out["sample_time_s"] = v.check.sample_time_s;
        out["outcome"] = std::string{conditioning::to_string(v.outcome)};
        out["probe"] = v.probe;
        out["difference"] = v.difference;
        out["tolerance"] = v.tolerance;
    }
}

void probe_checks::load(const store::state_document& doc) {
    for (checked& c : checks_) {
        const std::string name = check_section_of(cfg_.lab.at(c.entry));
        if (!doc.has(name) || doc.text(name, "tag") != cfg_.tags.at(c.tag).name) {
            continue;  // none saved, or the entry checked another tag then
        }
        const std::string outcome = doc.text(name, "outcome");
        conditioning::check_verdict v;
        bool known = false;
        for (const auto o : {conditioning::check_outcome::agrees, conditioning::check_outcome::disagrees,
                             conditioning::check_outcome::probe_unusable,
                             conditioning::check_outcome::no_probe_value}) {
            if (outcome == conditioning::to_string(o)) {
                v.outcome = o;
                known = true;
            }
        }
        v.check.value = doc.number(name, "check", std::nan(""));
        v.check.sample_time_s = doc.number(name, "sample_time_s", std::nan(""));
        if (!known || !std::isfinite(v.check.value) || !std::isfinite(v.check.sample_time_s)) {
            continue;
        }
        v.probe = doc.number(name, "probe", std::nan(""));
        v.difference = doc.number(name, "difference", std::nan(""));
        v.tolerance = doc.number(name, "tolerance", 0.0);
        c.state.verdict = v;
    }
}

} // namespace floc::app
