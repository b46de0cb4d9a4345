#include "floc/config/config.hpp"

#include <algorithm>

namespace floc::config {
namespace {

template <class T>
const T* find_named(const std::vector<T>& items, std::string_view name) {
    const auto it = std::find_if(items.begin(), items.end(), [&](const T& x) { return x.name == name; });
    return it == items.end() ? nullptr : &*it;
}

} // namespace

const tag* plant_config::find_tag(std::string_view name) const { return find_named(tags, name); }
const lab_entry* plant_config::find_lab(std::string_view name) const { return find_named(lab, name); }
const zone* plant_config::find_zone(std::string_view name) const { return find_named(zones, name); }

std::string_view to_string(read_function f) {
    switch (f) {
    case read_function::coils: return "coils (01)";
    case read_function::discrete_inputs: return "discrete inputs (02)";
    case read_function::holding_registers: return "holding registers (03)";
    case read_function::input_registers: return "input registers (04)";
    }
    return "?";
}

std::string_view to_string(data_type t) {
    switch (t) {
    case data_type::bit: return "bit";
    case data_type::int16: return "int16";
    case data_type::uint16: return "uint16";
    case data_type::int32: return "int32";
    case data_type::uint32: return "uint32";
    case data_type::float32: return "float32";
    }
    return "?";
}

std::string_view to_string(word_order o) {
    switch (o) {
    case word_order::abcd: return "abcd";
    case word_order::badc: return "badc";
    case word_order::cdab: return "cdab";
    case word_order::dcba: return "dcba";
    }
    return "?";
}

std::string_view to_string(zone_kind k) {
    switch (k) {
    case zone_kind::anoxic: return "anoxic";
    case zone_kind::aerobic: return "aerobic";
    case zone_kind::anaerobic: return "anaerobic";
    }
    return "?";
}

std::string format_network(const ipv4_network& n) {
    std::string out;
    for (int shift = 24; shift >= 0; shift -= 8) {
        out += std::to_string((n.address >> static_cast<unsigned>(shift)) & 0xFFU);
        if (shift > 0) {
            out += '.';
        }
    }
    if (n.prefix != 32) {
        out += "/" + std::to_string(n.prefix);
    }
    return out;
}

} // namespace floc::config
