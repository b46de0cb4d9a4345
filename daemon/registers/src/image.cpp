#include "floc/registers/image.hpp"

#include "floc/plc/decode.hpp"

#include <algorithm>
#include <bit>
#include <cmath>

namespace floc::registers {

std::uint16_t saturate_u16(double v) {
    if (!(v >= 0.0)) {
        return 0;
    }
    if (v >= 65535.0) {
        return 65535;
    }
    return static_cast<std::uint16_t>(v);
}

image::image(const register_map& map, const config::plant_config& cfg)
    : map_(map), cfg_(cfg), words_(config::register_space, 0) {
    // Static fields: slot kinds, quantity codes, scale exponents; nothing published yet.
    for (std::size_t i = 0; i < map_.advice.size(); ++i) {
        put_advice(i, published_advice{});
    }
    for (std::size_t i = 0; i < cfg_.lab.size(); ++i) {
        put_lab(i, lab_info{});
    }
    for (std::size_t i = 0; i < cfg_.tags.size(); ++i) {
        put_input(i, conditioning::signal{}, 0.0);
    }
    put_status(status_info{});
}

std::span<const std::uint16_t> image::words(std::uint16_t address, std::uint16_t count) const {
    const std::size_t end = std::min<std::size_t>(std::size_t{address} + count, words_.size());
    return {words_.data() + address, end - address};
}

void image::put_u16(std::uint32_t address, std::uint16_t v) { words_.at(address) = v; }

void image::put_u32(std::uint32_t address, std::uint32_t v) {
    words_.at(address) = static_cast<std::uint16_t>(v >> 16U);
    words_.at(address + 1) = static_cast<std::uint16_t>(v & 0xFFFFU);
}

void image::put_i16(std::uint32_t address, double display_value, double scale) {
    const double scaled = std::round(display_value * scale);
    std::int16_t v = int16_missing;
    if (std::isfinite(scaled)) {
        v = static_cast<std::int16_t>(std::clamp(scaled, -32767.0, 32767.0));
    }
    words_.at(address) = static_cast<std::uint16_t>(v);
}

void image::put_f32(std::uint32_t address, double display_value) {
    const auto w = plc::split_words(std::bit_cast<std::uint32_t>(static_cast<float>(display_value)),
                                    cfg_.hmi.float_order);
    words_.at(address) = w[0];
    words_.at(address + 1) = w[1];
}

double image::display(double canonical, units::quantity q) const {
    if (q == units::quantity::dimensionless || q == units::quantity::state) {
        return canonical;
    }
    return units::from_canonical(canonical, cfg_.display.unit_for(q));
}

void image::put_status(const status_info& s) {
    const std::uint32_t b = map_.status_base();
    put_u16(b + status_offset::heartbeat, s.heartbeat);
    put_u16(b + status_offset::daemon_state, static_cast<std::uint16_t>(s.state));
    put_u32(b + status_offset::uptime_s, static_cast<std::uint32_t>(std::clamp(s.uptime_s, 0.0, 4294967295.0)));
    put_u32(b + status_offset::plant_time_s, static_cast<std::uint32_t>(std::clamp(s.plant_time_s, 0.0, 4294967295.0)));
    put_u16(b + status_offset::units, cfg_.display.system == units::unit_system::si ? 0 : 1);
    put_u16(b + status_offset::advisors, static_cast<std::uint16_t>(map_.advice.size()));
    put_u16(b + status_offset::tags, static_cast<std::uint16_t>(cfg_.tags.size()));
    put_u16(b + status_offset::lab_entries, static_cast<std::uint16_t>(cfg_.lab.size()));
    put_u16(b + status_offset::layout, layout_version);
    put_u16(b + status_offset::float_order, static_cast<std::uint16_t>(cfg_.hmi.float_order));
    for (std::uint32_t i = 0; i < status_offset::max_plcs; ++i) {
        put_u16(b + status_offset::poll_age_s + i, saturate_u16(s.poll_age_s.at(i)));
        put_u16(b + status_offset::plc_link + i, s.link.at(i) ? 1 : 0);
    }
    put_u16(b + status_offset::config_generation, s.config_generation);
    put_u16(b + status_offset::journal_status, s.journal_ok ? 0 : 1);
    put_u16(b + status_offset::state_status, s.state_ok ? 0 : 1);
}

void image::put_advice(std::size_t slot, const published_advice& a) {
    const advice_slot& info = map_.advice.at(slot);
    const std::uint32_t b = map_.advice_base(slot);
    const double v = display(a.value, info.kind_of_value);
    const double lo = display(a.min, info.kind_of_value);
    const double hi = display(a.max, info.kind_of_value);
    put_i16(b + advice_offset::value_int16, v, info.int16_scale);
    put_u16(b + advice_offset::quality, a.quality);
    for (std::uint32_t r = 0; r < 4; ++r) {
        put_u16(b + advice_offset::reason_1 + r, a.reasons.at(r));
    }
    put_u16(b + advice_offset::age_s, saturate_u16(a.age_s));
    put_u16(b + advice_offset::changes, a.changes);
    put_f32(b + advice_offset::value, v);
    put_f32(b + advice_offset::min, lo);
    put_f32(b + advice_offset::max, hi);
    put_i16(b + advice_offset::min_int16, lo, info.int16_scale);
    put_i16(b + advice_offset::max_int16, hi, info.int16_scale);
    put_u16(b + advice_offset::kind, static_cast<std::uint16_t>(info.kind));
    put_u16(b + advice_offset::quantity, static_cast<std::uint16_t>(info.kind_of_value));
    put_u16(b + advice_offset::scale_exponent,
            static_cast<std::uint16_t>(static_cast<std::int16_t>(std::lround(std::log10(info.int16_scale)))));
    for (std::uint32_t f = 0; f < info.figures.size(); ++f) {
        const figure_info& fig = info.figures.at(f);
        put_f32(b + advice_offset::figures + 2U * f,
                fig.name.empty() ? std::nan("") : display(a.figures.at(f), fig.kind));
    }
}

void image::put_input(std::size_t tag, const conditioning::signal& s, double now_s) {
    const config::tag& t = cfg_.tags.at(tag);
    const std::uint32_t b = map_.input_base(tag);
    const field* f = map_.find(static_cast<std::uint16_t>(b + input_offset::value_int16));
    const double scale = f != nullptr ? f->int16_scale : 1.0;
    const double v = s.has_value ? display(s.value, t.quantity()) : std::nan("");
    put_i16(b + input_offset::value_int16, v, scale);
    put_u16(b + input_offset::quality, static_cast<std::uint16_t>(s.q));
    put_u16(b + input_offset::reason, static_cast<std::uint16_t>(s.why));
    put_u16(b + input_offset::age_s, s.has_value ? saturate_u16(now_s - s.last_good_s) : 65535);
    put_f32(b + input_offset::value, v);
    put_f32(b + input_offset::raw, display(s.raw, t.quantity()));
}

void image::put_lab(std::size_t entry, const lab_info& l) {
    const config::lab_entry& e = cfg_.lab.at(entry);
    const std::uint32_t b = map_.lab_base(entry);
    const field* f = map_.find(static_cast<std::uint16_t>(b + lab_offset::value_int16));
    const double scale = f != nullptr ? f->int16_scale : 1.0;
    const double v = display(l.value, e.kind);
    put_f32(b + lab_offset::value, v);
    put_i16(b + lab_offset::value_int16, v, scale);
    put_u16(b + lab_offset::sample_minutes_ago, l.pending_minutes_ago);
    put_u16(b + lab_offset::status, static_cast<std::uint16_t>(l.status));
    put_u16(b + lab_offset::entries, l.entries);
    put_u16(b + lab_offset::age_min, std::isfinite(l.value) ? saturate_u16(l.sample_age_s / 60.0) : 65535);
    put_u16(b + lab_offset::quantity, static_cast<std::uint16_t>(e.kind));
}

std::optional<lab_write> decode_lab_write(const register_map& map, const config::plant_config& cfg,
                                          std::uint16_t address, std::span<const std::uint16_t> values) {
    const config::register_block& blk = map.blocks[3];
    if (address < blk.first || address >= blk.end() || values.empty()) {
        return std::nullopt;
    }
    const std::size_t entry = (address - blk.first) / config::lab_slot_registers;
    const auto offset = static_cast<std::uint16_t>((address - blk.first) % config::lab_slot_registers);
    const config::lab_entry& e = cfg.lab.at(entry);
    const units::unit& u = e.kind == units::quantity::dimensionless
                               ? units::canonical_unit(e.kind)
                               : cfg.display.unit_for(e.kind);
    lab_write w;
    w.entry = entry;
    if (offset == lab_offset::value && values.size() == 2) {
        const float f = std::bit_cast<float>(plc::join_words(values[0], values[1], cfg.hmi.float_order));
        w.value = units::to_canonical(static_cast<double>(f), u);
        return w;
    }
    if (offset == lab_offset::value_int16 && values.size() == 1) {
        const field* fld = map.find(address);
        const double scale = fld != nullptr ? fld->int16_scale : 1.0;
        const auto raw = static_cast<std::int16_t>(values[0]);
        w.value = raw == int16_missing ? std::nan("") : units::to_canonical(raw / scale, u);
        return w;
    }
    if (offset == lab_offset::sample_minutes_ago && values.size() == 1) {
        w.kind = lab_write::what::minutes_ago;
        w.minutes_ago = values[0];
        return w;
    }
    return std::nullopt;
}

} // namespace floc::registers
