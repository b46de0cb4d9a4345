#include "advisor_engine.hpp"

#include "advisor_states.hpp"

#include <algorithm>
#include <cmath>

namespace floc::app {
namespace {

using advisors::reading;
using advisors::signal_quality;

signal_quality quality_of(const conditioning::signal& s) {
    switch (s.q) {
    case conditioning::quality::good:
    case conditioning::quality::uncertain:  // the last good value, still young
        return signal_quality::good;
    case conditioning::quality::bad:
        break;
    }
    switch (s.why) {
    case conditioning::reason::no_data: return signal_quality::missing;
    case conditioning::reason::stale: return signal_quality::stale;
    case conditioning::reason::frozen: return signal_quality::frozen;
    default: return signal_quality::bad;
    }
}

// Published advice quality codes: 0 good, 1 held, 2 fallback, 3 unavailable (register map).
std::uint16_t quality_code(advisors::advice_quality q) { return static_cast<std::uint16_t>(q); }

double days(double s) { return s / 86400.0; }

} // namespace

reading reading_of(const config::signal_ref& ref, const input_view& in, const config::plant_config& cfg) {
    (void)cfg;
    if (ref.empty()) {
        return reading{};  // missing: not configured
    }
    if (ref.is_lab) {
        if (const auto fresh = in.labs.fresh(ref.index, in.plant_now_s)) {
            return advisors::good(fresh->value, fresh->sample_time_s);
        }
        const auto& any = in.labs.current(ref.index);
        return any ? reading{any->value, signal_quality::stale, any->sample_time_s} : reading{};
    }
    const conditioning::signal& s = in.signals.at(ref.index);
    const double sampled = in.plant_now_s - (in.steady_now_s - s.last_good_s);
    return reading{s.has_value ? s.value : std::nan(""), quality_of(s), sampled};
}

advisor_engine::advisor_engine(const config::plant_config& cfg) : cfg_(cfg) {
    for (const auto& a : cfg.aeration) {
        slots_.push_back({"aeration." + a.zone, advisors::aeration_state{}, a.common.period_s, {}, {}, 0.0, 0});
    }
    for (const auto& r : cfg.recycle) {
        slots_.push_back({"recycle." + r.train, advisors::recycle_state{}, r.common.period_s, {}, {}, 0.0, 0});
    }
    for (const auto& r : cfg.ras) {
        slots_.push_back({"ras." + r.train, advisors::ras_state{}, r.common.period_s, {}, {}, 0.0, 0});
    }
    for (const auto& w : cfg.waste) {
        slots_.push_back({"waste." + w.train, advisors::waste_state{}, w.common.period_s, {}, {}, 0.0, 0});
    }
}

advisor_outcome advisor_engine::run_slot(std::size_t i, const input_view& in, bool recompute_waste) {
    slot_data& s = slots_.at(i);
    advisor_outcome o;
    o.key = s.key;
    const double now = in.plant_now_s;
    const auto reading_for = [&](const char* name, const config::signal_ref& ref) {
        const reading r = reading_of(ref, in, cfg_);
        if (!ref.empty()) {
            o.inputs.emplace_back(name, r);
        }
        return r;
    };
    registers::published_advice& p = o.published;
    std::size_t k = i;
    if (k < cfg_.aeration.size()) {
        const auto& c = cfg_.aeration[k];
        advisors::aeration_inputs x;
        x.dissolved_oxygen = reading_for("dissolved_oxygen", c.dissolved_oxygen);
        x.ammonia = reading_for("ammonia", c.ammonia);
        x.nitrate = reading_for("nitrate", c.nitrate);
        x.flow = reading_for("flow", c.flow);
        x.temperature = reading_for("temperature", c.temperature);
        x.setpoint = reading_for("setpoint", c.setpoint);
        auto r = advisors::step_aeration(c.params, x, std::get<advisors::aeration_state>(s.state), now);
        s.state = r.state;
        o.advice = std::move(r.out);
        p.figures = {x.dissolved_oxygen.value, x.ammonia.value, x.nitrate.value, c.params.ammonia_loop.target_g_per_m3,
                     o.advice.figure_value("flow_ratio").value_or(std::nan("")),
                     static_cast<double>(r.state.last_mode)};
    } else if ((k -= cfg_.aeration.size()) < cfg_.recycle.size()) {
        const auto& c = cfg_.recycle[k];
        advisors::recycle_inputs x;
        x.nitrate = reading_for("nitrate", c.nitrate);
        x.flow = reading_for("flow", c.flow);
        x.recycle_flow = reading_for("recycle_flow", c.recycle_flow);
        auto r = advisors::step_recycle(c.params, x, std::get<advisors::recycle_state>(s.state), now);
        s.state = r.state;
        o.advice = std::move(r.out);
        p.figures = {o.advice.figure_value("recycle_flow").value_or(std::nan("")), x.nitrate.value,
                     c.params.target_g_per_m3, x.flow.value, std::nan(""), std::nan("")};
    } else if ((k -= cfg_.recycle.size()) < cfg_.ras.size()) {
        const auto& c = cfg_.ras[k];
        advisors::ras_inputs x;
        x.flow = reading_for("flow", c.flow);
        x.ras_flow = reading_for("ras_flow", c.ras_flow);
        x.mlss = reading_for("mlss", c.mlss);
        x.ras_solids = reading_for("ras_solids", c.ras_solids);
        x.sv30 = reading_for("sv30", c.sv30);
        x.svi = reading_for("svi", c.svi);
        x.blanket = reading_for("blanket", c.blanket);
        auto r = advisors::step_ras(c.params, x, std::get<advisors::ras_state>(s.state), now);
        s.state = r.state;
        o.advice = std::move(r.out);
        const auto fig = [&](std::string_view n) { return o.advice.figure_value(n).value_or(std::nan("")); };
        p.figures = {fig("ras_flow"), fig("max_ras_flow_clarifier"), fig("thickening_margin"),
                     fig("overflow_rate"), fig("solids_loading"), x.blanket.value};
    } else {
        k -= cfg_.ras.size();
        const auto& c = cfg_.waste.at(k);
        advisors::waste_inputs x;
        x.flow = reading_for("flow", c.flow);
        x.mlss = reading_for("mlss", c.mlss);
        x.was_solids = reading_for("was_solids", c.was_solids);
        x.effluent_tss = reading_for("effluent_tss", c.effluent_tss);
        x.was_flow = reading_for("was_flow", c.was_flow);
        x.temperature = reading_for("temperature", c.temperature);
        x.influent_bod = reading_for("influent_bod", c.influent_bod);
        x.recompute = recompute_waste;
        auto r = advisors::step_waste(c.params, x, std::get<advisors::waste_state>(s.state), now);
        s.state = std::move(r.state);
        o.advice = std::move(r.out);
        const auto fig = [&](std::string_view n) { return o.advice.figure_value(n).value_or(std::nan("")); };
        p.figures = {days(fig("srt_actual")), days(fig("srt_target_used")), days(fig("min_aerobic_srt")),
                     fig("f_to_m"), fig("mlss_mean"), fig("wastage")};
    }
    p.value = o.advice.value;
    p.min = o.advice.min;
    p.max = o.advice.max;
    p.quality = quality_code(o.advice.quality);
    for (std::size_t r = 0; r < p.reasons.size() && r < o.advice.reasons.size(); ++r) {
        p.reasons.at(r) = static_cast<std::uint16_t>(o.advice.reasons[r]);
    }
    const bool changed = !s.last || std::abs(s.last->advice.value - o.advice.value) > 1e-9 ||
                         s.last->advice.quality != o.advice.quality ||
                         (s.last->advice.reasons.size() > 0) != (o.advice.reasons.size() > 0) ||
                         (o.advice.reasons.size() > 0 && s.last->advice.reasons[0] != o.advice.reasons[0]);
    if (!s.last || std::abs(s.last->advice.value - o.advice.value) > 1e-9) {
        ++s.changes;
    }
    p.changes = s.changes;
    o.changed = changed;
    s.computed_steady_s = in.steady_now_s;
    p.age_s = 0.0;
    s.last = o;
    return o;
}

std::vector<std::pair<std::size_t, advisor_outcome>> advisor_engine::run_due(const input_view& in, bool force,
                                                                              bool recompute_waste) {
    std::vector<std::pair<std::size_t, advisor_outcome>> out;
    for (std::size_t i = 0; i < slots_.size(); ++i) {
        slot_data& s = slots_[i];
        // Plant time that went backwards (the simulator restarted) restarts the schedule.
        if (s.next_due_s && in.plant_now_s + s.period_s < *s.next_due_s) {
            s.next_due_s.reset();
        }
        const bool waste = i >= slots_.size() - cfg_.waste.size();
        const bool due = force || !s.next_due_s || in.plant_now_s >= *s.next_due_s ||
                         (waste && recompute_waste);
        if (!due) {
            continue;
        }
        s.next_due_s = in.plant_now_s + s.period_s;
        out.emplace_back(i, run_slot(i, in, waste && recompute_waste));
    }
    return out;
}

std::optional<double> advisor_engine::next_due() const {
    std::optional<double> earliest;
    for (const slot_data& s : slots_) {
        if (!s.next_due_s) {
            return std::nullopt;
        }
        earliest = earliest ? std::min(*earliest, *s.next_due_s) : *s.next_due_s;
    }
    return earliest;
}

void advisor_engine::age(double steady_now_s, std::vector<registers::published_advice>& out) const {
    out.resize(slots_.size());
    for (std::size_t i = 0; i < slots_.size(); ++i) {
        const slot_data& s = slots_[i];
        if (s.last) {
            out[i] = s.last->published;
            out[i].age_s = steady_now_s - s.computed_steady_s;
        }
    }
}

void advisor_engine::save(store::state_document& doc) const {
    for (const slot_data& s : slots_) {
        store::state_section& sec = doc.sections["advisor." + s.key];
        std::visit([&](const auto& st) { save_state(sec, st); }, s.state);
        sec["changes"] = static_cast<double>(s.changes);
    }
}

void advisor_engine::load(const store::state_document& doc) {
    for (slot_data& s : slots_) {
        const auto it = doc.sections.find("advisor." + s.key);
        if (it == doc.sections.end()) {
            continue;
        }
        std::visit([&](auto& st) { load_state(it->second, st); }, s.state);
        s.changes = static_cast<std::uint16_t>(doc.number("advisor." + s.key, "changes", 0.0));
    }
}

void advisor_engine::adopt(const advisor_engine& old) {
    for (slot_data& s : slots_) {
        for (const slot_data& o : old.slots_) {
            if (o.key == s.key && o.state.index() == s.state.index()) {
                s.state = o.state;
                s.last = o.last;
                s.changes = o.changes;
                s.computed_steady_s = o.computed_steady_s;
            }
        }
    }
}

} // namespace floc::app
