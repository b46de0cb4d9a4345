#include "floc/sim/sensors.hpp"

#include <algorithm>
#include <cmath>

namespace floc::sim {
namespace {

const double nan = std::numeric_limits<double>::quiet_NaN();

bool active(double t_s, double start_s, double end_s) { return t_s >= start_s && t_s < end_s; }

} // namespace

double read_signal(const plant_output& out, const signal_ref& s) {
    const bool plant_wide = s.train == no_index || s.train >= out.trains.size();
    const train_output* t = plant_wide ? nullptr : &out.trains[s.train];
    switch (s.kind) {
    case signal_kind::zone_component:
        return t != nullptr && s.zone < t->zones.size() ? t->zones[s.zone].c[s.component] : nan;
    case signal_kind::zone_tss:
        return t != nullptr && s.zone < t->zones.size() ? t->zones[s.zone].tss_g_per_m3 : nan;
    case signal_kind::zone_kla:
        return t != nullptr && s.zone < t->zones.size() ? t->zones[s.zone].kla_per_d : nan;
    case signal_kind::influent_flow:
        return t != nullptr ? t->influent.flow_m3_per_d : out.influent.flow_m3_per_d;
    case signal_kind::influent_temperature:
        return out.influent.temperature_c;
    case signal_kind::influent_component:
        return out.influent.c[s.component];
    case signal_kind::ras_flow:
        return t != nullptr ? t->ras_m3_per_d : nan;
    case signal_kind::was_flow:
        return t != nullptr ? t->was_m3_per_d : nan;
    case signal_kind::recycle_flow:
        return t != nullptr ? t->recycle_m3_per_d : nan;
    case signal_kind::effluent_flow:
        return t != nullptr ? t->effluent_m3_per_d : out.effluent_m3_per_d;
    case signal_kind::effluent_component:
        return t != nullptr ? t->effluent[s.component] : out.effluent[s.component];
    case signal_kind::effluent_tss:
        return t != nullptr ? t->clarifier.tss_g_per_m3.front() : out.effluent_tss_g_per_m3;
    case signal_kind::underflow_tss:
        return t != nullptr ? t->clarifier.tss_g_per_m3.back() : nan;
    case signal_kind::blanket_height:
        return t != nullptr ? t->clarifier.blanket_m : nan;
    case signal_kind::aeration_power:
        return out.energy.aeration_kw;
    }
    return nan;
}

sensor::sensor(const sensor_spec& spec, std::uint64_t seed)
    : spec_(spec), rng_(seed), stuck_at_(spec.faults.size(), nan) {}

double sensor::next_sample_after(double t_s) const {
    const double dt = spec_.sample_interval_s;
    return (std::floor(t_s / dt + 1e-9) + 1.0) * dt;
}

void sensor::sample(double t_s, double true_value) {
    ++samples_;
    // First-order lag, exact for a value held over the sample interval.
    if (!started_ || !std::isfinite(lagged_)) {
        lagged_ = true_value;
        started_ = true;
    } else if (spec_.lag_s > 0.0) {
        const double a = 1.0 - std::exp(-(t_s - last_sample_s_) / spec_.lag_s);
        lagged_ += a * (true_value - lagged_);
    } else {
        lagged_ = true_value;
    }
    last_sample_s_ = t_s;
    const double noise = spec_.noise_sd > 0.0 ? spec_.noise_sd * rng_.normal() : 0.0;
    double value = lagged_ + noise;

    bool dropped = false;
    bool hold = false;
    for (std::size_t i = 0; i < spec_.faults.size(); ++i) {
        const sensor_fault& f = spec_.faults[i];
        if (!active(t_s, f.start_s, f.end_s)) {
            stuck_at_[i] = nan;
            continue;
        }
        switch (f.kind) {
        case fault_kind::stuck:
            if (std::isnan(stuck_at_[i])) {
                stuck_at_[i] = has_reading_ && std::isfinite(reading_) ? reading_ : value;
            }
            value = stuck_at_[i];
            break;
        case fault_kind::drift:
            value += f.magnitude * (t_s - f.start_s) / 86400.0;
            break;
        case fault_kind::spike:
        case fault_kind::offset:
            value += f.magnitude;
            break;
        case fault_kind::dropout:
            dropped = true;
            hold = hold || f.hold;
            break;
        }
    }
    if (dropped) {
        if (!hold) {
            reading_ = nan;
            last_update_s_ = t_s;
            has_reading_ = true;
        }
        return;  // held: the reading and its time stamp stay as they were
    }
    reading_ = std::clamp(value, spec_.range_min, spec_.range_max);
    last_update_s_ = t_s;
    has_reading_ = true;
}

bool is_protocol_fault(event_kind kind) {
    switch (kind) {
    case event_kind::link_loss:
    case event_kind::slow_replies:
    case event_kind::dropped_connections:
    case event_kind::exception_replies:
    case event_kind::wrong_transaction_id: return true;
    case event_kind::blower_trip:
    case event_kind::power_failure: return false;
    }
    return false;
}

link_state link_at(const std::vector<plant_event>& events, double t_s) {
    link_state s;
    for (const plant_event& e : events) {
        if (!active(t_s, e.start_s, e.end_s)) {
            continue;
        }
        if (e.kind == event_kind::link_loss) {
            s.up = false;
        } else if (e.kind == event_kind::slow_replies) {
            s.reply_delay_s = std::max(s.reply_delay_s, e.delay_s);
        }
    }
    return s;
}

std::vector<std::size_t> protocol_faults_at(const std::vector<plant_event>& events, double t_s) {
    std::vector<std::size_t> out;
    for (std::size_t i = 0; i < events.size(); ++i) {
        const plant_event& e = events[i];
        if (is_protocol_fault(e.kind) && e.kind != event_kind::link_loss && active(t_s, e.start_s, e.end_s)) {
            out.push_back(i);
        }
    }
    return out;
}

double next_protocol_change_after(const std::vector<plant_event>& events, double t_s) {
    double next = std::numeric_limits<double>::infinity();
    for (const plant_event& e : events) {
        if (!is_protocol_fault(e.kind)) {
            continue;
        }
        if (e.start_s > t_s) {
            next = std::min(next, e.start_s);
        }
        if (e.end_s > t_s) {
            next = std::min(next, e.end_s);
        }
    }
    return next;
}

std::vector<std::pair<std::size_t, std::size_t>> sensor_faults_at(const std::vector<sensor_spec>& sensors, double t_s) {
    std::vector<std::pair<std::size_t, std::size_t>> out;
    for (std::size_t i = 0; i < sensors.size(); ++i) {
        for (std::size_t f = 0; f < sensors[i].faults.size(); ++f) {
            const sensor_fault& fault = sensors[i].faults[f];
            if (active(t_s, fault.start_s, fault.end_s)) {
                out.emplace_back(i, f);
            }
        }
    }
    return out;
}

std::string_view to_string(event_kind kind) {
    switch (kind) {
    case event_kind::link_loss: return "link_loss";
    case event_kind::slow_replies: return "slow_replies";
    case event_kind::dropped_connections: return "dropped_connections";
    case event_kind::exception_replies: return "exception_replies";
    case event_kind::wrong_transaction_id: return "wrong_transaction_id";
    case event_kind::blower_trip: return "blower_trip";
    case event_kind::power_failure: return "power_failure";
    }
    return "?";
}

std::string_view to_string(fault_kind kind) {
    switch (kind) {
    case fault_kind::stuck: return "stuck";
    case fault_kind::drift: return "drift";
    case fault_kind::spike: return "spike";
    case fault_kind::dropout: return "dropout";
    case fault_kind::offset: return "offset";
    }
    return "?";
}

bool power_failed_at(const std::vector<plant_event>& events, double t_s) {
    return std::any_of(events.begin(), events.end(), [&](const plant_event& e) {
        return e.kind == event_kind::power_failure && active(t_s, e.start_s, e.end_s);
    });
}

void apply_events(const std::vector<plant_event>& events, double t_s, plant_controls& u) {
    const bool power = power_failed_at(events, t_s);
    for (std::size_t ti = 0; ti < u.trains.size(); ++ti) {
        bool tripped = false;
        for (const plant_event& e : events) {
            if (e.kind == event_kind::blower_trip && (e.train == ti || e.train == no_index) &&
                active(t_s, e.start_s, e.end_s)) {
                tripped = true;
            }
        }
        u.trains[ti].blowers_available = !power && !tripped;
        u.trains[ti].pumps_available = !power;
    }
}

} // namespace floc::sim
