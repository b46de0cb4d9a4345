#include "floc/sim/lab_technician.hpp"

#include "floc/config/register_layout.hpp"
#include "floc/config/table_reader.hpp"
#include "floc/modbus/protocol.hpp"
#include "floc/plc/decode.hpp"
#include "floc/registers/image.hpp"

#include <algorithm>
#include <bit>
#include <cmath>

namespace floc::sim {
namespace {

constexpr double day_s = 86400.0;
constexpr double tolerance_s = 1e-6; // instants within this are the same instant

const config::lab_entry* find_lab_entry(const config::plant_config& cfg, const std::string& name,
                                        std::size_t* index = nullptr) {
    for (std::size_t i = 0; i < cfg.lab.size(); ++i) {
        if (cfg.lab[i].name == name) {
            if (index != nullptr) {
                *index = i;
            }
            return &cfg.lab[i];
        }
    }
    return nullptr;
}

std::string quantity_text(units::quantity q) {
    return std::string{units::quantity_name(q)};
}

std::string status_text(std::uint16_t status) {
    switch (static_cast<registers::lab_status>(status)) {
    case registers::lab_status::none:
        return "no acknowledgement";
    case registers::lab_status::accepted:
        return "accepted";
    case registers::lab_status::out_of_range:
        return "refused: out of range";
    case registers::lab_status::not_allowed:
        return "refused: not allowed from this address";
    case registers::lab_status::not_a_number:
        return "refused: not a number";
    case registers::lab_status::store_failed:
        return "taken, but flocd could not store it";
    }
    return "status " + std::to_string(status);
}

std::string exception_text(std::uint8_t code) {
    return "exception " + std::to_string(code) + " (" +
           std::string{modbus::to_string(static_cast<modbus::exception_code>(code))} + ")";
}

} // namespace

std::vector<std::string> lab_sheet_problems(const lab_sheet_spec& sheet,
                                            const config::plant_config& cfg) {
    std::vector<std::string> out;
    std::string names;
    for (const config::lab_entry& l : cfg.lab) {
        names += (names.empty() ? "" : ", ") + l.name;
    }
    for (std::size_t i = 0; i < sheet.entries.size(); ++i) {
        const lab_sheet_entry& e = sheet.entries[i];
        const std::string path = "lab_sheet.entry[" + std::to_string(i) + "].name";
        const config::lab_entry* l = find_lab_entry(cfg, e.name);
        if (l == nullptr) {
            out.push_back(config::diagnostic{sheet.source_file, e.at, path,
                                             "the lab entry " + config::quote(e.name) +
                                                 ", not in " + cfg.source_file,
                                             "the name of a lab entry of the flocd config (" +
                                                 (names.empty() ? "it has none" : names) + ")"}
                              .message());
            continue;
        }
        const units::quantity q = quantity_of(e.figure);
        if (l->kind != q) {
            out.push_back(config::diagnostic{
                sheet.source_file, e.at, path,
                config::quote(e.name) + ", a " + quantity_text(l->kind) + " entry in " +
                    cfg.source_file + ", for " + std::string{to_string(e.figure)} + " (a " +
                    quantity_text(q) + ")",
                "a lab entry of the quantity its source reports"}
                              .message());
        }
    }
    return out;
}

lab_technician::lab_technician(const scenario& s, const registers::register_map& map,
                               const config::plant_config& cfg)
    : scenario_(s), cfg_(cfg), start_pending_(s.lab_sheet.at_start) {
    bool composites = false;
    for (const lab_sheet_entry& e : s.lab_sheet.entries) {
        std::size_t index = 0;
        const config::lab_entry* l = find_lab_entry(cfg, e.name, &index);
        if (l == nullptr || l->kind != quantity_of(e.figure)) {
            continue;
        }
        entry_state st;
        st.spec = &e;
        st.flocd = index;
        st.slot = map.lab_base(index);
        st.next_sample_s = next_daily(e, 0.0);
        composites = composites || e.composite_s > 0.0;
        entries_.push_back(std::move(st));
    }
    if (composites) {
        next_aliquot_s_ = 0.0;
    }
}

std::vector<std::string> lab_technician::not_on_sheet() const {
    std::vector<std::string> out;
    for (std::size_t i = 0; i < cfg_.lab.size(); ++i) {
        if (cfg_.lab[i].check) {
            continue; // a probe check reading: taken beside the probe, not a lab-sheet result
        }
        const bool typed = std::any_of(entries_.begin(), entries_.end(),
                                       [&](const entry_state& e) { return e.flocd == i; });
        if (!typed) {
            out.push_back(cfg_.lab[i].name);
        }
    }
    return out;
}

double lab_technician::next_daily(const lab_sheet_entry& e, double from_s) {
    if (e.sample_times_s.empty()) {
        return std::numeric_limits<double>::infinity();
    }
    const double day = std::floor(std::max(from_s, 0.0) / day_s);
    for (double d = day; d <= day + 1.0; d += 1.0) {
        for (const double tod : e.sample_times_s) {
            if (d * day_s + tod >= from_s - tolerance_s) {
                return d * day_s + tod;
            }
        }
    }
    return std::numeric_limits<double>::infinity();
}

double lab_technician::next_sample_s() const {
    if (entries_.empty()) {
        return std::numeric_limits<double>::infinity();
    }
    double next = start_pending_ ? 0.0 : next_aliquot_s_;
    for (const entry_state& e : entries_) {
        next = std::min(next, e.next_sample_s);
    }
    return next;
}

void lab_technician::sample(double t_s, const plant_output& out) {
    const plant_spec& plant = scenario_.plant;
    const auto grab = [&](const entry_state& e) {
        return lab_value(plant, out, e.spec->figure, e.spec->train);
    };
    const auto keep = [](entry_state& e, result r) {
        if (!std::isfinite(r.value)) {
            e.last = "no value at " + plant_clock_text(r.sampled_at_s);
            return;
        }
        if (e.pending.size() >= max_pending_results) {
            e.pending.pop_front();
        }
        e.pending.push_back(r);
    };
    // Aliquots first, so that a composite ending now includes the aliquot of now.
    while (next_aliquot_s_ <= t_s + tolerance_s) {
        for (entry_state& e : entries_) {
            if (e.spec->composite_s <= 0.0) {
                continue;
            }
            e.aliquots.push_back(
                {next_aliquot_s_, lab_pacing_flow(out, e.spec->figure, e.spec->train), grab(e)});
            while (!e.aliquots.empty() &&
                   e.aliquots.front().t_s < t_s - e.spec->composite_s - aliquot_interval_s) {
                e.aliquots.pop_front();
            }
        }
        next_aliquot_s_ += aliquot_interval_s;
    }
    if (start_pending_) {
        start_pending_ = false;
        for (entry_state& e : entries_) {
            keep(e, {grab(e), t_s, t_s, 0}); // typed in at once
        }
    }
    for (entry_state& e : entries_) {
        while (e.next_sample_s <= t_s + tolerance_s) {
            const double at = e.next_sample_s;
            const double g = grab(e);
            const double v = e.spec->composite_s > 0.0 ? composite(e, at, g) : g;
            keep(e, {v, at, at + e.spec->entry_delay_s, 0});
            e.next_sample_s = next_daily(*e.spec, at + 1.0);
        }
    }
}

// The flow-proportional mean of the aliquots of the composite's window ending at `t_s`: a
// shorter window when the run is younger; the grab sample when there is no aliquot at all.
double lab_technician::composite(const entry_state& e, double t_s, double grab) const {
    double mass = 0.0;
    double flow = 0.0;
    double sum = 0.0;
    std::size_t n = 0;
    for (const aliquot& a : e.aliquots) {
        if (a.t_s > t_s + tolerance_s || a.t_s <= t_s - e.spec->composite_s + tolerance_s ||
            !std::isfinite(a.value)) {
            continue;
        }
        mass += a.flow_m3_per_d * a.value;
        flow += a.flow_m3_per_d;
        sum += a.value;
        ++n;
    }
    if (n == 0) {
        return grab;
    }
    return flow > 0.0 ? mass / flow : sum / static_cast<double>(n);
}

std::vector<lab_typing> lab_technician::take_due(double t_s, const advisory_seen& flocd) {
    std::vector<lab_typing> out;
    const auto state = static_cast<registers::daemon_state>(flocd.state);
    if (!flocd.error.empty() ||
        (state != registers::daemon_state::running && state != registers::daemon_state::degraded)) {
        return out;
    }
    const bool flocd_clock = cfg_.clock.source == config::clock_source::plc_tag;
    const double now_s = flocd_clock ? flocd.plant_time_s : t_s;
    for (std::size_t i = 0; i < entries_.size(); ++i) {
        entry_state& e = entries_[i];
        if (e.in_flight) {
            continue;
        }
        // The newest result that is due; older due ones are superseded.
        auto newest = e.pending.end();
        for (auto it = e.pending.begin(); it != e.pending.end(); ++it) {
            if (it->due_s <= t_s + tolerance_s) {
                newest = it;
            }
        }
        if (newest == e.pending.end() || newest->sampled_at_s > now_s + 60.0) {
            continue; // nothing due, or flocd's clock has not reached the sampling time yet
        }
        const result r = *newest;
        e.pending.erase(e.pending.begin(), std::next(newest));
        lab_typing t;
        t.entry = i;
        t.value = r.value;
        t.sampled_at_s = r.sampled_at_s;
        t.attempt = r.attempts + 1;
        t.minutes_ago =
            registers::saturate_u16(std::round(std::max(now_s - r.sampled_at_s, 0.0) / 60.0));
        const config::lab_entry& l = cfg_.lab.at(e.flocd);
        const double display = units::from_canonical(r.value, cfg_.display.unit_for(l.kind));
        const auto words = plc::split_words(
            std::bit_cast<std::uint32_t>(static_cast<float>(display)), cfg_.hmi.float_order);
        namespace lo = registers::lab_offset;
        t.job.writes.push_back(
            {static_cast<std::uint16_t>(e.slot + lo::sample_minutes_ago), {t.minutes_ago}});
        t.job.writes.push_back(
            {static_cast<std::uint16_t>(e.slot + lo::value), {words[0], words[1]}});
        t.job.read_back = {3, e.slot, static_cast<std::uint16_t>(config::lab_slot_registers)};
        e.in_flight = true;
        out.push_back(std::move(t));
    }
    return out;
}

std::string lab_technician::record(const lab_typing& t, const job_outcome& o, double t_s) {
    // t_s: when a typing that did not reach flocd is due again.
    entry_state& e = entries_.at(t.entry);
    e.in_flight = false;
    const config::lab_entry& l = cfg_.lab.at(e.flocd);
    const std::string sample =
        display_text(cfg_, l.kind, t.value) + " sampled " + plant_clock_text(t.sampled_at_s);
    const std::string what = "lab entry " + e.spec->name + " " + sample;
    std::string outcome;
    if (!o.reached) {
        if (t.attempt < max_typing_attempts) {
            // Back to the front: due now, tried again with the next reading of flocd.
            e.pending.push_front({t.value, t.sampled_at_s, t_s, t.attempt});
            outcome = "not typed in (" + o.error + "); trying again (" + std::to_string(t.attempt) +
                      " of " + std::to_string(max_typing_attempts) + " tries)";
        } else {
            outcome = "not typed in after " + std::to_string(max_typing_attempts) + " tries (" +
                      o.error + "); dropped";
        }
        e.last = sample + ": " + outcome;
        return what + ": " + outcome;
    }
    namespace lo = registers::lab_offset;
    const auto refused = std::find_if(o.exceptions.begin(), o.exceptions.end(),
                                      [](std::uint8_t x) { return x != 0; });
    const bool slot_read = o.read_exception == 0 && o.words.size() == config::lab_slot_registers;
    if (refused != o.exceptions.end()) {
        const bool age_write = refused == o.exceptions.begin();
        outcome = "refused: " + exception_text(*refused) + " to the " +
                  (age_write ? "sample age" : "value") + " write";
        if (slot_read) {
            outcome += "; flocd shows " + status_text(o.words[lo::status]);
        }
    } else if (!slot_read) {
        outcome = o.read_exception != 0
                      ? "written; the read-back got " + exception_text(o.read_exception)
                      : "written; no acknowledgement read back";
    } else {
        const std::uint16_t status = o.words[lo::status];
        outcome = status_text(status);
        const std::uint16_t age = o.words[lo::age_min];
        if (status == static_cast<std::uint16_t>(registers::lab_status::accepted) && age != 65535) {
            outcome += ", " + std::to_string(age) + " min old in flocd";
        }
    }
    e.last = sample + ": " + outcome;
    return what + ": " + outcome;
}

std::string lab_technician::render() const {
    if (entries_.empty()) {
        return {};
    }
    std::string out = table_cell("lab entry", 20) + table_cell("next sample", 20) + "last entry\n";
    for (const entry_state& e : entries_) {
        std::string row = table_cell("lab " + e.spec->name, 20);
        row += table_cell(std::isfinite(e.next_sample_s) ? plant_clock_text(e.next_sample_s) : "-",
                          20);
        std::string last = e.in_flight ? "typing in" : e.last;
        if (!e.pending.empty()) {
            const result& r = e.pending.front();
            last += std::string{last.empty() ? "" : "; "} + "due " + plant_clock_text(r.due_s);
        }
        row += last.empty() ? "-" : last;
        out += row + "\n";
    }
    return out;
}

} // namespace floc::sim
