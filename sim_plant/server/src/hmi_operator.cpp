#include "floc/sim/hmi_operator.hpp"

#include "floc/advisors/advice.hpp"
#include "floc/config/register_layout.hpp"
#include "floc/plc/decode.hpp"

#include <algorithm>
#include <bit>
#include <cmath>
#include <cstdio>

namespace floc::sim {
namespace {

using registers::advisor_kind;

// Queued applications per advice slot at most; older ones are merged away (the newest of two
// neighbours wins), so a fast-changing advice under a long delay cannot grow without bound.
constexpr std::size_t max_queue = 512;

std::string number_text(double v, int digits) {
    std::array<char, 32> buf{};
    std::snprintf(buf.data(), buf.size(), "%.*g", digits, v);
    return buf.data();
}

// Three significant digits with their trailing zeros ("2.00", "1.50", "31.2", "312").
std::string reading_text(double v) {
    const double a = std::abs(v);
    const int decimals = a >= 100.0 ? 0 : a >= 10.0 ? 1 : 2;
    std::array<char, 32> buf{};
    std::snprintf(buf.data(), buf.size(), "%.*f", decimals, v);
    return buf.data();
}

std::string kind_text(advisor_kind k) {
    switch (k) {
    case advisor_kind::aeration:
        return "aeration";
    case advisor_kind::recycle:
        return "recycle";
    case advisor_kind::ras:
        return "ras";
    case advisor_kind::waste:
        return "waste";
    }
    return "?";
}

std::string quality_text(std::uint16_t q) {
    switch (q) {
    case 0:
        return "good";
    case 1:
        return "held";
    case 2:
        return "fallback";
    case 3:
        return "unavailable";
    default:
        return "quality " + std::to_string(q);
    }
}

std::string state_text(std::uint16_t s) {
    switch (static_cast<registers::daemon_state>(s)) {
    case registers::daemon_state::starting:
        return "starting";
    case registers::daemon_state::running:
        return "running";
    case registers::daemon_state::degraded:
        return "degraded";
    case registers::daemon_state::plc_down:
        return "PLC down";
    case registers::daemon_state::stopping:
        return "stopping";
    }
    return "state " + std::to_string(s);
}

std::string reason_text(std::uint16_t code) {
    if (code == 0) {
        return "-";
    }
    const advisors::reason_info& r = advisors::describe(static_cast<advisors::reason>(code));
    return r.code == advisors::reason::none ? "reason " + std::to_string(code)
                                            : std::string{r.name};
}

std::string age_text(std::uint16_t age_s) {
    if (age_s == 65535) {
        return "-";
    }
    if (age_s < 120) {
        return std::to_string(age_s) + " s";
    }
    if (age_s < 7200) {
        return std::to_string(age_s / 60) + " min";
    }
    return number_text(age_s / 3600.0, 2) + " h";
}

std::string setpoint_label(setpoint_kind k) {
    switch (k) {
    case setpoint_kind::do_setpoint:
        return "DO set point";
    case setpoint_kind::kla:
        return "KLa";
    case setpoint_kind::ras_flow:
        return "RAS flow";
    case setpoint_kind::ras_ratio:
        return "RAS ratio";
    case setpoint_kind::was_flow:
        return "waste flow";
    case setpoint_kind::recycle_flow:
        return "recycle flow";
    case setpoint_kind::nitrate_setpoint:
        return "nitrate set point";
    }
    return "?";
}

} // namespace

std::string display_text(const config::plant_config& cfg, units::quantity q, double canonical) {
    if (!std::isfinite(canonical)) {
        return "-";
    }
    if (q == units::quantity::dimensionless) {
        return reading_text(canonical) + " x flow";
    }
    const units::unit& u = cfg.display.unit_for(q);
    return reading_text(units::from_canonical(canonical, u)) + " " + std::string{u.symbol};
}

std::string table_cell(std::string s, std::size_t width) {
    if (s.size() < width) {
        s.append(width - s.size(), ' ');
    }
    return s;
}

std::vector<register_read> advisory_reads(const registers::register_map& map) {
    std::vector<register_read> reads;
    reads.push_back(
        {3, map.status_base(), static_cast<std::uint16_t>(config::status_block_registers)});
    const std::size_t per_read = 125 / config::advice_slot_registers; // whole slots per read
    for (std::size_t first = 0; first < map.advice.size(); first += per_read) {
        const std::size_t n = std::min(per_read, map.advice.size() - first);
        reads.push_back({3, map.advice_base(first),
                         static_cast<std::uint16_t>(n * config::advice_slot_registers)});
    }
    return reads;
}

advisory_seen decode_advisory(const registers::register_map& map, const config::plant_config& cfg,
                              const std::vector<register_read>& reads,
                              const std::vector<std::vector<std::uint16_t>>& words) {
    // The words by address, as one register space.
    std::vector<std::uint16_t> space(config::register_space, 0);
    for (std::size_t i = 0; i < reads.size() && i < words.size(); ++i) {
        for (std::size_t k = 0; k < words[i].size() && reads[i].address + k < space.size(); ++k) {
            space[reads[i].address + k] = words[i][k];
        }
    }
    const auto u16 = [&](std::uint32_t a) { return space.at(a); };
    const auto u32 = [&](std::uint32_t a) { return (std::uint32_t{u16(a)} << 16U) | u16(a + 1); };
    const auto f32 = [&](std::uint32_t a) {
        return static_cast<double>(
            std::bit_cast<float>(plc::join_words(u16(a), u16(a + 1), cfg.hmi.float_order)));
    };

    advisory_seen seen;
    const std::uint32_t s = map.status_base();
    namespace so = registers::status_offset;
    seen.heartbeat = u16(s + so::heartbeat);
    seen.state = u16(s + so::daemon_state);
    seen.plant_time_s = u32(s + so::plant_time_s);
    if (u16(s + so::layout) != registers::layout_version) {
        seen.error = "the status block says register layout " +
                     std::to_string(u16(s + so::layout)) + "; expected layout " +
                     std::to_string(registers::layout_version) + " (is it flocd with this config?)";
    } else if (u16(s + so::advisors) != map.advice.size()) {
        seen.error = "the server publishes " + std::to_string(u16(s + so::advisors)) +
                     " advice slots; the config has " + std::to_string(map.advice.size());
    }
    namespace ao = registers::advice_offset;
    for (std::size_t i = 0; i < map.advice.size(); ++i) {
        const registers::advice_slot& slot = map.advice[i];
        const std::uint32_t b = map.advice_base(i);
        advice_seen a;
        a.kind = slot.kind;
        a.subject = slot.subject;
        a.quantity = slot.kind_of_value;
        a.quality = u16(b + ao::quality);
        for (std::uint32_t r = 0; r < 4; ++r) {
            a.reasons.at(r) = u16(b + ao::reason_1 + r);
        }
        a.age_s = u16(b + ao::age_s);
        a.changes = u16(b + ao::changes);
        const double display = f32(b + ao::value);
        a.value = slot.kind_of_value == units::quantity::dimensionless
                      ? display
                      : units::to_canonical(display, cfg.display.unit_for(slot.kind_of_value));
        if (u16(b + ao::kind) != static_cast<std::uint16_t>(slot.kind) && seen.error.empty()) {
            seen.error =
                "advice slot " + std::to_string(i) + " is not a " + kind_text(slot.kind) + " slot";
        }
        seen.advice.push_back(std::move(a));
    }
    if (!seen.error.empty()) {
        for (advice_seen& a : seen.advice) {
            a.quality = 3; // nothing from a server that is not laid out as the config says is taken
        }
    }
    return seen;
}

std::string plant_clock_text(double t_s) {
    const double t = std::max(t_s, 0.0);
    const auto whole = static_cast<std::uint64_t>(t);
    std::array<char, 48> buf{};
    std::snprintf(buf.data(), buf.size(), "day %llu %02u:%02u:%02u",
                  static_cast<unsigned long long>(whole / 86400),
                  static_cast<unsigned>(whole % 86400 / 3600),
                  static_cast<unsigned>(whole % 3600 / 60), static_cast<unsigned>(whole % 60));
    return buf.data();
}

operator_standin::operator_standin(const scenario& s, const registers::register_map& map,
                                   const config::plant_config& cfg, std::optional<double> delay_s)
    : scenario_(s), map_(map), cfg_(cfg), delay_s_(delay_s) {
    for (const registers::advice_slot& a : map_.advice) {
        slot sl;
        sl.to = find_target(a);
        slots_.push_back(std::move(sl));
    }
}

operator_standin::target operator_standin::find_target(const registers::advice_slot& a) const {
    target t;
    const auto& trains = scenario_.plant.trains;
    if (a.kind == advisor_kind::aeration) {
        for (std::size_t ti = 0; ti < trains.size(); ++ti) {
            for (std::size_t z = 0; z < trains[ti].zones.size(); ++z) {
                if (trains[ti].zones[z].name == a.subject) {
                    t.found = true;
                    t.kind = setpoint_kind::do_setpoint;
                    t.train = ti;
                    t.zone = z;
                }
            }
        }
        if (!t.found) {
            t.missing = "no zone " + a.subject + " in this scenario";
        }
        return t;
    }
    for (std::size_t ti = 0; ti < trains.size(); ++ti) {
        if (trains[ti].name == a.subject) {
            t.found = true;
            t.train = ti;
        }
    }
    if (!t.found) {
        t.missing = "no train " + a.subject + " in this scenario";
        return t;
    }
    switch (a.kind) {
    case advisor_kind::recycle:
        t.kind = setpoint_kind::recycle_flow;
        break;
    case advisor_kind::ras:
        t.kind = trains[t.train].ras.mode == ras_mode::flow_ratio ? setpoint_kind::ras_ratio
                                                                  : setpoint_kind::ras_flow;
        break;
    case advisor_kind::waste:
        t.kind = setpoint_kind::was_flow;
        break;
    case advisor_kind::aeration:
        break;
    }
    return t;
}

void operator_standin::observe(const advisory_seen& seen, double t_s) {
    last_ = seen;
    if (!delay_s_) {
        return;
    }
    for (std::size_t i = 0; i < seen.advice.size() && i < slots_.size(); ++i) {
        const advice_seen& a = seen.advice[i];
        slot& s = slots_[i];
        if (!s.to.found || a.quality != 0 || !std::isfinite(a.value) || a.value == s.last_queued) {
            continue;
        }
        s.last_queued = a.value;
        if (s.queue.size() >= max_queue) {
            s.queue.pop_back(); // the newest pending value is replaced by this one
        }
        s.queue.push_back({a.value, t_s + *delay_s_});
    }
}

double operator_standin::next_due_s() const {
    double next = std::numeric_limits<double>::infinity();
    for (const slot& s : slots_) {
        if (!s.queue.empty()) {
            next = std::min(next, s.queue.front().due_s);
        }
    }
    return next;
}

std::vector<std::string> operator_standin::apply_due(double t_s, const plant_output& out,
                                                     plant_controls& u) {
    std::vector<std::string> changes;
    for (std::size_t i = 0; i < slots_.size(); ++i) {
        slot& s = slots_[i];
        std::optional<double> value;
        while (!s.queue.empty() && s.queue.front().due_s <= t_s) {
            value = s.queue.front().value; // the newest due value wins
            s.queue.pop_front();
        }
        if (value) {
            changes.push_back(apply(i, *value, out, u, t_s));
        }
    }
    return changes;
}

std::string operator_standin::apply(std::size_t index, double value, const plant_output& out,
                                    plant_controls& u, double t_s) {
    slot& s = slots_.at(index);
    const registers::advice_slot& advice = map_.advice.at(index);
    const advisor_kind kind = advice.kind;
    const target& to = s.to;
    const double flow =
        to.train < out.trains.size() ? out.trains[to.train].influent.flow_m3_per_d : 0.0;
    // Ratios are keyed in as flows: the advised ratio times the train's influent flow now.
    double setpoint = value;
    units::quantity q = units::quantity::flow;
    if ((kind == advisor_kind::recycle || kind == advisor_kind::ras) &&
        to.kind != setpoint_kind::ras_ratio) {
        setpoint = value * flow;
    } else if (to.kind == setpoint_kind::ras_ratio) {
        q = units::quantity::dimensionless;
    } else if (kind == advisor_kind::aeration) {
        q = units::quantity::concentration;
    }
    // No more than the PLC's own register limits allow a bench operator to enter.
    setpoint = std::max(setpoint, 0.0);
    if (const register_entry* e = find_setpoint(scenario_.registers, to.kind, to.train, to.zone)) {
        setpoint = std::clamp(setpoint, e->write_min, e->write_max);
    }
    store_setpoint(u, to.kind, to.train, to.zone, setpoint);
    const std::string owner = kind == advisor_kind::aeration
                                  ? scenario_.plant.trains[to.train].zones[to.zone].name
                                  : scenario_.plant.trains[to.train].name;
    const std::string shown = display_text(cfg_, q, setpoint);
    s.applied = "applied " + shown + " at " + plant_clock_text(t_s);
    return owner + " " + setpoint_label(to.kind) + " " + shown + " (advice " +
           display_text(cfg_, advice.kind_of_value, value) + ")";
}

std::string operator_standin::action(std::size_t i) const {
    if (i >= slots_.size()) {
        return {};
    }
    const slot& s = slots_[i];
    if (!s.to.found) {
        return s.to.missing;
    }
    if (!delay_s_) {
        return "-";
    }
    if (!s.queue.empty()) {
        const std::string due = "due " + plant_clock_text(s.queue.front().due_s);
        return s.applied.empty() ? due : s.applied + "; " + due;
    }
    return s.applied.empty() ? "not applied yet" : s.applied;
}

std::string render_advice_table(const registers::register_map& map, const config::plant_config& cfg,
                                const operator_standin& op, const table_context& ctx) {
    std::string out;
    out += "floc advice for " + cfg.site.name + " from " + ctx.source;
    const std::optional<advisory_seen>& seen = op.last();
    if (!ctx.connected) {
        out += ": waiting for flocd" +
               (ctx.error.empty() ? std::string{} : " (" + ctx.error + ")") + "\n";
    } else if (seen) {
        out += ": flocd " + state_text(seen->state) + ", heartbeat " +
               std::to_string(seen->heartbeat) + ", advice at plant " +
               plant_clock_text(seen->plant_time_s) + "\n";
        if (!seen->error.empty()) {
            out += "  not taken: " + seen->error + "\n";
        }
    } else {
        out += "\n";
    }
    out += "flocsim" + (ctx.serving.empty() ? std::string{} : " on " + ctx.serving) + ": plant " +
           plant_clock_text(ctx.plant_time_s) + (ctx.clock.empty() ? "" : " (" + ctx.clock + ")") +
           (op.applies() ? "; good advice is applied after the acceptance delay"
                         : "; advice is shown, not applied") +
           "\n";
    out += table_cell("advisor", 20) + table_cell("value", 14) + table_cell("quality", 13) +
           table_cell("main reason", 32) + table_cell("age", 8) + "operator\n";
    for (std::size_t i = 0; i < map.advice.size(); ++i) {
        const registers::advice_slot& slot = map.advice[i];
        std::string row = table_cell(kind_text(slot.kind) + " " + slot.subject, 20);
        if (seen && i < seen->advice.size() && ctx.connected) {
            const advice_seen& a = seen->advice[i];
            row += table_cell(a.quality == 3 ? "-" : display_text(cfg, a.quantity, a.value), 14) +
                   table_cell(quality_text(a.quality), 13) +
                   table_cell(reason_text(a.reasons[0]), 32) + table_cell(age_text(a.age_s), 8);
        } else {
            row += table_cell("-", 14) + table_cell("-", 13) + table_cell("-", 32) +
                   table_cell("-", 8);
        }
        row += op.action(i);
        while (!row.empty() && row.back() == ' ') {
            row.pop_back();
        }
        out += row + "\n";
    }
    out += ctx.lab;
    out += "advisory only: a licensed operator decides\n";
    return out;
}

} // namespace floc::sim
